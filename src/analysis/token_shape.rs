//! Token shapes: what kind of post element a token's text looks like (a word,
//! a number, a `#tag`, an `@mention`, a URL or an emoji sequence).
//!
//! Place in the data flow: `analysis` stage. The post-aware tokenizer uses
//! the character predicates here to find emoji sequences, and the `drop`
//! step classifies each token with [`TokenShape::of`].
//!
//! Emoji detection follows UTS #51 (Unicode Emoji), section 1.4: an emoji
//! sequence starts with an `Extended_Pictographic` character, a regional
//! indicator (flag halves) or a keycap base (`0-9 # *` followed by U+20E3,
//! optionally with U+FE0F between). The `Extended_Pictographic` ranges below
//! are those of Unicode 17.0 (emoji-data.txt), copied from the tables of
//! unicode-segmentation 1.13, whose word and grapheme rules we rely on for
//! the rest of the sequence (ZWJ, modifiers, tags, variation selectors).

use serde::{Deserialize, Serialize};

/// `Extended_Pictographic` (Unicode 17.0, emoji-data.txt), merged ranges.
const EXTENDED_PICTOGRAPHIC: &[(char, char)] = &[
    ('\u{a9}', '\u{a9}'),
    ('\u{ae}', '\u{ae}'),
    ('\u{203c}', '\u{203c}'),
    ('\u{2049}', '\u{2049}'),
    ('\u{2122}', '\u{2122}'),
    ('\u{2139}', '\u{2139}'),
    ('\u{2194}', '\u{2199}'),
    ('\u{21a9}', '\u{21aa}'),
    ('\u{231a}', '\u{231b}'),
    ('\u{2328}', '\u{2328}'),
    ('\u{23cf}', '\u{23cf}'),
    ('\u{23e9}', '\u{23f3}'),
    ('\u{23f8}', '\u{23fa}'),
    ('\u{24c2}', '\u{24c2}'),
    ('\u{25aa}', '\u{25ab}'),
    ('\u{25b6}', '\u{25b6}'),
    ('\u{25c0}', '\u{25c0}'),
    ('\u{25fb}', '\u{25fe}'),
    ('\u{2600}', '\u{2604}'),
    ('\u{260e}', '\u{260e}'),
    ('\u{2611}', '\u{2611}'),
    ('\u{2614}', '\u{2615}'),
    ('\u{2618}', '\u{2618}'),
    ('\u{261d}', '\u{261d}'),
    ('\u{2620}', '\u{2620}'),
    ('\u{2622}', '\u{2623}'),
    ('\u{2626}', '\u{2626}'),
    ('\u{262a}', '\u{262a}'),
    ('\u{262e}', '\u{262f}'),
    ('\u{2638}', '\u{263a}'),
    ('\u{2640}', '\u{2640}'),
    ('\u{2642}', '\u{2642}'),
    ('\u{2648}', '\u{2653}'),
    ('\u{265f}', '\u{2660}'),
    ('\u{2663}', '\u{2663}'),
    ('\u{2665}', '\u{2666}'),
    ('\u{2668}', '\u{2668}'),
    ('\u{267b}', '\u{267b}'),
    ('\u{267e}', '\u{267f}'),
    ('\u{2692}', '\u{2697}'),
    ('\u{2699}', '\u{2699}'),
    ('\u{269b}', '\u{269c}'),
    ('\u{26a0}', '\u{26a1}'),
    ('\u{26a7}', '\u{26a7}'),
    ('\u{26aa}', '\u{26ab}'),
    ('\u{26b0}', '\u{26b1}'),
    ('\u{26bd}', '\u{26be}'),
    ('\u{26c4}', '\u{26c5}'),
    ('\u{26c8}', '\u{26c8}'),
    ('\u{26ce}', '\u{26cf}'),
    ('\u{26d1}', '\u{26d1}'),
    ('\u{26d3}', '\u{26d4}'),
    ('\u{26e9}', '\u{26ea}'),
    ('\u{26f0}', '\u{26f5}'),
    ('\u{26f7}', '\u{26fa}'),
    ('\u{26fd}', '\u{26fd}'),
    ('\u{2702}', '\u{2702}'),
    ('\u{2705}', '\u{2705}'),
    ('\u{2708}', '\u{270d}'),
    ('\u{270f}', '\u{270f}'),
    ('\u{2712}', '\u{2712}'),
    ('\u{2714}', '\u{2714}'),
    ('\u{2716}', '\u{2716}'),
    ('\u{271d}', '\u{271d}'),
    ('\u{2721}', '\u{2721}'),
    ('\u{2728}', '\u{2728}'),
    ('\u{2733}', '\u{2734}'),
    ('\u{2744}', '\u{2744}'),
    ('\u{2747}', '\u{2747}'),
    ('\u{274c}', '\u{274c}'),
    ('\u{274e}', '\u{274e}'),
    ('\u{2753}', '\u{2755}'),
    ('\u{2757}', '\u{2757}'),
    ('\u{2763}', '\u{2764}'),
    ('\u{2795}', '\u{2797}'),
    ('\u{27a1}', '\u{27a1}'),
    ('\u{27b0}', '\u{27b0}'),
    ('\u{27bf}', '\u{27bf}'),
    ('\u{2934}', '\u{2935}'),
    ('\u{2b05}', '\u{2b07}'),
    ('\u{2b1b}', '\u{2b1c}'),
    ('\u{2b50}', '\u{2b50}'),
    ('\u{2b55}', '\u{2b55}'),
    ('\u{3030}', '\u{3030}'),
    ('\u{303d}', '\u{303d}'),
    ('\u{3297}', '\u{3297}'),
    ('\u{3299}', '\u{3299}'),
    ('\u{1f004}', '\u{1f004}'),
    ('\u{1f02c}', '\u{1f02f}'),
    ('\u{1f094}', '\u{1f09f}'),
    ('\u{1f0af}', '\u{1f0b0}'),
    ('\u{1f0c0}', '\u{1f0c0}'),
    ('\u{1f0cf}', '\u{1f0d0}'),
    ('\u{1f0f6}', '\u{1f0ff}'),
    ('\u{1f170}', '\u{1f171}'),
    ('\u{1f17e}', '\u{1f17f}'),
    ('\u{1f18e}', '\u{1f18e}'),
    ('\u{1f191}', '\u{1f19a}'),
    ('\u{1f1ae}', '\u{1f1e5}'),
    ('\u{1f201}', '\u{1f20f}'),
    ('\u{1f21a}', '\u{1f21a}'),
    ('\u{1f22f}', '\u{1f22f}'),
    ('\u{1f232}', '\u{1f23a}'),
    ('\u{1f23c}', '\u{1f23f}'),
    ('\u{1f249}', '\u{1f25f}'),
    ('\u{1f266}', '\u{1f321}'),
    ('\u{1f324}', '\u{1f393}'),
    ('\u{1f396}', '\u{1f397}'),
    ('\u{1f399}', '\u{1f39b}'),
    ('\u{1f39e}', '\u{1f3f0}'),
    ('\u{1f3f3}', '\u{1f3f5}'),
    ('\u{1f3f7}', '\u{1f3fa}'),
    ('\u{1f400}', '\u{1f4fd}'),
    ('\u{1f4ff}', '\u{1f53d}'),
    ('\u{1f549}', '\u{1f54e}'),
    ('\u{1f550}', '\u{1f567}'),
    ('\u{1f56f}', '\u{1f570}'),
    ('\u{1f573}', '\u{1f57a}'),
    ('\u{1f587}', '\u{1f587}'),
    ('\u{1f58a}', '\u{1f58d}'),
    ('\u{1f590}', '\u{1f590}'),
    ('\u{1f595}', '\u{1f596}'),
    ('\u{1f5a4}', '\u{1f5a5}'),
    ('\u{1f5a8}', '\u{1f5a8}'),
    ('\u{1f5b1}', '\u{1f5b2}'),
    ('\u{1f5bc}', '\u{1f5bc}'),
    ('\u{1f5c2}', '\u{1f5c4}'),
    ('\u{1f5d1}', '\u{1f5d3}'),
    ('\u{1f5dc}', '\u{1f5de}'),
    ('\u{1f5e1}', '\u{1f5e1}'),
    ('\u{1f5e3}', '\u{1f5e3}'),
    ('\u{1f5e8}', '\u{1f5e8}'),
    ('\u{1f5ef}', '\u{1f5ef}'),
    ('\u{1f5f3}', '\u{1f5f3}'),
    ('\u{1f5fa}', '\u{1f64f}'),
    ('\u{1f680}', '\u{1f6c5}'),
    ('\u{1f6cb}', '\u{1f6d2}'),
    ('\u{1f6d5}', '\u{1f6e5}'),
    ('\u{1f6e9}', '\u{1f6e9}'),
    ('\u{1f6eb}', '\u{1f6f0}'),
    ('\u{1f6f3}', '\u{1f6ff}'),
    ('\u{1f7da}', '\u{1f7ff}'),
    ('\u{1f80c}', '\u{1f80f}'),
    ('\u{1f848}', '\u{1f84f}'),
    ('\u{1f85a}', '\u{1f85f}'),
    ('\u{1f888}', '\u{1f88f}'),
    ('\u{1f8ae}', '\u{1f8af}'),
    ('\u{1f8bc}', '\u{1f8bf}'),
    ('\u{1f8c2}', '\u{1f8cf}'),
    ('\u{1f8d9}', '\u{1f8ff}'),
    ('\u{1f90c}', '\u{1f93a}'),
    ('\u{1f93c}', '\u{1f945}'),
    ('\u{1f947}', '\u{1f9ff}'),
    ('\u{1fa58}', '\u{1fa5f}'),
    ('\u{1fa6e}', '\u{1faff}'),
    ('\u{1fc00}', '\u{1fffd}'),
];

/// True for a character with the `Extended_Pictographic` property.
pub fn is_extended_pictographic(c: char) -> bool {
    if (c as u32) < 0xa9 {
        return false;
    }
    EXTENDED_PICTOGRAPHIC
        .binary_search_by(|&(lo, hi)| {
            if hi < c {
                std::cmp::Ordering::Less
            } else if lo > c {
                std::cmp::Ordering::Greater
            } else {
                std::cmp::Ordering::Equal
            }
        })
        .is_ok()
}

/// True for a regional indicator symbol (U+1F1E6..U+1F1FF); two of them form
/// a flag (UTS #51, section 1.4.5).
pub fn is_regional_indicator(c: char) -> bool {
    ('\u{1f1e6}'..='\u{1f1ff}').contains(&c)
}

/// True when `text` starts an emoji sequence: an `Extended_Pictographic`
/// character, a regional indicator, or a keycap (`[0-9#*] U+FE0F? U+20E3`).
pub fn starts_emoji(text: &str) -> bool {
    let mut chars = text.chars();
    match chars.next() {
        Some(c) if is_extended_pictographic(c) || is_regional_indicator(c) => true,
        Some(c) if c.is_ascii_digit() || c == '#' || c == '*' => {
            let rest = chars.as_str();
            rest.starts_with('\u{20e3}') || rest.starts_with("\u{fe0f}\u{20e3}")
        }
        _ => false,
    }
}

/// The kind of post element a token looks like, judged from its text alone.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum TokenShape {
    /// Anything else: an ordinary word.
    Word,
    /// Digits, optionally with `.`, `,`, `:` or `_` between them (`2024`,
    /// `3.14`, `1,000`, `12:30`).
    Number,
    /// `#` followed by at least one character (`#HarbourMarket`).
    Hashtag,
    /// `@` followed by at least one character (`@ana`, `@ana@social.example`).
    Mention,
    /// Starts with `http://`, `https://` (any case) or `www.`.
    Url,
    /// An emoji sequence (see [`starts_emoji`]).
    Emoji,
}

impl TokenShape {
    /// Classify a token's text.
    pub fn of(text: &str) -> TokenShape {
        let bytes = text.as_bytes();
        match bytes.first() {
            None => TokenShape::Word,
            Some(b'#') if bytes.len() > 1 && !starts_emoji(text) => TokenShape::Hashtag,
            Some(b'@') if bytes.len() > 1 => TokenShape::Mention,
            _ if has_url_scheme(text) => TokenShape::Url,
            _ if starts_emoji(text) => TokenShape::Emoji,
            _ if is_number(text) => TokenShape::Number,
            _ => TokenShape::Word,
        }
    }
}

/// True when `text` starts with `http://`, `https://` (ASCII case-insensitive)
/// or `www.` followed by something.
pub fn has_url_scheme(text: &str) -> bool {
    let starts = |prefix: &str| {
        text.len() > prefix.len()
            && text.as_bytes()[..prefix.len()].eq_ignore_ascii_case(prefix.as_bytes())
    };
    starts("http://") || starts("https://") || starts("www.")
}

/// Digits with single separators between them.
fn is_number(text: &str) -> bool {
    let mut any_digit = false;
    let mut prev_sep = true;
    for c in text.chars() {
        if c.is_numeric() {
            any_digit = true;
            prev_sep = false;
        } else if matches!(c, '.' | ',' | ':' | '_') && !prev_sep {
            prev_sep = true;
        } else {
            return false;
        }
    }
    any_digit && !prev_sep
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn table_is_sorted_and_disjoint() {
        assert!(EXTENDED_PICTOGRAPHIC.iter().all(|(lo, hi)| lo <= hi));
        assert!(EXTENDED_PICTOGRAPHIC.windows(2).all(|w| w[0].1 < w[1].0));
    }

    #[test]
    fn pictographic_membership() {
        // emoji-data.txt (Unicode 17.0): U+1F600 GRINNING FACE, U+2764 HEAVY
        // BLACK HEART, U+00A9 COPYRIGHT SIGN are Extended_Pictographic; U+1F3FB
        // (skin tone modifier) is not (it is Emoji_Modifier, an Extend).
        assert!(is_extended_pictographic('😀'));
        assert!(is_extended_pictographic('\u{2764}'));
        assert!(is_extended_pictographic('©'));
        assert!(!is_extended_pictographic('\u{1f3fb}'));
        assert!(!is_extended_pictographic('a'));
        assert!(!is_extended_pictographic('→'));
    }

    #[test]
    fn shapes() {
        assert_eq!(TokenShape::of("#HarbourMarket"), TokenShape::Hashtag);
        assert_eq!(TokenShape::of("#"), TokenShape::Word);
        // UTS #51 section 1.4.6: keycap sequence U+0023 U+FE0F U+20E3.
        assert_eq!(TokenShape::of("#\u{fe0f}\u{20e3}"), TokenShape::Emoji);
        assert_eq!(TokenShape::of("1\u{20e3}"), TokenShape::Emoji);
        assert_eq!(TokenShape::of("@ana@social.example"), TokenShape::Mention);
        assert_eq!(TokenShape::of("https://example.com/a"), TokenShape::Url);
        assert_eq!(TokenShape::of("HTTP://EXAMPLE.COM"), TokenShape::Url);
        assert_eq!(TokenShape::of("www.example.com"), TokenShape::Url);
        assert_eq!(TokenShape::of("www"), TokenShape::Word);
        assert_eq!(TokenShape::of("🇩🇪"), TokenShape::Emoji);
        assert_eq!(TokenShape::of("👍🏽"), TokenShape::Emoji);
        assert_eq!(TokenShape::of("3.14"), TokenShape::Number);
        assert_eq!(TokenShape::of("1,000"), TokenShape::Number);
        assert_eq!(TokenShape::of("١٢٣"), TokenShape::Number);
        assert_eq!(TokenShape::of("3."), TokenShape::Word);
        assert_eq!(TokenShape::of("b2b"), TokenShape::Word);
        assert_eq!(TokenShape::of("café"), TokenShape::Word);
    }
}
