//! Analysis chains: tokenizers and token filters (tantivy traits), chains
//! built from data, hashtag segmentation and language detection.
//! Second stage of the data flow (after `input`).

pub mod detect;
pub mod hashtag;
