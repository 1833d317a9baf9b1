//! The corpus of posts: JSON Lines or CSV with `id` and `text`.

use std::path::Path;

use crate::error::Result;
use crate::ids::PostId;
use crate::input::LangCode;

/// One post of the corpus.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Post {
    /// Unique id.
    pub id: PostId,
    /// The post's text.
    pub text: String,
    /// The language the post declares, if any.
    pub lang: Option<LangCode>,
}

/// Read and validate a corpus file.
pub fn read_corpus(path: &Path) -> Result<Vec<Post>> {
    let _ = path;
    Err(crate::error::Error::usage("read_corpus: not yet written"))
}
