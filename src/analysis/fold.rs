//! The `fold` step: removes diacritics so that `café`, `cafe` and `CAFÉ`
//! (after lowercasing) meet, folding Latin letters to ASCII. With
//! `form = "compatibility"` it also folds what Unicode calls compatibility
//! variants and case, so that fullwidth `ｆｕｌｌ`, the ligature in `ﬁle`,
//! `x²`, `ℌ` and `Ⅻ` meet `full`, `file`, `x2`, `h` and `xii`.
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
//! Compatibility form (`form = "compatibility"`): before the above, the
//! token gets compatibility decomposition (NFKD, UAX #15: fullwidth and
//! halfwidth forms, ligatures, super- and subscripts, letterlike symbols,
//! Roman numerals, circled and squared letters) and full case folding, so
//! the result is NFKC with case folding (the NFKC_Casefold practice of
//! UAX #15 and UTS #46) plus the accent removal above. Case folding here is
//! Rust's lower-casing plus the two folds that differ from it for the
//! scripts whose marks are dropped (final `ς` → `σ`, and the iota subscript
//! U+0345 → `ι`); Cherokee, whose small letters fold to capitals, is not
//! folded. `src/analysis/fold.rs`'s tests check the form against Python's
//! `unicodedata` and `str.casefold` (`scripts/fold_compat_fixture.py`).
//! The canonical form stays the default: it keeps `ｆｕｌｌ` and `ﬁ` as they
//! are, and no built-in chain folds at all.
//!
//! Pure-ASCII tokens are left as they are without any work (the
//! compatibility form only lower-cases them). Offsets never change.

use std::mem;

use serde::{Deserialize, Serialize};
use tantivy::tokenizer::Token;
use unicode_normalization::char::is_combining_mark;
use unicode_normalization::UnicodeNormalization;

use super::each_token::{token_edit_filter, TokenEdit};

/// Which Unicode equivalence `fold` applies before dropping marks (chain
/// files: `{ step = "fold", form = "compatibility" }`).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum FoldForm {
    /// Canonical decomposition (NFD): accents only; case, fullwidth letters
    /// and ligatures stay as they are. The default.
    #[default]
    Canonical,
    /// Compatibility decomposition (NFKD) and case folding as well (see the
    /// module docs).
    Compatibility,
}

impl FoldForm {
    /// The name used in chain files.
    pub fn as_str(self) -> &'static str {
        match self {
            FoldForm::Canonical => "canonical",
            FoldForm::Compatibility => "compatibility",
        }
    }

    /// True for the default form (chain definitions leave it out).
    pub fn is_canonical(&self) -> bool {
        *self == FoldForm::Canonical
    }
}

/// Filter settings for `fold`.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Fold {
    /// The equivalence applied before marks are dropped.
    pub form: FoldForm,
}

token_edit_filter!(Fold);

impl TokenEdit for Fold {
    /// The buffer non-ASCII tokens are folded into (swapped with the token's
    /// text, so no allocation per token).
    type Work = String;

    fn start(&self) -> String {
        String::new()
    }

    fn edit(&self, buffer: &mut String, token: &mut Token) -> bool {
        match self.form {
            _ if !token.text.is_ascii() => {
                fold_form_into(self.form, &token.text, buffer);
                mem::swap(&mut token.text, buffer);
            }
            FoldForm::Compatibility => token.text.make_ascii_lowercase(),
            FoldForm::Canonical => {}
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

/// Fold `text` into `out` (cleared first) in the given form.
pub(crate) fn fold_form_into(form: FoldForm, text: &str, out: &mut String) {
    match form {
        FoldForm::Canonical => fold_into(text, out),
        FoldForm::Compatibility => {
            let folded: String = text.nfkd().flat_map(case_fold).collect();
            fold_into(&folded, out);
        }
    }
}

/// Full case folding of one character, near enough for `fold` (module
/// docs): lower case, and the final sigma and the iota subscript as the
/// letters they fold to (CaseFolding.txt).
fn case_fold(c: char) -> impl Iterator<Item = char> {
    let special = match c {
        'ς' => Some('σ'),
        '\u{345}' => Some('ι'),
        _ => None,
    };
    special.into_iter().chain(special.is_none().then(|| c.to_lowercase()).into_iter().flatten())
}

/// Fold `text` into `out` (cleared first), canonical form.
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
        TextAnalyzer::builder(WordTokenizer::default()).filter(Fold::default()).build()
    }

    fn compatibility() -> TextAnalyzer {
        let fold = Fold { form: FoldForm::Compatibility };
        TextAnalyzer::builder(WordTokenizer::default()).filter(fold).build()
    }

    #[test]
    fn canonical_form_keeps_compatibility_variants() {
        // NFD leaves fullwidth letters (U+FF46 …) and the fi ligature
        // (U+FB01) alone: they only have compatibility decompositions
        // (UnicodeData.txt, <wide> and <compat>).
        assert_eq!(texts(&mut analyzer(), "ｆｕｌｌ ﬁle"), ["ｆｕｌｌ", "ﬁle"]);
    }

    #[test]
    fn compatibility_form_matches_python_unicodedata() {
        // scripts/fold_compat_fixture.py: Python's unicodedata NFKD and
        // str.casefold, marks after Latin and Greek letters dropped, NFC.
        let text =
            std::fs::read_to_string(crate::analysis::testutil::fixture_path("fold_compat.json"))
                .expect("the fold fixture is committed");
        let fixture: serde_json::Value = serde_json::from_str(&text).expect("JSON");
        let cases = fixture["cases"].as_array().expect("cases");
        assert_eq!(cases.len(), 25);
        let mut out = String::new();
        for case in cases {
            let (input, expected) = (case["input"].as_str(), case["expected"].as_str());
            let (Some(input), Some(expected)) = (input, expected) else { panic!("{case}") };
            fold_form_into(FoldForm::Compatibility, input, &mut out);
            assert_eq!(out, expected, "fold(compatibility) of {input:?}");
        }
    }

    #[test]
    fn compatibility_form_in_a_chain_keeps_offsets_and_lowercases_ascii() {
        // Offsets are the original bytes: ｆ is 3 bytes in UTF-8.
        assert_tokens(
            &mut compatibility(),
            "ＦＵＬＬ ﬁle Café",
            &[("full", 0, 0, 12), ("file", 1, 13, 18), ("cafe", 2, 19, 24)],
        );
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
