//! The `stem` step: Snowball stemming of each token, in one of two
//! generations of the algorithms, with a bounded memo of recent stems.
//!
//! Place in the data flow: `analysis` stage, a filter of a chain; it needs
//! lower-case input (Snowball's vocabularies are lower case), so a
//! `lowercase` step must come before it.
//!
//! Generations (`generation = "2018" | "current"`):
//! - `2018`: the rust-stemmers 1.2 crate, which implements the Snowball
//!   algorithms as they were in early 2018 (it reproduces the snowball-data
//!   vocabularies of that time).
//! - `current`: tantivy 0.27's own `Stemmer`, which runs today's Snowball
//!   algorithms (the frostem crate). The two differ on many words (German,
//!   Dutch and Turkish most), so a report says which one a chain used.
//!
//! rust-stemmers 1.2's Greek stemmer can panic on some words (a multibyte
//! suffix bug that tantivy documents), so Greek is only offered in the
//! `current` generation; as a further guard every 2018 call runs under
//! `catch_unwind` and a token that makes it panic is left as it was.
//!
//! Tokens that do not start with a letter or digit (`#tags`, `@mentions`,
//! emoji) and URLs are left untouched: stemming them only breaks matching.
//!
//! Posts repeat a Zipfian vocabulary, so each built filter memoizes stems in
//! a two-generation cache (at most [`STEM_CACHE_CAPACITY`] words): lookups
//! hit the young table, then the old one (promoting the entry); when the
//! young table is full it becomes the old one and the previous old one is
//! dropped, an approximation of least-recently-used eviction. The tables
//! are compact (no allocation per word) and hashed with a fast
//! non-cryptographic hash. Clones of a filter (one per indexing thread and
//! segment) each have such a private memo and share a second one, consulted
//! before the stemmer runs. The memos never change a stem, only when it is
//! computed.

use std::collections::HashMap;
use std::hash::{BuildHasherDefault, Hasher};
use std::mem;
use std::panic::{catch_unwind, AssertUnwindSafe};
use std::sync::{Arc, RwLock};

use serde::{Deserialize, Serialize};
use tantivy::tokenizer::{
    Language, RawTokenizer, Stemmer, Token, TokenFilter, TokenStream, Tokenizer,
};

use super::each_token::{token_edit_filter, TokenEdit};
use super::token_shape::has_url_scheme;
use crate::input::LangCode;

/// Most words a stem filter remembers (both cache generations together;
/// the memo its clones share holds as many again). 2¹⁸: large enough that a
/// post corpus's frequent vocabulary stays in the memo (a miss runs the
/// stemmer, some 20 times slower than a hit, as measured by the chain
/// benchmark), at some 40 to 60 bytes a word.
pub const STEM_CACHE_CAPACITY: usize = 262_144;

/// Which generation of the Snowball algorithms a `stem` step runs.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
pub enum StemGeneration {
    /// Snowball as of 2018, via rust-stemmers 1.2.
    #[serde(rename = "2018")]
    V2018,
    /// Today's Snowball, via tantivy 0.27's stemmer.
    #[serde(rename = "current")]
    Current,
}

impl StemGeneration {
    /// The name used in chain files.
    pub fn as_str(self) -> &'static str {
        match self {
            StemGeneration::V2018 => "2018",
            StemGeneration::Current => "current",
        }
    }
}

/// ISO 639-1 code → (rust-stemmers algorithm, tantivy language) for every
/// Snowball algorithm both libraries ship. `no` and `nb` (Bokmål, which
/// language detection answers) both select the Norwegian algorithm.
const STEM_LANGUAGES: &[(&str, rust_stemmers::Algorithm, Language)] = &[
    ("ar", rust_stemmers::Algorithm::Arabic, Language::Arabic),
    ("da", rust_stemmers::Algorithm::Danish, Language::Danish),
    ("de", rust_stemmers::Algorithm::German, Language::German),
    ("el", rust_stemmers::Algorithm::Greek, Language::Greek),
    ("en", rust_stemmers::Algorithm::English, Language::English),
    ("es", rust_stemmers::Algorithm::Spanish, Language::Spanish),
    ("fi", rust_stemmers::Algorithm::Finnish, Language::Finnish),
    ("fr", rust_stemmers::Algorithm::French, Language::French),
    ("hu", rust_stemmers::Algorithm::Hungarian, Language::Hungarian),
    ("it", rust_stemmers::Algorithm::Italian, Language::Italian),
    ("nb", rust_stemmers::Algorithm::Norwegian, Language::Norwegian),
    ("nl", rust_stemmers::Algorithm::Dutch, Language::Dutch),
    ("no", rust_stemmers::Algorithm::Norwegian, Language::Norwegian),
    ("pt", rust_stemmers::Algorithm::Portuguese, Language::Portuguese),
    ("ro", rust_stemmers::Algorithm::Romanian, Language::Romanian),
    ("ru", rust_stemmers::Algorithm::Russian, Language::Russian),
    ("sv", rust_stemmers::Algorithm::Swedish, Language::Swedish),
    ("ta", rust_stemmers::Algorithm::Tamil, Language::Tamil),
    ("tr", rust_stemmers::Algorithm::Turkish, Language::Turkish),
];

/// The languages a generation can stem, in code order.
pub fn stem_languages(generation: StemGeneration) -> Vec<LangCode> {
    STEM_LANGUAGES
        .iter()
        .filter(|(code, _, _)| generation == StemGeneration::Current || *code != "el")
        .filter_map(|(code, _, _)| LangCode::parse(code))
        .collect()
}

/// Filter settings for `stem`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Stem {
    language: LangCode,
    generation: StemGeneration,
    v2018: rust_stemmers::Algorithm,
    current: Language,
}

impl Stem {
    /// A stemmer for `language` in `generation`; `None` when that generation
    /// has no algorithm for the language (see [`stem_languages`]).
    pub fn new(language: LangCode, generation: StemGeneration) -> Option<Stem> {
        if generation == StemGeneration::V2018 && language.as_str() == "el" {
            return None;
        }
        let &(_, v2018, current) =
            STEM_LANGUAGES.iter().find(|(code, _, _)| *code == language.as_str())?;
        Some(Stem { language, generation, v2018, current })
    }

    /// The language stemmed.
    pub fn language(&self) -> LangCode {
        self.language
    }

    /// The generation of the algorithms.
    pub fn generation(&self) -> StemGeneration {
        self.generation
    }

    /// Stem one lower-case word (no memo; for tests and inspection).
    pub fn stem_word(&self, word: &str) -> String {
        Backend::new(self).stem(word)
    }
}

/// A ready stemmer of either generation.
#[derive(Clone)]
enum Backend {
    V2018(rust_stemmers::Algorithm),
    /// tantivy's stemmer applied to a single raw token.
    Current(<Stemmer as TokenFilter>::Tokenizer<RawTokenizer>),
}

impl Backend {
    fn new(stem: &Stem) -> Backend {
        match stem.generation {
            StemGeneration::V2018 => Backend::V2018(stem.v2018),
            StemGeneration::Current => {
                Backend::Current(Stemmer::new(stem.current).transform(RawTokenizer::default()))
            }
        }
    }

    fn stem(&mut self, word: &str) -> String {
        match self {
            Backend::V2018(algorithm) => {
                let stemmer = rust_stemmers::Stemmer::create(*algorithm);
                catch_unwind(AssertUnwindSafe(|| stemmer.stem(word).into_owned()))
                    .unwrap_or_else(|_| word.to_string())
            }
            Backend::Current(analyzer) => {
                let mut stream = analyzer.token_stream(word);
                if stream.advance() {
                    mem::take(&mut stream.token_mut().text)
                } else {
                    word.to_string()
                }
            }
        }
    }
}

/// Two-generation memo of stems (see the module docs), private to one
/// filter instance, in front of the memo its clones share.
#[derive(Default)]
struct StemCache {
    young: StemTable,
    old: StemTable,
    shared: Arc<SharedStems>,
}

/// The stems known to every clone of one filter. tantivy clones a field's
/// analyzer for each indexing thread and each new segment, and every clone
/// starts with an empty private memo; on a miss there it looks here (under
/// a read lock) before running the stemmer, so each word is stemmed about
/// once per build instead of once per segment. Two generations bounded by
/// [`STEM_CACHE_CAPACITY`], like the private memo (no promotion: that would
/// need the write lock on every hit).
#[derive(Default)]
struct SharedStems {
    /// Young and old generation.
    tables: RwLock<(StemTable, StemTable)>,
}

impl SharedStems {
    /// Append the stem of `word` to `out` if known; false otherwise (or when
    /// the lock is poisoned: the memo is only an optimisation).
    fn get_into(&self, word: &str, hash: u64, out: &mut String) -> bool {
        let Ok(tables) = self.tables.read() else { return false };
        match tables.0.get(word, hash).or_else(|| tables.1.get(word, hash)) {
            Some(stem) => {
                out.push_str(stem);
                true
            }
            None => false,
        }
    }

    /// Remember the stem of `word` (unless another clone just did).
    fn insert(&self, word: &str, stem: &str, hash: u64) {
        let Ok(mut tables) = self.tables.write() else { return };
        let (young, old) = &mut *tables;
        if young.get(word, hash).is_some() {
            return;
        }
        if young.len() >= STEM_CACHE_CAPACITY / 2 {
            mem::swap(old, young);
            young.clear();
        }
        young.insert(word, stem, hash);
    }
}

impl StemCache {
    /// Write the stem of `word` into `out`, computing it on a miss. A hit
    /// allocates nothing; a hit in the old generation copies the entry into
    /// the young one.
    fn stem_into(&mut self, word: &str, backend: &mut Backend, out: &mut String) {
        out.clear();
        if word.is_empty() || word.len() > MAX_MEMO_WORD_BYTES {
            out.push_str(&backend.stem(word));
            return;
        }
        let hash = hash_word(word);
        if let Some(stem) = self.young.get(word, hash) {
            out.push_str(stem);
        } else {
            match self.old.get(word, hash) {
                Some(stem) => out.push_str(stem),
                None => {
                    if !self.shared.get_into(word, hash, out) {
                        out.push_str(&backend.stem(word));
                        self.shared.insert(word, out, hash);
                    }
                }
            }
            if self.young.len() >= STEM_CACHE_CAPACITY / 2 {
                // The young generation becomes the old one; the previous old
                // one is emptied and reused (keeping its memory) as the young
                // one.
                mem::swap(&mut self.old, &mut self.young);
                self.young.clear();
            }
            self.young.insert(word, out, hash);
        }
    }

    #[cfg(test)]
    fn len(&self) -> usize {
        self.young.len() + self.old.len()
    }
}

/// Longest word (in bytes) the memo keeps; longer ones are stemmed each time
/// (they are rare, and lengths are stored in 16 bits).
const MAX_MEMO_WORD_BYTES: usize = 255;

/// The memo's hash of a word: its low bits choose the slot (they are the
/// best mixed of [`FastHasher`]'s, see there), its high 32 bits are kept in
/// the slot to skip most comparisons of unequal words.
fn hash_word(word: &str) -> u64 {
    let mut h = FastHasher::default();
    h.write(word.as_bytes());
    h.finish()
}

/// One generation of the memo: an open-addressing hash table (linear
/// probing, at most half full) whose slots point into one string holding
/// each word followed by its stem. Compared with a map of `String` pairs it
/// needs no allocation per entry, and a lookup reads two places in memory
/// (the slot, then the word and stem side by side) instead of three, which
/// matters once the memo outgrows the processor's caches.
#[derive(Default)]
struct StemTable {
    /// A power of two in length (or empty).
    slots: Vec<Slot>,
    /// Words and stems, back to back.
    arena: String,
    len: usize,
}

/// A slot of [`StemTable`]; `word_len == 0` marks an empty slot (the empty
/// word is never memoized).
#[derive(Clone, Copy, Default)]
struct Slot {
    hash: u32,
    start: u32,
    word_len: u16,
    stem_len: u16,
}

impl StemTable {
    fn len(&self) -> usize {
        self.len
    }

    fn clear(&mut self) {
        self.slots.iter_mut().for_each(|s| *s = Slot::default());
        self.arena.clear();
        self.len = 0;
    }

    /// The stem of a non-empty `word` of hash `hash`, if memoized.
    fn get(&self, word: &str, hash: u64) -> Option<&str> {
        let mask = self.slots.len().checked_sub(1)?;
        let tag = (hash >> 32) as u32;
        let mut i = hash as usize & mask;
        loop {
            let slot = self.slots.get(i)?;
            if slot.word_len == 0 {
                return None;
            }
            if slot.hash == tag && usize::from(slot.word_len) == word.len() {
                let start = slot.start as usize;
                let word_end = start + word.len();
                if self.arena.get(start..word_end) == Some(word) {
                    return self.arena.get(word_end..word_end + usize::from(slot.stem_len));
                }
            }
            i = (i + 1) & mask;
        }
    }

    /// Memoize `stem` for a non-empty `word` (of at most
    /// [`MAX_MEMO_WORD_BYTES`]) that is not in the table.
    fn insert(&mut self, word: &str, stem: &str, hash: u64) {
        let (Ok(word_len), Ok(stem_len), Ok(start)) =
            (u16::try_from(word.len()), u16::try_from(stem.len()), u32::try_from(self.arena.len()))
        else {
            return;
        };
        if word_len == 0 {
            return;
        }
        if (self.len + 1) * 2 > self.slots.len() {
            self.grow();
        }
        self.arena.push_str(word);
        self.arena.push_str(stem);
        let slot = Slot { hash: (hash >> 32) as u32, start, word_len, stem_len };
        self.place(slot, hash as usize);
        self.len += 1;
    }

    /// Put `slot` in the first free slot from `home` on.
    fn place(&mut self, slot: Slot, home: usize) {
        let mask = self.slots.len() - 1;
        let mut i = home & mask;
        while let Some(s) = self.slots.get_mut(i) {
            if s.word_len == 0 {
                *s = slot;
                return;
            }
            i = (i + 1) & mask;
        }
    }

    /// Double the slots (starting at 1024) and re-place every entry.
    fn grow(&mut self) {
        let size = (self.slots.len() * 2).max(1024);
        let old = mem::replace(&mut self.slots, vec![Slot::default(); size]);
        for slot in old.into_iter().filter(|s| s.word_len != 0) {
            let start = slot.start as usize;
            let word = self.arena.get(start..start + usize::from(slot.word_len)).unwrap_or("");
            self.place(slot, hash_word(word) as usize);
        }
    }
}

/// A `HashMap` with [`FastHasher`], for the memos of the analysis filters.
pub(crate) type FastMap<K, V> = HashMap<K, V, BuildHasherDefault<FastHasher>>;

/// A fast, non-cryptographic hasher for short keys: the multiply-rotate
/// "FxHash" function of the Rust compiler (`h = (rotl(h, 5) ^ word) ·
/// 0x517cc1b727220a95` over 8-byte words), with a final rotation so the
/// bucket index also sees the high bits. The standard library's SipHash
/// resists collision attacks, which memos of a corpus's own words do not
/// need, at several times the cost per short word.
#[derive(Default, Clone, Copy)]
pub(crate) struct FastHasher {
    hash: u64,
}

impl FastHasher {
    const MULTIPLIER: u64 = 0x517c_c1b7_2722_0a95;

    fn add(&mut self, word: u64) {
        self.hash = (self.hash.rotate_left(5) ^ word).wrapping_mul(Self::MULTIPLIER);
    }
}

impl Hasher for FastHasher {
    fn write(&mut self, bytes: &[u8]) {
        let mut chunks = bytes.chunks_exact(8);
        for chunk in &mut chunks {
            let mut word = [0u8; 8];
            word.copy_from_slice(chunk);
            self.add(u64::from_le_bytes(word));
        }
        let rest = chunks.remainder();
        if !rest.is_empty() {
            let mut word = [0u8; 8];
            word.get_mut(..rest.len()).unwrap_or_default().copy_from_slice(rest);
            // The length keeps "a" and "a\0" apart.
            self.add(u64::from_le_bytes(word) ^ ((rest.len() as u64) << 59));
        }
    }

    fn write_u8(&mut self, i: u8) {
        self.add(u64::from(i));
    }

    fn write_usize(&mut self, i: usize) {
        self.add(i as u64);
    }

    fn finish(&self) -> u64 {
        self.hash.rotate_left(26)
    }
}

token_edit_filter!(Stem);

/// The working state of a `stem` step: the stemmer, the memo and a buffer.
pub struct StemWork {
    backend: Backend,
    cache: StemCache,
    buffer: String,
}

impl Clone for StemWork {
    /// A clone starts with an empty private memo (clones usually go to other
    /// threads) and shares the memo of the state it was cloned from.
    fn clone(&self) -> Self {
        StemWork {
            backend: self.backend.clone(),
            cache: StemCache {
                young: StemTable::default(),
                old: StemTable::default(),
                shared: Arc::clone(&self.cache.shared),
            },
            buffer: String::new(),
        }
    }
}

impl TokenEdit for Stem {
    type Work = StemWork;

    fn start(&self) -> StemWork {
        StemWork { backend: Backend::new(self), cache: StemCache::default(), buffer: String::new() }
    }

    fn edit(&self, work: &mut StemWork, token: &mut Token) -> bool {
        if is_stemmable(&token.text) {
            work.cache.stem_into(&token.text, &mut work.backend, &mut work.buffer);
            mem::swap(&mut token.text, &mut work.buffer);
        }
        true
    }
}

/// True when the stemmer should see this token (see the module docs).
fn is_stemmable(text: &str) -> bool {
    text.chars().next().is_some_and(char::is_alphanumeric) && !has_url_scheme(text)
}

#[cfg(test)]
mod tests {
    use tantivy::tokenizer::{TextAnalyzer, WhitespaceTokenizer};

    use super::*;
    use crate::analysis::testutil::{assert_tokens, fixture_path, snowball_vocabulary, texts};

    fn lang(code: &str) -> LangCode {
        LangCode::parse(code).expect("valid code")
    }

    fn analyzer(code: &str, generation: StemGeneration) -> TextAnalyzer {
        let stem = Stem::new(lang(code), generation).expect("supported");
        TextAnalyzer::builder(WhitespaceTokenizer::default()).filter(stem).build()
    }

    #[test]
    fn keeps_offsets_and_positions() {
        assert_tokens(
            &mut analyzer("en", StemGeneration::V2018),
            "ponies caresses",
            &[("poni", 0, 0, 6), ("caress", 1, 7, 15)],
        );
    }

    #[test]
    fn post_elements_are_not_stemmed() {
        assert_eq!(
            texts(
                &mut analyzer("en", StemGeneration::Current),
                "#running @running www.running.com running"
            ),
            ["#running", "@running", "www.running.com", "run"]
        );
    }

    #[test]
    fn greek_only_in_current_generation() {
        assert!(Stem::new(lang("el"), StemGeneration::V2018).is_none());
        // tantivy 0.27's stemmer tests: "αντιθετε" → "ανετ" (the word that
        // makes rust-stemmers 1.2 panic).
        let stem = Stem::new(lang("el"), StemGeneration::Current).expect("supported");
        assert_eq!(stem.stem_word("αντιθετε"), "ανετ");
        assert!(!stem_languages(StemGeneration::V2018).contains(&lang("el")));
        assert_eq!(stem_languages(StemGeneration::Current).len(), 19);
    }

    #[test]
    fn unsupported_language_is_none() {
        assert!(Stem::new(lang("ja"), StemGeneration::Current).is_none());
    }

    #[test]
    fn fast_hasher_separates_similar_keys() {
        use std::hash::BuildHasher;
        let build = BuildHasherDefault::<FastHasher>::default();
        let keys = ["", "a", "a\0", "\0a", "ab", "ba", "abcdefgh", "abcdefgh\0", "abcdefghi"];
        let hashes: std::collections::BTreeSet<u64> =
            keys.iter().map(|k| build.hash_one(k)).collect();
        assert_eq!(hashes.len(), keys.len());
        // Deterministic across runs and builds (no random keys).
        assert_eq!(build.hash_one("run"), build.hash_one(String::from("run")));
        let mut map: FastMap<String, String> = FastMap::default();
        for i in 0..10_000 {
            map.insert(format!("w{i}"), format!("s{i}"));
        }
        assert_eq!(map.get("w9999").map(String::as_str), Some("s9999"));
        assert_eq!(map.len(), 10_000);
    }

    #[test]
    fn clones_share_a_memo_behind_their_own() {
        let stem = Stem::new(lang("en"), StemGeneration::Current).expect("supported");
        let mut first = stem.start();
        let mut second = first.clone();
        let hash = hash_word("connections");
        let shared = Arc::clone(&first.cache.shared);
        let known = |out: &mut String| shared.get_into("connections", hash, out);
        let token = || Token { text: "connections".to_string(), ..Token::default() };
        assert!(!known(&mut String::new()));
        let mut t = token();
        assert!(stem.edit(&mut first, &mut t));
        assert_eq!(t.text, "connect");
        // The second clone finds the stem in the shared memo.
        let mut out = String::new();
        assert!(known(&mut out));
        assert_eq!(out, "connect");
        assert_eq!(second.cache.len(), 0);
        let mut t = token();
        assert!(stem.edit(&mut second, &mut t));
        assert_eq!(t.text, "connect");
        assert_eq!(second.cache.len(), 1);
        // Both generations of the shared memo stay bounded.
        let shared_memo = SharedStems::default();
        for i in 0..(STEM_CACHE_CAPACITY + 10) {
            let w = format!("w{i}");
            shared_memo.insert(&w, &w, hash_word(&w));
        }
        let tables = shared_memo.tables.read().expect("not poisoned");
        assert_eq!(tables.0.len() + tables.1.len(), STEM_CACHE_CAPACITY / 2 + 10);
    }

    #[test]
    fn memo_is_bounded_and_consistent() {
        let stem = Stem::new(lang("en"), StemGeneration::V2018).expect("supported");
        let mut backend = Backend::new(&stem);
        let mut cache = StemCache::default();
        let mut out = String::new();
        for i in 0..(STEM_CACHE_CAPACITY * 2) {
            cache.stem_into(&format!("w{i}ing"), &mut backend, &mut out);
            assert!(cache.len() <= STEM_CACHE_CAPACITY);
        }
        cache.stem_into("connections", &mut backend, &mut out);
        assert_eq!(out, "connect");
        cache.stem_into("connections", &mut backend, &mut out);
        assert_eq!(out, "connect");
    }

    /// snowball-data vocabularies at the 2018 commit (open data set
    /// `snowball/v2018/`, BSD-3-Clause): rust-stemmers must match every line.
    #[test]
    fn generation_2018_matches_snowball_2018_vocabularies() {
        for (code, name) in LANGUAGE_FILES {
            let Some(pairs) = snowball_vocabulary("v2018", name) else { return };
            let stem = Stem::new(lang(code), StemGeneration::V2018).expect("supported");
            let mut backend = Backend::new(&stem);
            let wrong: Vec<_> =
                pairs.iter().filter(|(w, s)| backend.stem(w) != *s).take(5).collect();
            assert!(wrong.is_empty(), "{name}: {wrong:?}");
            assert!(pairs.len() > 1000, "{name}: only {} pairs", pairs.len());
        }
    }

    /// Agreement of the `current` generation with snowball-data at today's
    /// commit (`snowball/head/`): measured 100% on all ten languages, so
    /// the test asserts an exact match. The 2018 generation's agreement with
    /// the same lines is printed for comparison (it differs on many words).
    #[test]
    fn generation_current_agrees_with_snowball_head() {
        for (code, name) in LANGUAGE_FILES {
            let Some(pairs) = snowball_vocabulary("head", name) else { return };
            let current = Stem::new(lang(code), StemGeneration::Current).expect("supported");
            let old = Stem::new(lang(code), StemGeneration::V2018).expect("supported");
            let (mut current, mut old) = (Backend::new(&current), Backend::new(&old));
            let agree = pairs.iter().filter(|(w, s)| current.stem(w) == *s).count();
            let agree_2018 = pairs.iter().filter(|(w, s)| old.stem(w) == *s).count();
            eprintln!(
                "{name}: current {agree}/{n}, 2018 {agree_2018}/{n} agree with head",
                n = pairs.len()
            );
            assert_eq!(agree, pairs.len(), "{name}");
        }
    }

    /// Committed values from PyPI snowballstemmer (scripts/snowball_fixture.py).
    #[test]
    fn matches_pypi_snowballstemmer_fixture() {
        let text = std::fs::read_to_string(fixture_path("snowballstemmer.tsv"))
            .expect("fixture is committed");
        let mut checked = 0;
        for line in text.lines().filter(|l| !l.starts_with('#')) {
            let cols: Vec<&str> = line.split('\t').collect();
            let [code, word, stem] = cols[..] else { panic!("bad fixture line {line:?}") };
            let s = Stem::new(lang(code), StemGeneration::Current).expect("supported");
            assert_eq!(s.stem_word(word), stem, "{code} {word}");
            checked += 1;
        }
        assert!(checked >= 50, "{checked}");
    }

    /// Why `fold` may precede `stem` only for some languages (the rule in
    /// `spec.rs`): on the snowball-data `head/` vocabularies, the share of
    /// words whose stem is the same whether folding runs first or last
    /// (`stem(fold(w)) == fold(stem(w))`). Measured: en 100%, ru 100%, de
    /// 99.85%, nl 99.85%; it 98.6%, sv 98.2%, es 96.2%, pt 95.9%, fr 92.1%,
    /// tr 80.8%.
    #[test]
    fn fold_before_stem_is_harmless_only_for_the_allowed_languages() {
        for (code, name) in LANGUAGE_FILES {
            let Some(pairs) = snowball_vocabulary("head", name) else { return };
            let stem = Stem::new(lang(code), StemGeneration::Current).expect("supported");
            let mut backend = Backend::new(&stem);
            let (mut folded, mut stem_folded) = (String::new(), String::new());
            let same = pairs
                .iter()
                .filter(|(w, _)| {
                    crate::analysis::fold::fold_into(w, &mut folded);
                    let fold_first = backend.stem(&folded);
                    crate::analysis::fold::fold_into(&backend.stem(w), &mut stem_folded);
                    fold_first == stem_folded
                })
                .count();
            let share = same as f64 / pairs.len() as f64;
            eprintln!("fold then stem, {name}: {same}/{} = {share:.4}", pairs.len());
            if crate::analysis::spec::FOLD_BEFORE_STEM_OK.contains(code) {
                assert!(share >= 0.998, "{name}: {share}");
            } else {
                assert!(share < 0.99, "{name}: {share}");
            }
        }
    }

    const LANGUAGE_FILES: &[(&str, &str)] = &[
        ("nl", "dutch"),
        ("en", "english"),
        ("fr", "french"),
        ("de", "german"),
        ("it", "italian"),
        ("pt", "portuguese"),
        ("ru", "russian"),
        ("es", "spanish"),
        ("sv", "swedish"),
        ("tr", "turkish"),
    ];
}
