//! BM25 query execution. Fourth stage of the data flow: analyses each query
//! with the chain that analysed the posts, searches that chain's index and
//! returns a [`Run`] (ranked post ids per query) plus per-query latencies.
//!
//! A query becomes a disjunction (OR) of its distinct analysed terms, each a
//! BM25-scored term query on the field the chain routes the query to: the
//! plainest query an engine builds from a search box, so differences between
//! chains come from analysis alone. Each field is scored with its own BM25
//! statistics (the posts indexed in it, their mean length, the field's
//! document frequencies), so a routed chain's language field ranks exactly
//! as a separate index of that language's posts would. When a routed chain
//! searches several fields, each is searched on its own and the rankings
//! are fused by the chain's [`Fusion`] rule (reciprocal rank, or normalised
//! scores): raw BM25 scores of fields with
//! different statistics are not comparable, so they are never added.
//!
//! Ranking is made deterministic: hits are ordered by score descending, equal
//! scores broken by post id in byte order, and when equal scores straddle the
//! `depth` cut-off more hits are fetched so the cut does not depend on how
//! documents were spread over segments.

use std::collections::BTreeSet;
use std::time::Instant;

use serde::Serialize;
use tantivy::collector::TopDocs;
use tantivy::columnar::Column;
use tantivy::postings::Postings;
use tantivy::query::{BooleanQuery, Occur, Query as TantivyQuery, TermQuery};
use tantivy::schema::{Field, IndexRecordOption};
use tantivy::tokenizer::TokenStream;
use tantivy::{DocAddress, DocSet, Searcher, Term};

use crate::analysis::detect::Detection;
use crate::analysis::{Analyzer, Fusion};
use crate::error::{Error, Result};
use crate::ids::PostId;
use crate::index::{tantivy_err, ChainIndex, FieldStatistics, ORD_FIELD};
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

/// Reciprocal rank fusion's constant `k`: a post at rank `r` of one field's
/// ranking contributes `1 / (k + r)` to its fused score. 60 is the value
/// Cormack, Clarke & Büttcher ("Reciprocal Rank Fusion outperforms
/// Condorcet and individual rank learning methods", SIGIR 2009) used for
/// every run of their study.
pub const FUSION_K: f64 = 60.0;

/// The tantivy query of analysed terms on one field: an OR of BM25 term
/// queries.
fn field_query(field: Field, terms: &[&QueryTerm]) -> BooleanQuery {
    let clauses: Vec<(Occur, Box<dyn TantivyQuery>)> = terms
        .iter()
        .map(|qt| {
            let term = Term::from_field_text(field, &qt.text);
            let q: Box<dyn TantivyQuery> =
                Box::new(TermQuery::new(term, IndexRecordOption::WithFreqs));
            (Occur::Should, q)
        })
        .collect();
    BooleanQuery::new(clauses)
}

/// The query terms of one field.
fn terms_of<'t>(analyzer: &Analyzer, slot: usize, terms: &'t [QueryTerm]) -> Vec<&'t QueryTerm> {
    match analyzer.fields().get(slot) {
        Some(fa) => terms.iter().filter(|t| t.field == fa.key).collect(),
        None => Vec::new(),
    }
}

/// What one query needs from one chain's index to be ranked.
struct Ranker<'a> {
    searcher: &'a Searcher,
    columns: &'a [Column<u64>],
    index: &'a ChainIndex,
    analyzer: &'a Analyzer,
}

impl Ranker<'_> {
    /// The BM25 ranking of `terms` in the field at `slot`, with that field's
    /// own statistics ([`crate::index::FieldStatistics`]), top `depth`.
    fn field_ranking(
        &self,
        slot: usize,
        terms: &[QueryTerm],
        depth: usize,
    ) -> Result<Vec<RankedDoc>> {
        let field_terms = terms_of(self.analyzer, slot, terms);
        let Some(stats) = self.index.statistics(self.searcher, slot) else {
            return Ok(Vec::new());
        };
        if field_terms.is_empty() || stats.posts() == 0 || depth == 0 {
            return Ok(Vec::new());
        }
        let query = field_query(stats.field(), &field_terms);
        top_hits(self.searcher, self.columns, self.index, &query, &stats, depth)
    }

    /// The most BM25 score the field at `slot` could give `terms`: the sum
    /// of each term's `rarity × (k1 + 1)` (a post holding every term
    /// infinitely often). 0 without terms or posts.
    fn field_ceiling(&self, slot: usize, terms: &[QueryTerm]) -> Result<f64> {
        let Some(stats) = self.index.statistics(self.searcher, slot) else { return Ok(0.0) };
        let mut ceiling = 0.0;
        for qt in terms_of(self.analyzer, slot, terms) {
            let with = stats.posts_with(&Term::from_field_text(stats.field(), &qt.text))?;
            ceiling += bm25_rarity(with, stats.posts()) * (BM25_K1 + 1.0);
        }
        Ok(ceiling)
    }

    /// What a post at `rank` (0-based) with BM25 `score` in a field whose
    /// ceiling is `ceiling` adds to the fused score: `1 / (FUSION_K + rank +
    /// 1)`, or the score over the ceiling ([`Fusion`]).
    fn fused_part(&self, fusion: Fusion, rank: usize, score: f64, ceiling: f64) -> f64 {
        match fusion {
            Fusion::ReciprocalRank => 1.0 / (FUSION_K + (rank + 1) as f64),
            Fusion::NormalisedScore if ceiling > 0.0 => score / ceiling,
            Fusion::NormalisedScore => 0.0,
        }
    }

    /// The chain's fusion rule (reciprocal rank for a plain chain, which
    /// never fuses).
    fn fusion(&self) -> Fusion {
        self.analyzer.spec().route().map_or(Fusion::ReciprocalRank, |r| r.fusion)
    }

    /// The ranking of `terms` over the fields `slots`: one field's BM25
    /// ranking, or the fusion of several fields' rankings (each cut at
    /// `depth`) by the chain's [`Fusion`] rule; ties by post id.
    fn ranking(
        &self,
        slots: &[usize],
        terms: &[QueryTerm],
        depth: usize,
    ) -> Result<Vec<RankedDoc>> {
        if let [slot] = slots {
            return self.field_ranking(*slot, terms, depth);
        }
        let fusion = self.fusion();
        let mut fused: std::collections::BTreeMap<PostId, f64> = Default::default();
        for &slot in slots {
            let ranking = self.field_ranking(slot, terms, depth)?;
            let ceiling = match fusion {
                Fusion::NormalisedScore if !ranking.is_empty() => {
                    self.field_ceiling(slot, terms)?
                }
                _ => 0.0,
            };
            for (rank, doc) in ranking.into_iter().enumerate() {
                *fused.entry(doc.doc).or_default() +=
                    self.fused_part(fusion, rank, doc.score.unwrap_or(0.0), ceiling);
            }
        }
        let mut docs: Vec<RankedDoc> =
            fused.into_iter().map(|(doc, score)| RankedDoc { doc, score: Some(score) }).collect();
        let key = |d: &RankedDoc| d.score.unwrap_or(0.0);
        docs.sort_by(|a, b| key(b).total_cmp(&key(a)).then_with(|| a.doc.cmp(&b.doc)));
        docs.truncate(depth);
        Ok(docs)
    }
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
    search_chain_ticking(index, analyzer, queries, query_detections, depth, &|_| {})
}

/// [`search_chain`], telling `tick(n)` of every `n` queries run.
pub fn search_chain_ticking(
    index: &ChainIndex,
    analyzer: &Analyzer,
    queries: &[Query],
    query_detections: &[Option<Detection>],
    depth: usize,
    tick: &dyn Fn(u64),
) -> Result<SearchOutcome> {
    /// Queries between two ticks.
    const TICK: u64 = 64;
    let searcher = index.reader().searcher();
    let columns = ord_columns(&searcher)?;
    let ranker = Ranker { searcher: &searcher, columns: &columns, index, analyzer };
    let mut outcome = SearchOutcome::default();
    for (i, q) in queries.iter().enumerate() {
        let started = Instant::now();
        let detected = query_detections.get(i).and_then(Option::as_ref);
        let slots = analyzer.fields_for_query(q.lang, detected);
        let terms = analyze_query(analyzer, &slots, &q.text);
        let hits = ranker.ranking(&slots, &terms, depth)?;
        if !hits.is_empty() {
            outcome.run.by_query.insert(q.id.clone(), hits);
        }
        outcome.latencies_ms.push(started.elapsed().as_secs_f64() * 1000.0);
        if (i as u64 + 1).is_multiple_of(TICK) {
            tick(TICK);
        }
    }
    tick(queries.len() as u64 % TICK);
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
/// cut-off resolved by fetching more; BM25 with `stats`.
fn top_hits(
    searcher: &Searcher,
    columns: &[Column<u64>],
    index: &ChainIndex,
    query: &dyn TantivyQuery,
    stats: &FieldStatistics<'_>,
    depth: usize,
) -> Result<Vec<RankedDoc>> {
    let num_docs = usize::try_from(searcher.num_docs()).unwrap_or(usize::MAX).max(1);
    let mut limit = depth.saturating_add(1).min(num_docs);
    let fetched = loop {
        let hits: Vec<(f32, DocAddress)> = searcher
            .search_with_statistics_provider(
                query,
                &TopDocs::with_limit(limit).order_by_score(),
                stats,
            )
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

/// BM25's term-frequency saturation `k1`, as tantivy scores (its documented
/// constants; from memory).
pub const BM25_K1: f64 = 1.2;
/// BM25's length normalisation `b`, as tantivy scores.
pub const BM25_B: f64 = 0.75;

/// One matched query term's share of a post's BM25 score in one field:
/// `rarity × (k1 + 1) × occurrences / (occurrences + k1 × (1 − b + b ×
/// length / mean_length))`, with `rarity = ln(1 + (posts − posts_with_term
/// + 0.5) / (posts_with_term + 0.5))` (BM25 as in Robertson & Zaragoza,
/// "The Probabilistic Relevance Framework: BM25 and Beyond", 2009, with the
/// `1 +` inside the logarithm that keeps rarity positive).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TermShare {
    /// The analysed term.
    pub term: String,
    /// Its part of the score.
    pub share: f64,
    /// Rarity (inverse document frequency) of the term in the field.
    pub rarity: f64,
    /// Posts of the field that contain the term.
    pub posts_with_term: u64,
    /// Posts in the field (a routed chain's language field counts only its
    /// own posts).
    pub posts: u64,
    /// How often the post holds the term.
    pub occurrences: u32,
    /// The post's length in the field, in tokens, as the index stores it
    /// (lengths above 40 are kept to about 1 part in 8).
    pub length: u32,
    /// Mean length of the field's posts, in tokens.
    pub mean_length: f64,
}

/// One searched field's part of a post's standing.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FieldStanding {
    /// The field key.
    pub field: String,
    /// The post's rank in this field's own ranking.
    pub rank: Option<usize>,
    /// The post's BM25 score in this field, as the engine computed it.
    pub bm25: Option<f64>,
    /// With fused fields: this field's part of the fused score
    /// (`1 / (FUSION_K + rank)`, or the BM25 score over the field's
    /// ceiling; see [`Fusion`]).
    pub fused_share: Option<f64>,
    /// The matched terms' shares, largest first (they add up to `bm25`).
    pub terms: Vec<TermShare>,
}

/// Where one post stands for one query under one chain.
#[derive(Debug, Clone, PartialEq)]
pub struct PostMatch {
    /// 1-based rank among every post the query retrieves (ties by post id),
    /// `None` when the post is not retrieved at all.
    pub rank: Option<usize>,
    /// Its score: BM25, or the fused score when several fields are searched.
    pub score: Option<f64>,
    /// Each searched field the post is indexed in, in search order.
    pub fields: Vec<FieldStanding>,
}

/// Rank and score of `post` for the analysed query `terms` over the fields
/// `slots` (searching the whole index, not only the top `depth`), and the
/// breakdown of its BM25 score in each searched field it is indexed in.
pub fn explain_post(
    index: &ChainIndex,
    analyzer: &Analyzer,
    slots: &[usize],
    terms: &[QueryTerm],
    post: &PostId,
) -> Result<PostMatch> {
    let searcher = index.reader().searcher();
    let columns = ord_columns(&searcher)?;
    let ranker = Ranker { searcher: &searcher, columns: &columns, index, analyzer };
    let all = ranker.ranking(slots, terms, usize::MAX)?;
    let pos = all.iter().position(|d| &d.doc == post);
    let addr = doc_address(&columns, index, post);
    let mut fields = Vec::new();
    for &slot in slots {
        let (Some(addr), Some(fa), Some(stats)) =
            (addr, analyzer.fields().get(slot), index.statistics(&searcher, slot))
        else {
            continue;
        };
        let seg = searcher.segment_reader(addr.segment_ord);
        let length = seg.get_fieldnorms_reader(stats.field()).map_err(tantivy_err)?;
        let length = length.fieldnorm(addr.doc_id);
        let ranking = ranker.field_ranking(slot, terms, usize::MAX)?;
        let rank = ranking.iter().position(|d| &d.doc == post);
        if length == 0 && rank.is_none() {
            continue; // the post is not in this field
        }
        let mean_length = if stats.posts() == 0 {
            0.0
        } else {
            stats.total_tokens()? as f64 / stats.posts() as f64
        };
        let inverted = seg.inverted_index(stats.field()).map_err(tantivy_err)?;
        let mut shares = Vec::new();
        for qt in terms_of(analyzer, slot, terms) {
            let term = Term::from_field_text(stats.field(), &qt.text);
            let postings = inverted
                .read_postings(&term, IndexRecordOption::WithFreqs)
                .map_err(|e| Error::index(format!("postings of {:?}: {e}", qt.text)))?;
            let Some(mut postings) = postings else { continue };
            if postings.seek(addr.doc_id) != addr.doc_id {
                continue;
            }
            let occurrences = postings.term_freq();
            let posts_with_term = stats.posts_with(&term)?;
            let rarity = bm25_rarity(posts_with_term, stats.posts());
            let tf = f64::from(occurrences);
            let norm = BM25_K1 * (1.0 - BM25_B + BM25_B * f64::from(length) / mean_length);
            shares.push(TermShare {
                term: qt.text.clone(),
                share: rarity * (BM25_K1 + 1.0) * tf / (tf + norm),
                rarity,
                posts_with_term,
                posts: stats.posts(),
                occurrences,
                length,
                mean_length,
            });
        }
        shares.sort_by(|a, b| b.share.total_cmp(&a.share).then_with(|| a.term.cmp(&b.term)));
        fields.push(FieldStanding {
            field: fa.key.clone(),
            rank: rank.map(|r| r + 1),
            bm25: rank.and_then(|r| ranking.get(r)).and_then(|d| d.score),
            fused_share: match (slots.len() > 1, rank, ranking.get(rank.unwrap_or(usize::MAX))) {
                (true, Some(r), Some(d)) => Some(ranker.fused_part(
                    ranker.fusion(),
                    r,
                    d.score.unwrap_or(0.0),
                    ranker.field_ceiling(slot, terms)?,
                )),
                _ => None,
            },
            terms: shares,
        });
    }
    Ok(PostMatch {
        rank: pos.map(|p| p + 1),
        score: pos.and_then(|p| all.get(p)).and_then(|d| d.score),
        fields,
    })
}

/// BM25's rarity (inverse document frequency) of a term held by `with` of
/// `posts` posts: `ln(1 + (posts − with + 0.5) / (with + 0.5))`.
pub fn bm25_rarity(with: u64, posts: u64) -> f64 {
    let (with, posts) = (with as f64, posts as f64);
    (1.0 + (posts - with + 0.5) / (with + 0.5)).ln()
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
