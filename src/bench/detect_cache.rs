//! A disk cache of language detections, so that a second `postassay run` on
//! the same corpus skips detection (the slowest step of a routed chain).
//!
//! Place in the data flow: `bench` orchestration, between reading the inputs
//! and building the indexes; `Detections::compute` in `bench/mod.rs` asks it
//! for each detector configuration's detections of the posts and queries.
//!
//! Key: SHA-256 of a format tag, postassay's version, the detector's
//! settings (which detector, the route's languages and the confidence floor:
//! its `Debug` form), a fingerprint of the detector's answers on a few fixed
//! probe texts (so a change of the detection code, of whatlang or of lingua
//! changes the key even within one version),
//! and the texts handed to the detector, each preceded by its length. One
//! file per key, `<key>.det`, holds one line per text (`lang confidence`, or
//! an empty line for no detection); confidences are written in Rust's
//! shortest round-trip form, so a reload gives bit-identical values.
//!
//! Location: `detections/` in the cache directory ([`cache_root_from_env`],
//! or `run --cache-dir`); `run --no-cache` or `POSTASSAY_NO_CACHE` turns the
//! cache off.
//! Files are never evicted; the directory can be deleted at any time. A
//! missing, unreadable or damaged file is a miss: the texts are detected
//! again and the file rewritten (atomically, through a temporary file).

use std::path::{Path, PathBuf};

use sha2::{Digest, Sha256};

use crate::analysis::detect::{Detection, LangDetector};
use crate::error::{Error, Result};
use crate::input::LangCode;

/// Environment variable that turns the cache off (any value but empty or `0`).
pub const NO_CACHE_ENV: &str = "POSTASSAY_NO_CACHE";

/// Environment variable naming the cache directory.
pub const CACHE_DIR_ENV: &str = "POSTASSAY_CACHE_DIR";

/// Lists with fewer texts than this are detected directly by default
/// (detecting them takes less time than hashing and a file round trip, and
/// small test corpora leave no files behind).
pub const DEFAULT_MIN_TEXTS: usize = 1_000;

/// First line of a cache file.
const HEADER: &str = "postassay detections v1";

/// Texts whose detections fingerprint the detector's behaviour (several
/// scripts and languages, and a text with nothing to detect).
const PROBES: &[&str] = &[
    "The ferry harbour is closed today because of the storm.",
    "Der Fährhafen in Kiel ist heute wegen des Sturms geschlossen.",
    "Le port de ferry est fermé aujourd'hui à cause de la tempête.",
    "El puerto de ferris está cerrado hoy por la tormenta.",
    "Il porto dei traghetti oggi è chiuso a causa della tempesta.",
    "O porto das balsas está fechado hoje por causa da tempestade.",
    "De veerhaven is vandaag gesloten vanwege de storm.",
    "Вчера вечером мы долго гуляли по городу.",
    "fish market ok",
    "12:30 !!! 🎉",
];

/// The cache directory the environment asks for: `$POSTASSAY_CACHE_DIR`
/// when set, else the user's cache directory (`$XDG_CACHE_HOME/postassay`,
/// else `$HOME/.cache/postassay`; on Windows `%LOCALAPPDATA%\postassay\cache`);
/// `None` when `POSTASSAY_NO_CACHE` is set to anything but empty or `0`, or
/// no such directory can be found. Detections are kept in its
/// `detections/`, chain indexes in its `indexes/`
/// ([`crate::index::cache`]).
pub fn cache_root_from_env() -> Option<PathBuf> {
    cache_root_from_vars(|name| std::env::var_os(name).map(PathBuf::from))
}

/// [`cache_root_from_env`] with the variables read by `var`.
pub fn cache_root_from_vars(var: impl Fn(&str) -> Option<PathBuf>) -> Option<PathBuf> {
    let set = |name: &str| var(name).filter(|v| !v.as_os_str().is_empty());
    if set(NO_CACHE_ENV).is_some_and(|v| v.as_os_str() != "0") {
        return None;
    }
    if let Some(dir) = set(CACHE_DIR_ENV) {
        return Some(dir);
    }
    // XDG Base Directory Specification: a relative $XDG_CACHE_HOME is
    // invalid and must be ignored.
    if cfg!(windows) {
        set("LOCALAPPDATA").filter(|p| p.is_absolute()).map(|p| p.join("postassay/cache"))
    } else {
        set("XDG_CACHE_HOME")
            .filter(|p| p.is_absolute())
            .or_else(|| set("HOME").filter(|p| p.is_absolute()).map(|h| h.join(".cache")))
            .map(|p| p.join("postassay"))
    }
}

/// A directory of cached detections.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct DetectCache {
    dir: PathBuf,
    min_texts: usize,
}

/// Detections of a list of texts and where they came from.
#[derive(Debug)]
pub struct CachedDetections {
    /// One entry per text, in input order.
    pub detections: Vec<Option<Detection>>,
    /// True when read from the cache (the detector was not called).
    pub from_cache: bool,
    /// Why the fresh detections could not be written to the cache, if so
    /// (the detections are good all the same).
    pub write_error: Option<Error>,
}

impl DetectCache {
    /// A cache in `dir` (created on the first write), caching lists of at
    /// least [`DEFAULT_MIN_TEXTS`] texts.
    pub fn new(dir: impl Into<PathBuf>) -> DetectCache {
        DetectCache { dir: dir.into(), min_texts: DEFAULT_MIN_TEXTS }
    }

    /// The same cache for lists of at least `min_texts` texts.
    pub fn with_min_texts(mut self, min_texts: usize) -> DetectCache {
        self.min_texts = min_texts;
        self
    }

    /// The directory.
    pub fn dir(&self) -> &Path {
        &self.dir
    }

    /// The cache key (hex SHA-256, see the module docs) of `texts` detected
    /// by `detector`.
    pub fn key(detector: &LangDetector, texts: &[&str]) -> String {
        let mut hasher = Sha256::new();
        hasher.update(HEADER.as_bytes());
        hasher.update(b"\n");
        hasher.update(env!("CARGO_PKG_VERSION").as_bytes());
        hasher.update(b"\n");
        hasher.update(format!("{detector:?}").as_bytes());
        hasher.update(b"\n");
        for probe in PROBES {
            hasher.update(format_line(detector.detect(probe).as_ref()).as_bytes());
            hasher.update(b"\n");
        }
        hasher.update((texts.len() as u64).to_le_bytes());
        for text in texts {
            hasher.update((text.len() as u64).to_le_bytes());
            hasher.update(text.as_bytes());
        }
        crate::input::hex(&hasher.finalize())
    }

    fn path_of(&self, key: &str) -> PathBuf {
        self.dir.join(format!("{key}.det"))
    }

    /// The cached detections of `len` texts under `key`; `None` when there
    /// is no such file or it does not hold exactly `len` valid lines.
    pub fn load(&self, key: &str, len: usize) -> Option<Vec<Option<Detection>>> {
        let text = std::fs::read_to_string(self.path_of(key)).ok()?;
        let mut lines = text.split('\n');
        if lines.next()? != HEADER {
            return None;
        }
        let mut out = Vec::with_capacity(len);
        for _ in 0..len {
            out.push(parse_line(lines.next()?)?);
        }
        // The file ends with one newline after the last line.
        match (lines.next(), lines.next()) {
            (Some(""), None) => Some(out),
            _ => None,
        }
    }

    /// Write `detections` under `key` (through a temporary file renamed into
    /// place, so readers never see half a file).
    pub fn store(&self, key: &str, detections: &[Option<Detection>]) -> Result<()> {
        std::fs::create_dir_all(&self.dir).map_err(|e| Error::io(&self.dir, e))?;
        let mut text = String::with_capacity(HEADER.len() + 1 + detections.len() * 24);
        text.push_str(HEADER);
        text.push('\n');
        for d in detections {
            text.push_str(&format_line(d.as_ref()));
            text.push('\n');
        }
        let path = self.path_of(key);
        let tmp = tempfile::Builder::new()
            .prefix(".det-")
            .tempfile_in(&self.dir)
            .map_err(|e| Error::io(&self.dir, e))?;
        std::fs::write(tmp.path(), text).map_err(|e| Error::io(tmp.path(), e))?;
        tmp.persist(&path).map_err(|e| Error::io(&path, e.error))?;
        Ok(())
    }

    /// The detections of `texts` by `detector`: from the cache when present,
    /// else detected (on 2 threads, [`LangDetector::detect_all`]) and stored.
    pub fn detect_all(&self, detector: &LangDetector, texts: &[&str]) -> CachedDetections {
        self.get_or_detect(detector, texts, |t| detector.detect_all(t))
    }

    /// [`detect_all`](Self::detect_all) with the detection done by `detect`
    /// (which must answer as `detector` does: its settings make the key).
    pub fn get_or_detect(
        &self,
        detector: &LangDetector,
        texts: &[&str],
        detect: impl FnOnce(&[&str]) -> Vec<Option<Detection>>,
    ) -> CachedDetections {
        if texts.len() < self.min_texts || texts.iter().all(|t| t.is_empty()) {
            return CachedDetections {
                detections: detect(texts),
                from_cache: false,
                write_error: None,
            };
        }
        let key = Self::key(detector, texts);
        if let Some(detections) = self.load(&key, texts.len()) {
            return CachedDetections { detections, from_cache: true, write_error: None };
        }
        let detections = detect(texts);
        let write_error = self.store(&key, &detections).err();
        CachedDetections { detections, from_cache: false, write_error }
    }
}

/// One line of a cache file.
fn format_line(d: Option<&Detection>) -> String {
    match d {
        // `{}` on f64 prints the shortest text that parses back to the same value.
        Some(d) => format!("{} {}", d.lang.as_str(), d.confidence),
        None => String::new(),
    }
}

/// Parse one line of a cache file (`None` when it is damaged).
fn parse_line(line: &str) -> Option<Option<Detection>> {
    if line.is_empty() {
        return Some(None);
    }
    let (lang, confidence) = line.split_once(' ')?;
    let lang = LangCode::parse(lang)?;
    let confidence: f64 = confidence.parse().ok()?;
    (0.0..=1.0).contains(&confidence).then_some(Some(Detection { lang, confidence }))
}

#[cfg(test)]
mod tests {
    use std::cell::Cell;

    use super::*;
    use crate::analysis::detect::DetectorKind;

    fn code(s: &str) -> LangCode {
        LangCode::parse(s).expect("valid code in test")
    }

    fn detector() -> LangDetector {
        let langs = ["en", "de", "fr"].map(code).to_vec();
        LangDetector::new(DetectorKind::Whatlang, Some(langs), 0.0).expect("valid settings")
    }

    fn texts() -> Vec<&'static str> {
        let base = [
            "Der Hafen ist heute wegen des Sturms geschlossen.",
            "The harbour is closed today because of the storm.",
            "Le port est fermé aujourd'hui à cause de la tempête.",
            "🎉",
            "",
        ];
        (0..40).map(|i| base[i % base.len()]).collect()
    }

    #[test]
    fn second_lookup_reads_the_cache_without_detecting() {
        let dir = tempfile::tempdir().expect("temp dir");
        let cache = DetectCache::new(dir.path().join("det")).with_min_texts(10);
        let d = detector();
        let texts = texts();
        let calls = Cell::new(0);
        let counting = |t: &[&str]| {
            calls.set(calls.get() + 1);
            d.detect_all(t)
        };
        let first = cache.get_or_detect(&d, &texts, counting);
        assert!(!first.from_cache);
        assert!(first.write_error.is_none(), "{:?}", first.write_error);
        assert_eq!(calls.get(), 1);
        let second = cache.get_or_detect(&d, &texts, counting);
        assert!(second.from_cache);
        assert_eq!(calls.get(), 1, "the detector was not called again");
        assert_eq!(second.detections, first.detections);
        // Bit-identical confidences.
        for (a, b) in first.detections.iter().zip(&second.detections) {
            assert_eq!(a.map(|x| x.confidence.to_bits()), b.map(|x| x.confidence.to_bits()));
        }
        assert_eq!(first.detections[0].map(|x| x.lang), Some(code("de")));
        assert_eq!(first.detections[3], None);
    }

    #[test]
    fn key_depends_on_texts_order_and_settings() {
        let d = detector();
        let k = DetectCache::key(&d, &["a b", "c"]);
        assert_eq!(k.len(), 64);
        assert_ne!(k, DetectCache::key(&d, &["c", "a b"]));
        // Length prefixes keep the boundaries between texts apart.
        assert_ne!(k, DetectCache::key(&d, &["a", "b c"]));
        let langs = ["en", "de", "fr"].map(code).to_vec();
        let floor = LangDetector::new(DetectorKind::Whatlang, Some(langs.clone()), 0.5)
            .expect("valid settings");
        assert_ne!(k, DetectCache::key(&floor, &["a b", "c"]));
        assert_eq!(k, DetectCache::key(&detector(), &["a b", "c"]));
        // The other detector with the same languages and floor: another key.
        let lingua =
            LangDetector::new(DetectorKind::Lingua, Some(langs), 0.0).expect("valid settings");
        assert_ne!(k, DetectCache::key(&lingua, &["a b", "c"]));
        assert!(format!("{lingua:?}").contains("detector: \"lingua\""), "{lingua:?}");
    }

    #[test]
    fn damaged_or_short_files_are_misses_and_get_rewritten() {
        let dir = tempfile::tempdir().expect("temp dir");
        let cache = DetectCache::new(dir.path()).with_min_texts(1);
        let d = detector();
        let texts = texts();
        let key = DetectCache::key(&d, &texts);
        let good = cache.get_or_detect(&d, &texts, |t| d.detect_all(t)).detections;
        assert_eq!(cache.load(&key, texts.len()).as_deref(), Some(&good[..]));
        // Wrong length asked: a miss.
        assert!(cache.load(&key, texts.len() - 1).is_none());
        let path = dir.path().join(format!("{key}.det"));
        let full = std::fs::read_to_string(&path).expect("cache file");
        for damaged in [
            full.replacen("de ", "xx1 ", 1),
            full.replacen("de ", "de 7.5", 1),
            full.replacen(HEADER, "postassay detections v0", 1),
            full.trim_end().to_string(),
            format!("{full}extra\n"),
        ] {
            std::fs::write(&path, &damaged).expect("write");
            assert!(cache.load(&key, texts.len()).is_none(), "{damaged:?}");
            let calls = Cell::new(0);
            let again = cache.get_or_detect(&d, &texts, |t| {
                calls.set(calls.get() + 1);
                d.detect_all(t)
            });
            assert_eq!((again.from_cache, calls.get()), (false, 1));
            assert_eq!(again.detections, good);
            assert_eq!(std::fs::read_to_string(&path).expect("rewritten"), full);
        }
    }

    #[test]
    fn small_or_empty_lists_are_not_cached() {
        let dir = tempfile::tempdir().expect("temp dir");
        let cache = DetectCache::new(dir.path().join("det"));
        let d = detector();
        let few = texts();
        assert!(few.len() < DEFAULT_MIN_TEXTS);
        for _ in 0..2 {
            assert!(!cache.detect_all(&d, &few).from_cache);
        }
        let blank = vec![""; DEFAULT_MIN_TEXTS];
        assert!(!cache.detect_all(&d, &blank).from_cache);
        assert!(!dir.path().join("det").exists(), "nothing was written");
    }

    #[test]
    fn unwritable_directory_is_reported_not_fatal() {
        let dir = tempfile::tempdir().expect("temp dir");
        let file = dir.path().join("not-a-dir");
        std::fs::write(&file, "x").expect("write");
        let cache = DetectCache::new(&file).with_min_texts(1);
        let d = detector();
        let got = cache.detect_all(&d, &texts());
        assert!(!got.from_cache);
        assert_eq!(got.detections, d.detect_all(&texts()));
        assert!(got.write_error.is_some());
    }

    #[test]
    fn location_from_the_environment() {
        let vars = |pairs: &'static [(&'static str, &'static str)]| {
            move |name: &str| pairs.iter().find(|(k, _)| *k == name).map(|(_, v)| PathBuf::from(v))
        };
        assert_eq!(
            cache_root_from_vars(vars(&[(CACHE_DIR_ENV, "here"), ("HOME", "/h")])),
            Some(PathBuf::from("here"))
        );
        assert_eq!(cache_root_from_vars(vars(&[(NO_CACHE_ENV, "1"), ("HOME", "/h")])), None);
        assert_eq!(cache_root_from_vars(vars(&[])), None);
        if !cfg!(windows) {
            let off0 = cache_root_from_vars(vars(&[(NO_CACHE_ENV, "0"), ("HOME", "/h")]));
            assert_eq!(off0, Some(PathBuf::from("/h/.cache/postassay")));
            let xdg = vars(&[("XDG_CACHE_HOME", "/x"), ("HOME", "/h")]);
            assert_eq!(cache_root_from_vars(xdg), Some(PathBuf::from("/x/postassay")));
            // A relative XDG_CACHE_HOME is ignored (XDG Base Directory Specification).
            let rel = vars(&[("XDG_CACHE_HOME", "rel"), ("HOME", "/h")]);
            assert_eq!(cache_root_from_vars(rel), Some(PathBuf::from("/h/.cache/postassay")));
        }
    }
}
