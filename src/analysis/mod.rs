//! Analysis chains: tokenizers and token filters (tantivy traits), chains
//! built from data, hashtag segmentation and language detection.
//! Second stage of the data flow (after `input`).

pub mod detect;
pub mod hashtag;
mod chain;
mod drop_tokens;
mod edge_ngrams;
mod elision;
mod fold;
mod length_limit;
mod lowercase;
mod post_tokenizer;
mod spec;
mod stem;
mod stop_words;
pub mod token_shape;
mod whitespace_tokenizer;
mod word_tokenizer;

#[cfg(test)]
pub(crate) mod testutil;

pub use chain::{
    build_pipeline, AnalysisContext, Analyzer, FieldAnalyzer, FALLBACK_FIELD, PLAIN_FIELD,
};
pub use drop_tokens::{DropKind, DropTokens, DropTokensFilter, DropTokensStream};
pub use edge_ngrams::{EdgeNgrams, EdgeNgramsFilter, EdgeNgramsStream};
pub use elision::{Elision, ElisionFilter, ElisionStream, ELISION_LANGUAGES};
pub use fold::{Fold, FoldFilter, FoldStream};
pub use length_limit::{LengthLimit, LengthLimitFilter, LengthLimitStream};
pub use lowercase::{Lowercase, LowercaseFilter, LowercaseStream};
pub use post_tokenizer::{PostTokenStream, PostTokenizer};
pub use spec::{
    builtin_chains, parse_chains, read_chain_file, select_chains, Branch, ChainBody, ChainSpec,
    Pipeline, PostRouting, QueryRouting, RouteSpec, StepSpec, TagVocabulary, TokenizerKind,
    BUILTIN_CHAINS_TOML, DEFAULT_MIN_CONFIDENCE,
};
pub use stem::{stem_languages, Stem, StemFilter, StemGeneration, StemStream, STEM_CACHE_CAPACITY};
pub use stop_words::{stop_languages, StopWords};
pub use whitespace_tokenizer::{WhitespaceTokenStream, WhitespaceTokenizer};
pub use word_tokenizer::{WordTokenStream, WordTokenizer};
