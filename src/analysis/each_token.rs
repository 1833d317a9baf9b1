//! The shared mechanism of the steps that look at one token at a time
//! (`lowercase`, `fold`, `stem`, `strip_elided`, `keep_sizes`, `drop`): each says
//! what it does to one token by implementing [`TokenEdit`], and
//! [`EachTokenFilter`] / [`EachTokenStream`] carry it through tantivy's
//! filter traits, so the wrapper and stream code exists once.
//!
//! Place in the data flow: `analysis` stage. Steps that turn one token into
//! several (`prefixes`, `hashtags`) keep their own streams.

use tantivy::tokenizer::{Token, TokenStream, Tokenizer};

/// A chain step that edits or drops tokens one at a time. It may change a
/// token's text; offsets and positions stay as they are (tantivy's filter
/// contract), so a dropped token leaves a gap, as a removed stop word does.
pub trait TokenEdit: Clone + Send + Sync + 'static {
    /// What the step keeps from one token to the next (buffers, memos; `()`
    /// for none). Each analyzer has its own; cloning an analyzer clones it.
    type Work: Clone + Send + Sync + 'static;

    /// The working state of a new analyzer.
    fn start(&self) -> Self::Work;

    /// Edit `token` in place; `false` drops it from the stream.
    fn edit(&self, work: &mut Self::Work, token: &mut Token) -> bool;
}

/// Implement tantivy's `TokenFilter` for a [`TokenEdit`] step, so that the
/// step's settings go straight into `TextAnalyzer::builder(..).filter(..)`
/// and `filter_dynamic`. (A blanket implementation over every `TokenEdit`
/// is not allowed for a trait of another crate, hence the macro.)
macro_rules! token_edit_filter {
    ($step:ty) => {
        impl tantivy::tokenizer::TokenFilter for $step {
            type Tokenizer<T: tantivy::tokenizer::Tokenizer> =
                $crate::analysis::each_token::EachTokenFilter<$step, T>;

            fn transform<T: tantivy::tokenizer::Tokenizer>(self, inner: T) -> Self::Tokenizer<T> {
                $crate::analysis::each_token::EachTokenFilter::new(self, inner)
            }
        }
    };
}
pub(crate) use token_edit_filter;

/// The tokenizer wrapped by a [`TokenEdit`] step.
#[derive(Clone)]
pub struct EachTokenFilter<E: TokenEdit, T> {
    inner: T,
    step: E,
    work: E::Work,
}

impl<E: TokenEdit, T> EachTokenFilter<E, T> {
    /// Wrap `inner` with `step` (and a fresh working state).
    pub fn new(step: E, inner: T) -> Self {
        let work = step.start();
        EachTokenFilter { inner, step, work }
    }
}

impl<E: TokenEdit, T: Tokenizer> Tokenizer for EachTokenFilter<E, T> {
    type TokenStream<'a> = EachTokenStream<'a, E, T::TokenStream<'a>>;

    fn token_stream<'a>(&'a mut self, text: &'a str) -> Self::TokenStream<'a> {
        EachTokenStream {
            tail: self.inner.token_stream(text),
            step: &self.step,
            work: &mut self.work,
        }
    }
}

/// The token stream of [`EachTokenFilter`].
pub struct EachTokenStream<'a, E: TokenEdit, T> {
    tail: T,
    step: &'a E,
    work: &'a mut E::Work,
}

impl<E: TokenEdit, T: TokenStream> TokenStream for EachTokenStream<'_, E, T> {
    fn advance(&mut self) -> bool {
        while self.tail.advance() {
            if self.step.edit(self.work, self.tail.token_mut()) {
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
