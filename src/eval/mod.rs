//! Per-query IR metrics (spec: metrics.md), the eval stage of the data flow:
//! input → analysis → index → search → **eval** → stats → report.
//!
//! [`evaluate`] scores one system's [`Run`] against the [`Judgments`]: for
//! every evaluated query it turns the ranked posts into their grades (in the
//! run's order, whose ties the run reader already broke by doc id) and calls
//! one pure function per metric family. Those functions take
//!
//! * `ranked: &[Option<u32>]`, the grade of the post at each rank (index 0
//!   is rank 1), `None` when the post is unjudged for the query (it scores
//!   as grade 0 and is counted by `unjudged@k`);
//! * what they need of the query's judgments: R and N for the threshold t,
//!   or all judged grades for nDCG's ideal ranking;
//! * their parameters (k, t, gain, gmax).
//!
//! Which queries count: a judged query with R ≥ 1 is evaluated; one with
//! R = 0 is skipped ([`query_population`]). An evaluated query the run has
//! nothing for scores 0 on every metric; a query of the run that has no
//! judgments is ignored with a warning.
//!
//! ```
//! use postassay::eval::{evaluate, parse_metric_list, query_population, EvalSettings};
//! use postassay::input::{Judgments, RankedDoc, Run};
//!
//! let judgments = Judgments::from_triples([("q1", "d1", 2), ("q1", "d2", 0)]);
//! let mut run = Run::default();
//! run.by_query.insert(
//!     "q1".into(),
//!     vec![RankedDoc { doc: "d2".into(), score: Some(2.0) }, RankedDoc { doc: "d1".into(), score: Some(1.0) }],
//! );
//! let settings = EvalSettings::default();
//! let population = query_population(&judgments, &settings);
//! let metrics = parse_metric_list("p@1,mrr").unwrap();
//! let scores = evaluate(&run, &judgments, &population, &metrics, &settings).unwrap();
//! assert_eq!(scores.mean(0), 0.0); // p@1: d2 is not relevant
//! assert_eq!(scores.mean(1), 0.5); // mrr: first relevant at rank 2
//! ```
//!
//! This module never touches the search engine: it sees ids and grades only.

mod bpref;
mod err;
mod map;
mod metric;
mod mrr;
mod ndcg;
mod precision;
mod unjudged;

use std::collections::{BTreeMap, BTreeSet};

pub use bpref::bpref;
pub use err::err_at;
pub use map::average_precision;
pub use metric::{metrics_help, parse_metric_list, Metric, MetricKind, DEFAULT_METRICS};
pub use mrr::reciprocal_rank;
pub use ndcg::{ndcg_at, Gain};
pub use precision::{precision_at, recall_at};
pub use unjudged::unjudged_at;

use crate::error::{Error, Result, MAX_LISTED_PROBLEMS};
use crate::ids::QueryId;
use crate::input::{Judgments, Run};

/// Settings that change how rankings are scored (`--relevant-from`,
/// `--gain`, `--max-grade`).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct EvalSettings {
    /// The relevance threshold t: a grade ≥ t is relevant for `map`, `p@k`,
    /// `recall@k`, `mrr` and `bpref`, and decides which queries are
    /// evaluated. Must be ≥ 1. Default 1.
    pub relevant_from: u32,
    /// The gain of nDCG. Default [`Gain::Exponential`].
    pub gain: Gain,
    /// ERR's gmax. Default `None`: the highest grade of the whole judgments.
    pub max_grade: Option<u32>,
}

impl Default for EvalSettings {
    fn default() -> EvalSettings {
        EvalSettings { relevant_from: 1, gain: Gain::Exponential, max_grade: None }
    }
}

impl EvalSettings {
    /// ERR's gmax for these judgments: `max_grade`, else the highest grade
    /// of the whole file.
    pub fn err_gmax(&self, judgments: &Judgments) -> u32 {
        self.max_grade.unwrap_or_else(|| judgments.max_grade())
    }
}

/// Check settings against the judgments: a threshold of 0 is a usage error,
/// and so is a `max_grade` below a grade that occurs (the message names both
/// grades and where the higher one occurs). So is a threshold that no grade
/// can reach (above `max_grade`, or above the highest grade of the
/// judgments): no post would be relevant and no query evaluated, and a
/// report on no query would look like an answer.
pub fn validate_settings(judgments: &Judgments, settings: &EvalSettings) -> Result<()> {
    let t = settings.relevant_from;
    if t == 0 {
        return Err(Error::usage("--relevant-from must be an integer >= 1, found 0"));
    }
    if let Some(max) = settings.max_grade.filter(|max| t > *max) {
        return Err(Error::usage(format!(
            "--relevant-from {t} is above --max-grade {max}: no grade of the scale would count \
             as relevant; give a grade from 1 to {max}"
        )));
    }
    let highest = judgments.max_grade();
    if let Some(max) = settings.max_grade {
        if highest > max {
            // Name the first (query, post) in byte order that has the highest grade.
            let place = judgments
                .queries()
                .flat_map(|(q, posts)| posts.iter().map(move |(p, g)| (q, p, *g)))
                .find(|(_, _, g)| *g == highest)
                .map(|(q, p, _)| format!(", which the judgments give to post {p} for query {q}"))
                .unwrap_or_default();
            return Err(Error::usage(format!("--max-grade {max} is below grade {highest}{place}")));
        }
    }
    if t > highest {
        return Err(Error::usage(if highest == 0 {
            "the judgments hold no grade above 0: no post is relevant to any query, so nothing \
             can be evaluated"
                .to_string()
        } else {
            format!(
                "--relevant-from {t} is above the highest grade in the judgments ({highest}): no \
                 post would count as relevant and no query would be evaluated; give a grade \
                 from 1 to {highest}"
            )
        }));
    }
    Ok(())
}

/// Which judged queries take part in means and tests.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct QueryPopulation {
    /// Judged queries with R ≥ 1, in byte order of their ids.
    pub evaluated: Vec<QueryId>,
    /// Judged queries with R = 0 (no post reaches the threshold), in byte
    /// order; listed in reports, never scored.
    pub skipped: Vec<QueryId>,
}

/// Split the judged queries into evaluated (R ≥ 1 at the settings'
/// threshold) and skipped (R = 0).
pub fn query_population(judgments: &Judgments, settings: &EvalSettings) -> QueryPopulation {
    let mut population = QueryPopulation::default();
    for (query, posts) in judgments.queries() {
        if posts.values().any(|g| *g >= settings.relevant_from) {
            population.evaluated.push(query.clone());
        } else {
            population.skipped.push(query.clone());
        }
    }
    population
}

/// One system's per-query scores.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct SystemScores {
    /// The metrics, in `--metrics` order.
    pub metrics: Vec<Metric>,
    /// For every evaluated query, its value of each metric in the order of
    /// `metrics`.
    pub per_query: BTreeMap<QueryId, Vec<f64>>,
    /// Problems worth telling the user that do not stop the evaluation.
    pub warnings: Vec<String>,
}

impl SystemScores {
    /// The values of one metric over the evaluated queries, in byte order of
    /// the query ids (the pairing order the statistics rely on).
    ///
    /// Panics if `metric_index >= self.metrics.len()` (a caller's bug, not a
    /// user's).
    pub fn column(&self, metric_index: usize) -> Vec<f64> {
        assert!(metric_index < self.metrics.len(), "metric index out of range");
        self.per_query.values().map(|values| values[metric_index]).collect()
    }

    /// The arithmetic mean of one metric over the evaluated queries, summed
    /// in query byte order; 0 when no query is evaluated.
    ///
    /// Panics if `metric_index >= self.metrics.len()`.
    pub fn mean(&self, metric_index: usize) -> f64 {
        let column = self.column(metric_index);
        if column.is_empty() {
            return 0.0;
        }
        column.iter().sum::<f64>() / column.len() as f64
    }

    /// The value of one metric for one query, if that query was evaluated.
    pub fn value(&self, query: &QueryId, metric_index: usize) -> Option<f64> {
        self.per_query.get(query).and_then(|values| values.get(metric_index)).copied()
    }
}

/// What one metric needs to know about one query's judgments.
struct QueryJudgments {
    /// Every judged grade (nDCG's ideal ranking).
    grades: Vec<u32>,
    /// R: judged posts with grade ≥ t.
    relevant: usize,
    /// N: judged posts with grade < t.
    nonrelevant: usize,
}

/// Score `run` on every evaluated query of `population` with every metric.
///
/// Checks the settings first ([`validate_settings`]). A post listed twice for
/// one query is an error (run readers reject it already; this guards runs
/// built in memory). Queries of the run without judgments produce one
/// warning that lists them.
pub fn evaluate(
    run: &Run,
    judgments: &Judgments,
    population: &QueryPopulation,
    metrics: &[Metric],
    settings: &EvalSettings,
) -> Result<SystemScores> {
    validate_settings(judgments, settings)?;
    let gmax = settings.err_gmax(judgments);
    let mut warnings = Vec::new();

    let unjudged_queries: Vec<&QueryId> =
        run.by_query.keys().filter(|q| judgments.for_query(q).is_none()).collect();
    if !unjudged_queries.is_empty() {
        // In byte order: the run's queries are a BTreeMap's keys.
        let listed: Vec<&str> =
            unjudged_queries.iter().take(MAX_LISTED_PROBLEMS).map(|q| q.as_str()).collect();
        let more = unjudged_queries.len() - listed.len();
        let more = if more > 0 { format!(" … and {more} more") } else { String::new() };
        warnings.push(format!(
            "ignored {} quer{} of the run without judgments: {}{}",
            unjudged_queries.len(),
            if unjudged_queries.len() == 1 { "y" } else { "ies" },
            listed.join(", "),
            more
        ));
    }

    let empty = BTreeMap::new();
    let mut per_query = BTreeMap::new();
    for query in &population.evaluated {
        let judged = judgments.for_query(query).unwrap_or(&empty);
        let docs = run.by_query.get(query).map(Vec::as_slice).unwrap_or_default();
        let mut seen = BTreeSet::new();
        let mut ranked = Vec::with_capacity(docs.len());
        for doc in docs {
            if !seen.insert(&doc.doc) {
                return Err(Error::usage(format!(
                    "the run lists post {} twice for query {query}",
                    doc.doc
                )));
            }
            ranked.push(judged.get(&doc.doc).copied());
        }
        let relevant = judged.values().filter(|g| **g >= settings.relevant_from).count();
        let info = QueryJudgments {
            grades: judged.values().copied().collect(),
            relevant,
            nonrelevant: judged.len() - relevant,
        };
        let values = metrics.iter().map(|m| score(*m, &ranked, &info, settings, gmax)).collect();
        per_query.insert(query.clone(), values);
    }
    Ok(SystemScores { metrics: metrics.to_vec(), per_query, warnings })
}

/// One metric of one query.
fn score(
    metric: Metric,
    ranked: &[Option<u32>],
    judged: &QueryJudgments,
    settings: &EvalSettings,
    gmax: u32,
) -> f64 {
    let t = settings.relevant_from;
    match metric.kind() {
        MetricKind::Ndcg(k) => ndcg_at(ranked, &judged.grades, k, settings.gain),
        MetricKind::Map => average_precision(ranked, t, judged.relevant),
        MetricKind::Precision(k) => precision_at(ranked, t, k),
        MetricKind::Recall(k) => recall_at(ranked, t, k, judged.relevant),
        MetricKind::Mrr => reciprocal_rank(ranked, t),
        MetricKind::Err(k) => err_at(ranked, k, gmax),
        MetricKind::Bpref => bpref(ranked, t, judged.relevant, judged.nonrelevant),
        MetricKind::Unjudged(k) => unjudged_at(ranked, k),
    }
}

/// rel(d) for a grade in a ranking: judged with a grade ≥ t.
fn is_relevant(grade: Option<u32>, relevant_from: u32) -> bool {
    grade.is_some_and(|g| g >= relevant_from)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ids::PostId;
    use crate::input::RankedDoc;
    use approx::assert_relative_eq;

    fn run_of(lists: &[(&str, &[&str])]) -> Run {
        let mut run = Run::default();
        for (query, docs) in lists {
            // Scores fall with the rank, as an engine would give them.
            let ranked = docs
                .iter()
                .enumerate()
                .map(|(i, d)| RankedDoc { doc: (*d).into(), score: Some(100.0 - i as f64) })
                .collect();
            run.by_query.insert((*query).into(), ranked);
        }
        run
    }

    fn ids(v: &[QueryId]) -> Vec<&str> {
        v.iter().map(QueryId::as_str).collect()
    }

    fn settings(relevant_from: u32) -> EvalSettings {
        EvalSettings { relevant_from, ..EvalSettings::default() }
    }

    #[test]
    fn default_settings() {
        let s = EvalSettings::default();
        assert_eq!((s.relevant_from, s.gain, s.max_grade), (1, Gain::Exponential, None));
    }

    #[test]
    fn population_splits_on_r_in_byte_order() {
        let j = Judgments::from_triples([
            ("q9", "d1", 1),
            ("q10", "d1", 2),
            ("q10", "d2", 0),
            ("q2", "d1", 0),
            ("q2", "d2", 0),
        ]);
        let p = query_population(&j, &settings(1));
        // Byte order: "q10" < "q2" < "q9".
        assert_eq!(ids(&p.evaluated), ["q10", "q9"]);
        assert_eq!(ids(&p.skipped), ["q2"]);
        // t = 2: q9's only grade-1 post is no longer relevant.
        let p = query_population(&j, &settings(2));
        assert_eq!(ids(&p.evaluated), ["q10"]);
        assert_eq!(ids(&p.skipped), ["q2", "q9"]);
    }

    #[test]
    fn empty_run_scores_zero_on_every_metric() {
        let j = Judgments::from_triples([("q1", "d1", 2), ("q2", "d1", 1), ("q3", "d1", 0)]);
        let s = settings(1);
        let p = query_population(&j, &s);
        let metrics = parse_metric_list(DEFAULT_METRICS).unwrap();
        // A header-only run, and a run that has q2 with an empty list.
        for run in [Run::default(), run_of(&[("q2", &[])])] {
            let scores = evaluate(&run, &j, &p, &metrics, &s).unwrap();
            assert_eq!(scores.per_query.len(), 2, "evaluated queries only, q3 skipped");
            for values in scores.per_query.values() {
                assert_eq!(values, &vec![0.0; 8]);
            }
            assert!(scores.warnings.is_empty());
        }
    }

    #[test]
    fn evaluated_query_missing_from_run_still_counts_in_the_mean() {
        // q1 perfect (p@1 = 1), q2 not returned (0): mean 0.5, not 1.
        let j = Judgments::from_triples([("q1", "d1", 1), ("q2", "d2", 1)]);
        let s = settings(1);
        let p = query_population(&j, &s);
        let metrics = parse_metric_list("p@1,map").unwrap();
        let scores = evaluate(&run_of(&[("q1", &["d1"])]), &j, &p, &metrics, &s).unwrap();
        assert_eq!(scores.column(0), [1.0, 0.0]);
        assert_eq!(scores.mean(0), 0.5);
        assert_eq!(scores.mean(1), 0.5);
        assert_eq!(scores.value(&"q2".into(), 1), Some(0.0));
        assert_eq!(scores.value(&"q3".into(), 0), None);
    }

    #[test]
    fn threshold_changes_binary_metrics_but_not_graded_ones() {
        // q1: d1 grade 1, d2 grade 2, d3 grade 0; run d1, d2, d4 (unjudged).
        let j = Judgments::from_triples([("q1", "d1", 1), ("q1", "d2", 2), ("q1", "d3", 0)]);
        let run = run_of(&[("q1", &["d1", "d2", "d4"])]);
        let metrics =
            parse_metric_list("p@2,recall@1,map,mrr,bpref,ndcg@3,err@3,unjudged@3").unwrap();
        let at = |t: u32| {
            let s = settings(t);
            let p = query_population(&j, &s);
            let scores = evaluate(&run, &j, &p, &metrics, &s).unwrap();
            scores.per_query[&QueryId::from("q1")].clone()
        };
        // Graded metrics, the same for every t (hand computed):
        // nDCG@3 (exp): DCG = 1/log2 2 + 3/log2 3 + 0; IDCG = 3 + 1/log2 3 + 0/2.
        let ndcg = (1.0 + 3.0 / 3f64.log2()) / (3.0 + 1.0 / 3f64.log2());
        // ERR@3, gmax = 2 (the file's highest): R = 1/4, 3/4, 0
        // → 1/4 + (1/2)(3/4)(1 − 1/4) = 0.25 + 0.28125 = 0.53125.
        let err = 0.53125;
        // t = 1: R = 2 (d1, d2), N = 1 (d3).
        // p@2 = 2/2, recall@1 = 1/2, AP = (1/1 + 2/2)/2 = 1, RR = 1,
        // bpref: nothing judged non-relevant above d1 or d2 → (1 + 1)/2 = 1.
        let t1 = at(1);
        // t = 2: R = 1 (d2), N = 2 (d1, d3); d1 is now judged non-relevant.
        // p@2 = 1/2, recall@1 = 0/1, AP = (1/2)/1, RR = 1/2,
        // bpref: d2 has n_r = 1 → 1 − min(1,1)/min(1,2) = 0.
        let t2 = at(2);
        let expect1 = [1.0, 0.5, 1.0, 1.0, 1.0, ndcg, err, 1.0 / 3.0];
        let expect2 = [0.5, 0.0, 0.5, 0.5, 0.0, ndcg, err, 1.0 / 3.0];
        for i in 0..8 {
            assert_relative_eq!(t1[i], expect1[i], epsilon = 1e-15);
            assert_relative_eq!(t2[i], expect2[i], epsilon = 1e-15);
        }
        assert!(ndcg > 0.0 && ndcg < 1.0);
    }

    #[test]
    fn run_order_is_used_as_given() {
        // Ties are resolved by the run reader (rank, then doc id); evaluate
        // follows the list order and never re-sorts by score.
        let j = Judgments::from_triples([("q1", "d1", 1), ("q1", "d2", 0)]);
        let mut run = Run::default();
        run.by_query.insert(
            "q1".into(),
            vec![
                RankedDoc { doc: "d2".into(), score: Some(1.0) },
                RankedDoc { doc: "d1".into(), score: Some(1.0) },
            ],
        );
        let s = settings(1);
        let p = query_population(&j, &s);
        let scores = evaluate(&run, &j, &p, &parse_metric_list("mrr").unwrap(), &s).unwrap();
        assert_eq!(scores.mean(0), 0.5);
    }

    #[test]
    fn unjudged_run_queries_give_one_warning() {
        let j = Judgments::from_triples([("q1", "d1", 1), ("q2", "d1", 0)]);
        let s = settings(1);
        let p = query_population(&j, &s);
        let metrics = parse_metric_list("p@1").unwrap();
        // q2 is judged but skipped: no warning for it.
        let run = run_of(&[("q1", &["d1"]), ("q2", &["d1"]), ("zz", &["d1"]), ("a7", &["d9"])]);
        let scores = evaluate(&run, &j, &p, &metrics, &s).unwrap();
        assert_eq!(scores.warnings, ["ignored 2 queries of the run without judgments: a7, zz"]);
        assert_eq!(scores.per_query.len(), 1);
        assert_eq!(scores.mean(0), 1.0);

        let names: Vec<String> = (0..25).map(|i| format!("x{i:02}")).collect();
        let lists: Vec<(&str, &[&str])> = names.iter().map(|n| (n.as_str(), &[][..])).collect();
        let scores = evaluate(&run_of(&lists), &j, &p, &metrics, &s).unwrap();
        assert_eq!(scores.warnings.len(), 1);
        assert!(scores.warnings[0].starts_with("ignored 25 queries"));
        assert!(scores.warnings[0].ends_with("x19 … and 5 more"), "{}", scores.warnings[0]);
    }

    #[test]
    fn duplicate_post_in_run_is_an_error() {
        let j = Judgments::from_triples([("q1", "d1", 1)]);
        let s = settings(1);
        let p = query_population(&j, &s);
        let run = run_of(&[("q1", &["d1", "d2", "d1"])]);
        let e = evaluate(&run, &j, &p, &parse_metric_list("map").unwrap(), &s).unwrap_err();
        assert_eq!(e.to_string(), "the run lists post d1 twice for query q1");
    }

    #[test]
    fn settings_are_validated() {
        let j = Judgments::from_triples([("q1", "d1", 1), ("q2", "d7", 3), ("q3", "d2", 3)]);
        let e = validate_settings(&j, &settings(0)).unwrap_err();
        assert!(e.to_string().contains("--relevant-from"), "{e}");
        let low = EvalSettings { max_grade: Some(2), ..EvalSettings::default() };
        assert_eq!(
            validate_settings(&j, &low).unwrap_err().to_string(),
            "--max-grade 2 is below grade 3, which the judgments give to post d7 for query q2"
        );
        // evaluate refuses the same settings.
        let p = query_population(&j, &low);
        assert!(evaluate(&Run::default(), &j, &p, &[], &low).is_err());
        for ok in [Some(3), Some(9), None] {
            let s = EvalSettings { max_grade: ok, ..EvalSettings::default() };
            assert!(validate_settings(&j, &s).is_ok());
        }
        // A threshold no grade reaches (issue 12, item 4): above the scale,
        // or above every grade judged.
        let above_scale = EvalSettings { relevant_from: 3, max_grade: Some(2), ..low };
        assert_eq!(
            validate_settings(&Judgments::from_triples([("q1", "d1", 1)]), &above_scale)
                .unwrap_err()
                .to_string(),
            "--relevant-from 3 is above --max-grade 2: no grade of the scale would count as \
             relevant; give a grade from 1 to 2"
        );
        assert_eq!(
            validate_settings(&j, &settings(4)).unwrap_err().to_string(),
            "--relevant-from 4 is above the highest grade in the judgments (3): no post would \
             count as relevant and no query would be evaluated; give a grade from 1 to 3"
        );
        assert!(validate_settings(&j, &settings(3)).is_ok());
        let zeros = Judgments::from_triples([("q1", "d1", 0)]);
        assert!(validate_settings(&zeros, &settings(1))
            .unwrap_err()
            .to_string()
            .contains("no grade above 0"));
    }

    #[test]
    fn err_gmax_comes_from_the_whole_file_or_the_setting() {
        // q1's best grade is 1, but q2 has a 3: gmax = 3 → R_1 = (2 − 1)/8.
        let j = Judgments::from_triples([("q1", "d1", 1), ("q2", "d2", 3)]);
        let run = run_of(&[("q1", &["d1"])]);
        let metrics = parse_metric_list("err@10").unwrap();
        let s = settings(1);
        let p = query_population(&j, &s);
        let scores = evaluate(&run, &j, &p, &metrics, &s).unwrap();
        assert_eq!(scores.value(&"q1".into(), 0), Some(0.125));
        // --max-grade 4: R_1 = 1/16.
        let s = EvalSettings { max_grade: Some(4), ..s };
        assert_eq!(s.err_gmax(&j), 4);
        let scores = evaluate(&run, &j, &p, &metrics, &s).unwrap();
        assert_eq!(scores.value(&"q1".into(), 0), Some(0.0625));
    }

    #[test]
    fn mean_and_column_follow_query_byte_order() {
        // Manning, Raghavan & Schütze (2008) §8.4 define MAP as the arithmetic
        // mean of per-query AP. Hand computed: q10 AP = 1, q9 AP = (1/2)/1.
        let j = Judgments::from_triples([("q9", "d1", 1), ("q10", "d1", 1)]);
        let run = run_of(&[("q9", &["d0", "d1"]), ("q10", &["d1"])]);
        let s = settings(1);
        let p = query_population(&j, &s);
        let scores = evaluate(&run, &j, &p, &parse_metric_list("map").unwrap(), &s).unwrap();
        assert_eq!(scores.column(0), [1.0, 0.5]);
        assert_eq!(scores.mean(0), 0.75);
        assert_eq!(SystemScores::default().metrics.len(), 0);
        let none = SystemScores { metrics: scores.metrics.clone(), ..SystemScores::default() };
        assert_eq!(none.mean(0), 0.0);
    }

    /// The Cranfield collection (Cleverdon, Mills & Keen 1966) from
    /// ../shared/data/cranfield (see its README): a perfect run — every
    /// judged document, highest grade first — must score 1 on nDCG, AP, RR
    /// and bpref for every evaluated query, whatever the threshold.
    #[test]
    fn cranfield_perfect_run() {
        let path = concat!(env!("CARGO_MANIFEST_DIR"), "/../shared/data/cranfield/qrels.csv");
        let Ok(mut reader) = csv::Reader::from_path(path) else {
            crate::analysis::testutil::skip(&format!("{path} is absent"));
            return;
        };
        let mut triples = Vec::new();
        for record in reader.records() {
            let r = record.expect("qrels.csv is well-formed CSV");
            let grade: u32 = r[2].parse().expect("grades are integers");
            triples.push((r[0].to_string(), r[1].to_string(), grade));
        }
        let j = Judgments::from_triples(triples);
        let mut run = Run::default();
        for (q, posts) in j.queries() {
            let mut docs: Vec<(&PostId, u32)> = posts.iter().map(|(p, g)| (p, *g)).collect();
            docs.sort_by(|a, b| b.1.cmp(&a.1).then(a.0.cmp(b.0)));
            let ranked =
                docs.iter().map(|(p, _)| RankedDoc { doc: (*p).clone(), score: Some(0.0) });
            run.by_query.insert(q.clone(), ranked.collect());
        }
        let metrics = parse_metric_list("ndcg@10,map,mrr,bpref,unjudged@10").unwrap();
        // Populations: 225 queries (the data README); at t = 2 and t = 4 the
        // counts were taken with Python's csv module while writing this test.
        for (t, evaluated) in [(1, 225), (2, 222), (4, 67)] {
            let s = settings(t);
            let p = query_population(&j, &s);
            assert_eq!((p.evaluated.len(), p.skipped.len()), (evaluated, 225 - evaluated));
            let scores = evaluate(&run, &j, &p, &metrics, &s).unwrap();
            for (i, expected) in [1.0, 1.0, 1.0, 1.0, 0.0].into_iter().enumerate() {
                assert_relative_eq!(scores.mean(i), expected, epsilon = 1e-12);
            }
        }
    }
}
