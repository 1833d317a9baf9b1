//! Turns per-query metric values of several systems into the numbers the
//! reports show: each system's mean with its bootstrap interval, paired
//! comparisons with the baseline (t-test, randomization test, Holm
//! adjustment, wins/losses/ties, smallest detectable difference) and the same
//! per query language and per query tag. Sits between `eval` (which gives the
//! per-query values) and `report` (which only renders what is computed here).

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

use crate::eval::{Metric, SystemScores};
use crate::ids::{ChainName, QueryId};
use crate::input::Query;
use crate::progress::{Progress, Step};
use crate::stats::{self, StatSettings};

pub use crate::report::model::{
    BreakdownCell, ComparisonRow, MetricSummary, SystemSummary, MIN_BREAKDOWN_QUERIES,
};

/// Everything computed from the per-query values.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct Comparisons {
    /// Per-system means and intervals.
    pub summaries: Vec<SystemSummary>,
    /// Every non-baseline system against the baseline, per metric.
    pub comparisons: Vec<ComparisonRow>,
    /// Per query language, then per tag.
    pub breakdowns: Vec<BreakdownCell>,
}

/// Compute summaries, comparisons and breakdowns. `systems` are in report
/// order; `baseline` indexes into it; `queries` (optional) supplies languages
/// and tags for breakdowns; `alpha` is the significance level.
///
/// The work is spread over `settings.threads` threads inside the statistics
/// (`stats::compare_families`, `stats::bootstrap_cis`); no number depends
/// on the thread count.
/// `progress` shows a bar of the cells done (the whole query set and each
/// breakdown cell that is tested).
pub fn compare(
    systems: &[(ChainName, &SystemScores)],
    baseline: usize,
    metrics: &[Metric],
    queries: Option<&[Query]>,
    settings: &StatSettings,
    progress: &Progress,
) -> Comparisons {
    let all: Vec<QueryId> = evaluated_ids(systems);
    let groups = queries.map(|qs| breakdown_groups(&all, qs)).unwrap_or_default();
    let tested = groups.iter().filter(|(_, _, ids)| ids.len() >= MIN_BREAKDOWN_QUERIES).count();
    let step = progress.step("statistics", 1 + tested as u64, "cells");
    let (summaries, comparisons) =
        cell_statistics(systems, baseline, metrics, &all, settings, true);
    step.advance(1);
    let breakdowns = breakdown(systems, baseline, metrics, groups, settings, &step);
    let seconds = step.seconds();
    step.finish(
        progress,
        &format!(
            "statistics: {} in {seconds:.2} s",
            crate::plural::counted(1 + tested, "tested cell", "tested cells")
        ),
    );
    Comparisons { summaries, comparisons, breakdowns }
}

fn evaluated_ids(systems: &[(ChainName, &SystemScores)]) -> Vec<QueryId> {
    systems.first().map(|(_, s)| s.per_query.keys().cloned().collect()).unwrap_or_default()
}

/// Mean of a column (0 for an empty query set: nothing to average).
fn mean(v: &[f64]) -> f64 {
    stats::mean(v).unwrap_or(0.0)
}

/// Each system's means over `ids` (one column per metric), with intervals
/// from `intervals` (system-major, one per metric) when given.
fn summarise(
    systems: &[(ChainName, &SystemScores)],
    metrics: &[Metric],
    ids: &[QueryId],
    columns: &[Vec<Vec<f64>>],
    intervals: Option<&[Option<(f64, f64)>]>,
) -> Vec<SystemSummary> {
    systems
        .iter()
        .zip(columns)
        .enumerate()
        .map(|(s, ((name, _), system_columns))| SystemSummary {
            system: name.clone(),
            queries: ids.len(),
            metrics: metrics
                .iter()
                .zip(system_columns)
                .enumerate()
                .map(|(m, (metric, values))| {
                    let ci =
                        intervals.and_then(|all| all.get(s * metrics.len() + m)).copied().flatten();
                    MetricSummary {
                        metric: metric.key(),
                        mean: mean(values),
                        ci_low: ci.map(|c| c.0),
                        ci_high: ci.map(|c| c.1),
                    }
                })
                .collect(),
        })
        .collect()
}

/// Every system's values over `ids`: `[system][metric]` columns (0 for a
/// missing query, which cannot happen when every system shares one
/// population).
fn columns(
    systems: &[(ChainName, &SystemScores)],
    metrics: &[Metric],
    ids: &[QueryId],
) -> Vec<Vec<Vec<f64>>> {
    systems
        .iter()
        .map(|(_, scores)| {
            // One lookup per query, shared by the metrics.
            let rows: Vec<Option<&Vec<f64>>> =
                ids.iter().map(|q| scores.per_query.get(q)).collect();
            (0..metrics.len())
                .map(|m| {
                    rows.iter().map(|r| r.and_then(|v| v.get(m)).copied().unwrap_or(0.0)).collect()
                })
                .collect()
        })
        .collect()
}

/// Summaries and comparisons with the baseline over the queries `ids`: the
/// whole query set (`with_intervals`: each mean gets its bootstrap interval)
/// or one breakdown cell (means only). Every bootstrap interval of the cell —
/// the means' and the differences' — is one `stats::bootstrap_cis` call, so
/// each resample's indices are drawn once for all of them.
fn cell_statistics(
    systems: &[(ChainName, &SystemScores)],
    baseline: usize,
    metrics: &[Metric],
    ids: &[QueryId],
    settings: &StatSettings,
    with_intervals: bool,
) -> (Vec<SystemSummary>, Vec<ComparisonRow>) {
    let values = columns(systems, metrics, ids);
    let (Some((base_name, _)), Some(base_columns)) = (systems.get(baseline), values.get(baseline))
    else {
        let intervals = with_intervals.then(|| mean_intervals(&values, settings));
        return (summarise(systems, metrics, ids, &values, intervals.as_deref()), Vec::new());
    };
    let others: Vec<(usize, &ChainName)> = systems
        .iter()
        .enumerate()
        .filter(|(i, _)| *i != baseline)
        .map(|(i, (n, _))| (i, n))
        .collect();
    // Holm adjusts within one metric across the systems: one family per metric.
    let families: Vec<(&[f64], Vec<&[f64]>)> = base_columns
        .iter()
        .enumerate()
        .map(|(m, base)| {
            let compared = others
                .iter()
                .filter_map(|(i, _)| values.get(*i).and_then(|c| c.get(m)).map(Vec::as_slice))
                .collect();
            (base.as_slice(), compared)
        })
        .collect();
    let paired = stats::compare_families(&families, settings);
    // Differences metric-major, system-minor, as the families list them.
    let diffs: Vec<Vec<f64>> = families
        .iter()
        .flat_map(|(base, compared)| {
            compared.iter().map(|sys| sys.iter().zip(*base).map(|(a, b)| a - b).collect())
        })
        .collect();
    let mut interval_columns: Vec<&[f64]> = Vec::new();
    if with_intervals {
        interval_columns.extend(values.iter().flatten().map(Vec::as_slice));
    }
    let mean_count = interval_columns.len();
    interval_columns.extend(diffs.iter().map(Vec::as_slice));
    let intervals = stats::bootstrap_cis(
        &interval_columns,
        settings.bootstrap_resamples,
        settings.seed,
        settings.threads,
    );
    let (mean_intervals, diff_intervals) = intervals.split_at(mean_count.min(intervals.len()));
    let summaries =
        summarise(systems, metrics, ids, &values, with_intervals.then_some(mean_intervals));
    // Ordered by system then metric, as the CSV contract asks.
    let mut keyed: Vec<((usize, usize), ComparisonRow)> = Vec::new();
    let mut diff_intervals = diff_intervals.iter();
    for ((m, metric), family) in metrics.iter().enumerate().zip(paired) {
        for ((i, name), pc) in others.iter().zip(family) {
            let ci = diff_intervals.next().copied().flatten();
            let row = ComparisonRow {
                baseline: base_name.clone(),
                system: (*name).clone(),
                metric: metric.key(),
                queries: pc.n,
                delta: pc.delta.unwrap_or(0.0),
                delta_ci_low: ci.map(|c| c.0),
                delta_ci_high: ci.map(|c| c.1),
                p_ttest: pc.p_ttest,
                p_randomization: pc.p_randomization,
                p_holm: pc.p_randomization_holm,
                wins: pc.wins_losses_ties.wins,
                losses: pc.wins_losses_ties.losses,
                ties: pc.wins_losses_ties.ties,
                min_detectable: pc.min_detectable,
                significant: pc.p_randomization_holm.is_some_and(|p| p < settings.alpha),
            };
            keyed.push(((*i, m), row));
        }
    }
    keyed.sort_by_key(|(k, _)| *k);
    (summaries, keyed.into_iter().map(|(_, r)| r).collect())
}

/// Bootstrap intervals of every system's means (system-major), when there is
/// no baseline to compare with.
fn mean_intervals(values: &[Vec<Vec<f64>>], settings: &StatSettings) -> Vec<Option<(f64, f64)>> {
    let all: Vec<&[f64]> = values.iter().flatten().map(Vec::as_slice).collect();
    stats::bootstrap_cis(&all, settings.bootstrap_resamples, settings.seed, settings.threads)
}

/// The breakdown groups of the evaluated queries: (dimension, value, ids)
/// by query language, then by tag, each in value order.
fn breakdown_groups(
    evaluated: &[QueryId],
    queries: &[Query],
) -> Vec<(&'static str, String, Vec<QueryId>)> {
    let by_id: BTreeMap<&QueryId, &Query> = queries.iter().map(|q| (&q.id, q)).collect();
    let mut langs: BTreeMap<String, Vec<QueryId>> = BTreeMap::new();
    let mut tags: BTreeMap<String, Vec<QueryId>> = BTreeMap::new();
    for id in evaluated {
        let q = by_id.get(id);
        let lang = q.and_then(|q| q.lang).map_or_else(|| "(none)".to_string(), |l| l.to_string());
        langs.entry(lang).or_default().push(id.clone());
        for tag in q.map(|q| q.tags.as_slice()).unwrap_or_default() {
            let ids = tags.entry(tag.clone()).or_default();
            if ids.last() != Some(id) {
                ids.push(id.clone());
            }
        }
    }
    let mut groups = Vec::new();
    for (dimension, by_value) in [("lang", langs), ("tag", tags)] {
        for (value, ids) in by_value {
            groups.push((dimension, value, ids));
        }
    }
    groups
}

fn breakdown(
    systems: &[(ChainName, &SystemScores)],
    baseline: usize,
    metrics: &[Metric],
    groups: Vec<(&'static str, String, Vec<QueryId>)>,
    settings: &StatSettings,
    step: &Step,
) -> Vec<BreakdownCell> {
    let mut cells = Vec::new();
    for (dimension, value, ids) in groups {
        let too_small = ids.len() < MIN_BREAKDOWN_QUERIES;
        let (summaries, comparisons) = if too_small {
            let values = columns(systems, metrics, &ids);
            (summarise(systems, metrics, &ids, &values, None), Vec::new())
        } else {
            let done = cell_statistics(systems, baseline, metrics, &ids, settings, false);
            step.advance(1);
            done
        };
        cells.push(BreakdownCell {
            dimension: dimension.to_string(),
            value,
            queries: ids.len(),
            too_small,
            systems: summaries,
            comparisons,
        });
    }
    cells
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::eval::parse_metric_list;
    use crate::input::LangCode;

    fn scores(metrics: &[Metric], rows: &[(&str, [f64; 2])]) -> SystemScores {
        SystemScores {
            metrics: metrics.to_vec(),
            per_query: rows.iter().map(|(q, v)| (QueryId::from(*q), v.to_vec())).collect(),
            warnings: Vec::new(),
        }
    }

    fn query(id: &str, lang: &str, tags: &[&str]) -> Query {
        Query {
            id: QueryId::from(id),
            text: id.to_string(),
            lang: LangCode::parse(lang),
            tags: tags.iter().map(|t| t.to_string()).collect(),
        }
    }

    #[test]
    fn rows_follow_system_then_metric_order_with_holm_within_a_metric() {
        let metrics = parse_metric_list("p@1,mrr").unwrap();
        let base = scores(&metrics, &[("q1", [0.0, 0.5]), ("q2", [0.0, 0.5]), ("q3", [1.0, 1.0])]);
        let a = scores(&metrics, &[("q1", [1.0, 1.0]), ("q2", [1.0, 1.0]), ("q3", [1.0, 1.0])]);
        let b = scores(&metrics, &[("q1", [0.0, 0.5]), ("q2", [1.0, 1.0]), ("q3", [0.0, 0.5])]);
        let systems = vec![
            (ChainName::from("base"), &base),
            (ChainName::from("a"), &a),
            (ChainName::from("b"), &b),
        ];
        let out =
            compare(&systems, 0, &metrics, None, &StatSettings::default(), &Progress::quiet());
        let keys: Vec<(String, String)> =
            out.comparisons.iter().map(|r| (r.system.to_string(), r.metric.clone())).collect();
        assert_eq!(
            keys,
            [("a", "p@1"), ("a", "mrr"), ("b", "p@1"), ("b", "mrr")]
                .map(|(s, m)| (s.to_string(), m.to_string()))
        );
        // a vs base on p@1: differences (1, 1, 0); delta = 2/3. Exact sign-flip
        // test over 2^3 assignments (Fisher 1935): |mean| ≥ 2/3 for the two
        // assignments with both non-zero signs equal (q3's sign is free: ×2)
        // → 4/8 = 0.5. b vs base on p@1: (0, 1, −1), mean 0 → p = 1.
        let a_p1 = &out.comparisons[0];
        assert!((a_p1.delta - 2.0 / 3.0).abs() < 1e-12);
        assert_eq!(a_p1.p_randomization, Some(0.5));
        assert_eq!((a_p1.wins, a_p1.losses, a_p1.ties), (2, 0, 1));
        // Holm over m = 2 systems: sorted p (0.5, 1.0) → (min(1, 2·0.5), max(1, 1·1)).
        assert_eq!(a_p1.p_holm, Some(1.0));
        assert_eq!(out.comparisons[2].p_randomization, Some(1.0));
        assert!(!a_p1.significant);
        // Summaries: mean of base p@1 = 1/3, interval from the bootstrap.
        assert!((out.summaries[0].metrics[0].mean - 1.0 / 3.0).abs() < 1e-12);
        assert!(out.summaries[0].metrics[0].ci_low.is_some());
        assert!(out.breakdowns.is_empty(), "no queries file, no breakdowns");
    }

    #[test]
    fn breakdowns_by_language_and_tag_mark_small_cells() {
        let metrics = parse_metric_list("p@1,mrr").unwrap();
        let rows: Vec<(String, [f64; 2])> =
            (1..=6).map(|i| (format!("q{i}"), [f64::from(i % 2), 1.0])).collect();
        let rows_ref: Vec<(&str, [f64; 2])> = rows.iter().map(|(q, v)| (q.as_str(), *v)).collect();
        let base = scores(&metrics, &rows_ref);
        let sys = scores(&metrics, &rows_ref);
        let queries: Vec<Query> = (1..=6)
            .map(|i| {
                let tags: &[&str] = if i <= 2 { &["short", "short"] } else { &[] };
                query(&format!("q{i}"), if i <= 5 { "en" } else { "de" }, tags)
            })
            .collect();
        let systems = vec![(ChainName::from("base"), &base), (ChainName::from("s"), &sys)];
        let out = compare(
            &systems,
            0,
            &metrics,
            Some(&queries),
            &StatSettings::default(),
            &Progress::quiet(),
        );
        let cells: Vec<(String, String, usize, bool)> = out
            .breakdowns
            .iter()
            .map(|c| (c.dimension.clone(), c.value.clone(), c.queries, c.too_small))
            .collect();
        assert_eq!(
            cells,
            [
                ("lang".to_string(), "de".to_string(), 1, true),
                ("lang".to_string(), "en".to_string(), 5, false),
                ("tag".to_string(), "short".to_string(), 2, true),
            ]
        );
        // The tested cell compares the identical systems: delta 0, p = 1.
        let en = &out.breakdowns[1];
        assert_eq!(en.comparisons.len(), 2);
        assert_eq!(en.comparisons[0].delta, 0.0);
        assert_eq!(en.comparisons[0].p_randomization, Some(1.0));
        assert!(out.breakdowns[0].comparisons.is_empty());
        assert_eq!(en.systems[0].metrics[0].ci_low, None, "cells show means only");
    }
}
