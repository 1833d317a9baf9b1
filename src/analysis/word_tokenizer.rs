//! The `words` tokenizer: Unicode word segmentation (UAX #29, "Unicode Text
//! Segmentation", section 4 word boundaries) keeping only the segments that
//! contain a letter or a digit, so spaces, punctuation and emoji are dropped.
//!
//! Place in the data flow: `analysis` stage, first element of a chain; the
//! post-aware tokenizer reuses [`WordSegments`] for the text between tags,
//! mentions and URLs.
//!
//! The rules are those of the Unicode version unicode-segmentation implements
//! (17.0 for 1.13). Pure-ASCII text takes a fast path that applies the same
//! rules restricted to ASCII (WB5–WB13b: letters, digits and `_` join; `:`
//! joins letters, `,` and `;` join digits, `.` and `'` join both), checked
//! against the general path in the tests. Offsets are byte offsets into the
//! original text and positions are consecutive.

use tantivy::tokenizer::{Token, TokenStream, Tokenizer};
use unicode_segmentation::{UWordBoundIndices, UnicodeSegmentation};

use super::token_shape::starts_emoji;

/// Tokenizer settings for `words` (no options).
#[derive(Clone, Default, Debug)]
pub struct WordTokenizer {
    token: Token,
}

/// The token stream of [`WordTokenizer`].
pub struct WordTokenStream<'a> {
    segments: WordSegments<'a>,
    token: &'a mut Token,
}

impl Tokenizer for WordTokenizer {
    type TokenStream<'a> = WordTokenStream<'a>;

    fn token_stream<'a>(&'a mut self, text: &'a str) -> WordTokenStream<'a> {
        self.token.reset();
        WordTokenStream { segments: WordSegments::new(text, false), token: &mut self.token }
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
pub(crate) enum WordSegments<'a> {
    /// Fast path for pure-ASCII text.
    Ascii {
        /// The text.
        text: &'a str,
        /// Next byte to look at.
        pos: usize,
    },
    /// General path.
    Unicode {
        /// unicode-segmentation's iterator over every segment.
        inner: UWordBoundIndices<'a>,
        /// Also yield emoji sequences.
        keep_emoji: bool,
    },
}

impl<'a> WordSegments<'a> {
    /// Segment `text`; `keep_emoji` also yields emoji sequences (which UAX #29
    /// keeps together: WB3c joins ZWJ sequences, WB4 attaches modifiers,
    /// variation selectors and tags, WB15/16 pair regional indicators).
    pub(crate) fn new(text: &'a str, keep_emoji: bool) -> WordSegments<'a> {
        if text.is_ascii() {
            WordSegments::Ascii { text, pos: 0 }
        } else {
            WordSegments::Unicode { inner: text.split_word_bound_indices(), keep_emoji }
        }
    }

    /// Always take the general path (for tests of the fast path).
    #[cfg(test)]
    pub(crate) fn unicode(text: &'a str) -> WordSegments<'a> {
        WordSegments::Unicode { inner: text.split_word_bound_indices(), keep_emoji: false }
    }
}

impl<'a> Iterator for WordSegments<'a> {
    type Item = (usize, &'a str);

    fn next(&mut self) -> Option<(usize, &'a str)> {
        match self {
            WordSegments::Ascii { text, pos } => {
                let (from, to) = next_ascii_word(text.as_bytes(), *pos)?;
                *pos = to;
                Some((from, text.get(from..to)?))
            }
            WordSegments::Unicode { inner, keep_emoji } => inner.find(|(_, segment)| {
                segment.chars().any(char::is_alphanumeric) || (*keep_emoji && starts_emoji(segment))
            }),
        }
    }
}

/// ASCII word-break classes (WordBreakProperty.txt restricted to ASCII).
#[derive(Clone, Copy, PartialEq, Eq)]
enum AsciiClass {
    /// ALetter: `A-Z a-z`.
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

fn ascii_class(b: u8) -> AsciiClass {
    match b {
        b'a'..=b'z' | b'A'..=b'Z' => AsciiClass::Letter,
        b'0'..=b'9' => AsciiClass::Digit,
        b'_' => AsciiClass::Underscore,
        b':' => AsciiClass::MidLetter,
        b',' | b';' => AsciiClass::MidNum,
        b'.' | b'\'' => AsciiClass::MidNumLet,
        _ => AsciiClass::Other,
    }
}

fn is_word_class(c: AsciiClass) -> bool {
    matches!(c, AsciiClass::Letter | AsciiClass::Digit | AsciiClass::Underscore)
}

/// The next ASCII word segment at or after `pos` that contains a letter or
/// digit, as a byte range.
fn next_ascii_word(bytes: &[u8], mut pos: usize) -> Option<(usize, usize)> {
    let class_at = |i: usize| bytes.get(i).map(|&b| ascii_class(b));
    loop {
        // Segments made only of punctuation, spaces or controls are skipped.
        while class_at(pos).is_some_and(|c| !is_word_class(c)) {
            pos += 1;
        }
        let start = pos;
        let mut last = class_at(pos)?;
        let mut has_alnum = last != AsciiClass::Underscore;
        let mut end = pos + 1;
        loop {
            match class_at(end) {
                // WB5, WB8, WB9, WB10, WB13a, WB13b.
                Some(next) if is_word_class(next) => {
                    has_alnum |= next != AsciiClass::Underscore;
                    last = next;
                    end += 1;
                }
                Some(mid) => {
                    let after = class_at(end + 1);
                    let joins = match (last, mid, after) {
                        // WB6, WB7: letter (MidLetter | MidNumLetQ) letter.
                        (
                            AsciiClass::Letter,
                            AsciiClass::MidLetter | AsciiClass::MidNumLet,
                            Some(AsciiClass::Letter),
                        ) => true,
                        // WB11, WB12: digit (MidNum | MidNumLetQ) digit.
                        (
                            AsciiClass::Digit,
                            AsciiClass::MidNum | AsciiClass::MidNumLet,
                            Some(AsciiClass::Digit),
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
}
