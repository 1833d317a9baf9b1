//! ISO 639-1 two-letter language codes: the validated `lang` value of posts
//! and queries (input stage), later used to route text to a language's
//! analysis chain.
//!
//! The accepted set is the 184 codes in the ISO 639-3 code table's Part 1
//! column as shipped by the pycountry package (`scripts/iso639_1_codes.py`
//! writes it to `tests/fixtures/input/iso639_1_codes.txt`, which the tests
//! compare against): the 183 current ISO 639-1 codes plus `sh`
//! (Serbo-Croatian, withdrawn from Part 1 in 2000 yet still the Part 1 code
//! of `hbs` in that table and still seen in data). `bh` (Bihari) is rejected:
//! the ISO 639-2 registration authority withdrew it. Codes are lower case, as
//! the standard writes them; `EN` is rejected with a hint.

use serde::{Deserialize, Serialize};

/// Every accepted code, sorted by byte order so `parse` can binary-search.
const CODES: [[u8; 2]; 184] = [
    *b"aa", *b"ab", *b"ae", *b"af", *b"ak", *b"am", *b"an", *b"ar", *b"as", *b"av", *b"ay", *b"az",
    *b"ba", *b"be", *b"bg", *b"bi", *b"bm", *b"bn", *b"bo", *b"br", *b"bs", *b"ca", *b"ce", *b"ch",
    *b"co", *b"cr", *b"cs", *b"cu", *b"cv", *b"cy", *b"da", *b"de", *b"dv", *b"dz", *b"ee", *b"el",
    *b"en", *b"eo", *b"es", *b"et", *b"eu", *b"fa", *b"ff", *b"fi", *b"fj", *b"fo", *b"fr", *b"fy",
    *b"ga", *b"gd", *b"gl", *b"gn", *b"gu", *b"gv", *b"ha", *b"he", *b"hi", *b"ho", *b"hr", *b"ht",
    *b"hu", *b"hy", *b"hz", *b"ia", *b"id", *b"ie", *b"ig", *b"ii", *b"ik", *b"io", *b"is", *b"it",
    *b"iu", *b"ja", *b"jv", *b"ka", *b"kg", *b"ki", *b"kj", *b"kk", *b"kl", *b"km", *b"kn", *b"ko",
    *b"kr", *b"ks", *b"ku", *b"kv", *b"kw", *b"ky", *b"la", *b"lb", *b"lg", *b"li", *b"ln", *b"lo",
    *b"lt", *b"lu", *b"lv", *b"mg", *b"mh", *b"mi", *b"mk", *b"ml", *b"mn", *b"mr", *b"ms", *b"mt",
    *b"my", *b"na", *b"nb", *b"nd", *b"ne", *b"ng", *b"nl", *b"nn", *b"no", *b"nr", *b"nv", *b"ny",
    *b"oc", *b"oj", *b"om", *b"or", *b"os", *b"pa", *b"pi", *b"pl", *b"ps", *b"pt", *b"qu", *b"rm",
    *b"rn", *b"ro", *b"ru", *b"rw", *b"sa", *b"sc", *b"sd", *b"se", *b"sg", *b"sh", *b"si", *b"sk",
    *b"sl", *b"sm", *b"sn", *b"so", *b"sq", *b"sr", *b"ss", *b"st", *b"su", *b"sv", *b"sw", *b"ta",
    *b"te", *b"tg", *b"th", *b"ti", *b"tk", *b"tl", *b"tn", *b"to", *b"tr", *b"ts", *b"tt", *b"tw",
    *b"ty", *b"ug", *b"uk", *b"ur", *b"uz", *b"ve", *b"vi", *b"vo", *b"wa", *b"wo", *b"xh", *b"yi",
    *b"yo", *b"za", *b"zh", *b"zu",
];

/// A validated ISO 639-1 code, lower case (`en`, `de`, …).
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
#[serde(try_from = "String", into = "String")]
pub struct LangCode([u8; 2]);

impl LangCode {
    /// Parse a code; `None` unless it is one of ISO 639-1's two-letter codes
    /// (lower case, see the module docs for the exact set).
    ///
    /// ```
    /// use postassay::input::LangCode;
    /// assert_eq!(LangCode::parse("de").map(|c| c.to_string()), Some("de".to_string()));
    /// assert!(LangCode::parse("xx").is_none());
    /// assert!(LangCode::parse("DE").is_none());
    /// assert!(LangCode::parse("deu").is_none());
    /// ```
    pub fn parse(s: &str) -> Option<LangCode> {
        let code: [u8; 2] = s.as_bytes().try_into().ok()?;
        CODES.binary_search(&code).ok().map(|_| LangCode(code))
    }

    /// The code as a string slice.
    pub fn as_str(&self) -> &str {
        std::str::from_utf8(&self.0).expect("codes come from the ASCII table")
    }

    /// Every accepted code in byte order.
    pub fn all() -> impl Iterator<Item = LangCode> {
        CODES.iter().map(|&c| LangCode(c))
    }

    /// The message for a value that is not an accepted code, in the readers'
    /// `expected …, found …` form, with a hint when only the case is wrong.
    pub fn error_message(found: &str) -> String {
        match LangCode::parse(&found.to_ascii_lowercase()) {
            Some(code) => format!(
                "expected an ISO 639-1 code, found {found:?} (codes are lower case: {:?})",
                code.as_str()
            ),
            None => format!("expected an ISO 639-1 code, found {found:?}"),
        }
    }
}

impl std::fmt::Display for LangCode {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.as_str())
    }
}

impl TryFrom<String> for LangCode {
    type Error = String;
    fn try_from(s: String) -> std::result::Result<Self, String> {
        LangCode::parse(&s).ok_or_else(|| LangCode::error_message(&s))
    }
}

impl From<LangCode> for String {
    fn from(c: LangCode) -> String {
        c.as_str().to_string()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The fixture written by `scripts/iso639_1_codes.py` from pycountry 26.2.16.
    fn fixture_codes() -> Vec<String> {
        let path = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/fixtures/input/iso639_1_codes.txt");
        let text = std::fs::read_to_string(path).expect("fixture is committed");
        text.lines().map(str::to_string).collect()
    }

    #[test]
    fn table_equals_the_generated_fixture() {
        let ours: Vec<String> = LangCode::all().map(|c| c.to_string()).collect();
        assert_eq!(ours, fixture_codes());
        assert_eq!(ours.len(), 184);
    }

    #[test]
    fn table_is_strictly_sorted_so_binary_search_works() {
        assert!(CODES.windows(2).all(|w| w[0] < w[1]));
    }

    #[test]
    fn every_fixture_code_parses_and_round_trips() {
        for code in fixture_codes() {
            let parsed = LangCode::parse(&code).map(|c| c.to_string());
            assert_eq!(parsed.as_deref(), Some(code.as_str()));
        }
    }

    #[test]
    fn rejects_non_codes() {
        // "bh": withdrawn by the ISO 639-2 registration authority (module docs);
        // "xx", "qq": never assigned (not in the fixture); "deu": ISO 639-2, not 639-1.
        for bad in ["bh", "xx", "qq", "deu", "de-CH", "d", "", "DE", "De", "é1", "🙂"] {
            assert!(LangCode::parse(bad).is_none(), "{bad:?} should be rejected");
        }
    }

    #[test]
    fn error_message_hints_at_lower_case() {
        assert_eq!(
            LangCode::error_message("EN"),
            r#"expected an ISO 639-1 code, found "EN" (codes are lower case: "en")"#
        );
        assert_eq!(
            LangCode::error_message("deu-CH"),
            r#"expected an ISO 639-1 code, found "deu-CH""#
        );
    }

    #[test]
    fn serde_uses_the_same_validation() {
        let ok: LangCode = serde_json::from_str(r#""fr""#).expect("valid code");
        assert_eq!(ok.as_str(), "fr");
        assert_eq!(serde_json::to_string(&ok).expect("serialises"), r#""fr""#);
        let err = serde_json::from_str::<LangCode>(r#""fra""#).expect_err("not 639-1");
        assert!(err.to_string().contains(r#"expected an ISO 639-1 code, found "fra""#));
    }
}
