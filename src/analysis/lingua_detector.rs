//! The lingua backend of [`LangDetector`](super::detect::LangDetector):
//! lingua 1.8 in its high-accuracy mode over every language compiled into
//! postassay (the crate's features in `Cargo.toml`).
//!
//! Place in the data flow: `analysis` stage, called only through
//! `LangDetector`, which applies the confidence floor and the routing rule.
//!
//! lingua scores a text with character n-gram models (1 to 5 characters
//! below 120 characters, trigrams above) and rules for scripts and letters
//! that only one language uses; its confidence values are the softmax of the
//! summed log-probabilities over the candidate languages, so they add up to 1
//! (lingua's documentation). Its low-accuracy mode (trigrams only) was
//! measured on all the shared UD and PUD sentences against the built-in
//! `routed` chain's seven languages and left out: it saved about a quarter
//! of the CPU time but routed fewer of the seven's sentences right (93.7%
//! against 94.6%) and sent six times as many to a wrong routed field (2.4%
//! against 0.4%).
//!
//! Two details make the answers usable as data: lingua sums probabilities in
//! the order of a hash set, so the same text can get confidences that differ
//! in the last bits from one process to the next; they are rounded to 9
//! decimals (see [`round_confidence`]) so that the detection cache's key and
//! files do not change between runs. A text whose script no compiled
//! language uses (Hangul without Korean compiled, for example) gets 0 for
//! every language, which is reported as no detection.

use std::collections::BTreeMap;

use lingua::{Language, LanguageDetector, LanguageDetectorBuilder};

use crate::input::LangCode;

/// lingua over every compiled language, with the ISO 639-1 code of each.
pub(crate) struct LinguaDetector {
    detector: LanguageDetector,
    codes: BTreeMap<Language, LangCode>,
}

impl std::fmt::Debug for LinguaDetector {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("LinguaDetector").field("languages", &self.codes.len()).finish()
    }
}

/// The ISO 639-1 code of a lingua language (`None` if lingua's code is not
/// one of ours; every compiled language has one).
fn code_of(language: Language) -> Option<LangCode> {
    LangCode::parse(&language.iso_code_639_1().to_string())
}

/// Every ISO 639-1 code lingua can answer in this build, sorted.
pub(crate) fn supported_codes() -> Vec<LangCode> {
    let mut codes: Vec<LangCode> = Language::all().into_iter().filter_map(code_of).collect();
    codes.sort();
    codes
}

/// A confidence rounded to 9 decimals (see the module docs).
pub(crate) fn round_confidence(c: f64) -> f64 {
    (c * 1e9).round() / 1e9
}

impl LinguaDetector {
    /// lingua in high-accuracy mode over every compiled language. Models
    /// are loaded on first use; they are read in place from the program's
    /// binary (lingua keeps them as finite-state maps over static bytes).
    pub(crate) fn new() -> LinguaDetector {
        let codes: BTreeMap<Language, LangCode> =
            Language::all().into_iter().filter_map(|l| code_of(l).map(|c| (l, c))).collect();
        let languages: Vec<Language> = codes.keys().copied().collect();
        // `from_languages` panics on an empty list; every build compiles the
        // languages of Cargo.toml, so the list is never empty.
        let detector = LanguageDetectorBuilder::from_languages(&languages).build();
        LinguaDetector { detector, codes }
    }

    /// The confidence of every compiled language for `text`, best first
    /// (ties by code), rounded; empty when no language scores above 0.
    pub(crate) fn confidences(&self, text: &str) -> Vec<(LangCode, f64)> {
        let values = self.detector.compute_language_confidence_values(text);
        let mut out: Vec<(LangCode, f64)> = values
            .into_iter()
            .filter(|(_, c)| *c > 0.0)
            .filter_map(|(l, c)| self.codes.get(&l).map(|code| (*code, round_confidence(c))))
            .collect();
        out.sort_by(|a, b| b.1.total_cmp(&a.1).then(a.0.cmp(&b.0)));
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn code(s: &str) -> LangCode {
        LangCode::parse(s).expect("valid code in test")
    }

    #[test]
    fn the_compiled_languages_are_those_of_cargo_toml() {
        // The 18 Snowball languages of rust-stemmers plus 12 others.
        let got: Vec<String> = supported_codes().iter().map(|c| c.to_string()).collect();
        assert_eq!(
            got.join(" "),
            "ar bg ca cs da de el en es fa fi fr hu id it ja ko nb nl pl pt ro ru sv ta th tr uk \
             vi zh"
        );
        for stemmed in crate::analysis::stem_languages(crate::analysis::StemGeneration::Current) {
            // `no` is an alias of `nb` for the stemmer; lingua answers `nb`.
            if stemmed.as_str() != "no" {
                assert!(supported_codes().contains(&stemmed), "{stemmed}");
            }
        }
    }

    #[test]
    fn confidences_add_up_to_one_and_are_sorted() {
        let d = LinguaDetector::new();
        let values = d.confidences("Der Hafen ist heute wegen des Sturms geschlossen.");
        assert_eq!(values.first().map(|v| v.0), Some(code("de")));
        let sum: f64 = values.iter().map(|v| v.1).sum();
        // Rounded to 9 decimals each: the sum is 1 within 30 × 5e-10.
        assert!((sum - 1.0).abs() < 1e-7, "{sum}");
        assert!(values.windows(2).all(|w| w[0].1 >= w[1].1));
        // Nothing to detect: no letters, or no text.
        assert!(d.confidences("12:30 !!! 🎉").is_empty());
        assert!(d.confidences("").is_empty());
        // A script only one compiled language uses decides by rule.
        assert_eq!(d.confidences("สวัสดีครับ"), [(code("th"), 1.0)]);
        // A script no compiled language uses: nothing (Hebrew, Hindi).
        assert!(d.confidences("שלום לכולם, מה שלומכם היום?").is_empty());
        assert!(d.confidences("आज मौसम बहुत अच्छा है").is_empty());
    }

    #[test]
    fn rounding_removes_last_bit_noise() {
        // Two values 2 ulp apart, as lingua's hash-order sums give them.
        let a = 0.734_215_678_912_345_6_f64;
        let b = f64::from_bits(a.to_bits() + 2);
        assert_ne!(a, b);
        assert_eq!(round_confidence(a), round_confidence(b));
        assert_eq!(round_confidence(a), 0.734_215_679);
    }
}
