//! The word-frequency lists built into the binary for the `hashtags` step
//! (`vocabulary = "lists"` or `"corpus+lists"`): the most frequent words of
//! German, English, Spanish, French, Italian, Dutch and Portuguese, and a
//! merged list of all seven for posts whose language is not known.
//!
//! Place in the data flow: `analysis` stage, read by the chain builder when
//! it builds a `hashtags` filter. Each list is parsed once per process, on
//! first use, and shared through an [`Arc`].
//!
//! The lists are `tests/fixtures/analysis/hashtag/wordfreq_LANG.tsv`,
//! exported from the `wordfreq` package (version 3.1.1, Robyn Speer) by
//! `scripts/wordfreq_export.py`; they are derived from wordfreq's data and
//! licensed CC BY-SA 4.0, with the attribution given in that folder's
//! README. wordfreq case-folds its words, so the German list spells ß as
//! `ss` (the segmenter looks a word with ß up that way).

use std::sync::{Arc, OnceLock};

use super::hashtag::{WordFreqs, ENGLISH_FREE_LETTERS};
use crate::input::LangCode;

/// One built-in list: its language, its text and the one-letter words of
/// the language that pay no single-letter penalty.
struct BuiltinList {
    language: &'static str,
    text: &'static str,
    free_letters: &'static [&'static str],
}

/// The built-in lists, by language code. The one-letter words are the
/// languages' one-letter function words (articles, prepositions,
/// conjunctions, pronouns and verb forms; from memory, no source): German
/// has none.
const LISTS: [BuiltinList; 7] = [
    BuiltinList {
        language: "de",
        text: include_str!("../../tests/fixtures/analysis/hashtag/wordfreq_de.tsv"),
        free_letters: &[],
    },
    BuiltinList {
        language: "en",
        text: include_str!("../../tests/fixtures/analysis/hashtag/wordfreq_en.tsv"),
        free_letters: ENGLISH_FREE_LETTERS,
    },
    BuiltinList {
        language: "es",
        text: include_str!("../../tests/fixtures/analysis/hashtag/wordfreq_es.tsv"),
        free_letters: &["a", "e", "o", "u", "y"],
    },
    BuiltinList {
        language: "fr",
        text: include_str!("../../tests/fixtures/analysis/hashtag/wordfreq_fr.tsv"),
        free_letters: &["a", "à", "y", "c", "d", "j", "l", "m", "n", "s", "t"],
    },
    BuiltinList {
        language: "it",
        text: include_str!("../../tests/fixtures/analysis/hashtag/wordfreq_it.tsv"),
        free_letters: &["a", "e", "è", "i", "o", "c", "d", "l"],
    },
    BuiltinList {
        language: "nl",
        text: include_str!("../../tests/fixtures/analysis/hashtag/wordfreq_nl.tsv"),
        free_letters: &["u"],
    },
    BuiltinList {
        language: "pt",
        text: include_str!("../../tests/fixtures/analysis/hashtag/wordfreq_pt.tsv"),
        free_letters: &["a", "à", "e", "é", "o"],
    },
];

/// The free one-letter words of the merged list: those of every language.
const MERGED_FREE_LETTERS: &[&str] = &["a", "à", "e", "é", "è", "i", "o", "u", "y"];

/// The languages that have a built-in list, in code order.
pub fn list_languages() -> Vec<LangCode> {
    LISTS.iter().filter_map(|l| LangCode::parse(l.language)).collect()
}

/// The built-in list of `language`, or the merged list of all languages for
/// `None`; `None` too when the language has no list of its own (see
/// [`list_languages`]).
pub fn builtin_list(language: Option<LangCode>) -> Option<Arc<WordFreqs>> {
    static PARSED: [OnceLock<Arc<WordFreqs>>; 7] = [const { OnceLock::new() }; 7];
    static MERGED: OnceLock<Arc<WordFreqs>> = OnceLock::new();
    match language {
        Some(code) => {
            let k = LISTS.iter().position(|l| l.language == code.as_str())?;
            let (list, cell) = (LISTS.get(k)?, PARSED.get(k)?);
            Some(Arc::clone(cell.get_or_init(|| Arc::new(parse(list)))))
        }
        None => Some(Arc::clone(MERGED.get_or_init(|| {
            let tables: Vec<Arc<WordFreqs>> =
                list_languages().into_iter().filter_map(|l| builtin_list(Some(l))).collect();
            let refs: Vec<&WordFreqs> = tables.iter().map(Arc::as_ref).collect();
            Arc::new(WordFreqs::mix(&refs).with_free_letters(MERGED_FREE_LETTERS))
        }))),
    }
}

/// The one-letter words of `language`'s list (or of the merged list).
pub fn free_letters(language: Option<LangCode>) -> &'static [&'static str] {
    match language {
        Some(code) => LISTS
            .iter()
            .find(|l| l.language == code.as_str())
            .map_or(ENGLISH_FREE_LETTERS, |l| l.free_letters),
        None => MERGED_FREE_LETTERS,
    }
}

/// Parse an embedded list (its lines are checked by the tests, so a bad
/// line cannot occur; it would be skipped).
fn parse(list: &BuiltinList) -> WordFreqs {
    WordFreqs::parse_counts(list.text, &mut |_, _| {}).with_free_letters(list.free_letters)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn lang(code: &str) -> LangCode {
        LangCode::parse(code).expect("code")
    }

    /// Every embedded list is well formed and has the size the export
    /// printed (`python3 scripts/wordfreq_export.py LANG 30000`: distinct
    /// words left after dropping words with digits and splitting at
    /// apostrophes; see the fixtures' README).
    #[test]
    fn embedded_lists_parse_cleanly_with_their_exported_sizes() {
        let expected = [
            ("de", 29_803),
            ("en", 29_244),
            ("es", 29_885),
            ("fr", 29_773),
            ("it", 29_201),
            ("nl", 29_729),
            ("pt", 29_849),
        ];
        for ((code, words), list) in expected.iter().zip(&LISTS) {
            assert_eq!(list.language, *code);
            let mut bad = Vec::new();
            let table = WordFreqs::parse_counts(list.text, &mut |line, m| bad.push((line, m)));
            assert!(bad.is_empty(), "{code}: {bad:?}");
            assert_eq!(table.len(), *words, "{code}");
            assert_eq!(builtin_list(Some(lang(code))).expect("listed").len(), *words);
        }
        assert_eq!(
            list_languages().iter().map(LangCode::as_str).collect::<Vec<_>>(),
            ["de", "en", "es", "fr", "it", "nl", "pt"]
        );
        assert!(builtin_list(Some(lang("ru"))).is_none());
    }

    /// The English list embedded is the fixture file the English accuracy
    /// tests read, word for word.
    #[test]
    fn english_list_is_the_fixture_file() {
        let path = crate::analysis::testutil::fixture_path("hashtag/wordfreq_en.tsv");
        let file = WordFreqs::read_counts(&path).expect("fixture");
        let embedded = builtin_list(Some(lang("en"))).expect("en");
        assert_eq!((file.len(), file.total()), (embedded.len(), embedded.total()));
        assert_eq!(file.count("harbour"), embedded.count("harbour"));
    }

    /// The merged list holds every language's words, each language
    /// weighing the same: a word of one list only has about 1/7 of its
    /// relative frequency there.
    #[test]
    fn merged_list_weighs_the_languages_equally() {
        let merged = builtin_list(None).expect("merged");
        let de = builtin_list(Some(lang("de"))).expect("de");
        let rel = |t: &WordFreqs, w: &str| t.count(w) as f64 / t.total() as f64;
        assert!(merged.count("wetterbericht") > 0 && merged.count("harbour") > 0);
        assert!(merged.count("rentrée") > 0 && merged.count("koningsdag") > 0);
        let ratio = rel(&merged, "wetterbericht") / rel(&de, "wetterbericht");
        assert!((ratio - 1.0 / 7.0).abs() < 1e-3, "{ratio}");
        assert_eq!(free_letters(None), MERGED_FREE_LETTERS);
        assert_eq!(free_letters(Some(lang("de"))), &[] as &[&str]);
    }
}
