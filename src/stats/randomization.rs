//! Two-sided paired randomization (sign-flip) test (Fisher 1935; Smucker,
//! Allan & Carterette, CIKM 2007) of a system against the baseline.
//!
//! Data flow: `eval` → **`stats`** → `report`. Under the null hypothesis the
//! two systems are exchangeable on every query, so each paired difference is
//! as likely to have either sign; the p-value is the share of sign
//! assignments whose mean difference is at least as far from 0 as the one
//! observed.
//!
//! Determinism: the exact test has no randomness; the sampled test draws from
//! a ChaCha20 generator seeded with the caller's seed, single-threaded, so the
//! same input and seed give the same p on every machine and thread count.

use rand::{RngCore, SeedableRng};
use rand_chacha::ChaCha20Rng;

use super::summary::differences;

/// Largest number of queries for which every sign assignment is enumerated
/// (metrics.md: "With n ≤ 16 queries, enumerate all 2^n assignments").
pub const EXACT_MAX_QUERIES: usize = 16;

/// Absolute tolerance when comparing a permuted |mean difference| with the
/// observed one (metrics.md).
const TOLERANCE: f64 = 1e-12;

/// Two-sided p-value of the paired randomization test of `system` against
/// `baseline` (metrics.md, "Paired randomization (sign-flip) test").
///
/// With d_i = system_i − baseline_i and the observed statistic
/// |mean(d)|, a sign assignment s counts when |mean(s_i · d_i)| ≥
/// |mean(d)| − 1e-12 (absolute tolerance, so an observed mean difference of 0
/// gives p = 1):
/// - n ≤ 16: all 2^n assignments are enumerated and p = c / 2^n exactly,
///   whatever `permutations` says;
/// - n > 16: B = `permutations` assignments are drawn and
///   p = (c + 1) / (B + 1). For each assignment the generator
///   (ChaCha20 seeded with `seed` via `seed_from_u64`) yields ⌈n/64⌉ 64-bit
///   words; bit i mod 64 of word i / 64 set flips the sign of d_i. With
///   B = 0 the formula gives p = 1.
///
/// `None` when n < 2 (no test), when the slices differ in length, or when a
/// value is not finite.
pub fn randomization_test(
    system: &[f64],
    baseline: &[f64],
    permutations: u32,
    seed: u64,
) -> Option<f64> {
    let diffs = differences(system, baseline)?;
    if diffs.len() < 2 || diffs.iter().any(|d| !d.is_finite()) {
        return None;
    }
    if diffs.len() <= EXACT_MAX_QUERIES {
        Some(exact_p(&diffs))
    } else {
        Some(sampled_p(&diffs, permutations, seed))
    }
}

/// Sum of the differences with the signs given by `flips` (bit i set flips
/// d_i), in index order.
///
/// Every statistic, the observed one included, goes through this one
/// function (or, for the exact test, the same index-order sums split into two
/// halves), so float rounding never depends on the order the assignments are
/// visited in; the 1e-12 tolerance only has to absorb the rounding between
/// assignments whose sums are mathematically equal.
fn signed_sum(diffs: &[f64], flips: &[u64]) -> f64 {
    let mut sum = 0.0;
    for (i, d) in diffs.iter().enumerate() {
        let word = flips.get(i / 64).copied().unwrap_or(0);
        if (word >> (i % 64)) & 1 == 1 {
            sum -= d;
        } else {
            sum += d;
        }
    }
    sum
}

/// Exact p = c / 2^n by enumerating every sign assignment (n ≤ 16).
///
/// Meet-in-the-middle: the signed sums of the first ⌈n/2⌉ and of the last
/// ⌊n/2⌋ differences are tabulated once (at most 2 · 256 sums), and each of
/// the 2^n assignments costs one addition of a low-half and a high-half
/// entry. The observed statistic is the all-plus assignment computed the same
/// way, and negating every sign negates each half-sum exactly (IEEE rounding
/// is symmetric), so the mirror assignment ties the observed one exactly.
fn exact_p(diffs: &[f64]) -> f64 {
    debug_assert!(diffs.len() <= EXACT_MAX_QUERIES);
    let low_len = diffs.len().div_ceil(2);
    let (low, high) = diffs.split_at(low_len);
    let half_sums = |half: &[f64]| -> Vec<f64> {
        (0..1u64 << half.len()).map(|mask| signed_sum(half, &[mask])).collect()
    };
    let low_sums = half_sums(low);
    let high_sums = half_sums(high);
    let n = diffs.len() as f64;
    let observed = ((low_sums[0] + high_sums[0]) / n).abs();
    let threshold = observed - TOLERANCE;
    let mut count: u64 = 0;
    for high_sum in &high_sums {
        for low_sum in &low_sums {
            if ((low_sum + high_sum) / n).abs() >= threshold {
                count += 1;
            }
        }
    }
    count as f64 / (1u64 << diffs.len()) as f64
}

/// Sampled p = (c + 1) / (B + 1) over `permutations` seeded random sign
/// assignments.
fn sampled_p(diffs: &[f64], permutations: u32, seed: u64) -> f64 {
    let n = diffs.len() as f64;
    let observed = (signed_sum(diffs, &[]) / n).abs();
    let threshold = observed - TOLERANCE;
    let mut rng = ChaCha20Rng::seed_from_u64(seed);
    let mut flips = vec![0u64; diffs.len().div_ceil(64)];
    let mut count: u64 = 0;
    for _ in 0..permutations {
        for word in flips.iter_mut() {
            *word = rng.next_u64();
        }
        if (signed_sum(diffs, &flips) / n).abs() >= threshold {
            count += 1;
        }
    }
    (count + 1) as f64 / (u64::from(permutations) + 1) as f64
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Exact p by brute force, independent of `exact_p`'s half tables: every
    /// mask, summed in index order, compared with the observed mean.
    fn brute_force_p(diffs: &[f64]) -> f64 {
        let n = diffs.len() as f64;
        let observed = (diffs.iter().sum::<f64>() / n).abs();
        let total = 1u64 << diffs.len();
        let count = (0..total)
            .filter(|&mask| (signed_sum(diffs, &[mask]) / n).abs() >= observed - TOLERANCE)
            .count();
        count as f64 / total as f64
    }

    #[test]
    fn exact_hand_counted_n3() {
        // Hand enumeration (definition in metrics.md): diffs 1, 2, 4, observed
        // |mean| = 7/3. The 8 sign assignments give sums
        //   +1+2+4 = 7   -1+2+4 = 5   +1-2+4 = 3   -1-2+4 = 1
        //   +1+2-4 = -1  -1+2-4 = -3  +1-2-4 = -5  -1-2-4 = -7
        // and |sum| ≥ 7 for 2 of them, so p = 2/8 = 0.25.
        let p = randomization_test(&[1.0, 2.0, 4.0], &[0.0, 0.0, 0.0], 10, 1);
        assert_eq!(p, Some(0.25));
        // Diffs 1, 1, 2 (observed sum 4): sums 4, 2, 2, 0, 0, -2, -2, -4, so
        // |sum| ≥ 4 for 2 of 8 → 0.25; against observed sum 2 with diffs
        // 1, -1, 2: sums 2, 4, 0, 2, -2, 0, -4, -2 → |sum| ≥ 2 for 6 of 8.
        assert_eq!(randomization_test(&[1.0, 1.0, 2.0], &[0.0; 3], 10, 1), Some(0.25));
        assert_eq!(randomization_test(&[1.0, -1.0, 2.0], &[0.0; 3], 10, 1), Some(0.75));
    }

    #[test]
    fn exact_hand_counted_n2_and_ties_within_tolerance() {
        // Diffs 0.5, 0.5 (n = 2): sums 1, 0, 0, -1 → 2 of 4 reach |1| → 0.5.
        assert_eq!(randomization_test(&[0.75, 1.0], &[0.25, 0.5], 10, 1), Some(0.5));
        // Diffs 0.1, 0.2, −0.2 (observed |sum| = 0.1): the 8 sums are
        //   +0.1+0.2−0.2 = 0.1   −0.1+0.2−0.2 = −0.1   +0.1−0.2−0.2 = −0.3
        //   −0.1−0.2−0.2 = −0.5  +0.1+0.2+0.2 = 0.5    −0.1+0.2+0.2 = 0.3
        //   +0.1−0.2+0.2 = 0.1   −0.1−0.2+0.2 = −0.1
        // so every one reaches 0.1 and p = 1. In binary, 0.1 + 0.2 − 0.2 is
        // 0.10000000000000003 while +0.1 − 0.2 + 0.2 is 0.1, so without the
        // 1e-12 tolerance two of the ties would be lost and p would be 0.75
        // (checked in Python with the same index-order sums).
        let system = [0.1, 0.2, 0.0];
        let baseline = [0.0, 0.0, 0.2];
        assert_eq!(randomization_test(&system, &baseline, 10, 1), Some(1.0));
        let diffs = differences(&system, &baseline).expect("same length");
        assert_eq!(brute_force_p(&diffs), 1.0);
    }

    #[test]
    fn observed_zero_gives_p_one() {
        // metrics.md: the tolerance is absolute, so observed mean 0 → p = 1,
        // for the exact (n ≤ 16) and for the sampled (n > 16) test alike.
        let system = [0.2, 0.4, 0.1, 0.3];
        let baseline = [0.4, 0.2, 0.3, 0.1];
        assert_eq!(randomization_test(&system, &baseline, 100, 7), Some(1.0));
        let same: Vec<f64> = (0..30).map(|i| f64::from(i) / 30.0).collect();
        assert_eq!(randomization_test(&same, &same, 1000, 7), Some(1.0));
    }

    #[test]
    fn edge_rules() {
        assert_eq!(randomization_test(&[0.5], &[0.1], 100, 1), None);
        assert_eq!(randomization_test(&[0.5, 0.2], &[0.1], 100, 1), None);
        assert_eq!(randomization_test(&[0.5, f64::INFINITY], &[0.1, 0.2], 100, 1), None);
        // n > 16 with B = 0: p = (0 + 1) / (0 + 1).
        let system: Vec<f64> = (0..20).map(|i| f64::from(i) / 20.0).collect();
        let baseline = vec![0.0; 20];
        assert_eq!(randomization_test(&system, &baseline, 0, 1), Some(1.0));
    }

    #[test]
    fn exact_matches_brute_force_for_n16() {
        // Cross-check of the half-table enumeration against the plain
        // definition on n = 16 (65,536 assignments), metric-like values.
        let system: Vec<f64> = (0..16).map(|i| f64::from((i * 37 + 11) % 100) / 100.0).collect();
        let baseline: Vec<f64> = (0..16).map(|i| f64::from((i * 53 + 29) % 100) / 100.0).collect();
        let diffs = differences(&system, &baseline).expect("same length");
        let p = randomization_test(&system, &baseline, 1, 1).expect("n = 16");
        assert_eq!(p, brute_force_p(&diffs));
        assert!(p > 0.0 && p < 1.0, "p = {p}");
        // `permutations` is ignored for n ≤ 16.
        assert_eq!(randomization_test(&system, &baseline, 5, 99), Some(p));
    }

    #[test]
    fn sampled_close_to_exact_and_reproducible() {
        // n = 20 (sampled, > 16), shifted so that the exact p is near the
        // usual 0.05 threshold (about 0.064); the exact value by brute force
        // over the 2^20 masks takes well under 2 s even in a debug build.
        let system: Vec<f64> = (0..20).map(|i| f64::from((i * 41 + 7) % 100) / 100.0).collect();
        let baseline: Vec<f64> =
            (0..20).map(|i| f64::from((i * 59 + 3) % 100) / 100.0 - 0.2).collect();
        let diffs = differences(&system, &baseline).expect("same length");
        let exact = brute_force_p(&diffs);
        let b = 10_000u32;
        let sampled = randomization_test(&system, &baseline, b, 42).expect("n = 20");
        // The sampled p estimates the exact one with binomial standard error
        // √(p(1 − p)/B) (plus the (c + 1)/(B + 1) shift of at most 1/(B + 1));
        // 4 standard errors leave a false-failure chance below 1e-4 for any
        // seed (normal approximation to the binomial, common practice).
        let se = (exact * (1.0 - exact) / f64::from(b)).sqrt();
        assert!(exact > 0.01 && exact < 0.99, "exact = {exact}: pick a less extreme case");
        assert!(
            (sampled - exact).abs() <= 4.0 * se + 1.0 / f64::from(b + 1),
            "sampled {sampled} vs exact {exact} (se {se})"
        );
        // Same seed → same p, bit for bit; another seed is still close.
        assert_eq!(randomization_test(&system, &baseline, b, 42), Some(sampled));
        let other = randomization_test(&system, &baseline, b, 43).expect("n = 20");
        assert!((other - exact).abs() <= 4.0 * se + 1.0 / f64::from(b + 1));
    }
}
