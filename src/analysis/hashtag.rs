//! Hashtag splitting: `#CamelCaseTag`, `#tag_with_parts`, `#tag2024`, and
//! all-lowercase tags such as `#harbourmarketday` segmented by a Viterbi
//! search over unigram word frequencies.
//!
//! Place in the data flow: `analysis` stage, a token filter that runs right
//! after the `posts` tokenizer (which emits a hashtag as one token with its
//! leading `#`) and BEFORE lowercasing, because camelCase boundaries are read
//! from letter case. The frequency table ([`WordFreqs`]) is built once per run
//! (learned from the corpus, read from a `word<TAB>count` list, taken from
//! the lists built into the binary, or an equal-weight mixture of a learned
//! table and a built-in list, [`WordFreqs::mix`]) and shared through an
//! [`Arc`]. A word holding ß that the table lacks is looked up with `ss`, as
//! case-folded tables (the built-in lists) spell it.
//!
//! Splitting happens in two steps ([`split_tag_ranges`]):
//! 1. Boundaries that need no dictionary, on extended grapheme clusters (UAX
//!    #29, so a combining accent stays with its letter): separators (`_`,
//!    ASCII punctuation, Unicode dashes, whitespace) are dropped; a new part
//!    starts where letters meet digits or symbols (emoji), where an uncased
//!    script (CJK, Arabic, …) meets a cased one, at lower→Upper
//!    (`harbour|Market`; not after one lower-case letter that starts a word:
//!    `iPhone`, `eBay`) and before the last capital of a capital run followed
//!    by a lower-case letter (`HTML|Parser`).
//!    Digits are split from letters (`tag|2024`, `Top|5|Albums`): years,
//!    counts and ordinals in tags are words a searcher types separately, and
//!    the gold sets of `shared/data/hashtags` split them in most rows. Two
//!    exceptions, both from those gold sets: a lone letter stays with
//!    adjacent digits (`g20`, `CraftyM4` → `Crafty|M4`, `1D`), and a fitting
//!    ordinal or decade suffix stays with its number (`4th|Reich`, `80s`).
//!    The whole tag is emitted as well, so nothing is lost either way.
//! 2. Each remaining letter chunk that is lower case, Title case or ALL CAPS
//!    is segmented by dynamic programming (Viterbi) over unigram costs
//!    `-ln(count / total)`. An unknown word of `n` chars costs
//!    `max(ln(total / smallest count) + UNKNOWN_BASE, UNKNOWN_FLOOR) +
//!    UNKNOWN_PER_CHAR × n`: a fixed part pegged to the cost of the rarest
//!    known word (so one setting suits a 10k-token table and a 10⁹-token one)
//!    plus a length prior, as in Norvig, "Natural Language Corpus Data",
//!    *Beautiful Data*, O'Reilly 2009, ch. 14, whose prior is
//!    `10 / (N × 10ⁿ)` (reference from memory). Since the fixed part is positive, one unknown chunk
//!    always beats several unknown pieces and unknown strings stay whole.
//!    One-letter words other than `a` and `i` pay [`SINGLE_LETTER_PENALTY`]
//!    (an English-centric exception, as the gold sets are English; each
//!    built-in list of [`word_lists`](super::word_lists) names its own
//!    language's one-letter words instead). The three
//!    constants were tuned on one gold set, the STAN large training split;
//!    the other four gold sets are held out from tuning (see the tests).
//!    Chunks of uncased scripts are not segmented (UAX #29 does not delimit
//!    their words, so a learned table would not either).
//!
//! Parts are byte ranges of the tag body, so they keep their source case and
//! spelling; lower-casing is a later filter.

use std::mem;
use std::ops::Range;
use std::path::Path;
use std::sync::{Arc, RwLock};

use tantivy::tokenizer::{Token, TokenFilter, TokenStream, Tokenizer};
use unicode_segmentation::UnicodeSegmentation;

use super::stem::FastMap;
use crate::error::{Error, Problems, Result};

/// Extra cost, in nats, of a one-letter word other than `a` and `i` (or the
/// table's own free letters, [`WordFreqs::with_free_letters`]), known or
/// not (in a learned table such "words" are mostly initials, list markers and
/// contraction pieces). Tuned on the STAN large training split (see the tests).
pub const SINGLE_LETTER_PENALTY: f64 = 10.0;

/// Fixed cost of an unknown word relative to the cost of the rarest known
/// word, `ln(total / smallest count)`, in nats (bounded below by
/// [`UNKNOWN_FLOOR`]). Tuned on the STAN large training split (see the tests).
pub const UNKNOWN_BASE: f64 = -6.0;

/// Cost per char of an unknown word, in nats. Tuned on the STAN large
/// training split (see the tests).
pub const UNKNOWN_PER_CHAR: f64 = 2.0;

/// Chunks longer than this (in chars) are not segmented (bounds the
/// quadratic search; real tags are far shorter).
pub const MAX_SEGMENT_CHARS: usize = 64;

/// Most tags whose segmentation a filter instance remembers (two
/// generations of at most half as many each: when the young one is full it
/// becomes the old one and the previous old one is dropped; a hit in the
/// old one moves the tag to the young one).
pub const CACHE_CAPACITY: usize = 65_536;

/// Smallest fixed cost of an unknown word, in nats, so that splitting an
/// unknown string into more unknown pieces always costs more.
pub const UNKNOWN_FLOOR: f64 = 1.0;

/// The one-letter words of English, which pay no [`SINGLE_LETTER_PENALTY`]
/// in a table that does not name its own ([`WordFreqs::with_free_letters`]).
pub const ENGLISH_FREE_LETTERS: &[&str] = &["a", "i"];

/// Unigram word frequencies used to segment tags: lower-case word → count.
/// Its `Debug` form shows only the size (`len`, `total`), not the words.
#[derive(Clone)]
pub struct WordFreqs {
    counts: FastMap<String, u64>,
    total: u64,
    max_chars: usize,
    /// `ln(total / smallest count)`: the cost of the rarest known word.
    ln_rarest: f64,
    /// One-letter words exempt from [`SINGLE_LETTER_PENALTY`].
    free_letters: &'static [&'static str],
}

impl Default for WordFreqs {
    fn default() -> Self {
        WordFreqs {
            counts: FastMap::default(),
            total: 0,
            max_chars: 0,
            ln_rarest: 0.0,
            free_letters: ENGLISH_FREE_LETTERS,
        }
    }
}

impl std::fmt::Debug for WordFreqs {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("WordFreqs").field("len", &self.len()).field("total", &self.total).finish()
    }
}

impl WordFreqs {
    /// Build from explicit `(word, count)` pairs (e.g. a `word<TAB>count`
    /// list). Words are lower-cased; counts of repeated words add up; empty
    /// words and zero counts are ignored.
    pub fn from_counts<I: IntoIterator<Item = (String, u64)>>(counts: I) -> WordFreqs {
        let mut freqs = WordFreqs::default();
        for (word, count) in counts {
            freqs.add(&word.to_lowercase(), count);
        }
        freqs.refresh()
    }

    /// Learn from texts: counts their ordinary words, i.e. UAX #29 words,
    /// lower-cased, skipping the words of `#tags` and `@mentions`, whole URLs
    /// (whitespace-delimited pieces containing `://` or starting with
    /// `www.`) and every word that holds a digit or no letter. A contraction
    /// is counted as its pieces split at the apostrophe (`don't` → `don`,
    /// `t`), because an apostrophe never survives inside a hashtag.
    ///
    /// Large inputs are counted in parallel chunks (counts add up, so the
    /// table does not depend on the number of threads).
    pub fn learn<'a, I: IntoIterator<Item = &'a str>>(texts: I) -> WordFreqs {
        /// Texts below which one thread counts them all.
        const TEXTS_PER_THREAD: usize = 20_000;
        let texts: Vec<&str> = texts.into_iter().collect();
        let threads = std::thread::available_parallelism()
            .map_or(1, |n| n.get())
            .min(texts.len().div_ceil(TEXTS_PER_THREAD))
            .max(1);
        let chunk = texts.len().div_ceil(threads).max(1);
        let parts: Vec<WordFreqs> = std::thread::scope(|scope| {
            let handles: Vec<_> = texts
                .chunks(chunk)
                .map(|part| {
                    scope.spawn(move || {
                        let mut freqs = WordFreqs::default();
                        let mut lower = String::new();
                        for text in part {
                            freqs.count_words(text, &mut lower);
                        }
                        freqs
                    })
                })
                .collect();
            handles
                .into_iter()
                .map(|h| h.join().unwrap_or_else(|panic| std::panic::resume_unwind(panic)))
                .collect()
        });
        let mut parts = parts.into_iter();
        let mut freqs = parts.next().unwrap_or_default();
        for part in parts {
            for (word, count) in part.counts {
                freqs.add_owned(word, count);
            }
        }
        freqs.refresh()
    }

    /// Count the ordinary words of one text (see [`WordFreqs::learn`]);
    /// `lower` is a reused buffer.
    fn count_words(&mut self, text: &str, lower: &mut String) {
        for piece in text.split_whitespace() {
            let www = piece.get(..4).is_some_and(|p| p.eq_ignore_ascii_case("www."));
            if www || piece.contains("://") {
                continue;
            }
            let mut after_sigil = false;
            for segment in piece.split_word_bounds() {
                let was_sigil = after_sigil;
                after_sigil = segment == "#" || segment == "@" || segment == "＃";
                if was_sigil || !segment.chars().any(char::is_alphabetic) {
                    continue;
                }
                if segment.chars().any(char::is_numeric) {
                    continue;
                }
                for word in segment.split(['\'', '’']) {
                    if word.chars().any(char::is_alphabetic) {
                        lower.clear();
                        if word.is_ascii() {
                            lower.push_str(word);
                            lower.make_ascii_lowercase();
                        } else {
                            // `str::to_lowercase` (final sigma and all).
                            lower.push_str(&word.to_lowercase());
                        }
                        self.add(lower, 1);
                    }
                }
            }
        }
    }

    /// Read a plain `word<TAB>count` list (UTF-8, one pair a line; empty
    /// lines are skipped). Every bad line is reported with the file and line.
    pub fn read_counts(path: &Path) -> Result<WordFreqs> {
        let text = std::fs::read_to_string(path).map_err(|e| Error::io(path, e))?;
        let mut problems = Problems::new(path);
        let freqs =
            WordFreqs::parse_counts(&text, &mut |line, message| problems.push(line, message));
        problems.finish(freqs)
    }

    /// Parse `word<TAB>count` text (see [`WordFreqs::read_counts`]); each
    /// bad line goes to `problem` with its 1-based number and is skipped.
    pub(crate) fn parse_counts(text: &str, problem: &mut dyn FnMut(u64, String)) -> WordFreqs {
        let mut freqs = WordFreqs::default();
        for (i, line) in text.lines().enumerate() {
            let line_no = i as u64 + 1;
            let line = line.strip_suffix('\r').unwrap_or(line);
            if line.is_empty() {
                continue;
            }
            let mut fields = line.split('\t');
            let (word, count) = match (fields.next(), fields.next(), fields.next()) {
                (Some(w), Some(c), None) => (w, c),
                _ => {
                    problem(line_no, format!("expected word<TAB>count, found {line:?}"));
                    continue;
                }
            };
            if word.is_empty() {
                problem(line_no, "empty word".to_string());
                continue;
            }
            match count.trim().parse::<u64>() {
                Ok(n) => freqs.add(&word.to_lowercase(), n),
                Err(_) => problem(
                    line_no,
                    format!("column 2 (count): expected a whole number, found {count:?}"),
                ),
            }
        }
        freqs.refresh()
    }

    /// Recompute the derived values after the counts changed.
    fn refresh(mut self) -> WordFreqs {
        let min = self.counts.values().copied().min().unwrap_or(1).max(1);
        self.ln_rarest = (self.total.max(1) as f64 / min as f64).ln();
        self
    }

    /// Add `count` occurrences of `word` (copied only when new).
    fn add(&mut self, word: &str, count: u64) {
        match self.counts.get_mut(word) {
            Some(c) => {
                *c += count;
                self.total = self.total.saturating_add(count);
            }
            None => self.add_owned(word.to_string(), count),
        }
    }

    /// [`WordFreqs::add`] for a word already owned (no copy when new).
    fn add_owned(&mut self, word: String, count: u64) {
        if word.is_empty() || count == 0 {
            return;
        }
        match self.counts.get_mut(&word) {
            Some(c) => *c += count,
            None => {
                self.max_chars = self.max_chars.max(word.chars().count());
                self.counts.insert(word, count);
            }
        }
        self.total = self.total.saturating_add(count);
    }

    /// The same table with other one-letter words exempt from
    /// [`SINGLE_LETTER_PENALTY`] (the default is [`ENGLISH_FREE_LETTERS`]).
    pub fn with_free_letters(mut self, letters: &'static [&'static str]) -> WordFreqs {
        self.free_letters = letters;
        self
    }

    /// An equal-weight mixture of tables: each word's relative frequency is
    /// the mean of its relative frequencies in the tables that are not
    /// empty (a word missing from a table counts 0 there), so a table's size
    /// in tokens gives it no extra weight. Counts are scaled to a total of
    /// about 2⁴⁰ and rounded (a word keeps a count of at least 1). The
    /// mixture exempts [`ENGLISH_FREE_LETTERS`] from the one-letter penalty
    /// unless [`WordFreqs::with_free_letters`] says otherwise.
    pub fn mix(tables: &[&WordFreqs]) -> WordFreqs {
        /// Total of the mixture: large enough that a word seen once in a
        /// table of 10¹⁰ tokens keeps a count of about 100 / k.
        const SCALE: f64 = (1u64 << 40) as f64;
        let used: Vec<&WordFreqs> =
            tables.iter().copied().filter(|t| !t.is_empty() && t.total > 0).collect();
        let mut mixed = WordFreqs::default();
        for table in &used {
            let factor = SCALE / (used.len() as f64 * table.total as f64);
            for (word, &count) in &table.counts {
                mixed.add(word, ((count as f64 * factor).round() as u64).max(1));
            }
        }
        mixed.refresh()
    }

    /// Number of distinct words.
    pub fn len(&self) -> usize {
        self.counts.len()
    }

    /// True when the table holds no word.
    pub fn is_empty(&self) -> bool {
        self.counts.is_empty()
    }

    /// Sum of all counts.
    pub fn total(&self) -> u64 {
        self.total
    }

    /// Count of a word (looked up as given; the table is lower case).
    pub fn count(&self, word: &str) -> u64 {
        self.counts.get(word).copied().unwrap_or(0)
    }

    /// Cost in nats of `word` (already lower case, `chars` chars long) as
    /// one segment: `-ln(count/total)` when known, else the unknown-word
    /// length prior; one-letter words other than the table's free letters
    /// (`a` and `i` by default), known or not, pay [`SINGLE_LETTER_PENALTY`] (else an unknown letter, priced like a
    /// word seen once, would be cheaper than a known one).
    fn cost(&self, word: &str, chars: usize, costs: &Costs) -> f64 {
        let base = match self.counts.get(word) {
            Some(&c) => (self.total as f64).ln() - (c as f64).ln(),
            None => costs.unknown(self.ln_rarest, chars),
        };
        if chars == 1 && !self.free_letters.contains(&word) {
            base + costs.single_letter
        } else {
            base
        }
    }
}

/// The constants of the segmentation cost model (tests tune them).
#[derive(Debug, Clone, Copy)]
struct Costs {
    unknown_base: f64,
    unknown_per_char: f64,
    single_letter: f64,
}

const COSTS: Costs = Costs {
    unknown_base: UNKNOWN_BASE,
    unknown_per_char: UNKNOWN_PER_CHAR,
    single_letter: SINGLE_LETTER_PENALTY,
};

impl Costs {
    fn unknown(&self, ln_rarest: f64, chars: usize) -> f64 {
        (ln_rarest + self.unknown_base).max(UNKNOWN_FLOOR) + self.unknown_per_char * chars as f64
    }
}

/// Split a tag body (without `#`) into its parts; one part means no split.
/// An empty result means the body holds only separators.
pub fn split_tag(body: &str, freqs: Option<&WordFreqs>) -> Vec<String> {
    split_tag_ranges(body, freqs)
        .into_iter()
        .filter_map(|r| body.get(r).map(str::to_string))
        .collect()
}

/// Class of a grapheme cluster, read from its first char.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Class {
    Sep,
    Upper,
    Lower,
    Uncased,
    Digit,
    Other,
}

fn class_of(cluster: &str) -> Class {
    let Some(c) = cluster.chars().next() else { return Class::Sep };
    if c == '_'
        || c.is_whitespace()
        || c.is_ascii_punctuation()
        || ('\u{2010}'..='\u{2027}').contains(&c)
    {
        Class::Sep
    } else if c.is_uppercase() {
        Class::Upper
    } else if c.is_lowercase() {
        Class::Lower
    } else if c.is_numeric() {
        Class::Digit
    } else if c.is_alphabetic() {
        Class::Uncased
    } else {
        Class::Other
    }
}

/// Group of a class for the letter/digit/symbol boundaries.
fn group_of(class: Class) -> u8 {
    match class {
        Class::Upper | Class::Lower => 0,
        Class::Uncased => 1,
        Class::Digit => 2,
        Class::Other => 3,
        Class::Sep => 4,
    }
}

/// Byte ranges of the parts of a tag body (see the module docs for the
/// rules). The ranges are in order, non-empty and never overlap.
pub fn split_tag_ranges(body: &str, freqs: Option<&WordFreqs>) -> Vec<Range<usize>> {
    split_tag_ranges_with(body, freqs, &COSTS)
}

fn split_tag_ranges_with(
    body: &str,
    freqs: Option<&WordFreqs>,
    costs: &Costs,
) -> Vec<Range<usize>> {
    let mut parts = Vec::new();
    for chunk in case_chunks(body) {
        match freqs {
            Some(f) if !f.is_empty() && is_segmentable(&body[chunk.clone()]) => {
                let start = chunk.start;
                for r in segment(&body[chunk], f, costs) {
                    parts.push(start + r.start..start + r.end);
                }
            }
            _ => parts.push(chunk),
        }
    }
    merge_number_suffixes(body, parts)
}

/// Step 1: the dictionary-free chunks of a body.
fn case_chunks(body: &str) -> Vec<Range<usize>> {
    let clusters: Vec<(usize, Class)> =
        body.grapheme_indices(true).map(|(i, g)| (i, class_of(g))).collect();
    let mut chunks = Vec::new();
    // Byte offset and cluster index where the current chunk starts.
    let mut start: Option<(usize, usize)> = None;
    for (k, &(i, class)) in clusters.iter().enumerate() {
        if class == Class::Sep {
            if let Some((s, _)) = start.take() {
                chunks.push(s..i);
            }
            continue;
        }
        let Some((s, start_k)) = start else {
            start = Some((i, k));
            continue;
        };
        let prev = k.checked_sub(1).and_then(|p| clusters.get(p)).map(|c| c.1);
        let next = clusters.get(k + 1).map(|c| c.1);
        let boundary = match prev {
            Some(p) if group_of(p) != group_of(class) => true,
            // lower→Upper, except after a single lower-case letter that
            // starts a word: `iPhone`, `eBay`, `jQuery` are names, not two
            // words (`80sFriday` still splits after `s`).
            Some(Class::Lower) => {
                let starts_word = start_k
                    .checked_sub(1)
                    .and_then(|p| clusters.get(p))
                    .is_none_or(|c| c.1 == Class::Sep);
                class == Class::Upper && (k - start_k > 1 || !starts_word)
            }
            Some(Class::Upper) => class == Class::Upper && next == Some(Class::Lower),
            _ => false,
        };
        if boundary {
            chunks.push(s..i);
            start = Some((i, k));
        }
    }
    if let Some((s, _)) = start {
        chunks.push(s..body.len());
    }
    merge_letter_digits(body, chunks)
}

/// True when `s` is one cased letter (one grapheme cluster).
fn is_single_letter(s: &str) -> bool {
    let mut clusters = s.graphemes(true);
    let first = clusters.next().and_then(|g| g.chars().next());
    clusters.next().is_none() && first.is_some_and(|c| c.is_lowercase() || c.is_uppercase())
}

fn is_digits(s: &str) -> bool {
    !s.is_empty() && s.chars().all(char::is_numeric)
}

/// Model names keep a lone letter with its adjacent digits: `g|20` → `g20`,
/// `M|4` → `M4`, `1|D` → `1D`, `L|4|D|2` → `L4`, `D2` (a one-letter part
/// is useless as a search term; the gold sets keep these together).
fn merge_letter_digits(body: &str, chunks: Vec<Range<usize>>) -> Vec<Range<usize>> {
    let mut out: Vec<Range<usize>> = Vec::with_capacity(chunks.len());
    // Whether the last output chunk already absorbed a letter or digits.
    let mut last_merged = false;
    for chunk in chunks {
        let text = &body[chunk.clone()];
        if let Some(last) = out.last_mut().filter(|l| l.end == chunk.start && !last_merged) {
            let prev = &body[last.clone()];
            let merge = (is_single_letter(prev) && is_digits(text))
                || (is_digits(prev) && is_single_letter(text));
            if merge {
                last.end = chunk.end;
                last_merged = true;
                continue;
            }
        }
        out.push(chunk);
        last_merged = false;
    }
    out
}

/// The ordinal suffix English writes after a number (`1st`, `2nd`, `3rd`,
/// `11th`, `4th`), and `s` after a number ending in 0 (decades: `80s`).
fn number_suffix_fits(digits: &str, suffix: &str) -> bool {
    let suffix = suffix.to_lowercase();
    let tail: Vec<u32> = digits.chars().rev().take(2).filter_map(|c| c.to_digit(10)).collect();
    let (last, tens) = (tail.first().copied(), tail.get(1).copied());
    let ordinal = match (last, tens) {
        (_, Some(1)) => "th",
        (Some(1), _) => "st",
        (Some(2), _) => "nd",
        (Some(3), _) => "rd",
        _ => "th",
    };
    suffix == ordinal || (suffix == "s" && last == Some(0))
}

/// Glue an ordinal or decade suffix part to the number before it:
/// `4|th|Reich` → `4th|Reich`, `3|rd|times` → `3rd|times`, `80|s` → `80s`.
fn merge_number_suffixes(body: &str, parts: Vec<Range<usize>>) -> Vec<Range<usize>> {
    let mut out: Vec<Range<usize>> = Vec::with_capacity(parts.len());
    for part in parts {
        if let Some(last) = out.last_mut().filter(|l| l.end == part.start) {
            let prev = &body[last.clone()];
            if is_digits(prev) && number_suffix_fits(prev, &body[part.clone()]) {
                last.end = part.end;
                continue;
            }
        }
        out.push(part);
    }
    out
}

/// A letter chunk is segmented when it is lower case, Title case or ALL
/// CAPS (mixed case was already split at its case boundaries; uncased
/// scripts and digits are left whole).
fn is_segmentable(chunk: &str) -> bool {
    let mut chars = chunk.chars();
    let Some(first) = chars.next() else { return false };
    if chunk.chars().any(char::is_numeric) {
        return false;
    }
    if !first.is_alphabetic() || !(first.is_lowercase() || first.is_uppercase()) {
        return false;
    }
    let rest: Vec<char> = chars.filter(|c| c.is_alphabetic()).collect();
    rest.iter().all(|c| c.is_lowercase())
        || (first.is_uppercase() && rest.iter().all(|c| c.is_uppercase()))
}

/// Step 2: Viterbi segmentation of one letter chunk into byte ranges.
fn segment(chunk: &str, freqs: &WordFreqs, costs: &Costs) -> Vec<Range<usize>> {
    // Char boundaries, and each char's lower case, so a substring's lookup
    // key is a concatenation (no re-lowercasing of the whole chunk).
    let bounds: Vec<usize> = chunk.char_indices().map(|(i, _)| i).chain([chunk.len()]).collect();
    let n = bounds.len() - 1;
    if n <= 1 || n > MAX_SEGMENT_CHARS {
        return std::iter::once(0..chunk.len()).collect();
    }
    // The chunk lower-cased char by char, and where each char's lower case
    // starts in it: the key of chars j..i is `lower[starts[j]..starts[i]]`.
    let mut lower = String::with_capacity(chunk.len());
    let mut starts = Vec::with_capacity(n + 1);
    for c in chunk.chars() {
        starts.push(lower.len());
        lower.extend(c.to_lowercase());
    }
    starts.push(lower.len());
    // best[i] = (cost of the best segmentation of chars 0..i, start of its
    // last word).
    let mut best: Vec<(f64, usize)> = vec![(f64::INFINITY, 0); n + 1];
    best[0] = (0.0, 0);
    let eszett = lower.contains('ß');
    let mut spare_key = String::new();
    for i in 1..=n {
        for j in 0..i {
            let len = i - j;
            let word_cost = if len <= freqs.max_chars {
                let key = &lower[starts[j]..starts[i]];
                // Greek capital sigma lowers to the final form at word end.
                if len > 1 && key.ends_with('σ') {
                    spare_key.clear();
                    spare_key.push_str(key);
                    spare_key.pop();
                    spare_key.push('ς');
                    if freqs.counts.contains_key(&spare_key) {
                        freqs.cost(&spare_key, len, costs)
                    } else {
                        freqs.cost(key, len, costs)
                    }
                } else if eszett && key.contains('ß') && !freqs.counts.contains_key(key) {
                    // Case-folded tables (the wordfreq lists) spell ß as ss.
                    freqs.cost(&key.replace('ß', "ss"), len, costs)
                } else {
                    freqs.cost(key, len, costs)
                }
            } else {
                costs.unknown(freqs.ln_rarest, len)
            };
            let total = best[j].0 + word_cost;
            if total < best[i].0 {
                best[i] = (total, j);
            }
        }
    }
    let mut cuts = Vec::new();
    let mut i = n;
    while i > 0 {
        let j = best[i].1;
        cuts.push(bounds[j]..bounds[i]);
        i = j;
    }
    cuts.reverse();
    cuts
}

/// Token filter settings: tokens starting with `#` yield the whole tag
/// (without `#`) and, when it splits, its parts.
///
/// For a tag token at position `p` that splits into `k ≥ 2` parts, the
/// output is the whole tag at `p`, then the parts at `p, p+1, …, p+k−1`;
/// every later token moves by `k−1`, so phrase queries over the parts work
/// and positions never collide. A tag whose only part differs from the body
/// (`#_tag_` → `tag`) also emits that part at `p`. The whole tag keeps the
/// token's offsets; each part gets its own byte range of the source when the
/// token's text is still the source text (its length matches its offsets),
/// else the tag's offsets. Must run before lower-casing (case boundaries)
/// and see the tag's leading `#`.
///
/// ```
/// use std::sync::Arc;
/// use postassay::analysis::hashtag::{HashtagSplit, WordFreqs};
/// use tantivy::tokenizer::{TextAnalyzer, TokenStream, WhitespaceTokenizer};
///
/// let freqs = WordFreqs::learn(["Fish at the harbour market today"]);
/// let mut analyzer = TextAnalyzer::builder(WhitespaceTokenizer::default())
///     .filter(HashtagSplit::new(Some(Arc::new(freqs))))
///     .build();
/// let mut stream = analyzer.token_stream("#harbourmarket #FährhafenKiel ok");
/// let mut got = Vec::new();
/// while let Some(t) = stream.next() {
///     got.push((t.text.clone(), t.position));
/// }
/// let want = [
///     ("harbourmarket", 0), ("harbour", 0), ("market", 1),
///     ("FährhafenKiel", 2), ("Fährhafen", 2), ("Kiel", 3),
///     ("ok", 4),
/// ];
/// assert_eq!(got, want.map(|(t, p)| (t.to_string(), p)));
/// ```
#[derive(Debug, Clone, Default)]
pub struct HashtagSplit {
    /// Frequencies for segmenting all-lowercase tags; `None` splits only on
    /// case, digit and underscore boundaries.
    pub freqs: Option<Arc<WordFreqs>>,
}

impl HashtagSplit {
    /// Settings with an optional shared frequency table.
    pub fn new(freqs: Option<Arc<WordFreqs>>) -> HashtagSplit {
        HashtagSplit { freqs }
    }
}

impl TokenFilter for HashtagSplit {
    type Tokenizer<T: Tokenizer> = HashtagSplitFilter<T>;

    fn transform<T: Tokenizer>(self, tokenizer: T) -> HashtagSplitFilter<T> {
        HashtagSplitFilter {
            inner: tokenizer,
            freqs: self.freqs,
            cache: TagMemo::default(),
            parts: Vec::new(),
        }
    }
}

/// The tokenizer wrapped by [`HashtagSplit`]; memoizes segmentations (at
/// most [`CACHE_CAPACITY`] tags).
#[derive(Clone)]
pub struct HashtagSplitFilter<T> {
    inner: T,
    freqs: Option<Arc<WordFreqs>>,
    cache: TagMemo,
    parts: Vec<Token>,
}

/// Tag bodies and their parts.
type TagMap = FastMap<String, Vec<Range<usize>>>;

/// Two-generation memo of tag segmentations (see [`CACHE_CAPACITY`]),
/// private to one filter instance, in front of the memo its clones share.
#[derive(Default)]
struct TagMemo {
    young: TagMap,
    old: TagMap,
    shared: Arc<SharedTags>,
}

impl Clone for TagMemo {
    /// A clone starts with an empty private memo (clones usually go to
    /// other threads) and shares the memo of the filter it was cloned from.
    fn clone(&self) -> Self {
        TagMemo {
            young: TagMap::default(),
            old: TagMap::default(),
            shared: Arc::clone(&self.shared),
        }
    }
}

impl TagMemo {
    /// The parts of a tag body, computed on a miss.
    fn ranges(&mut self, body: &str, freqs: Option<&WordFreqs>) -> &[Range<usize>] {
        if !self.young.contains_key(body) {
            let (key, ranges) = match self.old.remove_entry(body) {
                Some(entry) => entry,
                None => {
                    let ranges = self.shared.get(body).unwrap_or_else(|| {
                        let ranges = split_tag_ranges(body, freqs);
                        self.shared.insert(body, &ranges);
                        ranges
                    });
                    (body.to_string(), ranges)
                }
            };
            if self.young.len() >= CACHE_CAPACITY / 2 {
                mem::swap(&mut self.old, &mut self.young);
                self.young.clear();
            }
            self.young.insert(key, ranges);
        }
        self.young.get(body).map(Vec::as_slice).unwrap_or(&[])
    }

    #[cfg(test)]
    fn len(&self) -> usize {
        self.young.len() + self.old.len()
    }
}

/// The segmentations known to every clone of one filter. tantivy clones a
/// field's analyzer for each indexing thread and each new segment; a clone
/// that misses in its private memo looks here (under a read lock) before
/// segmenting, so each tag is segmented about once per build. Two
/// generations bounded by [`CACHE_CAPACITY`], without promotion.
#[derive(Default)]
struct SharedTags {
    /// Young and old generation.
    maps: RwLock<(TagMap, TagMap)>,
}

impl SharedTags {
    /// The parts of `body` if known (`None` too when the lock is poisoned:
    /// the memo is only an optimisation).
    fn get(&self, body: &str) -> Option<Vec<Range<usize>>> {
        let maps = self.maps.read().ok()?;
        maps.0.get(body).or_else(|| maps.1.get(body)).cloned()
    }

    /// Remember the parts of `body`.
    fn insert(&self, body: &str, ranges: &[Range<usize>]) {
        let Ok(mut maps) = self.maps.write() else { return };
        let (young, old) = &mut *maps;
        if young.contains_key(body) {
            return;
        }
        if young.len() >= CACHE_CAPACITY / 2 {
            mem::swap(old, young);
            young.clear();
        }
        young.insert(body.to_string(), ranges.to_vec());
    }
}

impl<T: Tokenizer> Tokenizer for HashtagSplitFilter<T> {
    type TokenStream<'a> = HashtagSplitStream<'a, T::TokenStream<'a>>;

    fn token_stream<'a>(&'a mut self, text: &'a str) -> Self::TokenStream<'a> {
        self.parts.clear();
        HashtagSplitStream {
            tail: self.inner.token_stream(text),
            freqs: self.freqs.as_deref(),
            cache: &mut self.cache,
            parts: &mut self.parts,
            shift: 0,
            applied: 0,
        }
    }
}

/// The token stream of [`HashtagSplitFilter`].
pub struct HashtagSplitStream<'a, T> {
    tail: T,
    freqs: Option<&'a WordFreqs>,
    cache: &'a mut TagMemo,
    /// Pending output in reverse order (the last element is the current
    /// token while non-empty).
    parts: &'a mut Vec<Token>,
    /// How far positions of the tail move (sum of `k−1` of earlier tags).
    shift: usize,
    /// The shift added to the tail's current token, taken back before the
    /// tail advances (tokenizers derive the next position from the stored
    /// one).
    applied: usize,
}

impl<T: TokenStream> HashtagSplitStream<'_, T> {
    /// Handle the tail's current token: shift its position, strip `#` from
    /// a tag and queue the tag and its parts when it splits.
    fn split(&mut self) {
        let shift = self.shift;
        let token = self.tail.token_mut();
        token.position = token.position.wrapping_add(shift);
        self.applied = shift;
        let Some(body) = token.text.strip_prefix('#') else { return };
        if body.is_empty() {
            return;
        }
        let ranges = self.cache.ranges(body, self.freqs);
        let in_source = token.offset_to.checked_sub(token.offset_from) == Some(token.text.len());
        let emit_parts = match ranges {
            [] => false,
            [only] => body.get(only.clone()) != Some(body),
            _ => true,
        };
        // Queue in reverse: last part first, the whole tag last (emitted first).
        if emit_parts {
            for (k, r) in ranges.iter().enumerate().rev() {
                let Some(text) = body.get(r.clone()) else { continue };
                let (from, to) = if in_source {
                    (token.offset_from + 1 + r.start, token.offset_from + 1 + r.end)
                } else {
                    (token.offset_from, token.offset_to)
                };
                self.parts.push(Token {
                    offset_from: from,
                    offset_to: to,
                    position: token.position.wrapping_add(k),
                    text: text.to_string(),
                    position_length: 1,
                });
            }
            self.shift += ranges.len() - 1;
        }
        token.text.remove(0);
        if emit_parts {
            self.parts.push(token.clone());
        }
    }
}

impl<T: TokenStream> TokenStream for HashtagSplitStream<'_, T> {
    fn advance(&mut self) -> bool {
        self.parts.pop();
        if !self.parts.is_empty() {
            return true;
        }
        let applied = std::mem::take(&mut self.applied);
        let previous = self.tail.token_mut();
        previous.position = previous.position.wrapping_sub(applied);
        if !self.tail.advance() {
            return false;
        }
        self.split();
        true
    }

    fn token(&self) -> &Token {
        self.parts.last().unwrap_or_else(|| self.tail.token())
    }

    fn token_mut(&mut self) -> &mut Token {
        self.parts.last_mut().unwrap_or_else(|| self.tail.token_mut())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::testutil::skip;
    use approx::assert_relative_eq;
    use tantivy::tokenizer::{TextAnalyzer, WhitespaceTokenizer};

    fn parts(body: &str, freqs: Option<&WordFreqs>) -> Vec<String> {
        split_tag(body, freqs)
    }

    /// Hand-made table: total 16, so cost(w) = ln(16 / count(w)).
    fn tiny() -> WordFreqs {
        WordFreqs::from_counts(
            [("harbour", 2), ("market", 4), ("mark", 1), ("et", 1), ("day", 8)]
                .map(|(w, c)| (w.to_string(), c)),
        )
    }

    #[test]
    fn splits_on_case_digits_and_underscores_without_a_table() {
        assert_eq!(parts("HarbourMarket", None), ["Harbour", "Market"]);
        assert_eq!(parts("harbourMarketDay", None), ["harbour", "Market", "Day"]);
        assert_eq!(parts("HTMLParser", None), ["HTML", "Parser"]);
        assert_eq!(parts("parseHTML", None), ["parse", "HTML"]);
        assert_eq!(parts("tag_with_parts", None), ["tag", "with", "parts"]);
        assert_eq!(parts("__tag__", None), ["tag"]);
        assert_eq!(parts("tag2024", None), ["tag", "2024"]);
        assert_eq!(parts("Top5AlbumsOfTheYear", None), ["Top", "5", "Albums", "Of", "The", "Year"]);
        assert_eq!(parts("2024", None), ["2024"]);
        assert_eq!(parts("harbourmarketday", None), ["harbourmarketday"]);
        assert_eq!(parts("ABC", None), ["ABC"]);
        assert!(parts("___", None).is_empty());
        assert!(parts("", None).is_empty());
    }

    #[test]
    fn keeps_model_names_ordinals_and_brand_prefixes_together() {
        // A lone letter stays with adjacent digits.
        assert_eq!(parts("g20", None), ["g20"]);
        assert_eq!(parts("CraftyM4", None), ["Crafty", "M4"]);
        assert_eq!(parts("1DMoviesChat", None), ["1D", "Movies", "Chat"]);
        assert_eq!(parts("L4D2", None), ["L4", "D2"]);
        assert_eq!(parts("harry1d", None), ["harry", "1d"]);
        // Longer words do not.
        assert_eq!(parts("Win7", None), ["Win", "7"]);
        // Ordinal and decade suffixes that fit the number.
        assert_eq!(parts("4thReich", None), ["4th", "Reich"]);
        assert_eq!(parts("21stCentury", None), ["21st", "Century"]);
        assert_eq!(parts("80sFriday", None), ["80s", "Friday"]);
        assert_eq!(parts("12ndStreet", None), ["12", "nd", "Street"]);
        assert_eq!(parts("3rdmarketday", Some(&tiny())), ["3rd", "market", "day"]);
        let fits = [("1", "st"), ("11", "th"), ("22", "ND"), ("103", "rd"), ("1990", "s")];
        assert!(fits.iter().all(|(d, s)| number_suffix_fits(d, s)));
        let misfits = [("11", "st"), ("13", "rd"), ("2", "th"), ("91", "s")];
        assert!(misfits.iter().all(|(d, s)| !number_suffix_fits(d, s)));
        // One leading lower-case letter before a capital is a name prefix.
        assert_eq!(parts("iPhone", None), ["iPhone"]);
        assert_eq!(parts("eBayDeals", None), ["eBay", "Deals"]);
        assert_eq!(parts("jQueryUI", None), ["jQuery", "UI"]);
        // … which also keeps "iLove" whole (the gold sets favour the names).
        assert_eq!(parts("iLoveYou", None), ["iLove", "You"]);
    }

    #[test]
    fn splits_multilingual_tags() {
        // Latin with diacritics, precomposed and decomposed (the combining
        // acute U+0301 stays with its letter: graphemes, UAX #29).
        assert_eq!(parts("FährhafenKiel", None), ["Fährhafen", "Kiel"]);
        assert_eq!(parts("Cafe\u{301}DeFlore", None), ["Cafe\u{301}", "De", "Flore"]);
        assert_eq!(parts("ÉcoleNormale", None), ["École", "Normale"]);
        // Cyrillic and Greek camelCase.
        assert_eq!(parts("МосковскийМетро", None), ["Московский", "Метро"]);
        assert_eq!(parts("ΚαλήΜέρα", None), ["Καλή", "Μέρα"]);
        // Uncased scripts are split from cased ones and from digits only.
        assert_eq!(parts("東京2020", None), ["東京", "2020"]);
        assert_eq!(parts("Tokyo東京", None), ["Tokyo", "東京"]);
        // Emoji are symbols: split from letters, kept as one part.
        assert_eq!(parts("love❤️🔥", None), ["love", "❤️🔥"]);
    }

    #[test]
    fn viterbi_on_a_hand_made_table() {
        let f = tiny();
        assert_eq!(f.len(), 5);
        assert_eq!(f.total(), 16);
        // Known: cost = ln(16 / count). Unknown word of n chars: the rarest
        // known word costs ln(16 / 1) ≈ 2.77, so the fixed part is
        // max(2.77 + UNKNOWN_BASE, UNKNOWN_FLOOR) = max(-3.23, 1) = 1 and the
        // cost is 1 + 2n.
        // harbour|market|day = ln 8 + ln 4 + ln 2 = ln 64 ≈ 4.16 nats beats
        // harbour|mark|et|day = ln 8 + ln 16 + ln 16 + ln 2 = ln 4096 ≈ 8.32
        // and the whole chunk unknown = 1 + 2 × 16 = 33.
        assert_relative_eq!(f.cost("harbour", 7, &COSTS), 8f64.ln(), epsilon = 1e-12);
        assert_relative_eq!(f.cost("harbourmarketday", 16, &COSTS), 33.0);
        assert_eq!(parts("harbourmarketday", Some(&f)), ["harbour", "market", "day"]);
        // Title case and ALL CAPS are looked up lower-cased, parts keep case.
        assert_eq!(parts("Harbourmarketday", Some(&f)), ["Harbour", "market", "day"]);
        assert_eq!(parts("HARBOURDAY", Some(&f)), ["HARBOUR", "DAY"]);
        // harbour + unknown "xyz" = ln 8 + (1 + 6) ≈ 9.08 beats the whole
        // unknown (1 + 20 = 21) and harbour|x|y|z, each unknown letter
        // paying 1 + 2 + 10 (≈ 41.1 in all).
        assert_eq!(parts("harbourxyz", Some(&f)), ["harbour", "xyz"]);
        // Unknown strings stay whole: qqqq = 1 + 8 = 9 beats qq|qq = 2 × 5.
        assert_eq!(parts("qqqq", Some(&f)), ["qqqq"]);
        // Case boundaries come first, then each chunk is segmented.
        assert_eq!(parts("marketday_Harbour2024", Some(&f)), ["market", "day", "Harbour", "2024"]);
        // Mixed-case chunks were split at their case boundaries already.
        assert_eq!(parts("marketDay", Some(&f)), ["market", "Day"]);
    }

    #[test]
    fn unknown_cost_is_relative_to_the_rarest_known_word() {
        let f = WordFreqs::from_counts([("day".to_string(), 9999), ("sea".to_string(), 1)]);
        // ln(10000 / 1) - 6 + 2 × 3 = ln 10000 ≈ 9.21 for a 3-char unknown.
        assert_relative_eq!(f.cost("xyz", 3, &COSTS), 10000f64.ln(), epsilon = 1e-12);
        assert_relative_eq!(f.cost("sea", 3, &COSTS), 10000f64.ln(), epsilon = 1e-12);
        // dayxyz: day|xyz = ln(10000/9999) + 9.21 ≈ 9.21 beats the whole
        // unknown (ln 10000 - 6 + 12 ≈ 15.2).
        assert_eq!(parts("dayxyz", Some(&f)), ["day", "xyz"]);
        // An empty table segments nothing.
        assert_eq!(parts("dayxyz", Some(&WordFreqs::default())), ["dayxyz"]);
    }

    #[test]
    fn segments_lowercase_tags_in_other_scripts() {
        let f = WordFreqs::learn([
            "Der Fährhafen von Kiel.",
            "Мой город — Москва, мой дом.",
            "Ο νέος κόσμος, ο κόσμος μας.",
        ]);
        assert_eq!(parts("fährhafenkiel", Some(&f)), ["fährhafen", "kiel"]);
        assert_eq!(parts("Fährhafenkiel", Some(&f)), ["Fährhafen", "kiel"]);
        assert_eq!(parts("мойгород", Some(&f)), ["мой", "город"]);
        assert_eq!(parts("МОЙГОРОД", Some(&f)), ["МОЙ", "ГОРОД"]);
        // ALL CAPS Greek: a capital sigma that ends a word is looked up as
        // the final form ς (Unicode SpecialCasing final-sigma rule).
        assert_eq!(parts("ΝΈΟΣΚΌΣΜΟΣ", Some(&f)), ["ΝΈΟΣ", "ΚΌΣΜΟΣ"]);
        // Uncased scripts are left whole.
        let cjk = WordFreqs::from_counts([("東".to_string(), 5), ("京".to_string(), 5)]);
        assert_eq!(parts("東京", Some(&cjk)), ["東京"]);
    }

    #[test]
    fn single_letters_other_than_a_and_i_are_penalised() {
        let f = WordFreqs::from_counts(
            [("day", 8), ("a", 4), ("s", 4), ("days", 1)].map(|(w, c)| (w.to_string(), c)),
        );
        // total 17: day|a = ln(17/8) + ln(17/4) ≈ 2.20 (no penalty for "a").
        assert_eq!(parts("daya", Some(&f)), ["day", "a"]);
        // day|s = ln(17/8) + ln(17/4) + 6 ≈ 8.20 loses to days = ln 17 ≈ 2.83.
        assert_eq!(parts("days", Some(&f)), ["days"]);
        assert_relative_eq!(f.cost("s", 1, &COSTS), (17f64 / 4.0).ln() + SINGLE_LETTER_PENALTY);
        assert_relative_eq!(f.cost("a", 1, &COSTS), (17f64 / 4.0).ln());
    }

    #[test]
    fn one_letter_words_are_free_per_table() {
        let f = WordFreqs::from_counts(
            [("amor", 4), ("y", 4), ("amistad", 4)].map(|(w, c)| (w.to_string(), c)),
        );
        // total 12: every known word costs ln 3; "y" pays the penalty unless
        // the table names it free (as the Spanish list does).
        let free = f.clone().with_free_letters(&["y"]);
        assert_relative_eq!(f.cost("y", 1, &COSTS), 3f64.ln() + SINGLE_LETTER_PENALTY);
        assert_relative_eq!(free.cost("y", 1, &COSTS), 3f64.ln());
        assert_relative_eq!(free.cost("a", 1, &COSTS), f.cost("a", 1, &COSTS) + 10.0);
        assert_eq!(parts("amoryamistad", Some(&free)), ["amor", "y", "amistad"]);
    }

    #[test]
    fn eszett_is_looked_up_as_ss_in_case_folded_tables() {
        // wordfreq case-folds: its German list writes "fussball".
        let folded = WordFreqs::from_counts(
            [("fussball", 2), ("ist", 4), ("leben", 2)].map(|(w, c)| (w.to_string(), c)),
        );
        assert_eq!(parts("fußballistleben", Some(&folded)), ["fußball", "ist", "leben"]);
        assert_eq!(parts("FUẞBALLISTLEBEN", Some(&folded)), ["FUẞBALL", "IST", "LEBEN"]);
        // A table that has the ß spelling uses it as it is.
        let plain = WordFreqs::from_counts(
            [("fußball", 2), ("ist", 4), ("leben", 2)].map(|(w, c)| (w.to_string(), c)),
        );
        assert_eq!(parts("fußballistleben", Some(&plain)), ["fußball", "ist", "leben"]);
    }

    #[test]
    fn mix_weighs_tables_equally() {
        let a = WordFreqs::from_counts([("day".to_string(), 3), ("sea".to_string(), 1)]);
        let b = WordFreqs::from_counts([("day".to_string(), 1), ("fish".to_string(), 1)]);
        let m = WordFreqs::mix(&[&a, &b, &WordFreqs::default()]);
        // Relative frequencies: day (3/4 + 1/2) / 2, sea 1/4 / 2, fish 1/2 / 2
        // (the empty table takes no share).
        let rel = |w: &str| m.count(w) as f64 / m.total() as f64;
        assert_relative_eq!(rel("day"), 0.625, epsilon = 1e-9);
        assert_relative_eq!(rel("sea"), 0.125, epsilon = 1e-9);
        assert_relative_eq!(rel("fish"), 0.25, epsilon = 1e-9);
        assert_eq!(m.len(), 3);
        assert_relative_eq!(m.total() as f64, (1u64 << 40) as f64, max_relative = 1e-9);
        assert!(WordFreqs::mix(&[]).is_empty());
    }

    #[test]
    fn learns_ordinary_words_only() {
        let f = WordFreqs::learn([
            "The harbour market, the DAY! #HarbourMarket @harbour_bot",
            "see https://example.org/market/day and www.example.org 2024 b4 don't",
        ]);
        assert_eq!(f.count("the"), 2);
        assert_eq!(f.count("day"), 1);
        assert_eq!(f.count("harbour"), 1);
        assert_eq!(f.count("market"), 1);
        assert_eq!(f.count("harbourmarket"), 0);
        assert_eq!(f.count("harbour_bot"), 0);
        assert_eq!(f.count("example"), 0);
        assert_eq!(f.count("2024"), 0);
        assert_eq!(f.count("b4"), 0);
        assert_eq!((f.count("don"), f.count("t")), (1, 1));
        assert_eq!(f.count("see"), 1);
        assert_eq!(f.total(), 9);
    }

    /// Counting in parallel chunks gives the counts of one pass: 50,001
    /// texts (three chunks or more on a machine with several cores) are the
    /// two texts above 25,000 times each plus one Greek text, whose capital
    /// final sigma lower-cases to `ς` as `str::to_lowercase` does (Unicode
    /// SpecialCasing.txt, Final_Sigma).
    #[test]
    fn parallel_counting_adds_up_like_one_pass() {
        let two = [
            "The harbour market, the DAY! #HarbourMarket @harbour_bot",
            "see https://example.org/market/day and www.example.org 2024 b4 don't",
        ];
        let mut texts: Vec<&str> = two.iter().copied().cycle().take(50_000).collect();
        texts.push("ΟΔΟΣ κλειστή");
        let f = WordFreqs::learn(texts);
        assert_eq!((f.count("the"), f.count("day"), f.count("don")), (50_000, 25_000, 25_000));
        assert_eq!(f.count("harbourmarket"), 0);
        assert_eq!((f.count("οδος"), f.count("οδοσ")), (1, 0));
        assert_eq!(f.total(), 9 * 25_000 + 2);
        assert_eq!(f.len(), 8 + 2);
    }

    #[test]
    fn from_counts_lowercases_and_adds_up() {
        let f = WordFreqs::from_counts(
            [("Day", 2), ("day", 3), ("", 5), ("zero", 0)].map(|(w, c)| (w.to_string(), c)),
        );
        assert_eq!((f.len(), f.total(), f.count("day")), (1, 5, 5));
        assert_eq!(format!("{f:?}"), "WordFreqs { len: 1, total: 5 }");
    }

    #[test]
    fn read_counts_reports_every_bad_line() {
        let dir = tempfile::tempdir().expect("temp dir");
        let path = dir.path().join("freqs.tsv");
        std::fs::write(&path, "day\t8\nmarket\t4\n\nbad line\nmark\tx\n\t3\n").expect("write");
        let err = WordFreqs::read_counts(&path).expect_err("bad lines");
        let text = err.to_string();
        let lines: Vec<&str> = text.lines().collect();
        assert_eq!(lines.len(), 3, "{text}");
        assert!(lines[0].ends_with("freqs.tsv:4: expected word<TAB>count, found \"bad line\""));
        assert!(lines[1]
            .ends_with("freqs.tsv:5: column 2 (count): expected a whole number, found \"x\""));
        assert!(lines[2].ends_with("freqs.tsv:6: empty word"));

        std::fs::write(&path, "Day\t8\r\nmarket\t4\n").expect("write");
        let f = WordFreqs::read_counts(&path).expect("good file");
        assert_eq!((f.len(), f.total(), f.count("day")), (2, 12, 8));

        let missing = dir.path().join("missing.tsv");
        let err = WordFreqs::read_counts(&missing).expect_err("missing");
        assert!(err.to_string().contains("missing.tsv"));
    }

    /// Collect `(text, position, from, to)` of a whitespace-split text.
    fn stream(filter: HashtagSplit, text: &str) -> Vec<(String, usize, usize, usize)> {
        let mut analyzer =
            TextAnalyzer::builder(WhitespaceTokenizer::default()).filter(filter).build();
        let mut out = Vec::new();
        let mut s = analyzer.token_stream(text);
        while let Some(t) = s.next() {
            out.push((t.text.clone(), t.position, t.offset_from, t.offset_to));
        }
        out
    }

    fn owned(expected: &[(&str, usize, usize, usize)]) -> Vec<(String, usize, usize, usize)> {
        expected.iter().map(|&(t, p, f, e)| (t.to_string(), p, f, e)).collect()
    }

    #[test]
    fn stream_emits_whole_tag_then_parts_and_shifts_positions() {
        let text = "at #HarbourMarketDay today #tag2024 # #x end";
        let got = stream(HashtagSplit::default(), text);
        let want = owned(&[
            ("at", 0, 0, 2),
            ("HarbourMarketDay", 1, 3, 20),
            ("Harbour", 1, 4, 11),
            ("Market", 2, 11, 17),
            ("Day", 3, 17, 20),
            ("today", 4, 21, 26),
            ("tag2024", 5, 27, 35),
            ("tag", 5, 28, 31),
            ("2024", 6, 31, 35),
            ("#", 7, 36, 37),
            ("x", 8, 38, 40),
            ("end", 9, 41, 44),
        ]);
        assert_eq!(got, want);
        for (t, _, from, to) in &got[2..5] {
            assert_eq!(&text[*from..*to], t);
        }
    }

    #[test]
    fn stream_uses_the_table_and_multibyte_offsets() {
        let f = Arc::new(tiny());
        let text = "Fähre #harbourmarketday #FährhafenKiel";
        let got = stream(HashtagSplit::new(Some(f)), text);
        let want = owned(&[
            ("Fähre", 0, 0, 6),
            ("harbourmarketday", 1, 7, 24),
            ("harbour", 1, 8, 15),
            ("market", 2, 15, 21),
            ("day", 3, 21, 24),
            ("FährhafenKiel", 4, 25, 40),
            ("Fährhafen", 4, 26, 36),
            ("Kiel", 5, 36, 40),
        ]);
        assert_eq!(got, want);
    }

    #[test]
    fn stream_falls_back_to_tag_offsets_when_text_was_changed() {
        // A filter before this one changed the text length (it doubles every
        // "a"): parts get the whole tag's offsets.
        #[derive(Clone)]
        struct Grow;
        impl TokenFilter for Grow {
            type Tokenizer<T: Tokenizer> = GrowFilter<T>;
            fn transform<T: Tokenizer>(self, t: T) -> GrowFilter<T> {
                GrowFilter(t)
            }
        }
        #[derive(Clone)]
        struct GrowFilter<T>(T);
        impl<T: Tokenizer> Tokenizer for GrowFilter<T> {
            type TokenStream<'a> = GrowStream<T::TokenStream<'a>>;
            fn token_stream<'a>(&'a mut self, text: &'a str) -> Self::TokenStream<'a> {
                GrowStream(self.0.token_stream(text))
            }
        }
        struct GrowStream<S>(S);
        impl<S: TokenStream> TokenStream for GrowStream<S> {
            fn advance(&mut self) -> bool {
                if !self.0.advance() {
                    return false;
                }
                let t = self.0.token_mut();
                t.text = t.text.replace('a', "aa");
                true
            }
            fn token(&self) -> &Token {
                self.0.token()
            }
            fn token_mut(&mut self) -> &mut Token {
                self.0.token_mut()
            }
        }
        let mut analyzer = TextAnalyzer::builder(WhitespaceTokenizer::default())
            .filter(Grow)
            .filter(HashtagSplit::default())
            .build();
        let mut s = analyzer.token_stream("#HarbourMarket");
        let mut got = Vec::new();
        while let Some(t) = s.next() {
            got.push((t.text.clone(), t.position, t.offset_from, t.offset_to));
        }
        assert_eq!(
            got,
            owned(&[("HaarbourMaarket", 0, 0, 14), ("Haarbour", 0, 0, 14), ("Maarket", 1, 0, 14)])
        );
    }

    #[test]
    fn tag_memo_keeps_two_bounded_generations() {
        let freqs = tiny();
        let mut memo = TagMemo::default();
        for i in 0..(CACHE_CAPACITY + CACHE_CAPACITY / 4) {
            let body = format!("tag{i}");
            assert_eq!(memo.ranges(&body, Some(&freqs)), split_tag_ranges(&body, Some(&freqs)));
            assert!(memo.len() <= CACHE_CAPACITY);
        }
        // The young generation filled twice: the old one holds the tags
        // between, and a hit there moves the tag to the young one.
        assert_eq!(memo.len(), CACHE_CAPACITY / 2 + CACHE_CAPACITY / 4);
        let body = format!("tag{}", CACHE_CAPACITY / 2 + 1);
        assert!(memo.old.contains_key(&body));
        assert_eq!(memo.ranges(&body, Some(&freqs)), [0..3, 3..body.len()]);
        assert!(memo.young.contains_key(&body) && !memo.old.contains_key(&body));
        assert_eq!(memo.ranges("harbourmarketday", Some(&freqs)), [0..7, 7..13, 13..16]);
        assert_eq!(memo.clone().len(), 0, "a clone starts empty");
    }

    #[test]
    fn clones_share_segmentations() {
        let freqs = tiny();
        let mut memo = TagMemo::default();
        let mut other = memo.clone();
        assert_eq!(memo.ranges("harbourmarketday", Some(&freqs)), [0..7, 7..13, 13..16]);
        assert_eq!(other.shared.get("harbourmarketday"), Some(vec![0..7, 7..13, 13..16]));
        assert_eq!(other.len(), 0);
        // Found in the shared memo: the table is not needed any more.
        assert_eq!(other.ranges("harbourmarketday", None), [0..7, 7..13, 13..16]);
        assert_eq!(other.len(), 1);
        let shared = SharedTags::default();
        for i in 0..(CACHE_CAPACITY + 10) {
            shared.insert(&format!("t{i}"), &[0..1, 1..2]);
        }
        let maps = shared.maps.read().expect("not poisoned");
        assert_eq!(maps.0.len() + maps.1.len(), CACHE_CAPACITY / 2 + 10);
    }

    #[test]
    fn filter_memo_is_bounded_and_answers_stay_the_same() {
        let mut analyzer = TextAnalyzer::builder(WhitespaceTokenizer::default())
            .filter(HashtagSplit::default())
            .build();
        let text: String = (0..CACHE_CAPACITY + 10).map(|i| format!("#tag_{i} ")).collect();
        let mut n = 0;
        {
            let mut s = analyzer.token_stream(&text);
            while s.advance() {
                n += 1;
            }
        }
        // Each tag yields the whole tag and 2 parts (tag, digits).
        assert_eq!(n, 3 * (CACHE_CAPACITY + 10));
        let mut s = analyzer.token_stream("#tag_5 #tag_5");
        let mut texts = Vec::new();
        while let Some(t) = s.next() {
            texts.push((t.text.clone(), t.position));
        }
        assert_eq!(
            texts,
            [("tag_5", 0), ("tag", 0), ("5", 1), ("tag_5", 2), ("tag", 2), ("5", 3)]
                .map(|(t, p)| (t.to_string(), p))
        );
    }

    // ---- accuracy against the gold sets of shared/data/hashtags ----

    fn data_dir() -> Option<std::path::PathBuf> {
        let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("../shared/data");
        if dir.is_dir() {
            Some(dir)
        } else {
            skip(&format!("{} is absent", dir.display()));
            None
        }
    }

    /// A gold segmentation normalised for comparison: lower case, apostrophes
    /// and hyphens as word breaks (the BOUN/Stanford-dev files already lost
    /// them: "don t"; the `edited` rows restore them: "can't").
    fn normalise(seg: &str) -> Vec<String> {
        seg.to_lowercase()
            .split(|c: char| c.is_whitespace() || matches!(c, '\'' | '’' | '-'))
            .filter(|w| !w.is_empty())
            .map(str::to_string)
            .collect()
    }

    /// `(tag, accepted segmentations)` of a gold file (columns
    /// hashtag, gold, alternatives joined by " | ", match).
    fn read_gold(path: &std::path::Path) -> Vec<(String, Vec<Vec<String>>)> {
        let text = std::fs::read_to_string(path).expect("gold file readable");
        text.lines()
            .filter(|l| !l.is_empty())
            .map(|line| {
                let cols: Vec<&str> = line.split('\t').collect();
                let tag = cols.first().copied().unwrap_or("").to_string();
                let mut accepted = vec![normalise(cols.get(1).copied().unwrap_or(""))];
                if let Some(alts) = cols.get(2).filter(|a| !a.is_empty()) {
                    accepted.extend(alts.split(" | ").map(normalise));
                }
                (tag, accepted)
            })
            .collect()
    }

    /// The split the cost constants are tuned on (the others are held out).
    const TUNING_FILE: &str = "stan_large_train.tsv";

    const GOLD_FILES: [&str; 5] = [
        "boun_dev.tsv",
        "stan_dev_celebi.tsv",
        "stan_small_bansal.tsv",
        "stan_large_train.tsv",
        "stan_large_dev.tsv",
    ];

    fn accuracy(gold: &[(String, Vec<Vec<String>>)], freqs: &WordFreqs, costs: &Costs) -> f64 {
        let hits = gold
            .iter()
            .filter(|(tag, accepted)| {
                let got: Vec<String> = split_tag_ranges_with(tag, Some(freqs), costs)
                    .into_iter()
                    .map(|r| tag[r].to_lowercase())
                    .collect();
                accepted.contains(&got)
            })
            .count();
        hits as f64 / gold.len().max(1) as f64
    }

    fn ud_english(dir: &std::path::Path) -> WordFreqs {
        let mut texts = String::new();
        for f in ["ud/en.sentences.tsv", "ud_pud/en.sentences.tsv"] {
            texts.push_str(&std::fs::read_to_string(dir.join(f)).expect("UD sentences readable"));
        }
        // Column 2 is the sentence (column 1 the sentence id).
        WordFreqs::learn(texts.lines().filter_map(|l| l.split_once('\t').map(|(_, t)| t)))
    }

    fn wordfreq_fixture() -> Option<WordFreqs> {
        let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("tests/fixtures/analysis/hashtag/wordfreq_en.tsv");
        if !path.is_file() {
            skip(&format!("wordfreq table: {} is absent", path.display()));
            return None;
        }
        Some(WordFreqs::read_counts(&path).expect("fixture is well formed"))
    }

    /// Exact-match accuracy (case-insensitive, any accepted segmentation) on
    /// the development gold sets: Çelebi & Özgür, LREC 2016 (BOUN and
    /// Stanford dev); Bansal et al., ECIR 2015 as corrected by Maddela, Xu &
    /// Preoţiuc-Pietro, ACL 2019 (STAN small); Maddela et al. 2019 (STAN
    /// large train/dev). Floors sit about 1.5 points under the values
    /// measured with the default costs (in comments), so a regression of
    /// the rules or the cost model fails while the numbers stay readable.
    #[test]
    fn accuracy_on_gold_sets() {
        let Some(dir) = data_dir() else { return };
        let golds: Vec<_> =
            GOLD_FILES.iter().map(|f| read_gold(&dir.join("hashtags").join(f))).collect();
        let ud_en = ud_english(&dir);
        let mixed = WordFreqs::mix(&[&ud_en, &list(Some("en"))]);
        let mut tables = vec![("none", None), ("ud-en", Some(ud_en))];
        if let Some(wf) = wordfreq_fixture() {
            tables.push(("wordfreq-en-30k", Some(wf)));
        }
        // The built-in lists of `vocabulary = "lists"` (merged: a chain
        // that knows no language) and `"corpus+lists"` (UD English mixed
        // with the English list, equal weights).
        tables.push(("lists-merged", Some((*list(None)).clone())));
        tables.push(("ud-en+lists-en", Some(mixed)));
        // Floors per table, in GOLD_FILES order. Measured (default costs):
        // none             0.5340 0.6150 0.5758 0.6473 0.6534
        // ud-en            0.6820 0.6920 0.6877 0.7351 0.7647
        // wordfreq-en-30k  0.8360 0.8020 0.8186 0.8201 0.8251
        // lists-merged     0.7760 0.7420 0.7617 0.7617 0.7711
        // ud-en+lists-en   0.8360 0.8000 0.8096 0.8129 0.8251
        // The costs were tuned on stan_large_train alone (`tune_costs`): the
        // grid's best there, with the wordfreq table, is these constants
        // (0.8201; 10 vs 14 for the single-letter penalty tie on ud-en within
        // one tag). The other four sets never took part in tuning, so their
        // figures are held-out measurements; stan_large_train's is in-sample.
        let floors: [(&str, [f64; 5]); 5] = [
            ("none", [0.515, 0.60, 0.56, 0.63, 0.635]),
            ("ud-en", [0.665, 0.675, 0.67, 0.72, 0.745]),
            ("wordfreq-en-30k", [0.815, 0.785, 0.80, 0.805, 0.81]),
            ("lists-merged", [0.76, 0.725, 0.745, 0.745, 0.755]),
            ("ud-en+lists-en", [0.815, 0.785, 0.79, 0.795, 0.81]),
        ];
        for (name, table) in &tables {
            for (k, (file, gold)) in GOLD_FILES.iter().zip(&golds).enumerate() {
                let acc = match table {
                    Some(t) => accuracy(gold, t, &COSTS),
                    None => accuracy_without_table(gold),
                };
                println!("hashtag accuracy {name} {file}: {acc:.4} (n = {})", gold.len());
                let floor = floors.iter().find(|f| f.0 == *name).map_or(0.0, |f| f.1[k]);
                assert!(acc >= floor, "{name} {file}: {acc:.4} under floor {floor}");
            }
        }
    }

    fn accuracy_without_table(gold: &[(String, Vec<Vec<String>>)]) -> f64 {
        let hits = gold
            .iter()
            .filter(|(tag, accepted)| {
                let got: Vec<String> =
                    split_tag(tag, None).iter().map(|p| p.to_lowercase()).collect();
                accepted.contains(&got)
            })
            .count();
        hits as f64 / gold.len().max(1) as f64
    }

    /// The invented gold tags of one language and set (`dev`, `held-out`;
    /// see the file's header).
    fn read_invented_gold(language: &str, set: &str) -> Vec<(String, Vec<Vec<String>>)> {
        let path = crate::analysis::testutil::fixture_path("hashtag/invented_gold.tsv");
        let text = std::fs::read_to_string(path).expect("invented gold readable");
        text.lines()
            .filter(|l| !l.is_empty() && !l.starts_with('#'))
            .filter_map(|line| {
                let cols: Vec<&str> = line.split('\t').collect();
                if cols.first() != Some(&language) || cols.get(1) != Some(&set) {
                    return None;
                }
                let tag = cols.get(2).copied().unwrap_or("").to_string();
                let mut accepted = vec![normalise(cols.get(3).copied().unwrap_or(""))];
                if let Some(alts) = cols.get(4).filter(|a| !a.is_empty()) {
                    accepted.extend(alts.split(" | ").map(normalise));
                }
                Some((tag, accepted))
            })
            .collect()
    }

    /// UD sentences of one language (`ud/L` and `ud_pud/L` where present).
    fn ud_table(dir: &std::path::Path, language: &str) -> WordFreqs {
        let mut texts = String::new();
        for f in
            [format!("ud/{language}.sentences.tsv"), format!("ud_pud/{language}.sentences.tsv")]
        {
            texts.push_str(&std::fs::read_to_string(dir.join(f)).unwrap_or_default());
        }
        WordFreqs::learn(texts.lines().filter_map(|l| l.split_once('\t').map(|(_, t)| t)))
    }

    /// The built-in list of a language (`None`: the merged list).
    fn list(language: Option<&str>) -> Arc<WordFreqs> {
        let code = language.map(|l| crate::input::LangCode::parse(l).expect("code"));
        crate::analysis::word_lists::builtin_list(code).expect("a built-in list")
    }

    /// Exact-match accuracy on the invented gold tags of
    /// `tests/fixtures/analysis/hashtag/invented_gold.tsv` (invented for
    /// this test, see its header): the language's own built-in list must
    /// beat the English list and the merged list of all seven languages.
    /// Floors sit one tag under the values measured (in comments); the
    /// `dev` set was seen while choosing the lists' one-letter words, the
    /// `held-out` set was not. When the shared data is there, frequencies
    /// learned from the language's UD sentences (`corpus`) and their
    /// equal-weight mixture with the list (`corpus+lists`) are printed too.
    #[test]
    fn accuracy_on_invented_gold_per_language() {
        // (language, set, floor for the own list). Measured, default costs:
        //               own    en     merged  (UD corpus, corpus+lists)
        // de dev       1.000  0.125  0.975   (0.750, 1.000)
        // de held-out  0.880  0.000  0.800   (0.480, 0.880)
        // fr dev       0.975  0.150  0.900   (0.675, 0.975)
        // fr held-out  1.000  0.040  0.800   (0.560, 1.000)
        // es dev       1.000  0.000  0.925   (0.875, 1.000)
        // es held-out  1.000  0.040  0.920   (0.760, 1.000)
        // it dev       0.975  0.100  0.950   (0.700, 0.975)
        // it held-out  1.000  0.000  0.920   (0.720, 1.000)
        // pt dev       1.000  0.000  0.975   (0.900, 1.000)
        // pt held-out  1.000  0.000  0.960   (0.720, 1.000)
        // nl dev       0.975  0.125  0.975   (0.450, 0.975)
        // nl held-out  1.000  0.000  0.960   (0.440, 1.000)
        let floors = [
            ("de", "dev", 0.975),
            ("de", "held-out", 0.84),
            ("fr", "dev", 0.95),
            ("fr", "held-out", 0.96),
            ("es", "dev", 0.975),
            ("es", "held-out", 0.96),
            ("it", "dev", 0.95),
            ("it", "held-out", 0.96),
            ("pt", "dev", 0.975),
            ("pt", "held-out", 0.96),
            ("nl", "dev", 0.95),
            ("nl", "held-out", 0.96),
        ];
        let (english, merged) = (list(Some("en")), list(None));
        let data = data_dir();
        for (language, set, floor) in floors {
            let gold = read_invented_gold(language, set);
            assert!(gold.len() >= 25, "{language} {set}: {} tags", gold.len());
            let own_list = list(Some(language));
            let own = accuracy(&gold, &own_list, &COSTS);
            let en = accuracy(&gold, &english, &COSTS);
            let all = accuracy(&gold, &merged, &COSTS);
            let mut line = format!(
                "invented {language} {set} (n = {}): own list {own:.3}, English list {en:.3}, \
                 merged list {all:.3}",
                gold.len()
            );
            if let Some(dir) = &data {
                let corpus = ud_table(dir, language);
                let mixed =
                    WordFreqs::mix(&[&corpus, &own_list]).with_free_letters(own_list.free_letters);
                line.push_str(&format!(
                    ", UD corpus {:.3} ({} words), corpus+lists {:.3}",
                    accuracy(&gold, &corpus, &COSTS),
                    corpus.len(),
                    accuracy(&gold, &mixed, &COSTS)
                ));
            }
            println!("{line}");
            assert!(own >= floor, "{language} {set}: own list {own:.3} under floor {floor}");
            assert!(own > en, "{language} {set}: own list {own:.3} not above English {en:.3}");
            assert!(own >= all, "{language} {set}: own list {own:.3} under merged {all:.3}");
        }
    }

    /// How accuracy falls when a list keeps only its N most frequent words
    /// (run by hand with `--ignored --nocapture`): the measurement behind
    /// shipping 30,000 words a language (see the fixtures' README).
    #[test]
    #[ignore]
    fn accuracy_by_list_size() {
        let cut = |t: &WordFreqs, n: usize| {
            let mut rows: Vec<(String, u64)> =
                t.counts.iter().map(|(w, c)| (w.clone(), *c)).collect();
            rows.sort_by(|a, b| b.1.cmp(&a.1).then(a.0.cmp(&b.0)));
            rows.truncate(n);
            WordFreqs::from_counts(rows).with_free_letters(t.free_letters)
        };
        let sizes = [5_000, 10_000, 15_000, 20_000, 25_000, 30_000];
        if let Some(dir) = data_dir() {
            let en = list(Some("en"));
            for file in GOLD_FILES {
                let gold = read_gold(&dir.join("hashtags").join(file));
                let accs: Vec<String> = sizes
                    .iter()
                    .map(|&n| format!("{n}: {:.4}", accuracy(&gold, &cut(&en, n), &COSTS)))
                    .collect();
                println!("en {file}: {}", accs.join(", "));
            }
        }
        for language in ["de", "fr", "es", "it", "pt", "nl"] {
            let own = list(Some(language));
            for set in ["dev", "held-out"] {
                let gold = read_invented_gold(language, set);
                let accs: Vec<String> = sizes
                    .iter()
                    .map(|&n| format!("{n}: {:.3}", accuracy(&gold, &cut(&own, n), &COSTS)))
                    .collect();
                println!("{language} {set}: {}", accs.join(", "));
            }
        }
    }

    /// Grid search over the cost constants (run by hand with `--ignored
    /// --nocapture` after changing the rules; prints the best settings).
    /// It tunes on the training split alone ([`TUNING_FILE`]) and prints the
    /// other gold sets beside it, which the tuning never sees.
    #[test]
    #[ignore]
    fn tune_costs() {
        let Some(dir) = data_dir() else { return };
        let train = read_gold(&dir.join("hashtags").join(TUNING_FILE));
        let held_out: Vec<_> = GOLD_FILES
            .iter()
            .filter(|f| **f != TUNING_FILE)
            .map(|f| read_gold(&dir.join("hashtags").join(f)))
            .collect();
        let mut tables = vec![("ud-en", ud_english(&dir))];
        if let Some(wf) = wordfreq_fixture() {
            tables.push(("wordfreq-en-30k", wf));
        }
        for (name, table) in &tables {
            let mut results = Vec::new();
            for b in [-9.0, -7.0, -6.0, -5.0, -4.0, -3.0] {
                for c in [1.5, 2.0, 2.5, 3.0] {
                    for s1 in [6.0, 10.0, 14.0] {
                        let costs =
                            Costs { unknown_base: b, unknown_per_char: c, single_letter: s1 };
                        results.push((accuracy(&train, table, &costs), costs));
                    }
                }
            }
            results.sort_by(|a, b| b.0.total_cmp(&a.0));
            for (train_acc, costs) in results.iter().take(5) {
                let held: Vec<String> =
                    held_out.iter().map(|g| format!("{:.4}", accuracy(g, table, costs))).collect();
                println!("{name} train {train_acc:.4} {costs:?} held out {held:?}");
            }
        }
    }
}
