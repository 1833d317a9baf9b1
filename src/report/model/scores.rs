//! The scores part of the report model: each system's means with their
//! intervals, each system against the baseline per metric, and the same per
//! query language and tag. `bench::compare` fills these; `report` renders
//! them.

use serde::{Deserialize, Serialize};

use crate::ids::ChainName;

/// Breakdown cells with fewer queries than this are shown but not tested.
pub const MIN_BREAKDOWN_QUERIES: usize = 5;

/// Mean and 95% interval of one metric for one system.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct MetricSummary {
    /// Metric key (`ndcg@10`, …).
    pub metric: String,
    /// Arithmetic mean over the evaluated queries.
    pub mean: f64,
    /// Lower bound of the 95% percentile-bootstrap interval (None when no query).
    pub ci_low: Option<f64>,
    /// Upper bound of the interval.
    pub ci_high: Option<f64>,
}

/// One system-vs-baseline comparison on one metric.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct ComparisonRow {
    /// The baseline system.
    pub baseline: ChainName,
    /// The compared system.
    pub system: ChainName,
    /// Metric key.
    pub metric: String,
    /// Number of paired queries.
    pub queries: usize,
    /// mean(system) − mean(baseline).
    pub delta: f64,
    /// 95% bootstrap interval of the mean per-query difference.
    pub delta_ci_low: Option<f64>,
    /// Upper bound of that interval.
    pub delta_ci_high: Option<f64>,
    /// Two-sided paired t-test p-value (None when n < 2).
    pub p_ttest: Option<f64>,
    /// Two-sided paired randomization test p-value (None when n < 2).
    pub p_randomization: Option<f64>,
    /// Holm-adjusted randomization p-value over the systems of this metric.
    pub p_holm: Option<f64>,
    /// Queries where the system is above the baseline.
    pub wins: usize,
    /// Queries where it is below.
    pub losses: usize,
    /// Queries where both are equal (within 1e-12).
    pub ties: usize,
    /// Smallest mean difference the query set could detect at α with 80% power.
    pub min_detectable: Option<f64>,
    /// Whether `p_holm` < α.
    pub significant: bool,
}

/// Every metric of one system.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct SystemSummary {
    /// System (chain or run) name.
    pub system: ChainName,
    /// Number of evaluated queries.
    pub queries: usize,
    /// One entry per metric, in `--metrics` order.
    pub metrics: Vec<MetricSummary>,
}

/// One cell of a breakdown: the queries sharing one language or one tag.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct BreakdownCell {
    /// `lang` or `tag`.
    pub dimension: String,
    /// The language code or tag (`(none)` for queries without a language).
    pub value: String,
    /// Number of evaluated queries in the cell.
    pub queries: usize,
    /// True when the cell has fewer than [`MIN_BREAKDOWN_QUERIES`] queries: means
    /// are shown, tests are not run.
    pub too_small: bool,
    /// Each system's means in the cell, in system order.
    pub systems: Vec<SystemSummary>,
    /// Comparisons with the baseline inside the cell (empty when too small).
    pub comparisons: Vec<ComparisonRow>,
}
