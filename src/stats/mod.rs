//! Statistics over per-query metric values (metrics.md, "Statistics"):
//! paired t and randomization tests, Holm–Bonferroni adjustment, percentile
//! bootstrap intervals, wins/losses/ties and the minimum detectable
//! difference.
//!
//! Data flow: `input` → `analysis` → `index` → `search` → `eval` →
//! **`stats`** → `report`. `eval` produces one value per evaluated query for
//! each chain; `stats` turns two such lists (a system and the baseline,
//! paired by query order) into the numbers a report row prints. Everything
//! here is a pure function of plain `f64` slices plus a seed: no tantivy, no
//! eval types, no I/O. The sampled statistics draw from keyed counter-based
//! streams (`stream.rs`), one per permutation or resample, so identical
//! inputs and seed give bit-identical results on every run and for any
//! number of threads (`StatSettings::threads`, used by the batch functions
//! [`compare_families`] and [`bootstrap_cis`]).
//!
//! ```
//! use postassay::stats::{bootstrap_ci, compare_with_baseline, StatSettings};
//!
//! // nDCG@10 per query, same query order on every side.
//! let baseline = [0.50, 0.25, 0.75, 0.00];
//! let stemmed = [0.75, 0.50, 0.75, 0.25];
//! let folded = [0.50, 0.25, 0.50, 0.00];
//! let settings = StatSettings::default();
//! let rows = compare_with_baseline(&baseline, &[&stemmed, &folded], &settings);
//! assert_eq!(rows[0].delta, Some(0.1875));
//! // 4 queries: the randomization p is exact. Diffs 0.25, 0.25, 0, 0.25
//! // reach |mean| ≥ 0.1875 only when the three non-zero ones share a sign
//! // (2 ways, times 2 for the zero's sign): 4 of 16 assignments.
//! assert_eq!(rows[0].p_randomization, Some(0.25));
//! assert_eq!(rows[0].wins_losses_ties.wins, 3);
//! let (low, high) =
//!     bootstrap_ci(&stemmed, settings.bootstrap_resamples, settings.seed).expect("4 values");
//! assert!(low <= 0.5625 && 0.5625 <= high);
//! ```

mod bootstrap;
mod comparison;
mod holm;
mod power;
mod randomization;
mod stream;
mod summary;
mod t_test;
mod wins;

pub use bootstrap::{bootstrap_ci, bootstrap_cis, CONFIDENCE};
pub use comparison::{
    compare_families, compare_paired, compare_with_baseline, PairedComparison, StatSettings,
};
pub use holm::holm;
pub use power::min_detectable_difference;
pub use randomization::{randomization_test, EXACT_MAX_QUERIES};
pub use summary::{differences, mean, sample_sd};
pub use t_test::paired_t_test;
pub use wins::{wins_losses_ties, WinsLossesTies, TIE_TOLERANCE};

#[cfg(test)]
mod tests {
    //! Fixture readers shared by the unit tests of the `stats` files.
    use serde::Deserialize;

    /// One case of `tests/fixtures/stats/scipy_stats.json`.
    #[derive(Deserialize)]
    pub(crate) struct ScipyCase {
        pub(crate) name: String,
        pub(crate) system: Vec<f64>,
        pub(crate) baseline: Vec<f64>,
        pub(crate) p_ttest_rel: f64,
        pub(crate) t_quantile_1_minus_alpha_over_2: f64,
        pub(crate) t_quantile_power: f64,
        pub(crate) sd_diff: f64,
        pub(crate) min_detectable_difference: f64,
    }

    /// The fixture written by `scripts/scipy_stats.py`.
    #[derive(Deserialize)]
    pub(crate) struct ScipyFixture {
        pub(crate) alpha: f64,
        pub(crate) power: f64,
        pub(crate) cases: Vec<ScipyCase>,
    }

    /// Reads the scipy fixture (committed with the crate, so it must exist).
    pub(crate) fn scipy_fixture() -> ScipyFixture {
        let path = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/fixtures/stats/scipy_stats.json");
        let text = std::fs::read_to_string(path).expect("committed fixture is readable");
        serde_json::from_str(&text).expect("committed fixture is valid JSON")
    }
}
