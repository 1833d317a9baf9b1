//! The `stop` step: removes a language's stop words.
//!
//! Place in the data flow: `analysis` stage, a filter of a chain. The lists
//! hold lower-case surface forms, so the step needs a `lowercase` step before
//! it and must come before `stem`.
//!
//! The lists are those tantivy 0.27 bundles: for Danish, Dutch, Finnish,
//! French, German, Hungarian, Italian, Norwegian, Portuguese, Russian, Spanish
//! and Swedish the Snowball project's stop lists (snowballstem.org,
//! `algorithms/<language>/stop.txt`, BSD-3-Clause); for English tantivy's
//! own short 33-word list of articles, conjunctions and prepositions (`a an
//! and are as at be but by for if in into is it no not of on or such that
//! the their then there these they this to was will with`), not Snowball's
//! longer English list. Removed words leave a gap in positions.

use tantivy::tokenizer::{Language, StopWordFilter, TokenFilter, Tokenizer};

use crate::input::LangCode;

/// ISO 639-1 code → tantivy language with a bundled stop list.
const STOP_LANGUAGES: &[(&str, Language)] = &[
    ("da", Language::Danish),
    ("de", Language::German),
    ("en", Language::English),
    ("es", Language::Spanish),
    ("fi", Language::Finnish),
    ("fr", Language::French),
    ("hu", Language::Hungarian),
    ("it", Language::Italian),
    ("nb", Language::Norwegian),
    ("nl", Language::Dutch),
    ("no", Language::Norwegian),
    ("pt", Language::Portuguese),
    ("ru", Language::Russian),
    ("sv", Language::Swedish),
];

/// The languages `stop` has a list for, in code order.
pub fn stop_languages() -> Vec<LangCode> {
    STOP_LANGUAGES.iter().filter_map(|(code, _)| LangCode::parse(code)).collect()
}

/// Filter settings for `stop`. The filtering itself is tantivy's
/// `StopWordFilter`.
#[derive(Clone)]
pub struct StopWords {
    filter: StopWordFilter,
}

impl std::fmt::Debug for StopWords {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str("StopWords")
    }
}

impl StopWords {
    /// The stop list of `language`; `None` when there is none.
    pub fn new(language: LangCode) -> Option<StopWords> {
        let &(_, lang) = STOP_LANGUAGES.iter().find(|(code, _)| *code == language.as_str())?;
        Some(StopWords { filter: StopWordFilter::new(lang)? })
    }
}

impl TokenFilter for StopWords {
    type Tokenizer<T: Tokenizer> = <StopWordFilter as TokenFilter>::Tokenizer<T>;

    fn transform<T: Tokenizer>(self, tokenizer: T) -> Self::Tokenizer<T> {
        self.filter.transform(tokenizer)
    }
}

#[cfg(test)]
mod tests {
    use tantivy::tokenizer::TextAnalyzer;

    use super::*;
    use crate::analysis::testutil::assert_tokens;
    use crate::analysis::WordTokenizer;

    fn analyzer(code: &str) -> TextAnalyzer {
        let stop = StopWords::new(LangCode::parse(code).expect("code")).expect("list");
        TextAnalyzer::builder(WordTokenizer::default()).filter(stop).build()
    }

    #[test]
    fn english_and_german_lists_keep_positions() {
        // "the", "of" are in the 33-word English list; "und", "die" in
        // Snowball's German stop list (snowballstem.org german/stop.txt).
        assert_tokens(
            &mut analyzer("en"),
            "the art of war",
            &[("art", 1, 4, 7), ("war", 3, 11, 14)],
        );
        assert_tokens(
            &mut analyzer("de"),
            "katzen und die hunde",
            &[("katzen", 0, 0, 6), ("hunde", 3, 15, 20)],
        );
    }

    #[test]
    fn languages_without_list() {
        assert!(StopWords::new(LangCode::parse("ja").expect("code")).is_none());
        assert_eq!(stop_languages().len(), 14);
    }
}
