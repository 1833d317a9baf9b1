//! Why one chain finds a post and another does not: for one query and one
//! post, each chain's analysed query terms, the post's analysed terms, the
//! terms they share, the post's rank and score, and the score taken apart:
//! each searched field's BM25 score as the sum of its matched terms' shares.

use std::path::PathBuf;

use serde::Serialize;

use crate::analysis::ChainSpec;
use crate::error::{Error, Result};
use crate::ids::{ChainName, PostId, QueryId};
use crate::index::ChainIndex;
use crate::input::{self, Post, Query};
use crate::search::{self, QueryTerm};

/// What `postassay explain` does.
#[derive(Debug, Clone)]
pub struct ExplainPlan {
    /// Corpus file.
    pub corpus: PathBuf,
    /// Queries file.
    pub queries: PathBuf,
    /// Judgments file, to show the post's grade (optional).
    pub judgments: Option<PathBuf>,
    /// Chains to explain, in order.
    pub chains: Vec<ChainSpec>,
    /// The query.
    pub query: QueryId,
    /// The post.
    pub post: PostId,
}

/// The explanation for one chain.
#[derive(Debug, Clone, Serialize)]
pub struct ChainExplanation {
    /// Chain name.
    pub chain: ChainName,
    /// The query's analysed terms, `field:term`.
    pub query_terms: Vec<String>,
    /// The field the post was indexed in.
    pub post_field: String,
    /// The post's distinct analysed terms.
    pub post_terms: Vec<String>,
    /// Query terms the post contains (in the post's field).
    pub matched_terms: Vec<String>,
    /// Rank of the post among everything the query retrieves.
    pub rank: Option<usize>,
    /// The post's score: BM25, or the fused score when the chain searches
    /// several fields.
    pub score: Option<f64>,
    /// Whether `score` fuses several fields' rankings (reciprocal rank
    /// fusion, `k` = [`search::FUSION_K`]).
    pub fused: bool,
    /// Each searched field the post is indexed in: its rank and BM25 score
    /// there and each matched term's share of that score.
    pub fields: Vec<search::FieldStanding>,
}

/// The whole explanation.
#[derive(Debug, Clone, Serialize)]
pub struct Explanation {
    /// Query id.
    pub query_id: QueryId,
    /// Query text.
    pub query_text: String,
    /// Post id.
    pub post_id: PostId,
    /// Post text.
    pub post_text: String,
    /// The post's grade for the query, when judged.
    pub grade: Option<u32>,
    /// One entry per chain.
    pub chains: Vec<ChainExplanation>,
}

/// Build each chain's index and explain the post's standing for the query.
pub fn explain(plan: &ExplainPlan) -> Result<Explanation> {
    let queries = input::read_queries(&plan.queries)?;
    let posts = input::read_corpus(&plan.corpus)?;
    let grade = match &plan.judgments {
        Some(j) => {
            let (judgments, _) = input::read_judgments(j)?;
            judgments.for_query(&plan.query).and_then(|m| m.get(&plan.post)).copied()
        }
        None => None,
    };
    let query = find_query(&queries, &plan.query, plan)?;
    let post_pos = find_post(&posts, &plan.post, plan)?;
    let post = &posts[post_pos];
    let analyzers = super::build_analyzers(&plan.chains, &posts)?;
    // Detect as `run` does: once per detector setting, through the cache.
    let cache = super::detect_cache::cache_root_from_env()
        .map(|root| super::detect_cache::DetectCache::new(root.join("detections")));
    let threads = std::thread::available_parallelism().map_or(1, std::num::NonZeroUsize::get);
    let detections = super::Detections::compute(
        &analyzers,
        &posts,
        std::slice::from_ref(query),
        cache.as_ref(),
        threads,
        &crate::progress::Progress::quiet(),
    );
    let mut chains = Vec::new();
    for analyzer in &analyzers {
        let (post_det, query_det) = detections.for_analyzer(analyzer);
        let index = ChainIndex::build(analyzer, &posts, post_det)?;
        let slots =
            analyzer.fields_for_query(query.lang, query_det.first().and_then(Option::as_ref));
        let tm = search::match_terms(
            analyzer,
            &slots,
            &query.text,
            analyzer.field_for_post(post.lang, post_det.get(post_pos).and_then(Option::as_ref)),
            &post.text,
        );
        let terms = tm.query_terms;
        let m = search::explain_post(&index, analyzer, &slots, &terms, &post.id)?;
        chains.push(ChainExplanation {
            chain: analyzer.name().clone(),
            query_terms: terms
                .iter()
                .map(|t: &QueryTerm| format!("{}:{}", t.field, t.text))
                .collect(),
            post_field: tm.post_field,
            post_terms: tm.post_terms.into_iter().collect(),
            matched_terms: tm.matched,
            rank: m.rank,
            score: m.score,
            fused: slots.len() > 1,
            fields: m.fields,
        });
    }
    Ok(Explanation {
        query_id: query.id.clone(),
        query_text: query.text.clone(),
        post_id: post.id.clone(),
        post_text: post.text.clone(),
        grade,
        chains,
    })
}

fn find_query<'a>(queries: &'a [Query], id: &QueryId, plan: &ExplainPlan) -> Result<&'a Query> {
    queries.iter().find(|q| &q.id == id).ok_or_else(|| {
        Error::usage(format!("--query {id}: no such query in {}", plan.queries.display()))
    })
}

fn find_post(posts: &[Post], id: &PostId, plan: &ExplainPlan) -> Result<usize> {
    posts.iter().position(|p| &p.id == id).ok_or_else(|| {
        Error::usage(format!("--doc {id}: no such post in {}", plan.corpus.display()))
    })
}
