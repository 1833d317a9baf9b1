//! Analysis chains: tokenizers and token filters (tantivy traits), chains
//! built from data, hashtag segmentation and language detection.
//! Second stage of the data flow (after `input`, before `index`).
//!
//! A chain is data: a [`ChainSpec`] read from TOML ([`read_chain_file`],
//! [`builtin_chains`]; the layout, every step and the rejected orders are
//! documented in `spec.rs`), built into tantivy analyzers by
//! [`Analyzer::build`]. A plain chain analyses one field; a routed chain has
//! one field per language plus a fallback, and says which field a post goes
//! to ([`Analyzer::field_for_post`]) and which fields a query searches
//! ([`Analyzer::fields_for_query`]). [`inspect`] shows what a chain does to
//! a text, stage by stage.
//!
//! Pieces, one file each; filters never change offsets. Steps that edit or
//! drop one token at a time implement [`TokenEdit`] and share one wrapper
//! and stream ([`EachTokenFilter`], [`EachTokenStream`]); steps that emit
//! several tokens for one (`EdgeNgrams`, `HashtagSplit`) have their own:
//! - tokenizers: [`WordTokenizer`] (`words`, UAX #29), [`PostTokenizer`]
//!   (`posts`: tags, mentions, URLs, emoji whole), [`WhitespaceTokenizer`];
//!   the first two take an [`Unspaced`] setting that cuts Thai, Lao, Khmer,
//!   Burmese, Chinese and Japanese into words (icu_segmenter) or character
//!   pairs;
//! - filters: [`Lowercase`], [`Fold`], [`StopWords`], [`Stem`] (two Snowball
//!   generations), [`Elision`] (`strip_elided`), [`LengthLimit`]
//!   (`keep_sizes`), [`EdgeNgrams`] (`prefixes`),
//!   [`DropTokens`], and [`hashtag::HashtagSplit`].
//!
//! ```
//! use postassay::analysis::{parse_chains, AnalysisContext, Analyzer};
//!
//! let toml = r#"
//! [[chain]]
//! name = "tags"
//! tokenizer = "posts"
//! steps = [{ step = "hashtags" }, { step = "lowercase" }, { step = "fold" }]
//! "#;
//! let chains = parse_chains(toml, "inline.toml", &[]).unwrap();
//! let analyzer = Analyzer::build(&chains[0], &AnalysisContext::default()).unwrap();
//! let mut text = analyzer.fields()[0].analyzer.clone();
//! let mut stream = text.token_stream("Café #HarbourMarket 🐟");
//! let mut tokens = Vec::new();
//! while let Some(t) = stream.next() {
//!     tokens.push(t.text.clone());
//! }
//! assert_eq!(tokens, ["cafe", "harbourmarket", "harbour", "market", "🐟"]);
//! ```

mod chain;
pub mod detect;
mod drop_tokens;
mod each_token;
mod edge_ngrams;
mod elision;
mod fold;
pub mod hashtag;
pub mod inspect;
mod length_limit;
mod lingua_detector;
mod lowercase;
mod post_tokenizer;
mod spec;
mod stem;
mod stop_words;
pub mod token_shape;
mod unspaced;
mod whitespace_tokenizer;
pub mod word_lists;
mod word_tokenizer;

#[cfg(test)]
pub(crate) mod testutil;

pub use chain::{
    build_pipeline, tag_table, AnalysisContext, Analyzer, FieldAnalyzer, FALLBACK_FIELD,
    PLAIN_FIELD,
};
pub use drop_tokens::{DropKind, DropTokens};
pub use each_token::{EachTokenFilter, EachTokenStream, TokenEdit};
pub use edge_ngrams::{EdgeNgrams, EdgeNgramsFilter, EdgeNgramsStream};
pub use elision::{Elision, ELISION_LANGUAGES};
pub use fold::{Fold, FoldForm};
pub use length_limit::LengthLimit;
pub use lowercase::Lowercase;
pub use post_tokenizer::{PostTokenStream, PostTokenizer};
pub use spec::{
    builtin_chains, parse_chain_file, parse_chains, read_chain_file, select_chains, Branch,
    ChainBody, ChainFile, ChainSpec, FallbackPosts, Fusion, Pipeline, PostRouting, QueryRouting,
    QuerySearch, RouteSpec, StepSpec, TagVocabulary, TokenizerKind, BUILTIN_CHAINS_TOML,
    DEFAULT_MIN_CONFIDENCE,
};
pub use stem::{stem_languages, Stem, StemGeneration, StemWork, STEM_CACHE_CAPACITY};
pub use stop_words::{stop_languages, StopWords};
pub use unspaced::Unspaced;
pub use whitespace_tokenizer::{WhitespaceTokenStream, WhitespaceTokenizer};
pub use word_tokenizer::{WordTokenStream, WordTokenizer};
