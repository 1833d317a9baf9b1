//! The `keep_sizes` step (called `length` before; that name is still read,
//! with a deprecation note): keeps the tokens of `shortest` (here `min`) to
//! `longest` (`max`) characters, dropping the others (Unicode scalar values, not bytes).
//!
//! Place in the data flow: `analysis` stage, a filter of a chain. Positions
//! of the kept tokens do not change, so a dropped token leaves a gap, as a
//! removed stop word does.

use tantivy::tokenizer::Token;

use super::each_token::{token_edit_filter, TokenEdit};

/// Filter settings for `keep_sizes`: keep tokens with `min ≤ chars ≤ max`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct LengthLimit {
    /// Fewest characters a kept token has.
    pub min: usize,
    /// Most characters a kept token has.
    pub max: usize,
}

token_edit_filter!(LengthLimit);

impl TokenEdit for LengthLimit {
    type Work = ();

    fn start(&self) {}

    fn edit(&self, _: &mut (), token: &mut Token) -> bool {
        let text = &token.text;
        // ASCII tokens have one byte per character: no counting needed.
        let chars = if text.is_ascii() { text.len() } else { text.chars().count() };
        chars >= self.min && chars <= self.max
    }
}

#[cfg(test)]
mod tests {
    use tantivy::tokenizer::TextAnalyzer;

    use super::*;
    use crate::analysis::testutil::assert_tokens;
    use crate::analysis::WhitespaceTokenizer;

    #[test]
    fn counts_characters_not_bytes() {
        let mut a = TextAnalyzer::builder(WhitespaceTokenizer::default())
            .filter(LengthLimit { min: 2, max: 3 })
            .build();
        // "été" is 3 characters in 5 bytes: kept; "é" is 1 character in 2
        // bytes: dropped, like "a" and "four".
        assert_tokens(&mut a, "a été four é ok", &[("été", 1, 2, 7), ("ok", 4, 16, 18)]);
    }
}
