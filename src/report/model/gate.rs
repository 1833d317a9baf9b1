//! The gate part of the report model: what `postassay gate` found when it
//! compared two reports, as plain data. `gate` fills it (and decides each
//! verdict: the arithmetic of these types stays there); `report` renders
//! it as Markdown and JUnit XML.

use std::path::PathBuf;

use crate::ids::ChainName;

/// The limits of the drop of one metric. Both `None`: no drop is allowed.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Limit {
    /// Largest allowed absolute drop of the mean.
    pub absolute: Option<f64>,
    /// Largest allowed drop in percent of the baseline mean.
    pub relative_percent: Option<f64>,
}

/// The outcome of one system × metric check.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub enum Verdict {
    /// No drop (equal within `gate::DROP_TOLERANCE`, or better).
    Pass,
    /// Dropped, but no more than the limit allows.
    WithinLimit,
    /// Dropped beyond the limit, but the paired test is not significant and
    /// significance is required.
    NotSignificant,
    /// A regression: the gate fails.
    Regression,
    /// A diagnostic metric (`unjudged@k`): shown, never gated.
    NotGated,
}

/// One system × metric comparison.
#[derive(Debug, Clone, PartialEq)]
pub struct Check {
    /// The system (chain or run name).
    pub system: ChainName,
    /// The metric key.
    pub metric: String,
    /// Mean in the baseline report.
    pub baseline_mean: f64,
    /// Mean in the current report.
    pub current_mean: f64,
    /// The limit that applied.
    pub limit: Limit,
    /// Queries evaluated in both reports (the pairs of the tests).
    pub paired_queries: usize,
    /// Two-sided paired randomization test p (None with fewer than 2 pairs).
    pub p_randomization: Option<f64>,
    /// Two-sided paired t-test p (None with fewer than 2 pairs).
    pub p_ttest: Option<f64>,
    /// The decision.
    pub verdict: Verdict,
}

/// A system of the baseline report that the current report lacks.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct MissingSystem {
    /// Its name.
    pub system: ChainName,
    /// Whether the caller allowed it to go (`--allow-missing`); if not, the
    /// gate fails.
    pub allowed: bool,
}

/// A chain whose definition differs between the two reports (often the
/// point of the change under review: shown, never refused).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct DefinitionChange {
    /// The chain.
    pub system: ChainName,
    /// Each part that differs
    /// ([`definition_parts`](crate::report::text::definition_parts)): the part, the
    /// baseline's settings and the current ones (`none` where a part is
    /// absent).
    pub parts: Vec<(String, String, String)>,
}

/// Everything the gate found, ready to render.
#[derive(Debug, Clone, PartialEq)]
pub struct GateOutcome {
    /// The baseline `report.json`.
    pub baseline_path: PathBuf,
    /// The current `report.json`.
    pub current_path: PathBuf,
    /// Checks in the current report's system order, then its metric order.
    pub checks: Vec<Check>,
    /// Systems of the baseline absent from the current report, in the
    /// baseline's order.
    pub missing: Vec<MissingSystem>,
    /// Chains of both reports whose definition changed.
    pub changed_definitions: Vec<DefinitionChange>,
    /// Systems or metrics present in one report only, differences allowed
    /// through, and other notes; never failures.
    pub warnings: Vec<String>,
    /// Whether only significant drops fail.
    pub require_significance: bool,
    /// The significance level.
    pub alpha: f64,
    /// Seed of the randomization test.
    pub seed: u64,
    /// Sampled sign assignments of the randomization test (n > 16).
    pub permutations: u32,
}
