//! Hashtag splitting: `#CamelCaseTag`, `#tag_with_parts`, `#tag2024`, and
//! all-lowercase tags segmented by a Viterbi search over word frequencies
//! learned from the corpus. (Being written; the public API below is agreed.)

use std::sync::Arc;

/// Unigram word frequencies used to segment all-lowercase tags.
#[derive(Debug, Clone, Default)]
pub struct WordFreqs {
    _private: (),
}

impl WordFreqs {
    /// Build from explicit `(word, count)` pairs (e.g. a `word<TAB>count` list).
    pub fn from_counts<I: IntoIterator<Item = (String, u64)>>(counts: I) -> WordFreqs {
        let _ = counts.into_iter().count();
        WordFreqs::default()
    }

    /// Learn from texts: counts the ordinary words (not tags, mentions, URLs).
    pub fn learn<'a, I: IntoIterator<Item = &'a str>>(texts: I) -> WordFreqs {
        let _ = texts.into_iter().count();
        WordFreqs::default()
    }
}

/// Split a tag body (without `#`) into its parts; one part means no split.
pub fn split_tag(body: &str, freqs: Option<&WordFreqs>) -> Vec<String> {
    let _ = freqs;
    vec![body.to_string()]
}

/// Token filter settings: tokens starting with `#` yield the whole tag and its parts.
#[derive(Debug, Clone, Default)]
pub struct HashtagSplit {
    /// Frequencies for segmenting all-lowercase tags; `None` splits only on
    /// case, digit and underscore boundaries.
    pub freqs: Option<Arc<WordFreqs>>,
}
