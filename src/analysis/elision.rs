//! The `strip_elided` step (called `elision` before; that name is still
//! read, with a deprecation note): strips an elided article or pronoun glued to the word
//! by an apostrophe, as French, Italian and Catalan write them: `l'avion` →
//! `avion`, `qu’il` → `il`, `dell'arte` → `arte`.
//!
//! Place in the data flow: `analysis` stage, a filter of a chain; it must
//! come before `stem` (the stemmer would otherwise see `l'avion`). Both the
//! ASCII apostrophe U+0027 and the typographic U+2019 are recognised, and the
//! prefix matches in any letter case (`L'Avion` → `Avion`), so the step works
//! before or after `lowercase`. UAX #29 keeps `l'avion` in one word (the
//! apostrophe is MidNumLet), which is why a filter is needed at all.
//!
//! The prefix lists are common practice, no source (written from memory of
//! the grammar of each language): French `c d j l m n s t qu jusqu lorsqu
//! puisqu quoiqu`; Italian `c d l m s t v un all dall dell nell sull coll
//! pell gl agl dagl degl negl sugl quest quell bell sant`; Catalan `d l m n s
//! t`. Without a language the union is used.

use tantivy::tokenizer::Token;

use super::each_token::{token_edit_filter, TokenEdit};

use crate::input::LangCode;

const FRENCH: &[&str] =
    &["c", "d", "j", "l", "m", "n", "s", "t", "qu", "jusqu", "lorsqu", "puisqu", "quoiqu"];
const ITALIAN: &[&str] = &[
    "c", "d", "l", "m", "s", "t", "v", "un", "all", "dall", "dell", "nell", "sull", "coll", "pell",
    "gl", "agl", "dagl", "degl", "negl", "sugl", "quest", "quell", "bell", "sant",
];
const CATALAN: &[&str] = &["d", "l", "m", "n", "s", "t"];

/// The languages `strip_elided` has lists of elided words for.
pub const ELISION_LANGUAGES: &[&str] = &["ca", "fr", "it"];

/// Filter settings for `strip_elided`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Elision {
    prefixes: Vec<&'static str>,
}

impl Elision {
    /// The prefixes of one language (`fr`, `it`, `ca`), or of all three for
    /// `None`; `None` is returned for another language.
    pub fn new(language: Option<LangCode>) -> Option<Elision> {
        let lists: &[&[&'static str]] = match language.as_ref().map(LangCode::as_str) {
            None => &[FRENCH, ITALIAN, CATALAN],
            Some("fr") => &[FRENCH],
            Some("it") => &[ITALIAN],
            Some("ca") => &[CATALAN],
            Some(_) => return None,
        };
        let mut prefixes: Vec<&'static str> =
            lists.iter().flat_map(|l| l.iter().copied()).collect();
        prefixes.sort_unstable();
        prefixes.dedup();
        Some(Elision { prefixes })
    }

    /// Byte length of the elided prefix and apostrophe at the start of
    /// `text`, when there is one and a word follows it.
    fn elided_len(&self, text: &str) -> Option<usize> {
        let apostrophe = text.find(['\'', '\u{2019}'])?;
        let head = text.get(..apostrophe)?;
        let after = apostrophe + text.get(apostrophe..)?.chars().next()?.len_utf8();
        let known = self.prefixes.iter().any(|p| p.eq_ignore_ascii_case(head));
        (known && after < text.len()).then_some(after)
    }
}

token_edit_filter!(Elision);

impl TokenEdit for Elision {
    type Work = ();

    fn start(&self) {}

    fn edit(&self, _: &mut (), token: &mut Token) -> bool {
        if let Some(len) = self.elided_len(&token.text) {
            token.text.drain(..len);
        }
        true
    }
}

#[cfg(test)]
mod tests {
    use tantivy::tokenizer::TextAnalyzer;

    use super::*;
    use crate::analysis::testutil::{assert_tokens, texts};
    use crate::analysis::WordTokenizer;

    fn analyzer(code: Option<&str>) -> TextAnalyzer {
        let elision = Elision::new(code.and_then(LangCode::parse)).expect("known language");
        TextAnalyzer::builder(WordTokenizer::default()).filter(elision).build()
    }

    #[test]
    fn french_both_apostrophes_keep_offsets() {
        assert_tokens(
            &mut analyzer(Some("fr")),
            "L'avion qu’il aujourd'hui",
            &[("avion", 0, 0, 7), ("il", 1, 8, 15), ("aujourd'hui", 2, 16, 27)],
        );
    }

    #[test]
    fn italian_and_catalan() {
        assert_eq!(texts(&mut analyzer(Some("it")), "dell'arte un'amica"), ["arte", "amica"]);
        assert_eq!(texts(&mut analyzer(Some("ca")), "l'home d'or"), ["home", "or"]);
        // Italian `dell'` is not a French prefix.
        assert_eq!(texts(&mut analyzer(Some("fr")), "dell'arte"), ["dell'arte"]);
        assert_eq!(texts(&mut analyzer(None), "dell'arte j'ai"), ["arte", "ai"]);
    }

    #[test]
    fn english_contractions_are_left_alone() {
        assert_eq!(texts(&mut analyzer(None), "don't it's o'clock"), ["don't", "it's", "o'clock"]);
        assert!(Elision::new(LangCode::parse("en")).is_none());
    }
}
