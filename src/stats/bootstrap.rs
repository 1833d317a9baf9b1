//! 95% percentile-bootstrap confidence interval of a system's mean metric
//! over queries (Efron & Tibshirani, *An Introduction to the Bootstrap*,
//! 1993, ch. 13; chapter from memory).
//!
//! Data flow: `eval` → **`stats`** → `report`. Works on one system's
//! per-query values (not on differences); the report prints the interval
//! beside the mean.
//!
//! Determinism: one ChaCha20 generator seeded with the caller's seed, drawn
//! from in a fixed order on one thread.

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha20Rng;

/// Coverage of the interval (metrics.md: "95% confidence interval").
pub const CONFIDENCE: f64 = 0.95;

/// 95% percentile-bootstrap interval `(low, high)` of the mean of `values`.
///
/// Each of the `resamples` bootstrap samples draws n values with replacement
/// (index = `gen_range(0..n)` on u64 from ChaCha20 seeded with `seed` via
/// `seed_from_u64`, n draws per sample in order) and takes their mean. The
/// bounds are the 2.5% and 97.5% quantiles of the sorted means with linear
/// interpolation between order statistics — Hyndman & Fan (The American
/// Statistician 50(4) 1996) type 7, the default of R's `quantile` and of
/// numpy's `percentile`: with sorted means x_0 ≤ … ≤ x_{B−1} and
/// h = (B − 1) q, the q-quantile is x_⌊h⌋ + (h − ⌊h⌋)(x_⌊h⌋+1 − x_⌊h⌋).
///
/// Each resample mean is computed as r + Σ(v − r)/n with r the first input
/// value, so a constant input gives exactly that constant as every mean and a
/// degenerate interval at it (a plain Σv/n can be off by an ulp).
///
/// `None` when `values` holds fewer than two values, `resamples` is 0 or a
/// value is not finite. One value has no spread to resample: every resample
/// would repeat it and the "interval" would be that value twice, which reads
/// as certainty; the reports leave the interval empty instead (metrics.md:
/// with n < 2 nothing is computed).
pub fn bootstrap_ci(values: &[f64], resamples: u32, seed: u64) -> Option<(f64, f64)> {
    let &reference = values.first()?;
    if values.len() < 2 || resamples == 0 || values.iter().any(|v| !v.is_finite()) {
        return None;
    }
    let n = values.len();
    let n_u64 = n as u64;
    let mut rng = ChaCha20Rng::seed_from_u64(seed);
    let mut means: Vec<f64> = (0..resamples)
        .map(|_| {
            let mut offset_sum = 0.0;
            for _ in 0..n {
                let index = rng.gen_range(0..n_u64) as usize;
                // `index < n` by construction of gen_range; 0.0 never happens.
                offset_sum += values.get(index).map_or(0.0, |v| v - reference);
            }
            reference + offset_sum / n as f64
        })
        .collect();
    means.sort_by(f64::total_cmp);
    let tail = (1.0 - CONFIDENCE) / 2.0;
    Some((quantile_type7(&means, tail)?, quantile_type7(&means, 1.0 - tail)?))
}

/// Hyndman–Fan type-7 quantile of an ascending slice; `None` when empty.
fn quantile_type7(sorted: &[f64], q: f64) -> Option<f64> {
    let last = sorted.len().checked_sub(1)?;
    let h = last as f64 * q.clamp(0.0, 1.0);
    let below = (h.floor() as usize).min(last);
    let above = (below + 1).min(last);
    let low = *sorted.get(below)?;
    let high = *sorted.get(above)?;
    Some(low + (h - below as f64) * (high - low))
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    /// Deterministic metric-like values in [0, 1] (a fixed linear
    /// congruential pattern, so the tests need no generator of their own).
    fn spread_values(n: usize) -> Vec<f64> {
        (0..n).map(|i| ((i * 7919 + 13) % 1000) as f64 / 1000.0).collect()
    }

    #[test]
    fn type7_quantile_matches_hand_values() {
        // Hyndman & Fan 1996 type 7 on 1, 2, 3, 4: h = 3q. q = 0.5 → h = 1.5
        // → 2.5; q = 0.025 → h = 0.075 → 1.075; q = 0.975 → h = 2.925 → 3.925
        // (numpy.percentile([1, 2, 3, 4], [2.5, 50, 97.5]) gives the same
        // values with its default method; from memory).
        let sorted = [1.0, 2.0, 3.0, 4.0];
        assert_relative_eq!(quantile_type7(&sorted, 0.5).expect("non-empty"), 2.5);
        assert_relative_eq!(quantile_type7(&sorted, 0.025).expect("non-empty"), 1.075);
        assert_relative_eq!(quantile_type7(&sorted, 0.975).expect("non-empty"), 3.925);
        assert_eq!(quantile_type7(&[7.0], 0.975), Some(7.0));
        assert_eq!(quantile_type7(&[], 0.5), None);
    }

    #[test]
    fn interval_contains_the_mean() {
        let values = spread_values(40);
        let mean = values.iter().sum::<f64>() / values.len() as f64;
        let (low, high) = bootstrap_ci(&values, 2_000, 42).expect("40 values");
        assert!(low < mean && mean < high, "{low} < {mean} < {high}");
        // The standard error of the mean of a spread over [0, 1] with 40
        // queries is about 0.29 / √40 ≈ 0.046, so a 95% interval is roughly
        // ±0.09; a much wider or narrower one means a broken resampler.
        assert!(high - low > 0.1 && high - low < 0.3, "width {}", high - low);
    }

    #[test]
    fn narrows_with_more_queries() {
        // Same distribution, 4 times the queries: the width should roughly
        // halve (standard error ∝ 1/√n, Efron & Tibshirani 1993 ch. 5).
        let (low_small, high_small) = bootstrap_ci(&spread_values(25), 2_000, 1).expect("25");
        let (low_large, high_large) = bootstrap_ci(&spread_values(100), 2_000, 1).expect("100");
        let ratio = (high_large - low_large) / (high_small - low_small);
        assert!(ratio > 0.35 && ratio < 0.7, "width ratio {ratio}");
    }

    #[test]
    fn same_seed_same_bounds() {
        let values = spread_values(30);
        let first = bootstrap_ci(&values, 1_000, 9).expect("30 values");
        assert_eq!(bootstrap_ci(&values, 1_000, 9), Some(first));
        // Another seed draws other samples (bounds differ in the low bits).
        assert_ne!(bootstrap_ci(&values, 1_000, 10), Some(first));
    }

    #[test]
    fn constant_values_give_degenerate_interval() {
        // 0.1 is not dyadic: a plain sum / n would drift by an ulp.
        assert_eq!(bootstrap_ci(&[0.1; 7], 500, 3), Some((0.1, 0.1)));
        assert_eq!(bootstrap_ci(&[0.3, 0.3], 500, 3), Some((0.3, 0.3)));
    }

    #[test]
    fn refuses_what_it_cannot_compute() {
        assert_eq!(bootstrap_ci(&[], 500, 3), None);
        // One value: no spread to resample, no interval (not [0.3, 0.3]).
        assert_eq!(bootstrap_ci(&[0.3], 500, 3), None);
        assert_eq!(bootstrap_ci(&[0.5, 0.2], 0, 3), None);
        assert_eq!(bootstrap_ci(&[0.5, f64::NAN], 500, 3), None);
    }
}
