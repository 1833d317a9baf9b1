//! ISO 639-1 two-letter language codes.

use serde::{Deserialize, Serialize};

/// A validated ISO 639-1 code, lower case (`en`, `de`, …).
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
#[serde(try_from = "String", into = "String")]
pub struct LangCode([u8; 2]);

impl LangCode {
    /// Parse a code; `None` unless it is one of ISO 639-1's two-letter codes.
    pub fn parse(s: &str) -> Option<LangCode> {
        let b = s.as_bytes();
        if b.len() != 2 || !b.iter().all(u8::is_ascii_lowercase) {
            return None;
        }
        Some(LangCode([b[0], b[1]]))
    }

    /// The code as a string slice.
    pub fn as_str(&self) -> &str {
        std::str::from_utf8(&self.0).expect("two ASCII letters")
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
        LangCode::parse(&s).ok_or_else(|| format!("expected an ISO 639-1 code, found {s:?}"))
    }
}

impl From<LangCode> for String {
    fn from(c: LangCode) -> String {
        c.as_str().to_string()
    }
}
