//! The query set: CSV `query_id,text[,lang][,tags]`.

use std::path::Path;

use crate::error::Result;
use crate::ids::QueryId;
use crate::input::LangCode;

/// One query.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Query {
    /// Unique id.
    pub id: QueryId,
    /// The query text as a user would type it.
    pub text: String,
    /// Declared language, if any.
    pub lang: Option<LangCode>,
    /// Labels for breakdowns, in file order.
    pub tags: Vec<String>,
}

/// Read and validate a queries file.
pub fn read_queries(path: &Path) -> Result<Vec<Query>> {
    let _ = path;
    Err(crate::error::Error::usage("read_queries: not yet written"))
}
