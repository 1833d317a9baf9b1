//! The `prefixes` step (called `edge_ngrams` before; that name is still
//! read, with a deprecation note): replaces each token with its prefixes of
//! `shortest` (here `min`) to `longest` (`max`) characters, all at the token's position (for prefix matching of
//! partly typed words). A token shorter than `min` is kept whole, so short
//! words stay searchable.
//!
//! Place in the data flow: `analysis` stage, a filter of a chain; it should
//! be the last step that changes text (only `keep_sizes`, `lowercase`, `fold` and `drop` may follow), since
//! stemming or stop-listing prefixes makes no sense. Prefixes end on
//! character boundaries; offsets stay those of the whole token.

use tantivy::tokenizer::{Token, TokenFilter, TokenStream, Tokenizer};

/// Filter settings for `prefixes`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct EdgeNgrams {
    /// Fewest characters of a prefix (at least 1).
    pub min: usize,
    /// Most characters of a prefix (at least `min`).
    pub max: usize,
}

impl TokenFilter for EdgeNgrams {
    type Tokenizer<T: Tokenizer> = EdgeNgramsFilter<T>;

    fn transform<T: Tokenizer>(self, tokenizer: T) -> EdgeNgramsFilter<T> {
        EdgeNgramsFilter { inner: tokenizer, settings: self, pending: Vec::new() }
    }
}

/// The tokenizer wrapped by [`EdgeNgrams`].
#[derive(Clone)]
pub struct EdgeNgramsFilter<T> {
    inner: T,
    settings: EdgeNgrams,
    pending: Vec<Token>,
}

impl<T: Tokenizer> Tokenizer for EdgeNgramsFilter<T> {
    type TokenStream<'a> = EdgeNgramsStream<'a, T::TokenStream<'a>>;

    fn token_stream<'a>(&'a mut self, text: &'a str) -> Self::TokenStream<'a> {
        self.pending.clear();
        EdgeNgramsStream {
            tail: self.inner.token_stream(text),
            settings: self.settings,
            pending: &mut self.pending,
            current: Token::default(),
        }
    }
}

/// The token stream of [`EdgeNgramsFilter`].
pub struct EdgeNgramsStream<'a, T> {
    tail: T,
    settings: EdgeNgrams,
    /// Prefixes still to emit, longest first (popped from the end).
    pending: &'a mut Vec<Token>,
    current: Token,
}

impl<T: TokenStream> TokenStream for EdgeNgramsStream<'_, T> {
    fn advance(&mut self) -> bool {
        loop {
            if let Some(next) = self.pending.pop() {
                self.current = next;
                return true;
            }
            if !self.tail.advance() {
                return false;
            }
            let token = self.tail.token();
            let ends: Vec<usize> = token
                .text
                .char_indices()
                .map(|(i, c)| i + c.len_utf8())
                .take(self.settings.max)
                .collect();
            if ends.len() < self.settings.min {
                self.current = token.clone();
                return true;
            }
            let min = self.settings.min.max(1);
            for &end in ends.iter().skip(min - 1).rev() {
                let mut prefix = token.clone();
                prefix.text.truncate(end);
                self.pending.push(prefix);
            }
        }
    }

    fn token(&self) -> &Token {
        &self.current
    }

    fn token_mut(&mut self) -> &mut Token {
        &mut self.current
    }
}

#[cfg(test)]
mod tests {
    use tantivy::tokenizer::TextAnalyzer;

    use super::*;
    use crate::analysis::testutil::assert_tokens;
    use crate::analysis::WordTokenizer;

    #[test]
    fn prefixes_at_same_position() {
        let mut a = TextAnalyzer::builder(WordTokenizer::default())
            .filter(EdgeNgrams { min: 2, max: 4 })
            .build();
        assert_tokens(
            &mut a,
            "a Köln",
            &[("a", 0, 0, 1), ("Kö", 1, 2, 7), ("Köl", 1, 2, 7), ("Köln", 1, 2, 7)],
        );
        assert_tokens(&mut a, "harbour", &[("ha", 0, 0, 7), ("har", 0, 0, 7), ("harb", 0, 0, 7)]);
    }
}
