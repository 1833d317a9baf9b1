//! Identifier newtypes shared by every stage of the data flow.
//!
//! Ids from files are compared as strings (formats.md): a JSON integer id `7`
//! becomes the string `"7"`. Ordering is byte order of the UTF-8 string, which
//! is what the spec asks for when ties are broken "by doc_id in byte order".
//!
//! `Debug` prints an id as a quoted string, exactly as `Debug` of its
//! `String` would (`"q1"`, not `QueryId("q1")`): messages quote user-given
//! names with `{:?}`, and a wrapper's type name means nothing to a user.

use std::fmt;

use serde::{Deserialize, Serialize};

macro_rules! string_id {
    ($(#[$doc:meta])* $name:ident) => {
        $(#[$doc])*
        #[derive(Clone, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
        #[serde(transparent)]
        pub struct $name(pub String);

        impl $name {
            /// The id as a string slice.
            pub fn as_str(&self) -> &str {
                &self.0
            }
        }

        impl fmt::Display for $name {
            fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
                f.write_str(&self.0)
            }
        }

        impl fmt::Debug for $name {
            /// The id quoted and escaped like a string literal (`"q1"`).
            fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
                fmt::Debug::fmt(&self.0, f)
            }
        }

        /// Hash and order are the inner string's (derived on the one
        /// field), so maps keyed by the id can be searched with a `&str`.
        impl std::borrow::Borrow<str> for $name {
            fn borrow(&self) -> &str {
                &self.0
            }
        }

        impl From<&str> for $name {
            fn from(s: &str) -> Self {
                $name(s.to_string())
            }
        }

        impl From<String> for $name {
            fn from(s: String) -> Self {
                $name(s)
            }
        }
    };
}

string_id!(
    /// The id of one post (a document of the corpus, `doc_id` in judgments and runs).
    PostId
);
string_id!(
    /// The id of one query (`query_id` in queries, judgments and runs).
    QueryId
);
string_id!(
    /// The name of an analysis chain or of a scored system (`NAME` in `--run NAME=FILE`).
    ChainName
);

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn debug_quotes_like_a_string_and_display_is_bare() {
        // Messages quote names with `{:?}`: `--baseline "nosuch" …`, never
        // `ChainName("nosuch")`.
        assert_eq!(format!("{:?}", ChainName::from("nosuch")), "\"nosuch\"");
        assert_eq!(format!("{:?}", QueryId::from("q\"1")), "\"q\\\"1\"");
        assert_eq!(format!("{:?}", PostId::from("d1")), "\"d1\"");
        assert_eq!(format!("{}", ChainName::from("nosuch")), "nosuch");
    }
}
