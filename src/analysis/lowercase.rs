//! The `lowercase` step: full Unicode lower-casing of each token.
//!
//! Place in the data flow: `analysis` stage, a filter of a chain; stemmers
//! and stop lists expect its output (lower-case input), so it must come
//! before them.
//!
//! Unicode decisions:
//! - Mapping: the Unicode default full case mapping (SpecialCasing.txt's
//!   unconditional mappings), as Rust's `str::to_lowercase` applies it, with
//!   the Greek final-sigma rule: a capital sigma at the end of a word becomes
//!   `ς`, elsewhere `σ` ("ΟΔΟΣ" → "οδος"), so upper-case text lower-cases to
//!   the spelling people type. (tantivy's own lowercaser maps every Σ to σ.)
//! - Turkish and Azeri dotted/dotless i: the default mapping sends `I` to
//!   `i` and `İ` (U+0130) to `i` + U+0307 COMBINING DOT ABOVE, which is wrong
//!   for those languages. With `language = "tr"` or `"az"` the step applies
//!   SpecialCasing's tr/az rules instead: `I` → `ı`, `İ` → `i`, and `I` +
//!   U+0307 → `i`. Routed chains give the step the branch's language.
//! - Pure-ASCII tokens take a fast path (byte-wise), except for Turkish.
//!
//! Offsets never change (tantivy's filter contract): only the text does.

use std::mem;

use tantivy::tokenizer::Token;

use super::each_token::{token_edit_filter, TokenEdit};

/// Filter settings for `lowercase`.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct Lowercase {
    /// Apply the Turkish/Azeri dotted and dotless i rules.
    pub turkic: bool,
}

token_edit_filter!(Lowercase);

impl TokenEdit for Lowercase {
    /// The buffer non-ASCII tokens are lower-cased into (swapped with the
    /// token's text, so no allocation per token).
    type Work = String;

    fn start(&self) -> String {
        String::new()
    }

    fn edit(&self, buffer: &mut String, token: &mut Token) -> bool {
        if token.text.is_ascii() && !(self.turkic && token.text.contains('I')) {
            token.text.make_ascii_lowercase();
        } else {
            lowercase_into(&token.text, self.turkic, buffer);
            mem::swap(&mut token.text, buffer);
        }
        true
    }
}

/// Lower-case `text` into `out` (cleared first).
pub(crate) fn lowercase_into(text: &str, turkic: bool, out: &mut String) {
    out.clear();
    if turkic && text.contains(['I', '\u{130}']) {
        let mut rest = String::with_capacity(text.len());
        let mut chars = text.chars().peekable();
        while let Some(c) = chars.next() {
            match c {
                'I' if chars.peek() == Some(&'\u{307}') => {
                    chars.next();
                    rest.push('i');
                }
                'I' => rest.push('ı'),
                '\u{130}' => rest.push('i'),
                c => rest.push(c),
            }
        }
        out.push_str(&rest.to_lowercase());
    } else if text.contains('Σ') {
        out.push_str(&text.to_lowercase());
    } else {
        // Without a capital sigma, `str::to_lowercase` is the concatenation
        // of `char::to_lowercase` (both apply the same table; only Σ needs
        // the context of its word), written here straight into `out`.
        out.reserve(text.len());
        for c in text.chars() {
            if c.is_ascii() {
                out.push(c.to_ascii_lowercase());
            } else {
                out.extend(c.to_lowercase());
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use tantivy::tokenizer::{TextAnalyzer, WhitespaceTokenizer};

    use super::*;
    use crate::analysis::testutil::{assert_tokens, texts};

    fn analyzer(turkic: bool) -> TextAnalyzer {
        TextAnalyzer::builder(WhitespaceTokenizer::default()).filter(Lowercase { turkic }).build()
    }

    #[test]
    fn ascii_and_offsets() {
        assert_tokens(
            &mut analyzer(false),
            "Hello WORLD",
            &[("hello", 0, 0, 5), ("world", 1, 6, 11)],
        );
    }

    #[test]
    fn scripts() {
        // Cyrillic, Latin with diacritics, Armenian: simple one-to-one mappings
        // (UnicodeData.txt simple lowercase mappings).
        assert_eq!(texts(&mut analyzer(false), "МОСКВА ÉCOLE ԱՐԱՄ"), ["москва", "école", "արամ"]);
    }

    #[test]
    fn greek_final_sigma() {
        // Unicode Standard, section 3.13, Final_Sigma: Σ at the end of a word
        // lower-cases to ς (U+03C2), elsewhere to σ (U+03C3).
        assert_eq!(
            texts(&mut analyzer(false), "ΟΔΟΣ ΣΟΦΙΑ ΟΔΥΣΣΕΑΣ"),
            ["οδος", "σοφια", "οδυσσεας"]
        );
    }

    #[test]
    fn turkish_dotted_and_dotless_i() {
        // SpecialCasing.txt: language-independent İ → i + U+0307; with the
        // tr/az conditional mappings İ → i, I → ı.
        assert_eq!(texts(&mut analyzer(false), "İSTANBUL IRMAK"), ["i\u{307}stanbul", "irmak"]);
        assert_eq!(texts(&mut analyzer(true), "İSTANBUL IRMAK"), ["istanbul", "ırmak"]);
        assert_eq!(texts(&mut analyzer(true), "I\u{307}zmir"), ["izmir"]);
        assert_eq!(texts(&mut analyzer(true), "kitap"), ["kitap"]);
    }

    #[test]
    fn german_sharp_s_and_expansion() {
        // SpecialCasing.txt has no lower-case expansion for ẞ (U+1E9E): → ß.
        assert_eq!(texts(&mut analyzer(false), "STRAẞE"), ["straße"]);
    }

    /// The path without a capital sigma equals the standard library's
    /// `str::to_lowercase` (Unicode default case mapping) for every scalar
    /// value, alone and inside a word.
    #[test]
    fn lowercase_into_equals_str_to_lowercase_on_every_char() {
        let mut out = String::new();
        for c in (0..=0x10ffff).filter_map(char::from_u32) {
            for text in [c.to_string(), format!("A{c}b"), format!("ΟΔ{c}Σ")] {
                lowercase_into(&text, false, &mut out);
                assert_eq!(out, text.to_lowercase(), "{text:?}");
            }
        }
    }
}
