//! Language detection of posts and queries with whatlang 0.18, restricted to
//! an allowlist, with a confidence floor.
//!
//! Place in the data flow: `analysis` stage; language-routing chains call
//! [`LangDetector::detect`] for a post or query whose language is not given in
//! the input, and diagnostics group results with [`length_bucket`].
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

use whatlang::{Detector, Lang};

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

/// Every ISO 639-1 code the detector can answer, sorted.
pub fn supported_codes() -> Vec<LangCode> {
    let mut codes: Vec<LangCode> = Lang::all().iter().filter_map(|l| lang_code_of(*l)).collect();
    codes.sort();
    codes.dedup();
    codes
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
    /// whatlang's confidence in [0, 1].
    pub confidence: f64,
}

/// A configured detector: whatlang restricted to an allowlist, answering
/// only when its confidence reaches a floor. Its `Debug` form shows only the
/// settings (sorted allowlist, floor), so equal settings print equally.
#[derive(Clone)]
pub struct LangDetector {
    allowlist: Option<Vec<LangCode>>,
    min_confidence: f64,
    detector: Detector,
}

impl std::fmt::Debug for LangDetector {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("LangDetector")
            .field(
                "allowlist",
                &self
                    .allowlist
                    .as_ref()
                    .map(|v| v.iter().map(LangCode::as_str).collect::<Vec<_>>()),
            )
            .field("min_confidence", &self.min_confidence)
            .finish()
    }
}

impl LangDetector {
    /// A detector answering only languages of `allowlist` (`None` = every
    /// language whatlang knows; all have an ISO 639-1 code) and only when
    /// whatlang's confidence is at least `min_confidence` (0 accepts every
    /// answer). Fails when a code of the allowlist is unknown to whatlang
    /// (the message names it and lists the supported codes), when the
    /// allowlist is empty, or when `min_confidence` is not in [0, 1].
    pub fn new(allowlist: Option<Vec<LangCode>>, min_confidence: f64) -> Result<LangDetector> {
        if !(0.0..=1.0).contains(&min_confidence) {
            return Err(Error::usage(format!(
                "language detection: minimum confidence must be in [0, 1], found {min_confidence}"
            )));
        }
        let allowlist = allowlist.map(|mut codes| {
            codes.sort();
            codes.dedup();
            codes
        });
        let detector = match &allowlist {
            None => Detector::new(),
            Some(codes) => {
                if codes.is_empty() {
                    return Err(Error::usage("language detection: the allowlist is empty"));
                }
                let unknown: Vec<&str> = codes
                    .iter()
                    .filter(|c| whatlang_lang(**c).is_none())
                    .map(|c| c.as_str())
                    .collect();
                if !unknown.is_empty() {
                    let supported: Vec<String> =
                        supported_codes().iter().map(|c| c.to_string()).collect();
                    return Err(Error::usage(format!(
                        "language detection: no detector for {}; supported codes: {}",
                        unknown.join(", "),
                        supported.join(" ")
                    )));
                }
                Detector::with_allowlist(codes.iter().filter_map(|c| whatlang_lang(*c)).collect())
            }
        };
        Ok(LangDetector { allowlist, min_confidence, detector })
    }

    /// The allowlist, sorted and without duplicates (`None` = every language).
    pub fn allowlist(&self) -> Option<&[LangCode]> {
        self.allowlist.as_deref()
    }

    /// The confidence floor.
    pub fn min_confidence(&self) -> f64 {
        self.min_confidence
    }

    /// Detect the language of `text`; `None` when nothing could be detected
    /// (no letters, or a script none of the allowed languages uses) or the
    /// confidence is below the floor.
    pub fn detect(&self, text: &str) -> Option<Detection> {
        let info = self.detector.detect(text)?;
        let lang = lang_code_of(info.lang())?;
        let confidence = info.confidence();
        if confidence < self.min_confidence {
            return None;
        }
        if let Some(allow) = &self.allowlist {
            // whatlang answers from the allowlist; this guards the mapping.
            if allow.binary_search(&lang).is_err() {
                return None;
            }
        }
        Some(Detection { lang, confidence })
    }

    /// Detect every text, on 2 threads; the result order is the input order
    /// (deterministic: each text's answer depends only on the text).
    pub fn detect_all(&self, texts: &[&str]) -> Vec<Option<Detection>> {
        const THREADS: usize = 2;
        if texts.len() < 64 {
            return texts.iter().map(|t| self.detect(t)).collect();
        }
        let chunk = texts.len().div_ceil(THREADS);
        std::thread::scope(|scope| {
            let handles: Vec<_> = texts
                .chunks(chunk)
                .map(|part| {
                    scope.spawn(move || part.iter().map(|t| self.detect(t)).collect::<Vec<_>>())
                })
                .collect();
            let mut out = Vec::with_capacity(texts.len());
            for h in handles {
                match h.join() {
                    Ok(part) => out.extend(part),
                    Err(e) => std::panic::resume_unwind(e),
                }
            }
            out
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::collections::BTreeMap;

    fn code(s: &str) -> LangCode {
        LangCode::parse(s).expect("valid code in test")
    }

    fn seven() -> Vec<LangCode> {
        ["en", "de", "fr", "es", "it", "pt", "nl"].map(code).to_vec()
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
        assert_eq!(supported_codes().len(), ISO_639_3_TO_1.len());
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

    #[test]
    fn unsupported_allowlist_codes_are_named() {
        let err = LangDetector::new(Some(vec![code("en"), code("gd"), code("eu")]), 0.0)
            .expect_err("gd and eu are unknown to whatlang");
        let text = err.to_string();
        assert!(text.contains("no detector for eu, gd"), "{text}");
        assert!(text.contains("supported codes: af ak am ar"), "{text}");
        assert!(LangDetector::new(Some(vec![]), 0.0).is_err());
        assert!(LangDetector::new(None, 1.5).is_err());
        assert!(LangDetector::new(None, f64::NAN).is_err());
        let d = LangDetector::new(Some(vec![code("fr"), code("en"), code("fr")]), 0.25)
            .expect("valid settings");
        assert_eq!(d.allowlist(), Some(&[code("en"), code("fr")][..]));
        assert_eq!(d.min_confidence(), 0.25);
        let same = LangDetector::new(Some(vec![code("en"), code("fr")]), 0.25).expect("valid");
        assert_eq!(format!("{d:?}"), format!("{same:?}"));
        assert_eq!(
            format!("{same:?}"),
            "LangDetector { allowlist: Some([\"en\", \"fr\"]), min_confidence: 0.25 }"
        );
    }

    #[test]
    fn hand_cases() {
        let all = LangDetector::new(None, 0.0).expect("all languages");
        let seven = LangDetector::new(Some(seven()), 0.0).expect("seven languages");
        let cases = [
            ("Der Fährhafen in Kiel ist heute wegen des Sturms geschlossen.", "de"),
            ("The ferry harbour is closed today because of the storm.", "en"),
            ("Le port de ferry est fermé aujourd'hui à cause de la tempête.", "fr"),
            ("El puerto de ferris está cerrado hoy por la tormenta.", "es"),
            ("De veerhaven is vandaag gesloten vanwege de storm.", "nl"),
        ];
        for (text, want) in cases {
            assert_eq!(all.detect(text).map(|d| d.lang), Some(code(want)), "{text}");
            assert_eq!(seven.detect(text).map(|d| d.lang), Some(code(want)), "{text}");
        }
        // Cyrillic: whatlang answers Russian among all languages, and nothing
        // when no allowed language is written in Cyrillic.
        let ru = "Вчера вечером мы долго гуляли по городу и разговаривали о жизни.";
        assert_eq!(all.detect(ru).map(|d| d.lang), Some(code("ru")));
        assert_eq!(seven.detect(ru), None);
        // No letters: nothing to detect.
        assert_eq!(all.detect("12:30 !!! 🎉"), None);
        assert_eq!(all.detect(""), None);
        // A floor of 1.0 keeps only certain answers (a one-language script).
        let strict = LangDetector::new(None, 1.0).expect("strict");
        assert_eq!(strict.detect("こんにちは、世界").map(|d| d.lang), Some(code("ja")));
        let en = all.detect("The ferry harbour is closed today.").expect("english");
        assert!(en.confidence < 1.0);
        let floor = LangDetector::new(None, en.confidence + 1e-9).expect("floor");
        assert_eq!(floor.detect("The ferry harbour is closed today."), None);
    }

    #[test]
    fn detect_all_keeps_input_order() {
        let d = LangDetector::new(Some(seven()), 0.0).expect("seven");
        let base = [
            "Der Hafen ist heute geschlossen.",
            "The harbour is closed today.",
            "Le port est fermé aujourd'hui.",
            "",
        ];
        let texts: Vec<&str> = (0..101).map(|i| base[i % base.len()]).collect();
        let one_by_one: Vec<Option<Detection>> = texts.iter().map(|t| d.detect(t)).collect();
        assert_eq!(d.detect_all(&texts), one_by_one);
        assert_eq!(d.detect_all(&texts[..3]), one_by_one[..3].to_vec());
        assert!(d.detect_all(&[]).is_empty());
    }

    // ---- accuracy on Universal Dependencies sentences of known language ----

    /// `(expected code, file)` of the UD test splits in shared/data/ud
    /// (Nivre et al., Universal Dependencies v2, LREC 2020; treebanks in
    /// shared/data/ud/SOURCES.tsv).
    const UD_FILES: [(&str, &str); 10] = [
        ("de", "de.sentences.tsv"),
        ("en", "en.sentences.tsv"),
        ("es", "es.sentences.tsv"),
        ("fr", "fr.sentences.tsv"),
        ("it", "it-pud.sentences.tsv"),
        ("nl", "nl.sentences.tsv"),
        ("pt", "pt.sentences.tsv"),
        ("ru", "ru.sentences.tsv"),
        ("sv", "sv.sentences.tsv"),
        ("tr", "tr.sentences.tsv"),
    ];

    /// Accuracy per language and per length bucket; prints a table.
    fn measure(d: &LangDetector, langs: &[&str], label: &str) -> BTreeMap<String, f64> {
        let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("../shared/data/ud");
        let mut per_lang = BTreeMap::new();
        let mut buckets: BTreeMap<&str, (usize, usize)> = BTreeMap::new();
        for (want, file) in UD_FILES.iter().filter(|(l, _)| langs.contains(l)) {
            let text = std::fs::read_to_string(dir.join(file)).expect("UD sentences readable");
            // Column 2 is the sentence text (column 1 its id).
            let sents: Vec<&str> =
                text.lines().filter_map(|l| l.split_once('\t')).map(|p| p.1).collect();
            let got = d.detect_all(&sents);
            let mut hits = 0;
            for (s, g) in sents.iter().zip(&got) {
                let ok = g.is_some_and(|g| g.lang.as_str() == *want);
                hits += usize::from(ok);
                let b = buckets.entry(length_bucket(s.chars().count())).or_default();
                b.0 += usize::from(ok);
                b.1 += 1;
            }
            let acc = hits as f64 / sents.len().max(1) as f64;
            println!("{label} {want}: {acc:.4} ({hits}/{})", sents.len());
            per_lang.insert(want.to_string(), acc);
        }
        for (b, (h, n)) in &buckets {
            println!("{label} length {b}: {:.4} ({h}/{n})", *h as f64 / (*n).max(1) as f64);
            per_lang.insert(format!("len {b}"), *h as f64 / (*n).max(1) as f64);
        }
        per_lang
    }

    fn ud_present() -> bool {
        let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("../shared/data/ud");
        if dir.is_dir() {
            true
        } else {
            crate::analysis::testutil::skip(&format!("{} is absent", dir.display()));
            false
        }
    }

    #[test]
    fn accuracy_on_ud_sentences() {
        if !ud_present() {
            return;
        }
        let seven_langs = ["de", "en", "es", "fr", "it", "nl", "pt"];
        let d7 = LangDetector::new(Some(seven()), 0.0).expect("seven");
        let acc7 = measure(&d7, &seven_langs, "allow7");
        let all = LangDetector::new(None, 0.0).expect("all");
        let all_langs: Vec<&str> = UD_FILES.iter().map(|p| p.0).collect();
        let acc_all = measure(&all, &all_langs, "all");
        // Floors about one point under the accuracy measured with whatlang
        // 0.18 on these files (deterministic; measured values in comments),
        // so a regression of the mapping or the allowlist handling fails.
        // Short sentences are hard: UD English (EWT) holds many web-forum
        // one-liners ("Thanks!"), hence its low score.
        let floors7 = [
            ("de", 0.94),          // 0.9519
            ("en", 0.75),          // 0.7603
            ("es", 0.95),          // 0.9625
            ("fr", 0.965),         // 0.9760
            ("it", 0.975),         // 0.9880
            ("nl", 0.965),         // 0.9765
            ("pt", 0.945),         // 0.9568
            ("len <=20", 0.42),    // 0.4295
            ("len 21-60", 0.86),   // 0.8731
            ("len 61-140", 0.975), // 0.9840
            ("len >140", 0.99),    // 0.9954
        ];
        let floors_all = [
            ("de", 0.925),        // 0.9355
            ("en", 0.65),         // 0.6610
            ("es", 0.935),        // 0.9461
            ("fr", 0.95),         // 0.9639
            ("it", 0.97),         // 0.9790
            ("nl", 0.87),         // 0.8809
            ("pt", 0.935),        // 0.9453
            ("ru", 0.89),         // 0.8993
            ("sv", 0.945),        // 0.9541
            ("tr", 0.90),         // 0.9132
            ("len <=20", 0.28),   // 0.2887
            ("len 21-60", 0.81),  // 0.8232
            ("len 61-140", 0.96), // 0.9693
            ("len >140", 0.99),   // 0.9946
        ];
        for (acc, floors, label) in
            [(&acc7, &floors7[..], "allow7"), (&acc_all, &floors_all[..], "all")]
        {
            for (key, floor) in floors {
                let got = acc.get(*key).copied().unwrap_or(0.0);
                assert!(got >= *floor, "{label} {key}: accuracy {got:.4} under floor {floor}");
            }
        }
        // Restricting to the seven languages never hurts them here.
        for l in seven_langs {
            assert!(acc7[l] >= acc_all[l], "{l}");
        }
    }
}
