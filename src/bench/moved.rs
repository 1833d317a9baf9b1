//! The queries that moved most: for each chain against the baseline, the few
//! queries whose headline metric gained or lost most, each with one example
//! post — a relevant post whose rank changed in the same direction — its rank
//! under both chains and the query terms it matched under each. This is the
//! "see an example of why" of the report; `postassay explain` shows the full
//! detail for any pair.

use std::collections::BTreeMap;

use crate::analysis::detect::Detection;
use crate::analysis::Analyzer;
use crate::ids::{PostId, QueryId};
use crate::input::{Judgments, Post, Query, Run};
use crate::search;

pub use crate::report::model::MovedQuery;

/// Queries shown per chain and direction (gains, losses).
pub const MOVED_PER_SIDE: usize = 3;

/// A chain as it ran: its analyzer, run and the language detections it used.
pub struct ChainRun<'a> {
    /// The built chain.
    pub analyzer: &'a Analyzer,
    /// Its ranked results.
    pub run: &'a Run,
    /// Detected language per post (empty for unrouted chains).
    pub post_detections: &'a [Option<Detection>],
    /// Detected language per query (empty for unrouted chains).
    pub query_detections: &'a [Option<Detection>],
}

/// Everything the example search reads.
pub struct MovedInputs<'a> {
    /// Chains in report order.
    pub chains: Vec<ChainRun<'a>>,
    /// Index of the baseline in `chains`.
    pub baseline: usize,
    /// Headline metric value per chain, per evaluated query.
    pub headline: Vec<BTreeMap<QueryId, f64>>,
    /// The queries.
    pub queries: &'a [Query],
    /// The posts.
    pub posts: &'a [Post],
    /// The judgments.
    pub judgments: &'a Judgments,
    /// Relevance threshold.
    pub relevant_from: u32,
    /// Leave post texts out.
    pub redact: bool,
}

/// Pick the queries that moved most for every non-baseline chain.
pub fn moved_queries(inputs: &MovedInputs<'_>) -> Vec<MovedQuery> {
    let Some(base) = inputs.chains.get(inputs.baseline) else { return Vec::new() };
    let Some(base_values) = inputs.headline.get(inputs.baseline) else { return Vec::new() };
    let query_pos: BTreeMap<&QueryId, usize> =
        inputs.queries.iter().enumerate().map(|(i, q)| (&q.id, i)).collect();
    let mut out = Vec::new();
    for (ci, chain) in inputs.chains.iter().enumerate() {
        if ci == inputs.baseline {
            continue;
        }
        let Some(values) = inputs.headline.get(ci) else { continue };
        let mut deltas: Vec<(f64, &QueryId)> = values
            .iter()
            .filter_map(|(q, v)| base_values.get(q).map(|b| (v - b, q)))
            .filter(|(d, _)| d.abs() > 1e-12)
            .collect();
        deltas.sort_by(|a, b| b.0.total_cmp(&a.0).then_with(|| a.1.cmp(b.1)));
        let gains = deltas.iter().filter(|d| d.0 > 0.0).take(MOVED_PER_SIDE);
        let losses = deltas.iter().rev().filter(|d| d.0 < 0.0).take(MOVED_PER_SIDE);
        for &(delta, qid) in gains.chain(losses) {
            let Some((qi, query)) =
                query_pos.get(qid).and_then(|&i| inputs.queries.get(i).map(|q| (i, q)))
            else {
                continue;
            };
            let mut m = MovedQuery {
                system: chain.analyzer.name().clone(),
                query_id: qid.clone(),
                query_text: query.text.clone(),
                delta,
                post_id: None,
                post_text: None,
                grade: None,
                rank_baseline: None,
                rank_system: None,
                matched_baseline: Vec::new(),
                matched_system: Vec::new(),
            };
            if let Some((pi, grade, rb, rs)) = example_post(inputs, base, chain, qid, delta) {
                let post = &inputs.posts[pi];
                m.matched_baseline = matched(base, query, qi, post, pi);
                m.matched_system = matched(chain, query, qi, post, pi);
                m.post_text = (!inputs.redact).then(|| post.text.clone());
                m.post_id = Some(post.id.clone());
                m.grade = Some(grade);
                m.rank_baseline = rb;
                m.rank_system = rs;
            }
            out.push(m);
        }
    }
    out
}

/// A relevant post whose rank moved, as a candidate example.
struct Candidate<'a> {
    grade: u32,
    moved: usize,
    post: &'a PostId,
    rank_baseline: Option<usize>,
    rank_system: Option<usize>,
}

/// The relevant post whose rank moved most in the direction of `delta`
/// (highest grade first, then the largest move, then the smallest post id),
/// as its index in `inputs.posts` with its grade and both ranks.
fn example_post<'a>(
    inputs: &MovedInputs<'a>,
    base: &ChainRun<'_>,
    chain: &ChainRun<'_>,
    query: &QueryId,
    delta: f64,
) -> Option<(usize, u32, Option<usize>, Option<usize>)> {
    let judged = inputs.judgments.for_query(query)?;
    let rank = |run: &Run, post: &PostId| {
        run.by_query
            .get(query)
            .and_then(|docs| docs.iter().position(|d| &d.doc == post))
            .map(|r| r + 1)
    };
    // Not retrieved counts as farther than any rank.
    let far = usize::MAX / 2;
    let mut best: Option<Candidate<'_>> = None;
    for (post, &grade) in judged {
        if grade < inputs.relevant_from {
            continue;
        }
        let (rank_baseline, rank_system) = (rank(base.run, post), rank(chain.run, post));
        let (b, s) = (rank_baseline.unwrap_or(far), rank_system.unwrap_or(far));
        let moved = if delta > 0.0 { b.saturating_sub(s) } else { s.saturating_sub(b) };
        if moved == 0 {
            continue;
        }
        let better = best.as_ref().is_none_or(|c| {
            (grade, moved, std::cmp::Reverse(post)) > (c.grade, c.moved, std::cmp::Reverse(c.post))
        });
        if better {
            best = Some(Candidate { grade, moved, post, rank_baseline, rank_system });
        }
    }
    let c = best?;
    let pi = inputs.posts.iter().position(|p| &p.id == c.post)?;
    Some((pi, c.grade, c.rank_baseline, c.rank_system))
}

/// Query terms of `chain` that the post contains in the field it is indexed in.
fn matched(chain: &ChainRun<'_>, query: &Query, qi: usize, post: &Post, pi: usize) -> Vec<String> {
    let a = chain.analyzer;
    let qdet = chain.query_detections.get(qi).and_then(Option::as_ref);
    let pdet = chain.post_detections.get(pi).and_then(Option::as_ref);
    search::match_terms(
        a,
        &a.fields_for_query(query.lang, qdet),
        &query.text,
        a.field_for_post(post.lang, pdet),
        &post.text,
    )
    .matched
}
