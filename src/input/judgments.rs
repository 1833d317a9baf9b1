//! Graded relevance judgments: `query_id,doc_id,grade` CSV or the
//! whitespace-separated four-column layout of public test collections.

use std::collections::BTreeMap;
use std::path::Path;

use crate::error::Result;
use crate::ids::{PostId, QueryId};

/// Graded judgments, by query then post. Grades are non-negative integers.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct Judgments {
    by_query: BTreeMap<QueryId, BTreeMap<PostId, u32>>,
    count: usize,
}

impl Judgments {
    /// Build judgments from `(query, post, grade)` triples; a later triple for
    /// the same pair replaces an earlier one (readers reject conflicts before
    /// calling this).
    pub fn from_triples<I, Q, P>(triples: I) -> Judgments
    where
        I: IntoIterator<Item = (Q, P, u32)>,
        Q: Into<QueryId>,
        P: Into<PostId>,
    {
        let mut by_query: BTreeMap<QueryId, BTreeMap<PostId, u32>> = BTreeMap::new();
        for (q, p, g) in triples {
            by_query.entry(q.into()).or_default().insert(p.into(), g);
        }
        let count = by_query.values().map(BTreeMap::len).sum();
        Judgments { by_query, count }
    }

    /// The judged posts of one query with their grades, if the query is judged.
    pub fn for_query(&self, query: &QueryId) -> Option<&BTreeMap<PostId, u32>> {
        self.by_query.get(query)
    }

    /// Judged queries in byte order of their ids.
    pub fn queries(&self) -> impl Iterator<Item = (&QueryId, &BTreeMap<PostId, u32>)> {
        self.by_query.iter()
    }

    /// Number of judged (query, post) pairs.
    pub fn len(&self) -> usize {
        self.count
    }

    /// True when there is no judgment at all.
    pub fn is_empty(&self) -> bool {
        self.count == 0
    }

    /// The highest grade in the whole file (0 when empty); ERR's default gmax.
    pub fn max_grade(&self) -> u32 {
        self.by_query.values().flat_map(|m| m.values().copied()).max().unwrap_or(0)
    }
}

/// Read a judgments file; returns the judgments and warnings (duplicate pairs
/// with the same grade).
pub fn read_judgments(path: &Path) -> Result<(Judgments, Vec<String>)> {
    let _ = path;
    Err(crate::error::Error::usage("read_judgments: not yet written"))
}
