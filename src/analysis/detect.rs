//! Language detection of posts and queries with two detectors, whatlang
//! 0.18 and lingua 1.8, a confidence floor, and the routing rule that sends
//! a text in a language outside a route to the route's fallback.
//!
//! Place in the data flow: `analysis` stage; language-routing chains call
//! [`LangDetector::detect`] for a post or query whose language is not given in
//! the input, and diagnostics group results with [`length_bucket`].
//!
//! # The two detectors ([`DetectorKind`])
//!
//! - `whatlang`: trigram profiles of 69 languages; fast (80–90 µs of
//!   CPU time per sentence with the rule below, `postassay vet` on the UD
//!   and PUD sentences) but weak on short texts: of the UD English sentences
//!   of 20 characters or fewer, 1.9% reach the English field.
//! - `lingua`: n-gram models of 1 to 5 characters, built for short texts, in
//!   its high-accuracy mode ([`lingua_detector`](super::lingua_detector));
//!   1.1–1.8 ms per sentence (13 to 23 times whatlang's), 36.9% of those
//!   short English sentences routed right. Only the 30 languages compiled
//!   into postassay can be answered (`Cargo.toml` lists them).
//!
//! # Confidence
//!
//! Each detection carries a confidence in [0, 1], and a detection below the
//! floor (`min_confidence` of a route) counts as none. The two detectors
//! mean different things by it:
//! - whatlang: how far the best language's trigram score leads the
//!   runner-up's, relative to a lead that whatlang calls certain for a text
//!   of that many trigrams: min(1, ((s₁ − s₂) / s₂) / (3 / n + 0.015)) (from
//!   whatlang 0.18's source, `core/confidence.rs`); 1 when the script has
//!   one language. A floor of 0.5 asks for half that lead.
//! - lingua: the language's share of the probability over the candidate
//!   languages (the shares add up to 1); 1 when a script or letter rule
//!   decides. A floor of 0.5 asks for a language more likely than all others
//!   together.
//!
//! # Routing rule for a route's languages
//!
//! A detector built for a route ([`LangDetector::new`] with the route's
//! languages) first looks at every language it knows. When the best of them
//! is not one of the route's languages and its confidence reaches the floor,
//! that language is the answer, and routing sends the text to the fallback
//! field: a Swedish post is not forced into the German field. Otherwise the
//! route's languages are compared among themselves (whatlang: detection
//! restricted to them; lingua: their shares renormalised to add up to 1), and
//! the best one is the answer when its confidence reaches the floor. Measured
//! on the shared UD and PUD sentences against the seven languages of the
//! built-in `routed` chain, at the floor 0.5: Swedish, Russian, Turkish and
//! Thai sentences of more than 60 characters reach the fallback at least
//! 96% of the time with either detector, while the seven languages lose at
//! most 0.4 points of routing accuracy against detection restricted to them
//! (see the tests below and the README's Diagnostics section). Restricting
//! detection to the route alone (what postassay did before) sent two thirds
//! of the Swedish sentences of UD to a routed field, most to German. The
//! rule's price is the wider comparison: whatlang runs a second pass over
//! most texts, lingua compares its 30 languages instead of the route's; for
//! each, about four times the CPU time of detection restricted to the
//! route's seven languages (measured once over all those sentences, user
//! time of a scratch program: whatlang 17 → 97 µs, lingua 0.44 → 1.8 ms per
//! sentence).
//!
//! whatlang names languages with ISO 639-3 codes ([`whatlang::Lang::code`]);
//! the bench uses ISO 639-1 ([`LangCode`]). The mapping is the table
//! [`ISO_639_3_TO_1`]; the tests check each pair against the ISO 639-3 code
//! table as shipped by the pycountry package (`scripts/iso639_3_to_1.py`
//! writes `tests/fixtures/analysis/detect/iso639_3_to_1.tsv`). Two codes of
//! whatlang name an individual language of a macrolanguage and have no
//! two-letter code of their own; they map to the macrolanguage's:
//! `cmn` (Mandarin, in `zho`) → `zh` and `pes` (Iranian Persian, in `fas`)
//! → `fa` (ISO 639-3 macrolanguage mappings, from memory).

use std::sync::Arc;

use serde::{Deserialize, Serialize};
use whatlang::{Detector, Lang};

use super::lingua_detector::{self, round_confidence, LinguaDetector};
use crate::error::{Error, Result};
use crate::input::LangCode;

/// ISO 639-3 code as used by whatlang → ISO 639-1 code, for every language
/// whatlang 0.18 knows (sorted by the 639-3 code).
pub const ISO_639_3_TO_1: &[(&str, &str)] = &[
    ("afr", "af"),
    ("aka", "ak"),
    ("amh", "am"),
    ("ara", "ar"),
    ("aze", "az"),
    ("bel", "be"),
    ("ben", "bn"),
    ("bul", "bg"),
    ("cat", "ca"),
    ("ces", "cs"),
    ("cmn", "zh"),
    ("cym", "cy"),
    ("dan", "da"),
    ("deu", "de"),
    ("ell", "el"),
    ("eng", "en"),
    ("epo", "eo"),
    ("est", "et"),
    ("fin", "fi"),
    ("fra", "fr"),
    ("guj", "gu"),
    ("heb", "he"),
    ("hin", "hi"),
    ("hrv", "hr"),
    ("hun", "hu"),
    ("hye", "hy"),
    ("ind", "id"),
    ("ita", "it"),
    ("jav", "jv"),
    ("jpn", "ja"),
    ("kan", "kn"),
    ("kat", "ka"),
    ("khm", "km"),
    ("kor", "ko"),
    ("lat", "la"),
    ("lav", "lv"),
    ("lit", "lt"),
    ("mal", "ml"),
    ("mar", "mr"),
    ("mkd", "mk"),
    ("mya", "my"),
    ("nep", "ne"),
    ("nld", "nl"),
    ("nob", "nb"),
    ("ori", "or"),
    ("pan", "pa"),
    ("pes", "fa"),
    ("pol", "pl"),
    ("por", "pt"),
    ("ron", "ro"),
    ("rus", "ru"),
    ("sin", "si"),
    ("slk", "sk"),
    ("slv", "sl"),
    ("sna", "sn"),
    ("spa", "es"),
    ("srp", "sr"),
    ("swe", "sv"),
    ("tam", "ta"),
    ("tel", "te"),
    ("tgl", "tl"),
    ("tha", "th"),
    ("tuk", "tk"),
    ("tur", "tr"),
    ("ukr", "uk"),
    ("urd", "ur"),
    ("uzb", "uz"),
    ("vie", "vi"),
    ("yid", "yi"),
    ("zul", "zu"),
];

/// The ISO 639-1 code of a whatlang language (`None` if it has none).
pub fn lang_code_of(lang: Lang) -> Option<LangCode> {
    let code3 = lang.code();
    ISO_639_3_TO_1.iter().find(|(c3, _)| *c3 == code3).and_then(|(_, c1)| LangCode::parse(c1))
}

/// The whatlang language of an ISO 639-1 code (`None` if whatlang does not
/// know it).
pub fn whatlang_lang(code: LangCode) -> Option<Lang> {
    ISO_639_3_TO_1
        .iter()
        .find(|(_, c1)| *c1 == code.as_str())
        .and_then(|(c3, _)| Lang::from_code(*c3))
}

/// Which detector a routed chain uses (`detector = "whatlang" | "lingua"` in
/// a route; see the module docs for what each costs and means by
/// confidence).
#[derive(
    Clone, Copy, Debug, Default, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize,
)]
#[serde(rename_all = "snake_case")]
pub enum DetectorKind {
    /// whatlang 0.18: trigram profiles, fast, weak on short texts.
    Whatlang,
    /// lingua 1.8 in high-accuracy mode: built for short texts, slower.
    #[default]
    Lingua,
}

impl DetectorKind {
    /// Every detector, in the order the diagnostics list them.
    pub const ALL: [DetectorKind; 2] = [DetectorKind::Whatlang, DetectorKind::Lingua];

    /// The name used in chain files and reports.
    pub fn as_str(self) -> &'static str {
        match self {
            DetectorKind::Whatlang => "whatlang",
            DetectorKind::Lingua => "lingua",
        }
    }

    /// Every ISO 639-1 code the detector can answer, sorted.
    pub fn supported_codes(self) -> Vec<LangCode> {
        match self {
            DetectorKind::Whatlang => {
                let mut codes: Vec<LangCode> =
                    Lang::all().iter().filter_map(|l| lang_code_of(*l)).collect();
                codes.sort();
                codes.dedup();
                codes
            }
            DetectorKind::Lingua => lingua_detector::supported_codes(),
        }
    }
}

impl std::fmt::Display for DetectorKind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.as_str())
    }
}

/// Length bucket of a text of `chars` chars, for accuracy by length:
/// `"<=20"`, `"21-60"`, `"61-140"` or `">140"`.
pub fn length_bucket(chars: usize) -> &'static str {
    match chars {
        0..=20 => "<=20",
        21..=60 => "21-60",
        61..=140 => "61-140",
        _ => ">140",
    }
}

/// One detection result.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Detection {
    /// Detected language.
    pub lang: LangCode,
    /// The detector's confidence in [0, 1] (see the module docs): among
    /// every language it knows for a language outside the route, among the
    /// route's languages for one of them.
    pub confidence: f64,
}

/// The detector behind a [`LangDetector`].
#[derive(Clone)]
enum Backend {
    Whatlang {
        /// Over every language whatlang knows.
        every: Detector,
        /// Over the route's languages only.
        listed: Option<Detector>,
    },
    /// Shared: lingua's detector is not `Clone`.
    Lingua(Arc<LinguaDetector>),
}

/// A configured detector: which one, the languages of the route it serves
/// (if any) and a confidence floor. Its `Debug` form shows only these
/// settings (the detector's name, the sorted languages, the floor), so equal
/// settings print equally and different detectors never do; the detection
/// cache and the orchestrator key detections by it.
#[derive(Clone)]
pub struct LangDetector {
    kind: DetectorKind,
    languages: Option<Vec<LangCode>>,
    min_confidence: f64,
    backend: Backend,
}

impl std::fmt::Debug for LangDetector {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("LangDetector")
            .field("detector", &self.kind.as_str())
            .field(
                "languages",
                &self
                    .languages
                    .as_ref()
                    .map(|v| v.iter().map(LangCode::as_str).collect::<Vec<_>>()),
            )
            .field("min_confidence", &self.min_confidence)
            .finish()
    }
}

impl LangDetector {
    /// A `kind` detector for a route over `languages` (`None`: no route,
    /// every language the detector knows is an answer), answering only when
    /// its confidence is at least `min_confidence` (0 accepts every answer);
    /// see the module docs for the routing rule. Fails when a language is
    /// unknown to the detector (the message names it and lists the supported
    /// codes), when the list is empty, or when `min_confidence` is not in
    /// [0, 1].
    pub fn new(
        kind: DetectorKind,
        languages: Option<Vec<LangCode>>,
        min_confidence: f64,
    ) -> Result<LangDetector> {
        if !(0.0..=1.0).contains(&min_confidence) {
            return Err(Error::usage(format!(
                "language detection: minimum confidence must be in [0, 1], found {min_confidence}"
            )));
        }
        let languages = languages.map(|mut codes| {
            codes.sort();
            codes.dedup();
            codes
        });
        if let Some(codes) = &languages {
            if codes.is_empty() {
                return Err(Error::usage("language detection: the language list is empty"));
            }
            let supported = kind.supported_codes();
            let unknown: Vec<&str> =
                codes.iter().filter(|c| !supported.contains(c)).map(|c| c.as_str()).collect();
            if !unknown.is_empty() {
                let supported: Vec<&str> = supported.iter().map(LangCode::as_str).collect();
                return Err(Error::usage(format!(
                    "language detection: {kind} cannot recognise {}; supported codes: {}",
                    unknown.join(", "),
                    supported.join(" ")
                )));
            }
        }
        let backend = match kind {
            DetectorKind::Whatlang => Backend::Whatlang {
                every: Detector::new(),
                listed: languages.as_ref().map(|codes| {
                    Detector::with_allowlist(
                        codes.iter().filter_map(|c| whatlang_lang(*c)).collect(),
                    )
                }),
            },
            DetectorKind::Lingua => Backend::Lingua(Arc::new(LinguaDetector::new())),
        };
        Ok(LangDetector { kind, languages, min_confidence, backend })
    }

    /// Which detector this is.
    pub fn kind(&self) -> DetectorKind {
        self.kind
    }

    /// The route's languages, sorted and without duplicates (`None`: no
    /// route).
    pub fn languages(&self) -> Option<&[LangCode]> {
        self.languages.as_deref()
    }

    /// The confidence floor.
    pub fn min_confidence(&self) -> f64 {
        self.min_confidence
    }

    /// Whether `lang` is one of the route's languages (always, without a
    /// route).
    fn listed(&self, lang: LangCode) -> bool {
        self.languages.as_ref().is_none_or(|l| l.binary_search(&lang).is_ok())
    }

    /// `detection` if its confidence reaches the floor.
    fn floored(&self, detection: Option<Detection>) -> Option<Detection> {
        detection.filter(|d| d.confidence >= self.min_confidence)
    }

    /// Detect the language of `text` (the module docs give the rule for a
    /// route's languages); `None` when nothing could be detected (no
    /// letters, or a script no candidate language uses) or the confidence is
    /// below the floor. A language outside the route comes back only when
    /// its confidence reaches the floor.
    pub fn detect(&self, text: &str) -> Option<Detection> {
        match &self.backend {
            Backend::Whatlang { every, listed } => {
                let of = |info: whatlang::Info| {
                    lang_code_of(info.lang())
                        .map(|lang| Detection { lang, confidence: info.confidence() })
                };
                let best = every.detect(text).and_then(of);
                match (listed, best) {
                    (None, best) => self.floored(best),
                    (Some(_), None) => None,
                    (Some(_), Some(b))
                        if !self.listed(b.lang) && b.confidence >= self.min_confidence =>
                    {
                        Some(b)
                    }
                    (Some(listed), Some(_)) => self.floored(listed.detect(text).and_then(of)),
                }
            }
            Backend::Lingua(lingua) => {
                let values = lingua.confidences(text);
                let (lang, confidence) = *values.first()?;
                let best = Detection { lang, confidence };
                if self.languages.is_none()
                    || (!self.listed(lang) && confidence >= self.min_confidence)
                {
                    return self.floored(Some(best));
                }
                // The route's languages among themselves: renormalise.
                let total: f64 = values.iter().filter(|(l, _)| self.listed(*l)).map(|v| v.1).sum();
                let (lang, share) = *values.iter().find(|(l, _)| self.listed(*l))?;
                let confidence = if total > 0.0 { round_confidence(share / total) } else { 0.0 };
                self.floored(Some(Detection { lang, confidence }))
            }
        }
    }

    /// Detect every text, on 2 threads; the result order is the input order
    /// (deterministic: each text's answer depends only on the text).
    pub fn detect_all(&self, texts: &[&str]) -> Vec<Option<Detection>> {
        self.detect_all_timed(texts).0
    }

    /// [`detect_all`](Self::detect_all), with the CPU time the detecting
    /// threads spent, in seconds (the threads' own clocks where the system
    /// has them, else their wall-clock time), for the cost per text.
    pub fn detect_all_timed(&self, texts: &[&str]) -> (Vec<Option<Detection>>, f64) {
        self.detect_all_with(texts, 2, &|_| {})
    }

    /// [`detect_all_timed`](Self::detect_all_timed) on `threads` threads
    /// (the answers do not depend on it), telling `tick(n)` of every `n`
    /// texts detected.
    pub fn detect_all_with(
        &self,
        texts: &[&str],
        threads: usize,
        tick: &(dyn Fn(u64) + Sync),
    ) -> (Vec<Option<Detection>>, f64) {
        /// Texts between two ticks.
        const TICK: usize = 256;
        let timed = |part: &[&str]| {
            let clock = ThreadClock::start();
            let mut found = Vec::with_capacity(part.len());
            for (i, t) in part.iter().enumerate() {
                found.push(self.detect(t));
                if (i + 1).is_multiple_of(TICK) {
                    tick(TICK as u64);
                }
            }
            tick((part.len() % TICK) as u64);
            (found, clock.seconds())
        };
        if texts.len() < 64 || threads <= 1 {
            return timed(texts);
        }
        let chunk = texts.len().div_ceil(threads);
        let parts: Vec<&[&str]> = texts.chunks(chunk).collect();
        let done = crate::parallel::map_indexed(parts.len(), threads, |i| {
            parts.get(i).map_or_else(|| (Vec::new(), 0.0), |part| timed(part))
        });
        let mut out = Vec::with_capacity(texts.len());
        let mut seconds = 0.0;
        for (part, s) in done {
            out.extend(part);
            seconds += s;
        }
        (out, seconds)
    }
}

/// The CPU time of the calling thread since [`start`](Self::start) (on
/// Unix, `CLOCK_THREAD_CPUTIME_ID`; elsewhere wall-clock time), so that a
/// busy machine does not inflate the cost per text.
struct ThreadClock {
    #[cfg(unix)]
    started: rustix::time::Timespec,
    #[cfg(not(unix))]
    started: std::time::Instant,
}

impl ThreadClock {
    fn start() -> ThreadClock {
        #[cfg(unix)]
        let started = rustix::time::clock_gettime(rustix::time::ClockId::ThreadCPUTime);
        #[cfg(not(unix))]
        let started = std::time::Instant::now();
        ThreadClock { started }
    }

    fn seconds(&self) -> f64 {
        #[cfg(unix)]
        {
            let now = rustix::time::clock_gettime(rustix::time::ClockId::ThreadCPUTime);
            let s = (now.tv_sec - self.started.tv_sec) as f64;
            s + (now.tv_nsec - self.started.tv_nsec) as f64 * 1e-9
        }
        #[cfg(not(unix))]
        {
            self.started.elapsed().as_secs_f64()
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::collections::BTreeMap;

    fn code(s: &str) -> LangCode {
        LangCode::parse(s).expect("valid code in test")
    }

    #[test]
    fn mapping_covers_every_whatlang_language_and_round_trips() {
        assert_eq!(ISO_639_3_TO_1.len(), Lang::all().len());
        for lang in Lang::all() {
            let c = lang_code_of(*lang).unwrap_or_else(|| panic!("{lang:?} has no code"));
            assert_eq!(whatlang_lang(c), Some(*lang), "{lang:?} -> {c}");
        }
        // Both columns are unique (the 639-3 column is sorted).
        let mut c3: Vec<&str> = ISO_639_3_TO_1.iter().map(|p| p.0).collect();
        let sorted = {
            let mut s = c3.clone();
            s.sort();
            s
        };
        assert_eq!(c3, sorted);
        c3.dedup();
        assert_eq!(c3.len(), ISO_639_3_TO_1.len());
        assert_eq!(DetectorKind::Whatlang.supported_codes().len(), ISO_639_3_TO_1.len());
        // Spot checks (the full check is against the pycountry fixture).
        assert_eq!(lang_code_of(Lang::Deu), Some(code("de")));
        assert_eq!(lang_code_of(Lang::Ell), Some(code("el")));
        assert_eq!(lang_code_of(Lang::Pes), Some(code("fa")));
        assert_eq!(lang_code_of(Lang::Cmn), Some(code("zh")));
        assert_eq!(whatlang_lang(code("gd")), None);
    }

    #[test]
    fn mapping_agrees_with_the_iso_639_3_table() {
        // Fixture: the ISO 639-3 table's Part 1 column, as shipped by the
        // pycountry package (scripts/iso639_3_to_1.py).
        let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("tests/fixtures/analysis/detect/iso639_3_to_1.tsv");
        let text = std::fs::read_to_string(path).expect("fixture readable");
        let table: BTreeMap<&str, &str> = text.lines().filter_map(|l| l.split_once('\t')).collect();
        assert_eq!(table.len(), 184);
        // Individual languages mapped to their macrolanguage's code.
        let macro_members = [("cmn", "zho"), ("pes", "fas")];
        for (c3, c1) in ISO_639_3_TO_1 {
            let key = macro_members.iter().find(|m| m.0 == *c3).map_or(*c3, |m| m.1);
            assert_eq!(table.get(key), Some(c1), "{c3}");
        }
    }

    #[test]
    fn length_buckets_have_the_documented_edges() {
        let got: Vec<&str> = [0, 20, 21, 60, 61, 140, 141].map(length_bucket).to_vec();
        assert_eq!(got, ["<=20", "<=20", "21-60", "21-60", "61-140", "61-140", ">140"]);
    }

    fn detector(kind: DetectorKind, route: Option<&[&str]>, floor: f64) -> LangDetector {
        let langs = route.map(|r| r.iter().map(|c| code(c)).collect());
        LangDetector::new(kind, langs, floor).expect("valid settings")
    }

    const SEVEN: [&str; 7] = ["en", "de", "fr", "es", "it", "pt", "nl"];

    #[test]
    fn unsupported_languages_are_named() {
        let langs = Some(vec![code("en"), code("gd"), code("eu")]);
        let err = LangDetector::new(DetectorKind::Whatlang, langs.clone(), 0.0)
            .expect_err("gd and eu are unknown to whatlang");
        let text = err.to_string();
        assert!(text.contains("whatlang cannot recognise eu, gd"), "{text}");
        assert!(text.contains("supported codes: af ak am ar"), "{text}");
        let err = LangDetector::new(DetectorKind::Lingua, langs, 0.0).expect_err("not compiled");
        let text = err.to_string();
        assert!(text.contains("lingua cannot recognise eu, gd"), "{text}");
        assert!(text.contains("supported codes: ar bg ca cs da de"), "{text}");
        for kind in DetectorKind::ALL {
            assert!(LangDetector::new(kind, Some(vec![]), 0.0).is_err());
            assert!(LangDetector::new(kind, None, 1.5).is_err());
            assert!(LangDetector::new(kind, None, f64::NAN).is_err());
        }
    }

    #[test]
    fn debug_form_names_the_detector_and_its_settings() {
        let d = LangDetector::new(
            DetectorKind::Whatlang,
            Some(vec![code("fr"), code("en"), code("fr")]),
            0.25,
        )
        .expect("valid settings");
        assert_eq!(d.languages(), Some(&[code("en"), code("fr")][..]));
        assert_eq!((d.kind(), d.min_confidence()), (DetectorKind::Whatlang, 0.25));
        let same = detector(DetectorKind::Whatlang, Some(&["en", "fr"]), 0.25);
        assert_eq!(format!("{d:?}"), format!("{same:?}"));
        assert_eq!(
            format!("{same:?}"),
            "LangDetector { detector: \"whatlang\", languages: Some([\"en\", \"fr\"]), \
             min_confidence: 0.25 }"
        );
        // The orchestrator and the cache key detections by this form: the
        // detector's name keeps the two apart.
        let lingua = detector(DetectorKind::Lingua, Some(&["en", "fr"]), 0.25);
        assert_ne!(format!("{lingua:?}"), format!("{same:?}"));
        assert!(format!("{lingua:?}").starts_with("LangDetector { detector: \"lingua\""));
    }

    #[test]
    fn chain_file_names_of_the_detectors() {
        for kind in DetectorKind::ALL {
            let value = toml::Value::String(kind.as_str().to_string());
            assert_eq!(value.try_into::<DetectorKind>().ok(), Some(kind));
            assert_eq!(kind.to_string(), kind.as_str());
        }
        assert_eq!(DetectorKind::default(), DetectorKind::Lingua);
    }

    #[test]
    fn hand_cases() {
        let cases = [
            ("Der Fährhafen in Kiel ist heute wegen des Sturms geschlossen.", "de"),
            ("The ferry harbour is closed today because of the storm.", "en"),
            ("Le port de ferry est fermé aujourd'hui à cause de la tempête.", "fr"),
            ("El puerto de ferris está cerrado hoy por la tormenta.", "es"),
            ("De veerhaven is vandaag gesloten vanwege de storm.", "nl"),
        ];
        for kind in DetectorKind::ALL {
            let all = detector(kind, None, 0.0);
            let seven = detector(kind, Some(&SEVEN), 0.0);
            for (text, want) in cases {
                assert_eq!(all.detect(text).map(|d| d.lang), Some(code(want)), "{kind} {text}");
                assert_eq!(seven.detect(text).map(|d| d.lang), Some(code(want)), "{kind} {text}");
            }
            // No letters: nothing to detect.
            assert_eq!(all.detect("12:30 !!! 🎉"), None, "{kind}");
            assert_eq!(all.detect(""), None, "{kind}");
            // A floor of 1.0 keeps only certain answers (a one-language script).
            let strict = detector(kind, None, 1.0);
            assert_eq!(strict.detect("สวัสดีครับ").map(|d| d.lang), Some(code("th")), "{kind}");
            let en = all.detect("The ferry harbour is closed today.").expect("english");
            assert!(en.confidence < 1.0, "{kind}");
            let floor = detector(kind, None, en.confidence + 1e-9);
            assert_eq!(floor.detect("The ferry harbour is closed today."), None, "{kind}");
        }
    }

    /// The routing rule: a language outside the route is answered (so the
    /// chain sends the text to its fallback), a routed one is answered with
    /// its confidence among the route's languages.
    #[test]
    fn a_language_outside_the_route_is_answered_not_forced_into_the_route() {
        let texts = [
            ("Igår kväll promenerade vi länge genom staden och pratade om livet.", "sv"),
            ("Вчера вечером мы долго гуляли по городу и разговаривали о жизни.", "ru"),
            ("Dün akşam şehirde uzun uzun yürüdük ve hayat hakkında konuştuk.", "tr"),
            ("เมื่อวานตอนเย็นเราเดินเล่นในเมืองเป็นเวลานานและคุยกันเรื่องชีวิต", "th"),
        ];
        for kind in DetectorKind::ALL {
            let seven = detector(kind, Some(&SEVEN), 0.5);
            for (text, want) in texts {
                let got = seven.detect(text).expect("confident");
                assert_eq!(got.lang, code(want), "{kind} {text}");
                assert!(!seven.listed(got.lang));
            }
            // Swedish listed: it is answered as a routed language.
            let with_sv = detector(kind, Some(&["de", "sv"]), 0.5);
            assert_eq!(with_sv.detect(texts[0].0).map(|d| d.lang), Some(code("sv")), "{kind}");
            // A routed language's confidence is among the route's languages:
            // with German and English only, a German sentence is certain
            // with whatlang's measure and nearly so with lingua's.
            let two = detector(kind, Some(&["de", "en"]), 0.0);
            let de = two.detect("Der Hafen ist heute wegen des Sturms geschlossen.");
            let de = de.expect("German");
            assert_eq!(de.lang, code("de"));
            assert!(de.confidence > 0.99, "{kind} {}", de.confidence);
        }
        // whatlang without the rule: restricted to the seven, Swedish used
        // to go to German (the behaviour the rule replaces).
        let forced =
            Detector::with_allowlist(SEVEN.iter().filter_map(|c| whatlang_lang(code(c))).collect());
        let info = forced.detect(texts[0].0).expect("a Latin-script language");
        assert_eq!(lang_code_of(info.lang()), Some(code("de")));
    }

    /// Texts lingua and whatlang must survive without panicking.
    #[test]
    fn odd_inputs_give_an_answer_or_none() {
        let long = "Der Hafen ist heute geschlossen. ".repeat(400);
        let odd = [
            "\u{301}\u{301}\u{301}",
            "\0\u{1}\u{7f}",
            "🇸🇪🇩🇪🎉👨\u{200d}👩\u{200d}👧",
            "ab",
            "x",
            "東京 Москва Berlin القاهرة",
            "#HarbourMarket @ana https://x.example/a?b=1",
            &long,
        ];
        for kind in DetectorKind::ALL {
            let d = detector(kind, Some(&SEVEN), 0.0);
            let got: Vec<Option<Detection>> = odd.iter().map(|t| d.detect(t)).collect();
            assert_eq!(got.len(), odd.len());
            assert_eq!(got[7].map(|d| d.lang), Some(code("de")), "{kind}");
            assert!(got.iter().flatten().all(|d| (0.0..=1.0).contains(&d.confidence)));
        }
    }

    #[test]
    fn detect_all_keeps_input_order() {
        let base = [
            "Der Hafen ist heute geschlossen.",
            "The harbour is closed today.",
            "Le port est fermé aujourd'hui.",
            "",
        ];
        let texts: Vec<&str> = (0..101).map(|i| base[i % base.len()]).collect();
        for kind in DetectorKind::ALL {
            let d = detector(kind, Some(&SEVEN), 0.0);
            let one_by_one: Vec<Option<Detection>> = texts.iter().map(|t| d.detect(t)).collect();
            assert_eq!(d.detect_all(&texts), one_by_one);
            assert_eq!(d.detect_all(&texts[..3]), one_by_one[..3].to_vec());
            assert!(d.detect_all(&[]).is_empty());
            let (timed, seconds) = d.detect_all_timed(&texts);
            assert_eq!(timed, one_by_one);
            assert!(seconds >= 0.0);
        }
    }

    // ---- routing on Universal Dependencies sentences of known language ----

    /// `(language, file)` of the sentence sets read in place from
    /// ../shared/data: the UD test splits of ud/ (Nivre et al., Universal
    /// Dependencies v2, LREC 2020; treebanks in ud/SOURCES.tsv), Parallel UD
    /// of ud_pud/ (Zeman et al., CoNLL 2017 shared task) and the Thai PUD
    /// sentences of ud_nospace/th.words.tsv. Column 2 is the sentence.
    const SETS: [(&str, &str); 19] = [
        ("de", "ud/de.sentences.tsv"),
        ("en", "ud/en.sentences.tsv"),
        ("es", "ud/es.sentences.tsv"),
        ("fr", "ud/fr.sentences.tsv"),
        ("it", "ud/it-pud.sentences.tsv"),
        ("nl", "ud/nl.sentences.tsv"),
        ("pt", "ud/pt.sentences.tsv"),
        ("ru", "ud/ru.sentences.tsv"),
        ("sv", "ud/sv.sentences.tsv"),
        ("tr", "ud/tr.sentences.tsv"),
        ("de", "ud_pud/de.sentences.tsv"),
        ("en", "ud_pud/en.sentences.tsv"),
        ("es", "ud_pud/es.sentences.tsv"),
        ("fr", "ud_pud/fr.sentences.tsv"),
        ("pt", "ud_pud/pt.sentences.tsv"),
        ("ru", "ud_pud/ru.sentences.tsv"),
        ("sv", "ud_pud/sv.sentences.tsv"),
        ("tr", "ud_pud/tr.sentences.tsv"),
        ("th", "ud_nospace/th.words.tsv"),
    ];

    /// The sentences of a set (column 2), or `None` with a printed reason
    /// when the shared data is absent.
    fn sentences(file: &str) -> Option<Vec<String>> {
        let path =
            std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("../shared/data").join(file);
        match std::fs::read_to_string(&path) {
            Ok(text) => Some(
                text.lines().filter_map(|l| l.split('\t').nth(1)).map(str::to_string).collect(),
            ),
            Err(e) => {
                crate::analysis::testutil::skip(&format!("{} unreadable ({e})", path.display()));
                None
            }
        }
    }

    /// Routed right per length bucket, as `(right, sentences)`: a listed
    /// language's sentence to its own field, an unlisted one's to the
    /// fallback (no detection, or a language outside the route).
    fn routed_right(
        d: &LangDetector,
        want: LangCode,
        texts: &[&str],
    ) -> BTreeMap<&'static str, (usize, usize)> {
        let listed = d.listed(want);
        let mut out: BTreeMap<&'static str, (usize, usize)> = BTreeMap::new();
        for (text, got) in texts.iter().zip(d.detect_all(texts)) {
            let right = match got {
                Some(g) if listed => g.lang == want,
                Some(g) => !d.listed(g.lang),
                None => !listed,
            };
            let cell = out.entry(length_bucket(text.chars().count())).or_default();
            cell.0 += usize::from(right);
            cell.1 += 1;
        }
        out
    }

    fn share((right, n): (usize, usize)) -> f64 {
        right as f64 / n.max(1) as f64
    }

    /// Issue 11's acceptance floor: sentences of Swedish, Russian, Turkish
    /// and Thai, none of them routed by the built-in `routed` chain, reach
    /// the fallback at least 95% of the time above 60 characters, with
    /// either detector, in each set (every sentence of the set). Measured:
    /// whatlang 96.9% (PUD Swedish) to 100%, lingua 99.4% (PUD Swedish) to
    /// 100%.
    #[test]
    fn unlisted_languages_reach_the_fallback_above_60_characters() {
        for kind in DetectorKind::ALL {
            let d = detector(kind, Some(&SEVEN), crate::analysis::DEFAULT_MIN_CONFIDENCE);
            for (lang, file) in SETS.iter().filter(|(l, _)| ["sv", "ru", "tr", "th"].contains(l)) {
                let Some(all) = sentences(file) else { return };
                let long: Vec<&str> =
                    all.iter().map(String::as_str).filter(|s| s.chars().count() > 60).collect();
                let by_bucket = routed_right(&d, code(lang), &long);
                let total = by_bucket.values().fold((0, 0), |a, b| (a.0 + b.0, a.1 + b.1));
                crate::analysis::testutil::report_line(&format!(
                    "{kind} {file} > 60 chars: {:.4} to the fallback ({}/{})",
                    share(total),
                    total.0,
                    total.1
                ));
                assert!(total.1 > 400, "{file}: {} long sentences", total.1);
                assert!(share(total) >= 0.95, "{kind} {file}: {:.4}", share(total));
            }
        }
    }

    /// What the rule costs whatlang's routed languages, against detection
    /// restricted to the route (postassay's behaviour before the rule), on
    /// every sentence of the sets of the seven languages: at most half a
    /// point per set (measured: at most 0.3, UD Dutch 91.4% → 91.1%). And
    /// what the rule gains: restricted to the seven, most Swedish sentences
    /// of UD went to a routed field (measured: 34% reached the fallback; the
    /// rest went to German, Dutch, English …).
    #[test]
    fn the_rule_costs_whatlang_little_on_routed_languages() {
        let floor = crate::analysis::DEFAULT_MIN_CONFIDENCE;
        let rule = detector(DetectorKind::Whatlang, Some(&SEVEN), floor);
        let restricted =
            Detector::with_allowlist(SEVEN.iter().filter_map(|c| whatlang_lang(code(c))).collect());
        let before = |text: &str| {
            restricted
                .detect(text)
                .filter(|i| i.confidence() >= floor)
                .and_then(|i| lang_code_of(i.lang()))
        };
        for (lang, file) in SETS.iter().filter(|(l, _)| SEVEN.contains(l) || *l == "sv") {
            let Some(all) = sentences(file) else { return };
            let texts: Vec<&str> = all.iter().map(String::as_str).collect();
            let want = code(lang);
            let now = share(
                routed_right(&rule, want, &texts)
                    .values()
                    .fold((0, 0), |a, b| (a.0 + b.0, a.1 + b.1)),
            );
            let right = |got: Option<LangCode>| match got {
                Some(g) => g == want,
                None => !rule.listed(want),
            };
            let then = texts.iter().filter(|t| right(before(t))).count() as f64
                / texts.len().max(1) as f64;
            crate::analysis::testutil::report_line(&format!(
                "whatlang {file}: routed right {then:.4} restricted to the route, {now:.4} with the rule"
            ));
            if *lang == "sv" {
                if file.starts_with("ud/") {
                    assert!(then < 0.40 && now > 0.95, "{file}: {then:.4} → {now:.4}");
                }
            } else {
                assert!(now >= then - 0.005, "{file}: {then:.4} → {now:.4}");
            }
        }
    }

    /// Each detector on the first 150 sentences of every set, at the
    /// built-in floor 0.5: share routed right (listed languages: their own
    /// field; sv, ru, tr, th: the fallback). Floors sit about one point under
    /// the values measured on ../shared/data (see [`SETS`]) with whatlang
    /// 0.18 and lingua 1.8 (deterministic; measured values in comments), so
    /// a change of either detector or of the rule fails here.
    #[test]
    fn routing_on_a_few_sentences_per_set() {
        const FIRST: usize = 150;
        // In the order of SETS: ud de en es fr it nl pt ru sv tr, ud_pud de
        // en es fr pt ru sv tr, th.
        let floors: [(DetectorKind, [f64; 19]); 2] = [
            (
                DetectorKind::Whatlang,
                // 0.9000 0.7333 0.8467 0.8800 0.9400 0.9600 0.8000 1 0.9400 0.9200,
                // 0.9400 0.9267 0.8800 0.9800 0.9067 1 0.9733 0.9867, 1
                [
                    0.89, 0.72, 0.835, 0.87, 0.93, 0.95, 0.79, 0.99, 0.93, 0.91, 0.93, 0.915, 0.87,
                    0.97, 0.895, 0.99, 0.96, 0.975, 0.99,
                ],
            ),
            (
                DetectorKind::Lingua,
                // 0.9733 0.7933 0.9600 0.9667 1 1 0.9467 1 1 0.9933,
                // 0.9933 0.9933 1 1 0.9867 1 0.9800 1, 1
                [
                    0.96, 0.78, 0.95, 0.955, 0.99, 0.99, 0.935, 0.99, 0.99, 0.98, 0.98, 0.98, 0.99,
                    0.99, 0.975, 0.99, 0.97, 0.99, 0.99,
                ],
            ),
        ];
        for (kind, floor) in floors {
            let d = detector(kind, Some(&SEVEN), crate::analysis::DEFAULT_MIN_CONFIDENCE);
            for ((lang, file), floor) in SETS.iter().zip(floor) {
                let Some(all) = sentences(file) else { return };
                let texts: Vec<&str> = all.iter().take(FIRST).map(String::as_str).collect();
                let total = routed_right(&d, code(lang), &texts)
                    .values()
                    .fold((0, 0), |a, b| (a.0 + b.0, a.1 + b.1));
                crate::analysis::testutil::report_line(&format!(
                    "{kind} {file}: {:.4} routed right ({}/{})",
                    share(total),
                    total.0,
                    total.1
                ));
                assert!(share(total) >= floor, "{kind} {file}: {:.4} < {floor}", share(total));
            }
        }
    }
}
