//! The `drop` step: removes tokens of chosen shapes (mentions, URLs, emoji,
//! numbers, hashtags), judged from the token's text by
//! [`TokenShape`](super::token_shape::TokenShape).
//!
//! Place in the data flow: `analysis` stage, a filter of a chain, usually
//! right after the `posts` tokenizer (which keeps these elements whole).
//! Positions of kept tokens do not change.

use serde::{Deserialize, Serialize};
use tantivy::tokenizer::Token;

use super::each_token::{token_edit_filter, TokenEdit};

use super::token_shape::TokenShape;

/// A shape of token the `drop` step can remove.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum DropKind {
    /// `@user` and `@user@host.tld`.
    Mentions,
    /// `http://…`, `https://…`, `www.…`.
    Urls,
    /// Emoji sequences.
    Emoji,
    /// Digits with separators (`2024`, `3.14`).
    Numbers,
    /// `#tags` (before a `hashtags` step, which strips the `#`).
    Hashtags,
}

impl DropKind {
    fn shape(self) -> TokenShape {
        match self {
            DropKind::Mentions => TokenShape::Mention,
            DropKind::Urls => TokenShape::Url,
            DropKind::Emoji => TokenShape::Emoji,
            DropKind::Numbers => TokenShape::Number,
            DropKind::Hashtags => TokenShape::Hashtag,
        }
    }

    /// The name used in chain files.
    pub fn as_str(self) -> &'static str {
        match self {
            DropKind::Mentions => "mentions",
            DropKind::Urls => "urls",
            DropKind::Emoji => "emoji",
            DropKind::Numbers => "numbers",
            DropKind::Hashtags => "hashtags",
        }
    }
}

/// Filter settings for `drop`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct DropTokens {
    shapes: Vec<TokenShape>,
}

impl DropTokens {
    /// Drop tokens of the given kinds.
    pub fn new(kinds: &[DropKind]) -> DropTokens {
        DropTokens { shapes: kinds.iter().map(|k| k.shape()).collect() }
    }
}

token_edit_filter!(DropTokens);

impl TokenEdit for DropTokens {
    type Work = ();

    fn start(&self) {}

    fn edit(&self, _: &mut (), token: &mut Token) -> bool {
        !self.shapes.contains(&TokenShape::of(&token.text))
    }
}

#[cfg(test)]
mod tests {
    use tantivy::tokenizer::TextAnalyzer;

    use super::*;
    use crate::analysis::testutil::texts;
    use crate::analysis::WhitespaceTokenizer;

    #[test]
    fn drops_only_the_chosen_kinds() {
        let input = "see https://x.example/a @ana #Tag 2024 👍🏽 ok";
        let mut a = TextAnalyzer::builder(WhitespaceTokenizer::default())
            .filter(DropTokens::new(&[DropKind::Urls, DropKind::Numbers]))
            .build();
        assert_eq!(texts(&mut a, input), ["see", "@ana", "#Tag", "👍🏽", "ok"]);
        let mut a = TextAnalyzer::builder(WhitespaceTokenizer::default())
            .filter(DropTokens::new(&[DropKind::Mentions, DropKind::Emoji, DropKind::Hashtags]))
            .build();
        assert_eq!(texts(&mut a, input), ["see", "https://x.example/a", "2024", "ok"]);
    }
}
