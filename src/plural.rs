//! Counted nouns for messages and reports (`1 query`, `2 queries`), so that
//! every module says a count the same, grammatical way. A base module like
//! `error` and `ids`: anything in the data flow may use it.

/// `n` followed by `one` when `n` is 1, else by `many`.
///
/// ```
/// use postassay::plural::counted;
/// assert_eq!(counted(1, "pooled query", "pooled queries"), "1 pooled query");
/// assert_eq!(counted(0, "grade", "grades"), "0 grades");
/// ```
pub fn counted(n: usize, one: &str, many: &str) -> String {
    format!("{n} {}", if n == 1 { one } else { many })
}
