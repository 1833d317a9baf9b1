//! The `words` tokenizer: Unicode word segmentation (UAX #29, "Unicode Text
//! Segmentation", section 4 word boundaries) keeping only the segments that
//! contain a letter or a digit, so spaces, punctuation and emoji are dropped.
//!
//! Place in the data flow: `analysis` stage, first element of a chain; the
//! post-aware tokenizer reuses [`WordSegments`] for the text between tags,
//! mentions and URLs.
//!
//! The rules are those of the Unicode version unicode-segmentation implements
//! (17.0 for 1.13). Text made of ASCII and of common Latin, Greek and
//! Cyrillic letters takes a fast path that applies the same rules restricted
//! to those characters (WB5–WB13b: letters, digits and `_` join; `:` joins
//! letters, `,` and `;` join digits, `.` and `'` join both); other text is
//! cut at whitespace so that only the words that need it take the general
//! path (see [`WordSegments`]). The tests check the fast path against the
//! general one (WordBreakTest.txt, every simple letter in every context the
//! rules distinguish, random texts). Offsets are byte offsets into the
//! original text and positions are consecutive.

use tantivy::tokenizer::{Token, TokenStream, Tokenizer};
use unicode_segmentation::{UWordBoundIndices, UnicodeSegmentation};

use super::token_shape::starts_emoji;
use super::unspaced::{Segments, Unspaced};

/// Tokenizer settings for `words`: how runs of scripts written without
/// spaces are cut ([`Unspaced`]; the default keeps UAX #29 alone).
#[derive(Clone, Default, Debug)]
pub struct WordTokenizer {
    unspaced: Unspaced,
    token: Token,
}

impl WordTokenizer {
    /// The tokenizer with the given [`Unspaced`] setting.
    pub fn new(unspaced: Unspaced) -> WordTokenizer {
        WordTokenizer { unspaced, token: Token::default() }
    }
}

/// The token stream of [`WordTokenizer`].
pub struct WordTokenStream<'a> {
    segments: Segments<'a>,
    token: &'a mut Token,
}

impl Tokenizer for WordTokenizer {
    type TokenStream<'a> = WordTokenStream<'a>;

    fn token_stream<'a>(&'a mut self, text: &'a str) -> WordTokenStream<'a> {
        self.token.reset();
        WordTokenStream {
            segments: Segments::new(text, false, self.unspaced),
            token: &mut self.token,
        }
    }
}

impl TokenStream for WordTokenStream<'_> {
    fn advance(&mut self) -> bool {
        match self.segments.next() {
            Some((from, segment)) => {
                self.token.text.clear();
                self.token.text.push_str(segment);
                self.token.offset_from = from;
                self.token.offset_to = from + segment.len();
                self.token.position = self.token.position.wrapping_add(1);
                true
            }
            None => false,
        }
    }

    fn token(&self) -> &Token {
        self.token
    }

    fn token_mut(&mut self) -> &mut Token {
        self.token
    }
}

/// The UAX #29 word segments of a text that contain a letter or digit (and,
/// when asked, those that start an emoji sequence), with their byte offsets.
///
/// The text is cut into pieces at every place where ASCII whitespace is
/// followed by an ASCII character that is not whitespace, and each piece is
/// segmented on its own: pieces made only of ASCII and of [simple
/// letters](is_simple_letter) on the fast path, the others with
/// unicode-segmentation. This gives the segments of the whole text because
/// UAX #29 always breaks there (no rule keeps whitespace before an ASCII
/// letter, digit or punctuation sign: WB3d joins only spaces, WB4 only
/// attaches Extend, Format and ZWJ, none of which is ASCII), and no rule's
/// context reaches across it (the rules that look two characters back or
/// ahead, WB6, WB7, WB11, WB12, WB15 and WB16, need letters, digits or
/// regional indicators, which whitespace and the text's ends both are not).
/// So a post with an emoji or a word in another script still has most of
/// its words on the fast path.
pub(crate) struct WordSegments<'a> {
    text: &'a str,
    /// Also yield emoji sequences.
    keep_emoji: bool,
    /// Start of the first piece not yet begun.
    next_piece: usize,
    /// The piece being segmented.
    piece: Piece<'a>,
}

/// The piece of text [`WordSegments`] is working through.
enum Piece<'a> {
    /// No piece (start, or the last one is exhausted).
    Done,
    /// A piece of ASCII and simple letters ending at `end`; the next byte to
    /// look at is `pos`.
    Simple { pos: usize, end: usize },
    /// Any other piece, starting at byte `base` of the text.
    Unicode { base: usize, inner: UWordBoundIndices<'a> },
}

impl<'a> WordSegments<'a> {
    /// Segment `text`; `keep_emoji` also yields emoji sequences (which UAX #29
    /// keeps together: WB3c joins ZWJ sequences, WB4 attaches modifiers,
    /// variation selectors and tags, WB15/16 pair regional indicators).
    pub(crate) fn new(text: &'a str, keep_emoji: bool) -> WordSegments<'a> {
        if text.is_ascii() {
            let piece = Piece::Simple { pos: 0, end: text.len() };
            WordSegments { text, keep_emoji, next_piece: text.len(), piece }
        } else {
            WordSegments { text, keep_emoji, next_piece: 0, piece: Piece::Done }
        }
    }

    /// Always take the general path on the whole text (for tests of the
    /// fast path).
    #[cfg(test)]
    pub(crate) fn unicode(text: &'a str) -> WordSegments<'a> {
        Self::unicode_with(text, false)
    }

    /// [`unicode`](Self::unicode) with the choice of keeping emoji.
    #[cfg(test)]
    pub(crate) fn unicode_with(text: &'a str, keep_emoji: bool) -> WordSegments<'a> {
        WordSegments {
            text,
            keep_emoji,
            next_piece: text.len(),
            piece: Piece::Unicode { base: 0, inner: text.split_word_bound_indices() },
        }
    }

    /// Start the next piece; false at the end of the text.
    fn start_piece(&mut self) -> bool {
        let bytes = self.text.as_bytes();
        let start = self.next_piece;
        if start >= bytes.len() {
            return false;
        }
        let Some(complex) = first_complex_char(self.text, start) else {
            self.piece = Piece::Simple { pos: start, end: bytes.len() };
            self.next_piece = bytes.len();
            return true;
        };
        // The simple part ends at the last cut before the first other char.
        let cut_before = (start + 1..complex).rev().find(|&i| is_cut(bytes, i));
        if let Some(cut) = cut_before {
            self.piece = Piece::Simple { pos: start, end: cut };
            self.next_piece = cut;
            return true;
        }
        let end = (complex + 1..bytes.len()).find(|&i| is_cut(bytes, i)).unwrap_or(bytes.len());
        // Cuts fall on ASCII bytes, hence on char boundaries.
        let piece = self.text.get(start..end).unwrap_or_default();
        self.piece = Piece::Unicode { base: start, inner: piece.split_word_bound_indices() };
        self.next_piece = end;
        true
    }
}

/// Byte offset of the first char at or after `from` that is neither ASCII
/// nor a simple letter.
fn first_complex_char(text: &str, from: usize) -> Option<usize> {
    let bytes = text.as_bytes();
    let mut i = from;
    loop {
        i += bytes.get(i..)?.iter().position(|b| !b.is_ascii())?;
        let c = text.get(i..)?.chars().next()?;
        if !is_simple_letter(c) {
            return Some(i);
        }
        i += c.len_utf8();
    }
}

/// True when byte `i` starts a piece: ASCII whitespace before it, an ASCII
/// character other than whitespace at it.
fn is_cut(bytes: &[u8], i: usize) -> bool {
    match (i.checked_sub(1).and_then(|p| bytes.get(p)), bytes.get(i)) {
        (Some(before), Some(at)) => {
            before.is_ascii_whitespace() && at.is_ascii() && !at.is_ascii_whitespace()
        }
        _ => false,
    }
}

/// First and last code point of the blocks whose letters may be simple:
/// Latin-1 Supplement to IPA Extensions, Greek and Coptic, Cyrillic and
/// Cyrillic Supplement, Latin Extended Additional.
const SIMPLE_BLOCKS: [(u32, u32); 3] = [(0xC0, 0x2AF), (0x370, 0x52F), (0x1E00, 0x1EFF)];

/// Simple letters: the alphabetic characters of [`SIMPLE_BLOCKS`]. Each has
/// the word-break property ALetter (not Extend, Hebrew_Letter or Katakana),
/// so UAX #29 treats it exactly like an ASCII letter; the tests check every
/// one against unicode-segmentation. A bitmap from U+0000 to U+1EFF.
fn is_simple_letter(c: char) -> bool {
    static BITS: std::sync::OnceLock<Vec<u64>> = std::sync::OnceLock::new();
    let bits = BITS.get_or_init(|| {
        let mut bits = vec![0u64; 0x1F00 / 64];
        for &(first, last) in &SIMPLE_BLOCKS {
            for c in (first..=last).filter_map(char::from_u32).filter(|c| c.is_alphabetic()) {
                if let Some(word) = bits.get_mut(c as usize / 64) {
                    *word |= 1 << (c as usize % 64);
                }
            }
        }
        bits
    });
    let cp = c as usize;
    bits.get(cp / 64).is_some_and(|word| word & (1 << (cp % 64)) != 0)
}

impl<'a> Iterator for WordSegments<'a> {
    type Item = (usize, &'a str);

    fn next(&mut self) -> Option<(usize, &'a str)> {
        loop {
            match &mut self.piece {
                Piece::Simple { pos, end } => {
                    let piece = self.text.get(..*end).unwrap_or_default();
                    if let Some((from, to)) = next_simple_word(piece, *pos) {
                        *pos = to;
                        return Some((from, self.text.get(from..to)?));
                    }
                }
                Piece::Unicode { base, inner } => {
                    let keep_emoji = self.keep_emoji;
                    let found = inner.find(|(_, segment)| {
                        segment.chars().any(char::is_alphanumeric)
                            || (keep_emoji && starts_emoji(segment))
                    });
                    if let Some((from, segment)) = found {
                        return Some((*base + from, segment));
                    }
                }
                Piece::Done => {}
            }
            self.piece = Piece::Done;
            if !self.start_piece() {
                return None;
            }
        }
    }
}

/// Word-break classes of the fast path (WordBreakProperty.txt restricted to
/// ASCII, plus the simple letters).
#[derive(Clone, Copy, PartialEq, Eq)]
enum SimpleClass {
    /// ALetter: `A-Z a-z` and the simple letters.
    Letter,
    /// Numeric: `0-9`.
    Digit,
    /// ExtendNumLet: `_`.
    Underscore,
    /// MidLetter: `:`.
    MidLetter,
    /// MidNum: `,` `;`.
    MidNum,
    /// MidNumLet and Single_Quote: `.` `'`.
    MidNumLet,
    /// Everything else (spaces, other punctuation, controls).
    Other,
}

fn ascii_class(b: u8) -> SimpleClass {
    match b {
        b'a'..=b'z' | b'A'..=b'Z' => SimpleClass::Letter,
        b'0'..=b'9' => SimpleClass::Digit,
        b'_' => SimpleClass::Underscore,
        b':' => SimpleClass::MidLetter,
        b',' | b';' => SimpleClass::MidNum,
        b'.' | b'\'' => SimpleClass::MidNumLet,
        _ => SimpleClass::Other,
    }
}

fn is_word_class(c: SimpleClass) -> bool {
    matches!(c, SimpleClass::Letter | SimpleClass::Digit | SimpleClass::Underscore)
}

/// The class and byte length of the char at byte `i` of a simple piece (a
/// char that is not ASCII is a simple letter there).
fn class_at(text: &str, i: usize) -> Option<(SimpleClass, usize)> {
    let b = *text.as_bytes().get(i)?;
    if b.is_ascii() {
        Some((ascii_class(b), 1))
    } else {
        Some((SimpleClass::Letter, text.get(i..)?.chars().next()?.len_utf8()))
    }
}

/// The next word segment of a simple piece at or after byte `pos` that
/// contains a letter or digit, as a byte range (UAX #29 WB5–WB13b on the
/// fast path's classes).
fn next_simple_word(text: &str, mut pos: usize) -> Option<(usize, usize)> {
    loop {
        // Segments made only of punctuation, spaces or controls are skipped.
        while let Some((_, len)) = class_at(text, pos).filter(|(c, _)| !is_word_class(*c)) {
            pos += len;
        }
        let start = pos;
        let (mut last, len) = class_at(text, pos)?;
        let mut has_alnum = last != SimpleClass::Underscore;
        let mut end = pos + len;
        loop {
            match class_at(text, end) {
                // WB5, WB8, WB9, WB10, WB13a, WB13b.
                Some((next, len)) if is_word_class(next) => {
                    has_alnum |= next != SimpleClass::Underscore;
                    last = next;
                    end += len;
                }
                Some((mid, _)) => {
                    // Mid characters are ASCII: one byte.
                    let after = class_at(text, end + 1).map(|(c, _)| c);
                    let joins = match (last, mid, after) {
                        // WB6, WB7: letter (MidLetter | MidNumLetQ) letter.
                        (
                            SimpleClass::Letter,
                            SimpleClass::MidLetter | SimpleClass::MidNumLet,
                            Some(SimpleClass::Letter),
                        ) => true,
                        // WB11, WB12: digit (MidNum | MidNumLetQ) digit.
                        (
                            SimpleClass::Digit,
                            SimpleClass::MidNum | SimpleClass::MidNumLet,
                            Some(SimpleClass::Digit),
                        ) => true,
                        _ => false,
                    };
                    if !joins {
                        break;
                    }
                    end += 1;
                }
                None => break,
            }
        }
        if has_alnum {
            return Some((start, end));
        }
        pos = end;
    }
}

#[cfg(test)]
mod tests {
    use rand::{Rng, SeedableRng};
    use rand_chacha::ChaCha8Rng;

    use super::*;
    use crate::analysis::testutil::{assert_tokens, word_break_test_lines};
    use tantivy::tokenizer::TextAnalyzer;

    #[test]
    fn simple_sentence() {
        let mut a = TextAnalyzer::from(WordTokenizer::default());
        assert_tokens(
            &mut a,
            "Hello, happy tax-payer! can't 3.14",
            &[
                ("Hello", 0, 0, 5),
                ("happy", 1, 7, 12),
                ("tax", 2, 13, 16),
                ("payer", 3, 17, 22),
                ("can't", 4, 24, 29),
                ("3.14", 5, 30, 34),
            ],
        );
    }

    #[test]
    fn multilingual_and_emoji_dropped() {
        let mut a = TextAnalyzer::from(WordTokenizer::default());
        // UAX #29 WB999: ideographs break from each other; the emoji segment
        // has no letter or digit and is dropped.
        assert_tokens(
            &mut a,
            "Grüße 👋 東京 Ελλάδα",
            &[("Grüße", 0, 0, 7), ("東", 1, 13, 16), ("京", 2, 16, 19), ("Ελλάδα", 3, 20, 32)],
        );
    }

    /// WordBreakTest.txt (Unicode 17.0.0) lines: the kept segments of our
    /// tokenizer must equal the test's segments that contain a letter or
    /// digit, on both the fast and the general path.
    #[test]
    fn agrees_with_word_break_test() {
        let lines = word_break_test_lines();
        assert!(lines.len() > 700, "fixture has {} lines", lines.len());
        let mut ascii_lines = 0;
        for (text, expected_segments) in &lines {
            let expected: Vec<&str> = expected_segments
                .iter()
                .map(String::as_str)
                .filter(|s| s.chars().any(char::is_alphanumeric))
                .collect();
            let general: Vec<&str> = WordSegments::unicode(text).map(|(_, s)| s).collect();
            assert_eq!(general, expected, "general path on {text:?}");
            let ours: Vec<&str> = WordSegments::new(text, false).map(|(_, s)| s).collect();
            assert_eq!(ours, expected, "default path on {text:?}");
            ascii_lines += usize::from(text.is_ascii());
        }
        assert_eq!(ascii_lines, 477);
    }

    /// The ASCII fast path equals the general path on random ASCII strings
    /// drawn from the characters the rules distinguish (fixed seed).
    #[test]
    fn fast_path_equals_general_path_on_random_ascii() {
        let alphabet = b"aZq09_.,:;' \n\t\"-#@!?";
        let mut rng = ChaCha8Rng::seed_from_u64(29);
        for _ in 0..3000 {
            let len = rng.gen_range(0..14);
            let s: String =
                (0..len).map(|_| alphabet[rng.gen_range(0..alphabet.len())] as char).collect();
            let fast: Vec<(usize, &str)> = WordSegments::new(&s, false).collect();
            let general: Vec<(usize, &str)> = WordSegments::unicode(&s).collect();
            assert_eq!(fast, general, "on {s:?}");
        }
    }

    /// Cutting at whitespace before ASCII gives the segments of the whole
    /// text: random texts mixing ASCII with characters that UAX #29 treats
    /// specially (combining marks, ZWJ, format characters, emoji and their
    /// modifiers, regional indicators, Hebrew, Katakana, ideographs, other
    /// whitespace), on the general path over the whole text versus the cut
    /// one, with and without emoji (fixed seed).
    #[test]
    fn pieces_equal_general_path_on_random_mixed_text() {
        let alphabet: Vec<char> = "aZ09_.,:;' \n\t\r\"-#@!?"
            .chars()
            .chain([
                '\u{301}',  // combining acute (Extend)
                '\u{93e}',  // Devanagari vowel sign AA (Extend, alphabetic)
                '\u{200d}', // ZWJ
                '\u{ad}',   // soft hyphen (Format)
                '\u{a0}',   // no-break space
                '\u{3000}', // ideographic space (WSegSpace)
                '\u{2028}', // line separator (Newline)
                'é',
                'ß',
                'Ж',
                'ł',
                'Ω',
                'ς',
                'ộ',
                'א',  // Hebrew letter
                'ア', // Katakana
                'ー', // Katakana-Hiragana prolonged sound mark
                '東',
                '😀',
                '\u{1f3fd}', // emoji modifier
                '\u{1f1e9}', // regional indicators
                '\u{1f1ea}',
                '\u{fe0f}', // variation selector
                '\u{20e3}', // combining enclosing keycap
                '\u{2019}', // right single quotation mark (MidNumLet)
                '·',        // middle dot (MidLetter)
                '٣',        // Arabic-Indic digit
            ])
            .collect();
        let mut rng = ChaCha8Rng::seed_from_u64(2029);
        for _ in 0..20_000 {
            let len = rng.gen_range(0..16);
            let s: String = (0..len).map(|_| alphabet[rng.gen_range(0..alphabet.len())]).collect();
            for keep_emoji in [false, true] {
                let cut: Vec<(usize, &str)> = WordSegments::new(&s, keep_emoji).collect();
                let whole: Vec<(usize, &str)> =
                    WordSegments::unicode_with(&s, keep_emoji).collect();
                assert_eq!(cut, whole, "on {s:?} (keep_emoji {keep_emoji})");
            }
        }
    }

    /// A post with one accented word and an emoji: the ASCII words around
    /// them keep their offsets.
    #[test]
    fn mixed_post_offsets() {
        let mut a = TextAnalyzer::from(WordTokenizer::default());
        assert_tokens(
            &mut a,
            "Caf\u{e9} time 😀 at 10:30, don't\tgo",
            &[
                ("Caf\u{e9}", 0, 0, 5),
                ("time", 1, 6, 10),
                ("at", 2, 16, 18),
                ("10", 3, 19, 21),
                ("30", 4, 22, 24),
                ("don't", 5, 26, 31),
                ("go", 6, 32, 34),
            ],
        );
    }

    /// Every simple letter behaves as UAX #29 (unicode-segmentation) says in
    /// every context its rules distinguish: alone, next to letters, digits,
    /// `_`, the Mid classes, quotes, whitespace, and a combining mark.
    #[test]
    fn simple_letters_agree_with_the_general_path() {
        let templates = [
            "{c}",
            "a{c}b",
            "{c}{c}",
            "{c}1",
            "1{c}",
            "{c}_x",
            "x_{c}",
            "{c}:{c}",
            "a:{c}",
            "{c}:a",
            "{c}.{c}",
            "{c}'{c}",
            "{c}'",
            "'{c}",
            "{c}\"",
            "{c}'1",
            "1.{c}",
            "{c},{c}",
            " {c} ",
            ":{c}",
            "{c}\u{301}",
            "x {c}y.z",
            "ア{c}",
            "{c}ア",
            "א{c}",
            "{c}א",
        ];
        let mut checked = 0;
        for &(first, last) in &SIMPLE_BLOCKS {
            for c in (first..=last).filter_map(char::from_u32) {
                assert_eq!(is_simple_letter(c), c.is_alphabetic(), "{c:?}");
                if !is_simple_letter(c) {
                    continue;
                }
                for t in templates {
                    let s = t.replace("{c}", &c.to_string());
                    let fast: Vec<(usize, &str)> = WordSegments::new(&s, false).collect();
                    let general: Vec<(usize, &str)> = WordSegments::unicode(&s).collect();
                    assert_eq!(fast, general, "{c:?} (U+{:04X}) in {t:?}", c as u32);
                }
                checked += 1;
            }
        }
        // Simple letters in the three block ranges (Unicode 16/17).
        assert!(checked > 1000, "{checked}");
        assert!(!is_simple_letter('a') && !is_simple_letter('\u{301}') && !is_simple_letter('東'));
    }
}
