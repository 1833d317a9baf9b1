//! The `fold` step: removes diacritics so that `café`, `cafe` and `CAFÉ`
//! (after lowercasing) meet, folding Latin letters to ASCII.
//!
//! Place in the data flow: `analysis` stage, a filter of a chain. Most
//! Snowball stemmers rely on accented letters in their suffix rules, so
//! `fold` must come after `stem` except for English, German, Dutch and
//! Russian (see the chain rules in `spec.rs`). It is usually placed after `lowercase`; the order
//! between those two does not change the result.
//!
//! How: canonical decomposition (Unicode NFD, UAX #15) splits a letter from
//! its combining marks; marks that follow a Latin, Greek or Cyrillic base
//! letter are dropped; the rest is recomposed (NFC). Letters that carry
//! their stroke or ligature in the letter itself have no decomposition and
//! are mapped explicitly: `ß→ss æ→ae œ→oe ø→o đ→d ð→d ł→l þ→th ı→i ħ→h ŧ→t`
//! (and upper case). Deliberate exceptions:
//! - Cyrillic keeps the breve (`й`, `ў` are letters of their own, not
//!   accented `и`, `у`) but loses the diaeresis (`ё` → `е`, as Russian
//!   writing usually does; Ukrainian `ї` → `і` is a loss we accept).
//! - Marks on other scripts are kept: in Arabic, Hebrew and the Indic
//!   scripts they are vowels, not accents.
//!
//! Pure-ASCII tokens are left as they are without any work. Offsets never
//! change.

use std::mem;

use tantivy::tokenizer::Token;
use unicode_normalization::char::is_combining_mark;
use unicode_normalization::UnicodeNormalization;

use super::each_token::{token_edit_filter, TokenEdit};

/// Filter settings for `fold` (no options).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Fold;

token_edit_filter!(Fold);

impl TokenEdit for Fold {
    /// The buffer non-ASCII tokens are folded into (swapped with the token's
    /// text, so no allocation per token).
    type Work = String;

    fn start(&self) -> String {
        String::new()
    }

    fn edit(&self, buffer: &mut String, token: &mut Token) -> bool {
        if !token.text.is_ascii() {
            fold_into(&token.text, buffer);
            mem::swap(&mut token.text, buffer);
        }
        true
    }
}

/// Letters without a decomposition, folded explicitly.
fn fold_letter(c: char) -> Option<&'static str> {
    Some(match c {
        'ß' => "ss",
        'ẞ' => "SS",
        'æ' => "ae",
        'Æ' => "AE",
        'œ' => "oe",
        'Œ' => "OE",
        'ø' => "o",
        'Ø' => "O",
        'đ' | 'ð' => "d",
        'Đ' | 'Ð' => "D",
        'ł' => "l",
        'Ł' => "L",
        'þ' => "th",
        'Þ' => "TH",
        'ı' => "i",
        'ħ' => "h",
        'Ħ' => "H",
        'ŧ' => "t",
        'Ŧ' => "T",
        _ => return None,
    })
}

/// Whether marks after this base letter are accents to drop.
fn base_kind(c: char) -> BaseKind {
    match c as u32 {
        0x400..=0x52f => BaseKind::Cyrillic,
        0..=0x3ff | 0x1e00..=0x1fff => BaseKind::LatinGreek,
        _ => BaseKind::Other,
    }
}

#[derive(Clone, Copy, PartialEq, Eq)]
enum BaseKind {
    LatinGreek,
    Cyrillic,
    Other,
}

/// Fold `text` into `out` (cleared first).
pub(crate) fn fold_into(text: &str, out: &mut String) {
    out.clear();
    let mut base = BaseKind::Other;
    for c in text.nfd() {
        if is_combining_mark(c) {
            let drop = match base {
                BaseKind::LatinGreek => true,
                BaseKind::Cyrillic => c != '\u{306}',
                BaseKind::Other => false,
            };
            if !drop {
                out.push(c);
            }
            continue;
        }
        base = base_kind(c);
        match fold_letter(c) {
            Some(folded) => out.push_str(folded),
            None => out.push(c),
        }
    }
    if !out.is_ascii() {
        let composed: String = out.nfc().collect();
        *out = composed;
    }
}

#[cfg(test)]
mod tests {
    use tantivy::tokenizer::TextAnalyzer;

    use super::*;
    use crate::analysis::testutil::{assert_tokens, texts};
    use crate::analysis::WordTokenizer;

    fn analyzer() -> TextAnalyzer {
        TextAnalyzer::builder(WordTokenizer::default()).filter(Fold).build()
    }

    #[test]
    fn latin_diacritics_and_offsets() {
        // Canonical decompositions from UnicodeData.txt: é = e + U+0301,
        // ñ = n + U+0303, ș = s + U+0326, ắ = a + U+0306 + U+0301.
        assert_tokens(
            &mut analyzer(),
            "Café niño ștefan Nẵng",
            &[("Cafe", 0, 0, 5), ("nino", 1, 6, 11), ("stefan", 2, 12, 19), ("Nang", 3, 20, 26)],
        );
    }

    #[test]
    fn letters_without_decomposition() {
        assert_eq!(
            texts(&mut analyzer(), "Straße Æble Łódź ðæt Øre"),
            ["Strasse", "AEble", "Lodz", "daet", "Ore"]
        );
    }

    #[test]
    fn greek_and_cyrillic() {
        // Greek tonos and dialytika are dropped; Cyrillic й keeps its breve,
        // ё loses its diaeresis.
        assert_eq!(
            texts(&mut analyzer(), "καλημέρα Ελλάδα προϊόν ёлка йогурт"),
            ["καλημερα", "Ελλαδα", "προιον", "елка", "йогурт"]
        );
    }

    #[test]
    fn vowel_marks_of_other_scripts_are_kept() {
        // Devanagari vowel signs and virama, Arabic harakat: kept.
        assert_eq!(texts(&mut analyzer(), "हिन्दी مَدْرَسَة"), ["हिन्दी", "مَدْرَسَة"]);
    }
}
