//! The `length` step: drops tokens shorter than `min` or longer than `max`
//! characters (Unicode scalar values, not bytes).
//!
//! Place in the data flow: `analysis` stage, a filter of a chain. Positions
//! of the kept tokens do not change, so a dropped token leaves a gap, as a
//! removed stop word does.

use tantivy::tokenizer::{Token, TokenFilter, TokenStream, Tokenizer};

/// Filter settings for `length`: keep tokens with `min ≤ chars ≤ max`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct LengthLimit {
    /// Fewest characters a kept token has.
    pub min: usize,
    /// Most characters a kept token has.
    pub max: usize,
}

impl TokenFilter for LengthLimit {
    type Tokenizer<T: Tokenizer> = LengthLimitFilter<T>;

    fn transform<T: Tokenizer>(self, tokenizer: T) -> LengthLimitFilter<T> {
        LengthLimitFilter { inner: tokenizer, limit: self }
    }
}

/// The tokenizer wrapped by [`LengthLimit`].
#[derive(Clone)]
pub struct LengthLimitFilter<T> {
    inner: T,
    limit: LengthLimit,
}

impl<T: Tokenizer> Tokenizer for LengthLimitFilter<T> {
    type TokenStream<'a> = LengthLimitStream<T::TokenStream<'a>>;

    fn token_stream<'a>(&'a mut self, text: &'a str) -> Self::TokenStream<'a> {
        LengthLimitStream { tail: self.inner.token_stream(text), limit: self.limit }
    }
}

/// The token stream of [`LengthLimitFilter`].
pub struct LengthLimitStream<T> {
    tail: T,
    limit: LengthLimit,
}

impl<T: TokenStream> TokenStream for LengthLimitStream<T> {
    fn advance(&mut self) -> bool {
        while self.tail.advance() {
            let text = &self.tail.token().text;
            // ASCII tokens have one byte per character: no counting needed.
            let chars = if text.is_ascii() { text.len() } else { text.chars().count() };
            if chars >= self.limit.min && chars <= self.limit.max {
                return true;
            }
        }
        false
    }

    fn token(&self) -> &Token {
        self.tail.token()
    }

    fn token_mut(&mut self) -> &mut Token {
        self.tail.token_mut()
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
