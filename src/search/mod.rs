//! BM25 query execution. Fourth stage of the data flow: analyses each query
//! with the chain that analysed the posts, searches that chain's index and
//! returns a [`Run`] (ranked post ids per query) plus per-query latencies.
//!
//! A query becomes a disjunction (OR) of its distinct analysed terms, each a
//! BM25-scored term query on the field(s) the chain routes the query to: the
//! plainest query an engine builds from a search box, so differences between
//! chains come from analysis alone.
//!
//! Ranking is made deterministic: hits are ordered by score descending, equal
//! scores broken by post id in byte order, and when equal scores straddle the
//! `depth` cut-off more hits are fetched so the cut does not depend on how
//! documents were spread over segments.

use std::collections::BTreeSet;
use std::time::Instant;

use tantivy::collector::TopDocs;
use tantivy::columnar::Column;
use tantivy::query::{BooleanQuery, Occur, Query as TantivyQuery, TermQuery};
use tantivy::schema::{Field, IndexRecordOption};
use tantivy::tokenizer::TokenStream;
use tantivy::{DocAddress, Searcher, Term};

use crate::analysis::detect::Detection;
use crate::analysis::Analyzer;
use crate::error::{Error, Result};
use crate::ids::PostId;
use crate::index::{tantivy_err, ChainIndex, ORD_FIELD};
use crate::input::{Query, RankedDoc, Run};

/// One analysed query term and the field key it is searched in.
#[derive(Debug, Clone, PartialEq, Eq, PartialOrd, Ord)]
pub struct QueryTerm {
    /// The field key (`text`, `text_de`, …).
    pub field: String,
    /// The analysed term text.
    pub text: String,
}

/// The result of searching every query with one chain.
#[derive(Debug, Clone, Default)]
pub struct SearchOutcome {
    /// Ranked posts per query (queries with no hit are absent).
    pub run: Run,
    /// Milliseconds spent on each query (analysis + search + id lookup), in
    /// query order.
    pub latencies_ms: Vec<f64>,
}

/// The distinct analysed terms of `text` for the chain's fields `slots`,
/// sorted (field, term).
pub fn analyze_query(analyzer: &Analyzer, slots: &[usize], text: &str) -> Vec<QueryTerm> {
    let mut terms = BTreeSet::new();
    for &slot in slots {
        if let Some(fa) = analyzer.fields().get(slot) {
            let mut a = fa.analyzer.clone();
            let mut stream = a.token_stream(text);
            while stream.advance() {
                let t = &stream.token().text;
                if !t.is_empty() {
                    terms.insert(QueryTerm { field: fa.key.clone(), text: t.clone() });
                }
            }
        }
    }
    terms.into_iter().collect()
}

/// Build the tantivy query for analysed terms (OR of BM25 term queries).
pub fn build_query(
    analyzer: &Analyzer,
    fields: &[Field],
    terms: &[QueryTerm],
) -> Box<dyn TantivyQuery> {
    let clauses: Vec<(Occur, Box<dyn TantivyQuery>)> = terms
        .iter()
        .filter_map(|qt| {
            let slot = analyzer.fields().iter().position(|f| f.key == qt.field)?;
            let field = *fields.get(slot)?;
            let term = Term::from_field_text(field, &qt.text);
            let q: Box<dyn TantivyQuery> =
                Box::new(TermQuery::new(term, IndexRecordOption::WithFreqs));
            Some((Occur::Should, q))
        })
        .collect();
    Box::new(BooleanQuery::new(clauses))
}

/// Search every query with one chain. `query_detections[i]` is the detected
/// language of `queries[i]` (read only by routed chains; may be empty).
pub fn search_chain(
    index: &ChainIndex,
    analyzer: &Analyzer,
    queries: &[Query],
    query_detections: &[Option<Detection>],
    depth: usize,
) -> Result<SearchOutcome> {
    let searcher = index.reader().searcher();
    let columns = ord_columns(&searcher)?;
    let mut outcome = SearchOutcome::default();
    for (i, q) in queries.iter().enumerate() {
        let started = Instant::now();
        let detected = query_detections.get(i).and_then(Option::as_ref);
        let slots = analyzer.fields_for_query(q.lang, detected);
        let terms = analyze_query(analyzer, &slots, &q.text);
        let hits = if terms.is_empty() || depth == 0 {
            Vec::new()
        } else {
            let query = build_query(analyzer, index.fields(), &terms);
            top_hits(&searcher, &columns, index, query.as_ref(), depth)?
        };
        if !hits.is_empty() {
            outcome.run.by_query.insert(q.id.clone(), hits);
        }
        outcome.latencies_ms.push(started.elapsed().as_secs_f64() * 1000.0);
    }
    Ok(outcome)
}

fn ord_columns(searcher: &Searcher) -> Result<Vec<Column<u64>>> {
    searcher
        .segment_readers()
        .iter()
        .map(|seg| seg.fast_fields().u64(ORD_FIELD).map_err(tantivy_err))
        .collect()
}

/// Top `depth` hits ordered by (score desc, post id asc), with ties at the
/// cut-off resolved by fetching more.
fn top_hits(
    searcher: &Searcher,
    columns: &[Column<u64>],
    index: &ChainIndex,
    query: &dyn TantivyQuery,
    depth: usize,
) -> Result<Vec<RankedDoc>> {
    let num_docs = usize::try_from(searcher.num_docs()).unwrap_or(usize::MAX).max(1);
    let mut limit = depth.saturating_add(1).min(num_docs);
    let fetched = loop {
        let hits: Vec<(f32, DocAddress)> = searcher
            .search(query, &TopDocs::with_limit(limit).order_by_score())
            .map_err(tantivy_err)?;
        let straddles = hits.len() == limit
            && limit < num_docs
            && depth < hits.len()
            && depth.checked_sub(1).and_then(|d| hits.get(d)).map(|h| h.0)
                == hits.last().map(|h| h.0);
        if !straddles {
            break hits;
        }
        limit = limit.saturating_mul(2).min(num_docs);
    };
    let mut docs: Vec<(f32, &PostId)> = Vec::with_capacity(fetched.len());
    for (score, addr) in fetched {
        let ord = columns
            .get(addr.segment_ord as usize)
            .and_then(|c| c.first(addr.doc_id))
            .ok_or_else(|| Error::index("hit without a post ordinal"))?;
        let id = index.post_id(ord).ok_or_else(|| Error::index("post ordinal out of range"))?;
        docs.push((score, id));
    }
    docs.sort_by(|a, b| b.0.total_cmp(&a.0).then_with(|| a.1.cmp(b.1)));
    docs.truncate(depth);
    Ok(docs
        .into_iter()
        .map(|(s, id)| RankedDoc { doc: id.clone(), score: Some(f64::from(s)) })
        .collect())
}

/// Where one post stands for one query under one chain.
#[derive(Debug, Clone, PartialEq)]
pub struct PostMatch {
    /// 1-based rank among every post the query retrieves (ties by post id),
    /// `None` when the post is not retrieved at all.
    pub rank: Option<usize>,
    /// Its BM25 score.
    pub score: Option<f64>,
    /// tantivy's explanation of the score, as JSON.
    pub explanation: Option<serde_json::Value>,
}

/// Rank, score and tantivy's score explanation of `post` for the analysed
/// query `terms` (searching the whole index, not only the top `depth`).
pub fn explain_post(
    index: &ChainIndex,
    analyzer: &Analyzer,
    terms: &[QueryTerm],
    post: &PostId,
) -> Result<PostMatch> {
    let none = PostMatch { rank: None, score: None, explanation: None };
    if terms.is_empty() {
        return Ok(none);
    }
    let searcher = index.reader().searcher();
    let columns = ord_columns(&searcher)?;
    let query = build_query(analyzer, index.fields(), terms);
    let all = top_hits(&searcher, &columns, index, query.as_ref(), usize::MAX)?;
    let Some(pos) = all.iter().position(|d| &d.doc == post) else {
        return Ok(none);
    };
    let explanation = match doc_address(&columns, index, post) {
        Some(addr) => {
            let e = query.explain(&searcher, addr).map_err(tantivy_err)?;
            serde_json::to_value(&e).ok()
        }
        None => None,
    };
    Ok(PostMatch { rank: Some(pos + 1), score: all.get(pos).and_then(|d| d.score), explanation })
}

/// The address of a post in the index (a scan of the ordinal column; used
/// only to explain one post).
fn doc_address(columns: &[Column<u64>], index: &ChainIndex, post: &PostId) -> Option<DocAddress> {
    for (seg, col) in columns.iter().enumerate() {
        for doc in 0..col.num_docs() {
            if col.first(doc).and_then(|ord| index.post_id(ord)) == Some(post) {
                return Some(DocAddress::new(seg as u32, doc));
            }
        }
    }
    None
}

/// How one post's analysed terms meet a query's under one chain.
#[derive(Debug, Clone, PartialEq)]
pub struct TermMatch {
    /// The query's analysed terms on the fields the chain searches.
    pub query_terms: Vec<QueryTerm>,
    /// The field key the post is indexed in.
    pub post_field: String,
    /// The post's distinct analysed terms.
    pub post_terms: BTreeSet<String>,
    /// Query terms the post contains in its own field, in term order.
    pub matched: Vec<String>,
}

/// Analyse `query_text` and `post_text` with the chain, each routed as the
/// index routes it (`query_slots` from [`Analyzer::fields_for_query`],
/// `post_slot` from [`Analyzer::field_for_post`]), and say which query terms
/// the post contains.
pub fn match_terms(
    analyzer: &Analyzer,
    query_slots: &[usize],
    query_text: &str,
    post_slot: usize,
    post_text: &str,
) -> TermMatch {
    let post_field = analyzer.fields().get(post_slot).map(|f| f.key.clone()).unwrap_or_default();
    let post_terms: BTreeSet<String> =
        analyze_query(analyzer, &[post_slot], post_text).into_iter().map(|t| t.text).collect();
    let query_terms = analyze_query(analyzer, query_slots, query_text);
    let matched = query_terms
        .iter()
        .filter(|t| t.field == post_field && post_terms.contains(&t.text))
        .map(|t| t.text.clone())
        .collect();
    TermMatch { query_terms, post_field, post_terms, matched }
}
