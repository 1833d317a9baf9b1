//! One system compared with the baseline on one metric: delta, both paired
//! tests, Holm adjustment across systems, wins/losses/ties and the minimum
//! detectable difference, bundled for the report.
//!
//! Data flow: `eval` (one value per evaluated query and system) →
//! **`stats`** → `report`. The report never computes a number: everything a
//! comparison row prints is a field here.

use super::holm::holm;
use super::power::min_detectable_difference;
use super::randomization::{randomization_test, EXACT_MAX_QUERIES};
use super::summary::mean;
use super::t_test::paired_t_test;
use super::wins::{wins_losses_ties, WinsLossesTies};
use crate::parallel::map_indexed;

/// Settings of the statistics; `Default` holds the documented defaults.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct StatSettings {
    /// Random sign assignments B of the sampled randomization test (used
    /// only with more than 16 queries). Default 10,000 (metrics.md).
    pub permutations: u32,
    /// Seed of every generator (randomization test and bootstrap). Default
    /// [`StatSettings::DEFAULT_SEED`]. Every comparison uses the same seed, so
    /// adding or removing a system never changes another system's p-value.
    pub seed: u64,
    /// Bootstrap resamples B of the confidence intervals. Default 10,000
    /// (metrics.md).
    pub bootstrap_resamples: u32,
    /// Significance level α of the minimum detectable difference. Default
    /// 0.05.
    pub alpha: f64,
    /// Power 1 − β of the minimum detectable difference. Default 0.8
    /// (Cohen 1988's conventional choice, from memory).
    pub power: f64,
    /// Threads the batch functions ([`compare_families`],
    /// [`bootstrap_cis`](super::bootstrap_cis)) spread their work over.
    /// Default 1. No result depends on it: every random draw comes from a
    /// stream keyed by the seed and the draw's own number.
    pub threads: usize,
}

impl StatSettings {
    /// The default seed: any fixed number works; this one is arbitrary.
    pub const DEFAULT_SEED: u64 = 42;
}

impl Default for StatSettings {
    fn default() -> StatSettings {
        StatSettings {
            permutations: 10_000,
            seed: StatSettings::DEFAULT_SEED,
            bootstrap_resamples: 10_000,
            alpha: 0.05,
            power: 0.8,
            threads: 1,
        }
    }
}

/// A system compared with the baseline on one metric, paired over the
/// evaluated queries.
#[derive(Clone, Debug, PartialEq)]
pub struct PairedComparison {
    /// Number of evaluated queries n (the length of both value lists).
    pub n: usize,
    /// Mean of the system's values; `None` when n = 0.
    pub mean_system: Option<f64>,
    /// Mean of the baseline's values; `None` when n = 0.
    pub mean_baseline: Option<f64>,
    /// mean(system) − mean(baseline); `None` when n = 0.
    pub delta: Option<f64>,
    /// Two-sided paired t-test p ([`paired_t_test`]); `None` when n < 2.
    pub p_ttest: Option<f64>,
    /// Two-sided paired randomization p ([`randomization_test`]); `None`
    /// when n < 2.
    pub p_randomization: Option<f64>,
    /// Whether `p_randomization` is the exact enumeration (n ≤ 16) rather
    /// than a sampled estimate.
    pub randomization_exact: bool,
    /// `p_randomization` after Holm's adjustment over every system compared
    /// with the same baseline on the same metric ([`compare_with_baseline`]);
    /// [`compare_paired`] alone sees a family of one, where Holm changes
    /// nothing, so it equals `p_randomization` there.
    pub p_randomization_holm: Option<f64>,
    /// Per-query wins, losses and ties of the system.
    pub wins_losses_ties: WinsLossesTies,
    /// Minimum detectable difference at the settings' α and power
    /// ([`min_detectable_difference`]); `None` when n < 2.
    pub min_detectable: Option<f64>,
}

impl PairedComparison {
    /// Why no significance test was computed, for the report's warning
    /// (metrics.md: "With n < 2 no test is computed … a warning says why");
    /// `None` when the tests ran.
    pub fn no_test_reason(&self) -> Option<String> {
        if self.p_ttest.is_some() && self.p_randomization.is_some() {
            None
        } else if self.n < 2 {
            Some(format!(
                "{} evaluated quer{}: a paired test needs at least 2",
                self.n,
                if self.n == 1 { "y" } else { "ies" }
            ))
        } else {
            Some("a per-query value is not a finite number".to_string())
        }
    }
}

/// Compares `system` with `baseline`, both holding one metric value per
/// evaluated query in the same query order.
///
/// The slices must have equal length (an invariant of the caller, asserted
/// in debug builds); in a release build a mismatch leaves every paired
/// statistic `None` rather than pairing the wrong queries.
pub fn compare_paired(
    system: &[f64],
    baseline: &[f64],
    settings: &StatSettings,
) -> PairedComparison {
    debug_assert_eq!(system.len(), baseline.len(), "paired values per query");
    let paired = system.len() == baseline.len();
    let n = system.len().min(baseline.len());
    let mean_system = mean(system).filter(|_| paired);
    let mean_baseline = mean(baseline).filter(|_| paired);
    let delta = mean_system.zip(mean_baseline).map(|(s, b)| s - b);
    let p_randomization =
        randomization_test(system, baseline, settings.permutations, settings.seed);
    PairedComparison {
        n,
        mean_system,
        mean_baseline,
        delta,
        p_ttest: paired_t_test(system, baseline),
        p_randomization,
        randomization_exact: p_randomization.is_some() && n <= EXACT_MAX_QUERIES,
        p_randomization_holm: p_randomization,
        wins_losses_ties: if paired {
            wins_losses_ties(system, baseline)
        } else {
            WinsLossesTies::default()
        },
        min_detectable: min_detectable_difference(system, baseline, settings.alpha, settings.power),
    }
}

/// Compares every system with the baseline on one metric and Holm-adjusts
/// the randomization p-values over that family (metrics.md: m = number of
/// systems − 1, the baseline itself excluded — pass only the other systems).
///
/// Returns one comparison per entry of `systems`, in the same order.
pub fn compare_with_baseline(
    baseline: &[f64],
    systems: &[&[f64]],
    settings: &StatSettings,
) -> Vec<PairedComparison> {
    compare_families(&[(baseline, systems.to_vec())], settings)
        .into_iter()
        .next()
        .unwrap_or_default()
}

/// [`compare_with_baseline`] of several families at once (typically one
/// per metric): entry f holds family f's comparisons, each exactly what
/// `compare_with_baseline(baseline, systems, settings)` gives for it. The
/// comparisons of every family are spread over `settings.threads` threads
/// together, so a few systems per family still keep every core busy.
pub fn compare_families(
    families: &[(&[f64], Vec<&[f64]>)],
    settings: &StatSettings,
) -> Vec<Vec<PairedComparison>> {
    let pairs: Vec<(&[f64], &[f64])> = families
        .iter()
        .flat_map(|(baseline, systems)| systems.iter().map(move |system| (*system, *baseline)))
        .collect();
    let mut done = map_indexed(pairs.len(), settings.threads, |i| {
        pairs.get(i).map(|(system, baseline)| compare_paired(system, baseline, settings))
    })
    .into_iter()
    .flatten();
    families
        .iter()
        .map(|(_, systems)| {
            let mut comparisons: Vec<PairedComparison> =
                done.by_ref().take(systems.len()).collect();
            let raw: Vec<Option<f64>> = comparisons.iter().map(|c| c.p_randomization).collect();
            for (comparison, adjusted) in comparisons.iter_mut().zip(holm(&raw)) {
                comparison.p_randomization_holm = adjusted;
            }
            comparisons
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    #[test]
    fn defaults_are_the_documented_ones() {
        // metrics.md: B = 10,000 for both the randomization test and the
        // bootstrap.
        let settings = StatSettings::default();
        assert_eq!(settings.permutations, 10_000);
        assert_eq!(settings.bootstrap_resamples, 10_000);
        assert_eq!(settings.seed, 42);
        assert_eq!((settings.alpha, settings.power), (0.05, 0.8));
        assert_eq!(settings.threads, 1);
    }

    #[test]
    fn bundles_every_statistic() {
        // Diffs 1, 2, 4 (see randomization.rs: exact p = 0.25); values are
        // dyadic so every mean is exact.
        let system = [1.0, 2.5, 4.25];
        let baseline = [0.0, 0.5, 0.25];
        let c = compare_paired(&system, &baseline, &StatSettings::default());
        assert_eq!(c.n, 3);
        assert_eq!(c.mean_system, Some(7.75 / 3.0));
        assert_eq!(c.mean_baseline, Some(0.75 / 3.0));
        assert_relative_eq!(c.delta.expect("n = 3"), 7.0 / 3.0, max_relative = 1e-15);
        assert_eq!(c.p_randomization, Some(0.25));
        assert!(c.randomization_exact);
        assert_eq!(c.p_randomization_holm, Some(0.25));
        assert_eq!(c.p_ttest, paired_t_test(&system, &baseline));
        assert!(c.p_ttest.is_some_and(|p| p > 0.0 && p < 1.0));
        assert_eq!(c.wins_losses_ties, WinsLossesTies { wins: 3, losses: 0, ties: 0 });
        assert_eq!(c.min_detectable, min_detectable_difference(&system, &baseline, 0.05, 0.8));
        assert_eq!(c.no_test_reason(), None);
    }

    #[test]
    fn fewer_than_two_queries_has_no_test_and_says_why() {
        let c = compare_paired(&[0.5], &[0.25], &StatSettings::default());
        assert_eq!((c.n, c.delta), (1, Some(0.25)));
        assert_eq!((c.p_ttest, c.p_randomization, c.min_detectable), (None, None, None));
        assert!(!c.randomization_exact);
        assert_eq!(c.wins_losses_ties, WinsLossesTies { wins: 1, losses: 0, ties: 0 });
        assert_eq!(
            c.no_test_reason().as_deref(),
            Some("1 evaluated query: a paired test needs at least 2")
        );
        let empty = compare_paired(&[], &[], &StatSettings::default());
        assert_eq!((empty.n, empty.delta, empty.mean_system), (0, None, None));
        assert_eq!(
            empty.no_test_reason().as_deref(),
            Some("0 evaluated queries: a paired test needs at least 2")
        );
    }

    #[test]
    fn holm_runs_over_the_family() {
        // Three systems against one baseline, n = 3 so each p is exact:
        // diffs 1, 2, 4 → 0.25; diffs 1, 1, 2 → 0.25; diffs 1, −1, 2 → 0.75
        // (hand counts in randomization.rs). Holm with m = 3: sorted
        // 0.25, 0.25, 0.75 × 3, 2, 1 = 0.75, 0.5, 0.75 → running max
        // 0.75, 0.75, 0.75.
        let baseline = [0.0, 0.0, 0.0];
        let a = [1.0, 2.0, 4.0];
        let b = [1.0, 1.0, 2.0];
        let c = [1.0, -1.0, 2.0];
        let rows = compare_with_baseline(&baseline, &[&a, &b, &c], &StatSettings::default());
        let raw: Vec<Option<f64>> = rows.iter().map(|r| r.p_randomization).collect();
        assert_eq!(raw, [Some(0.25), Some(0.25), Some(0.75)]);
        let adjusted: Vec<Option<f64>> = rows.iter().map(|r| r.p_randomization_holm).collect();
        assert_eq!(adjusted, [Some(0.75), Some(0.75), Some(0.75)]);
        // Order of systems does not change any row's numbers.
        let reversed = compare_with_baseline(&baseline, &[&c, &b, &a], &StatSettings::default());
        assert_eq!(reversed[2], rows[0]);
    }

    #[test]
    fn same_inputs_give_identical_results() {
        let system: Vec<f64> = (0..40).map(|i| f64::from((i * 31 + 5) % 97) / 97.0).collect();
        let baseline: Vec<f64> = (0..40).map(|i| f64::from((i * 17 + 3) % 89) / 89.0).collect();
        let settings = StatSettings { permutations: 2_000, ..StatSettings::default() };
        let first = compare_paired(&system, &baseline, &settings);
        assert!(!first.randomization_exact);
        assert_eq!(compare_paired(&system, &baseline, &settings), first);
    }
}
