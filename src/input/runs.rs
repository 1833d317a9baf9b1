//! Ranked runs: `query_id,doc_id,rank,score` CSV, read from files given to
//! `score` and written by `run` for every chain.

use std::collections::BTreeMap;
use std::path::Path;

use crate::error::Result;
use crate::ids::{PostId, QueryId};

/// One retrieved post with its engine score (informational only).
#[derive(Debug, Clone, PartialEq)]
pub struct RankedDoc {
    /// The retrieved post.
    pub doc: PostId,
    /// The engine's score; finite.
    pub score: f64,
}

/// A system's ranked results: for each query, posts in final rank order
/// (rank ascending, equal ranks broken by doc id in byte order already
/// applied). A query absent from the map retrieved nothing.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Run {
    /// Ranked posts per query.
    pub by_query: BTreeMap<QueryId, Vec<RankedDoc>>,
}

/// Read and validate a run file.
pub fn read_run(path: &Path) -> Result<Run> {
    let _ = path;
    Err(crate::error::Error::usage("read_run: not yet written"))
}

/// Write a run in the run layout (ranks 1..n in list order).
pub fn write_run<W: std::io::Write>(run: &Run, out: W) -> Result<()> {
    let _ = (run, out);
    Ok(())
}
