//! Words of scripts written without spaces: Thai, Lao, Khmer and Burmese
//! (Myanmar script), Chinese (Han) and Japanese (Han and kana), and, for
//! character pairs, Korean (Hangul).
//!
//! Place in the data flow: `analysis` stage, inside the `words` and `posts`
//! tokenizers, which call it only when a chain's `unspaced` setting is not
//! the default.
//!
//! UAX #29 (the `words` tokenizer) has no rules for these scripts: Han,
//! Hiragana and the letters of Thai, Lao, Khmer and Burmese have the word
//! break property Other (UAX #29 section 4.1; their letters are
//! Line_Break=SA, "complex context", which section 4 leaves to a
//! dictionary), so rule WB999 breaks between any two of them and a Thai
//! sentence comes out as single letters with their vowel and tone marks,
//! a Chinese one as single characters; Katakana runs stay whole (WB13).
//! The [`Unspaced`] setting replaces that inside *runs* of these scripts
//! (maximal sequences of their letters, digits and marks) and leaves all
//! other text to UAX #29 exactly as before:
//!
//! - `characters`: UAX #29 everywhere (today's tokens; the default).
//! - `dictionary`: runs are segmented by ICU4X's word segmenter
//!   (`icu_segmenter`, `new_dictionary`: its dictionaries for all six
//!   scripts).
//! - `model`: ICU4X's LSTM models for Thai, Lao, Khmer and Burmese and its
//!   dictionary for Chinese and Japanese (`new_auto`).
//! - `bigrams`: overlapping pairs of characters over each Han, kana or
//!   Hangul run (a one-character run gives itself), the representation
//!   Kwok found as effective as words for Chinese retrieval ("Comparing
//!   representations in Chinese information retrieval", SIGIR 1997); Thai,
//!   Lao, Khmer and Burmese runs are segmented as with `model`, since
//!   character pairs are not the published method for them.
//!
//! A run is cut where the script family changes (Southeast Asian, Han and
//! kana, Hangul); combining marks, variation selectors and ZWJ stay with the
//! character before them. The text between runs is segmented by UAX #29 on
//! its own, which gives the same tokens as segmenting the whole text except
//! in one case no real text has: a Katakana run glued by `_` (ExtendNumLet,
//! WB13a/b) to Latin letters. Tokens are slices of the original text (byte
//! offsets on char boundaries); positions are consecutive, also for the
//! overlapping pairs.

use std::sync::OnceLock;

use icu_segmenter::options::WordBreakInvariantOptions;
use icu_segmenter::{WordSegmenter, WordSegmenterBorrowed};
use serde::{Deserialize, Serialize};
use unicode_normalization::char::is_combining_mark;

use super::word_tokenizer::WordSegments;

/// How the `words` and `posts` tokenizers cut scripts written without
/// spaces (chain files: `unspaced = "..."`).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Unspaced {
    /// UAX #29 alone: single characters for Han, Hiragana and the Southeast
    /// Asian scripts (the behaviour before this setting existed).
    #[default]
    Characters,
    /// ICU4X dictionaries for Thai, Lao, Khmer, Burmese, Chinese, Japanese.
    Dictionary,
    /// ICU4X LSTM models for Thai, Lao, Khmer, Burmese; its dictionary for
    /// Chinese and Japanese.
    Model,
    /// Overlapping character pairs over Han, kana and Hangul runs; Thai,
    /// Lao, Khmer and Burmese as with [`Unspaced::Model`].
    Bigrams,
}

impl Unspaced {
    /// Every setting, in the order of the documentation.
    pub const ALL: [Unspaced; 4] =
        [Unspaced::Characters, Unspaced::Dictionary, Unspaced::Model, Unspaced::Bigrams];

    /// The name used in chain files.
    pub fn as_str(self) -> &'static str {
        match self {
            Unspaced::Characters => "characters",
            Unspaced::Dictionary => "dictionary",
            Unspaced::Model => "model",
            Unspaced::Bigrams => "bigrams",
        }
    }

    /// True for the default (serialization skips it, so reports of chains
    /// that do not set it are unchanged).
    pub fn is_default(&self) -> bool {
        *self == Unspaced::Characters
    }
}

/// The script families whose runs are cut by [`Unspaced`].
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Family {
    /// Thai, Lao, Khmer, Myanmar.
    Southeast,
    /// Han and kana.
    HanKana,
    /// Hangul (pairs only: Korean is written with spaces between words).
    Hangul,
}

/// Blocks of each family (Unicode Blocks.txt, 16.0), first and last code
/// point. Only the letters, digits and marks of these blocks join runs
/// (see [`family_of`]), so their punctuation (`๏`, `・`) still separates.
const BLOCKS: [(u32, u32, Family); 22] = [
    (0x0E00, 0x0E7F, Family::Southeast), // Thai
    (0x0E80, 0x0EFF, Family::Southeast), // Lao
    (0x1000, 0x109F, Family::Southeast), // Myanmar
    (0x1100, 0x11FF, Family::Hangul),    // Hangul Jamo
    (0x1780, 0x17FF, Family::Southeast), // Khmer
    (0x19E0, 0x19FF, Family::Southeast), // Khmer Symbols
    (0x3005, 0x3007, Family::HanKana),   // 々 〆 〇
    (0x3021, 0x3029, Family::HanKana),   // Hangzhou numerals
    (0x3031, 0x3035, Family::HanKana),   // kana repeat marks
    (0x303B, 0x303C, Family::HanKana),   // 〻 〼
    (0x3040, 0x30FF, Family::HanKana),   // Hiragana, Katakana
    (0x3130, 0x318F, Family::Hangul),    // Hangul Compatibility Jamo
    (0x31F0, 0x31FF, Family::HanKana),   // Katakana Phonetic Extensions
    (0x3400, 0x4DBF, Family::HanKana),   // CJK Unified Ideographs Extension A
    (0x4E00, 0x9FFF, Family::HanKana),   // CJK Unified Ideographs
    (0xA960, 0xA97F, Family::Hangul),    // Hangul Jamo Extended-A
    (0xA9E0, 0xA9FF, Family::Southeast), // Myanmar Extended-B
    (0xAA60, 0xAA7F, Family::Southeast), // Myanmar Extended-A
    (0xAC00, 0xD7FF, Family::Hangul),    // Hangul Syllables, Jamo Extended-B
    (0xF900, 0xFAFF, Family::HanKana),   // CJK Compatibility Ideographs
    (0xFF66, 0xFFDC, Family::HanKana),   // halfwidth Katakana (and Hangul, below)
    (0x1AFF0, 0x3FFFF, Family::HanKana), // kana supplements, ideograph planes 2 and 3
];

/// The family of a character that can be part of a run: a letter or digit
/// of one of the [`BLOCKS`]. Halfwidth Hangul (U+FFA0–FFDC) is Hangul.
fn family_of(c: char) -> Option<Family> {
    let cp = c as u32;
    if cp < 0x0E00 {
        return None;
    }
    let i = BLOCKS.partition_point(|&(_, last, _)| last < cp);
    let &(first, _, family) = BLOCKS.get(i)?;
    if cp < first || !c.is_alphanumeric() {
        return None;
    }
    Some(if (0xFFA0..=0xFFDC).contains(&cp) { Family::Hangul } else { family })
}

/// Characters that stay with the character before them inside a run:
/// combining marks (Thai vowel and tone marks are Mn), variation selectors
/// and ZWJ.
fn joins_previous(c: char) -> bool {
    is_combining_mark(c)
        || matches!(c as u32, 0xFE00..=0xFE0F | 0xE0100..=0xE01EF | 0x200C | 0x200D)
}

/// Whether `setting` cuts runs of `family` (Hangul only for pairs).
fn cuts(setting: Unspaced, family: Family) -> bool {
    match setting {
        Unspaced::Characters => false,
        Unspaced::Dictionary | Unspaced::Model => family != Family::Hangul,
        Unspaced::Bigrams => true,
    }
}

/// The next run at or after byte `from` of a family `setting` cuts, as
/// `(start, end, family)`.
fn next_run(text: &str, from: usize, setting: Unspaced) -> Option<(usize, usize, Family)> {
    let bytes = text.as_bytes();
    let mut i = from;
    loop {
        // Every run character is outside ASCII.
        i += bytes.get(i..)?.iter().position(|b| !b.is_ascii())?;
        let c = text.get(i..)?.chars().next()?;
        match family_of(c).filter(|&f| cuts(setting, f)) {
            Some(family) => {
                let mut end = i + c.len_utf8();
                for c in text.get(end..)?.chars() {
                    if family_of(c) == Some(family) || joins_previous(c) {
                        end += c.len_utf8();
                    } else {
                        break;
                    }
                }
                return Some((i, end, family));
            }
            None => i += c.len_utf8(),
        }
    }
}

fn dictionary_segmenter() -> WordSegmenterBorrowed<'static> {
    static SEGMENTER: OnceLock<WordSegmenterBorrowed<'static>> = OnceLock::new();
    *SEGMENTER.get_or_init(|| WordSegmenter::new_dictionary(WordBreakInvariantOptions::default()))
}

fn model_segmenter() -> WordSegmenterBorrowed<'static> {
    static SEGMENTER: OnceLock<WordSegmenterBorrowed<'static>> = OnceLock::new();
    *SEGMENTER.get_or_init(|| WordSegmenter::new_auto(WordBreakInvariantOptions::default()))
}

/// Push the word spans of `run` (at byte `base` of the text) as `setting`
/// cuts a run of `family`.
fn cut_run(
    run: &str,
    base: usize,
    family: Family,
    setting: Unspaced,
    out: &mut Vec<(usize, usize)>,
) {
    let segmenter = match (setting, family) {
        (Unspaced::Bigrams, Family::HanKana | Family::Hangul) => {
            return push_pairs(run, base, out);
        }
        (Unspaced::Dictionary, _) => dictionary_segmenter(),
        _ => model_segmenter(),
    };
    let mut start = 0;
    for end in segmenter.segment_str(run).skip(1) {
        let word = run.get(start..end).unwrap_or_default();
        if word.chars().any(char::is_alphanumeric) {
            out.push((base + start, base + end));
        }
        start = end;
    }
}

/// Overlapping pairs of characters (a character with the marks after it
/// counts as one); a run of one character gives itself.
fn push_pairs(run: &str, base: usize, out: &mut Vec<(usize, usize)>) {
    let starts: Vec<usize> =
        run.char_indices().filter(|&(_, c)| !joins_previous(c)).map(|(i, _)| i).collect();
    if starts.len() < 2 {
        out.push((base, base + run.len()));
        return;
    }
    for (k, &from) in starts.iter().enumerate().take(starts.len() - 1) {
        let to = starts.get(k + 2).copied().unwrap_or(run.len());
        out.push((base + from, base + to));
    }
}

/// Word segments of a text with the [`Unspaced`] setting applied: the UAX
/// #29 segments of the text between runs ([`WordSegments`]) and the words
/// of each run, in text order, with their byte offsets. With
/// [`Unspaced::Characters`] it is [`WordSegments`] over the whole text.
pub(crate) enum Segments<'a> {
    /// Today's UAX #29 segments.
    Plain(WordSegments<'a>),
    /// Runs cut by the setting (boxed, so that the default variant stays
    /// as small as [`WordSegments`] for the tokenizers that create one per
    /// text or gap).
    Cut(Box<RunSegments<'a>>),
}

impl<'a> Segments<'a> {
    /// Segment `text`; `keep_emoji` as for [`WordSegments::new`].
    pub(crate) fn new(text: &'a str, keep_emoji: bool, setting: Unspaced) -> Segments<'a> {
        match setting {
            Unspaced::Characters => Segments::Plain(WordSegments::new(text, keep_emoji)),
            _ => Segments::Cut(Box::new(RunSegments {
                text,
                keep_emoji,
                setting,
                pos: 0,
                gap: None,
                words: Vec::new(),
                next_word: 0,
            })),
        }
    }
}

impl<'a> Iterator for Segments<'a> {
    type Item = (usize, &'a str);

    #[inline]
    fn next(&mut self) -> Option<(usize, &'a str)> {
        match self {
            Segments::Plain(segments) => segments.next(),
            Segments::Cut(runs) => runs.next(),
        }
    }
}

/// The state of [`Segments::Cut`].
pub(crate) struct RunSegments<'a> {
    text: &'a str,
    keep_emoji: bool,
    setting: Unspaced,
    /// Start of the text not yet looked at.
    pos: usize,
    /// UAX #29 segments of the text before the current run, with its offset.
    gap: Option<(usize, WordSegments<'a>)>,
    /// Word spans of the current run (emitted after the gap).
    words: Vec<(usize, usize)>,
    /// The next of `words` to emit.
    next_word: usize,
}

impl<'a> Iterator for RunSegments<'a> {
    type Item = (usize, &'a str);

    fn next(&mut self) -> Option<(usize, &'a str)> {
        loop {
            if let Some((base, segments)) = &mut self.gap {
                if let Some((from, segment)) = segments.next() {
                    return Some((*base + from, segment));
                }
                self.gap = None;
            }
            if let Some(&(from, to)) = self.words.get(self.next_word) {
                self.next_word += 1;
                return Some((from, self.text.get(from..to)?));
            }
            if self.pos >= self.text.len() {
                return None;
            }
            self.words.clear();
            self.next_word = 0;
            let start = self.pos;
            let gap_end = match next_run(self.text, start, self.setting) {
                Some((from, to, family)) => {
                    let run = self.text.get(from..to)?;
                    cut_run(run, from, family, self.setting, &mut self.words);
                    self.pos = to;
                    from
                }
                None => {
                    self.pos = self.text.len();
                    self.text.len()
                }
            };
            if gap_end > start {
                let gap = self.text.get(start..gap_end)?;
                self.gap = Some((start, WordSegments::new(gap, self.keep_emoji)));
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn words(text: &str, setting: Unspaced) -> Vec<&str> {
        Segments::new(text, false, setting).map(|(_, s)| s).collect()
    }

    #[test]
    fn blocks_are_sorted_and_families_right() {
        assert!(BLOCKS.windows(2).all(|w| w[0].1 < w[1].0), "sorted, disjoint");
        // Letters of each script (code charts of Unicode 16.0).
        assert_eq!(family_of('ก'), Some(Family::Southeast)); // U+0E01 THAI KO KAI
        assert_eq!(family_of('ກ'), Some(Family::Southeast)); // U+0E81 LAO KO
        assert_eq!(family_of('က'), Some(Family::Southeast)); // U+1000 MYANMAR KA
        assert_eq!(family_of('ក'), Some(Family::Southeast)); // U+1780 KHMER KA
        assert_eq!(family_of('東'), Some(Family::HanKana));
        assert_eq!(family_of('𠀀'), Some(Family::HanKana)); // U+20000, Extension B
        assert_eq!(family_of('ひ'), Some(Family::HanKana));
        assert_eq!(family_of('カ'), Some(Family::HanKana));
        assert_eq!(family_of('ｶ'), Some(Family::HanKana)); // U+FF76 halfwidth
        assert_eq!(family_of('ー'), Some(Family::HanKana)); // U+30FC, Lm
        assert_eq!(family_of('々'), Some(Family::HanKana)); // U+3005, Lm
        assert_eq!(family_of('한'), Some(Family::Hangul));
        assert_eq!(family_of('ﾡ'), Some(Family::Hangul)); // U+FFA1 halfwidth
                                                          // Punctuation of the same blocks separates runs.
        for c in ['๏', '・', '。', '，', 'a', 'é', 'Ж', ' '] {
            assert_eq!(family_of(c), None, "{c:?}");
        }
        // Thai vowel and tone marks (Mn) stay in a run.
        assert!(joins_previous('\u{0E48}') && joins_previous('\u{0E31}'));
    }

    #[test]
    fn characters_is_uax_29() {
        let text = "ดิจิตัล 東京 Grüße";
        let plain: Vec<(usize, &str)> = WordSegments::new(text, false).collect();
        let ours: Vec<(usize, &str)> = Segments::new(text, false, Unspaced::Characters).collect();
        assert_eq!(ours, plain);
        // UAX #29 WB999: Thai letters split (marks stay attached), Han too.
        assert_eq!(words("ดิจิตัล", Unspaced::Characters), ["ดิ", "จิ", "ตั", "ล"]);
    }

    /// UD Thai-PUD n01001011: the gold words ดิจิตัล, ระบบ, ใช้ and ไป.
    #[test]
    fn thai_words() {
        assert_eq!(words("ไปใช้ระบบดิจิตัล", Unspaced::Model), ["ไป", "ใช้", "ระบบ", "ดิจิตัล"]);
    }

    /// UD Chinese-GSD test-s2: 自從 2004 年 提出 了 興建 …
    #[test]
    fn chinese_words_and_pairs() {
        let text = "自從2004年提出了興建";
        assert_eq!(words(text, Unspaced::Dictionary), ["自從", "2004", "年", "提出", "了", "興建"]);
        assert_eq!(
            words(text, Unspaced::Bigrams),
            ["自從", "2004", "年提", "提出", "出了", "了興", "興建"]
        );
    }

    /// UD Japanese-GSD test-s2: 幸福 の 科学 側 から は , …
    #[test]
    fn japanese_words_keep_latin_and_offsets() {
        let text = "幸福の科学 Rust 3.14";
        let segments: Vec<(usize, &str)> =
            Segments::new(text, false, Unspaced::Dictionary).collect();
        assert_eq!(segments, [(0, "幸福"), (6, "の"), (9, "科学"), (16, "Rust"), (21, "3.14")]);
    }

    #[test]
    fn pairs_keep_marks_and_single_characters() {
        // A combining voiced mark (U+3099) stays with its kana.
        assert_eq!(words("か\u{3099}き 木", Unspaced::Bigrams), ["か\u{3099}き", "木"]);
        // Hangul words become pairs too; Thai is cut by the model.
        assert_eq!(words("한국어", Unspaced::Bigrams), ["한국", "국어"]);
        assert_eq!(words("한국어", Unspaced::Dictionary), ["한국어"]);
    }
}
