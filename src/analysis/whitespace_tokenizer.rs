//! The `whitespace` tokenizer: splits on Unicode `White_Space` characters
//! only, keeping punctuation, `#tags`, `@mentions`, URLs and emoji glued to
//! whatever they touch.
//!
//! Place in the data flow: `analysis` stage, first element of a chain. It is
//! the crudest baseline a chain comparison can include. (tantivy's own
//! whitespace tokenizer splits on ASCII whitespace only, so a no-break space
//! or an ideographic space would stay inside a token.)

use std::str::CharIndices;

use tantivy::tokenizer::{Token, TokenStream, Tokenizer};

/// Tokenizer settings for `whitespace` (no options).
#[derive(Clone, Default, Debug)]
pub struct WhitespaceTokenizer {
    token: Token,
}

/// The token stream of [`WhitespaceTokenizer`].
pub struct WhitespaceTokenStream<'a> {
    text: &'a str,
    chars: CharIndices<'a>,
    token: &'a mut Token,
}

impl Tokenizer for WhitespaceTokenizer {
    type TokenStream<'a> = WhitespaceTokenStream<'a>;

    fn token_stream<'a>(&'a mut self, text: &'a str) -> WhitespaceTokenStream<'a> {
        self.token.reset();
        WhitespaceTokenStream { text, chars: text.char_indices(), token: &mut self.token }
    }
}

impl TokenStream for WhitespaceTokenStream<'_> {
    fn advance(&mut self) -> bool {
        let Some((from, _)) = self.chars.find(|(_, c)| !c.is_whitespace()) else {
            return false;
        };
        let to = self.chars.find(|(_, c)| c.is_whitespace()).map_or(self.text.len(), |(i, _)| i);
        self.token.text.clear();
        self.token.text.push_str(self.text.get(from..to).unwrap_or_default());
        self.token.offset_from = from;
        self.token.offset_to = to;
        self.token.position = self.token.position.wrapping_add(1);
        true
    }

    fn token(&self) -> &Token {
        self.token
    }

    fn token_mut(&mut self) -> &mut Token {
        self.token
    }
}

#[cfg(test)]
mod tests {
    use tantivy::tokenizer::TextAnalyzer;

    use super::*;
    use crate::analysis::testutil::assert_tokens;

    #[test]
    fn splits_on_unicode_white_space() {
        // PropList.txt: U+00A0 NO-BREAK SPACE and U+3000 IDEOGRAPHIC SPACE
        // are White_Space.
        let mut a = TextAnalyzer::from(WhitespaceTokenizer::default());
        assert_tokens(
            &mut a,
            " #Tag,\u{a0}@ana\u{3000}ok!\n",
            &[("#Tag,", 0, 1, 6), ("@ana", 1, 8, 12), ("ok!", 2, 15, 18)],
        );
        assert_tokens(&mut a, "   ", &[]);
    }
}
