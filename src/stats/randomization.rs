//! Two-sided paired randomization (sign-flip) test (Fisher 1935; Smucker,
//! Allan & Carterette, CIKM 2007) of a system against the baseline.
//!
//! Data flow: `eval` → **`stats`** → `report`. Under the null hypothesis the
//! two systems are exchangeable on every query, so each paired difference is
//! as likely to have either sign; the p-value is the share of sign
//! assignments whose mean difference is at least as far from 0 as the one
//! observed.
//!
//! Determinism: the exact test has no randomness; the sampled test draws
//! each sign assignment from its own keyed counter-based stream
//! (Philox4x64-10 keyed by the caller's seed, see `stream.rs`), so the same
//! input and seed give the same p on every machine and thread count, and
//! whatever other tests run beside it.

use super::stream::{Purpose, Stream};
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
///   p = (c + 1) / (B + 1). Assignment b (0 ≤ b < B) is the first ⌈n/64⌉
///   64-bit words of the stream (`seed`, sign flips, b) (Philox4x64-10 with
///   key (seed, 1) and counter (block, b, 0, 0)); bit i mod 64 of word i / 64
///   set flips the sign of d_i. The signed sums add per-byte partial sums
///   (8 differences each, in index order) in block order. With B = 0 the
///   formula gives p = 1.
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
/// Every statistic of the exact test, the observed one included, goes
/// through this one function (the same index-order sums split into two
/// halves), and every statistic of the sampled test through
/// [`SignTables`], so float rounding never depends on the order the
/// assignments are visited in; the 1e-12 tolerance only has to absorb the rounding between
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
///
/// Assignment b is the words of stream (seed, sign flips, b) (`stream.rs`),
/// so it depends on the seed and b only. Its signed sum is read from
/// [`SignTables`]: one table lookup per 8 differences instead of a branch
/// per difference. Assignments go in batches of [`BATCH`]: block by block,
/// the batch's lookups all fall in one 2 KB table, which stays in the
/// processor's nearest cache, and the batch's sums are independent
/// additions. Each sum still adds its blocks in block order from 0, so the
/// batching changes no number.
fn sampled_p(diffs: &[f64], permutations: u32, seed: u64) -> f64 {
    let n = diffs.len() as f64;
    let tables = SignTables::new(diffs);
    let observed = (tables.signed_sum(&[]) / n).abs();
    let threshold = observed - TOLERANCE;
    let words = diffs.len().div_ceil(64);
    // Word w of assignment `first + p` at w · BATCH + p.
    let mut flips = vec![0u64; words * BATCH];
    let mut sums = [0.0f64; BATCH];
    let mut count: u64 = 0;
    let mut first = 0u32;
    while first < permutations {
        let batch = (permutations - first).min(BATCH as u32) as usize;
        for p in 0..batch {
            let mut stream = Stream::new(seed, Purpose::SignFlips, u64::from(first) + p as u64);
            for slot in flips.iter_mut().skip(p).step_by(BATCH) {
                *slot = stream.next_u64();
            }
        }
        sums.fill(0.0);
        for (j, table) in tables.tables.iter().enumerate() {
            let shift = (j % 8) * 8;
            let batch_words = flips.get((j / 8) * BATCH..(j / 8 + 1) * BATCH).unwrap_or_default();
            for (sum, word) in sums.iter_mut().zip(batch_words).take(batch) {
                *sum += table[((word >> shift) & 0xff) as usize];
            }
        }
        count += sums.iter().take(batch).filter(|s| (**s / n).abs() >= threshold).count() as u64;
        first += batch as u32;
    }
    (count + 1) as f64 / (u64::from(permutations) + 1) as f64
}

/// Sign assignments summed together by [`sampled_p`].
const BATCH: usize = 64;

/// Per-byte tables of partial signed sums: block j covers d_8j … d_8j+7,
/// and entry `byte` of its table is the sum of those eight differences, in
/// index order starting from 0, with d_8j+k negated when bit k of `byte` is
/// set (missing differences past n count as 0). A sign assignment's sum is
/// then Σ_j table_j[byte j of the flip words], added in block order from 0.
///
/// Negating every sign negates every table entry exactly (IEEE rounding is
/// symmetric) and so the whole sum: the mirror of the observed assignment
/// ties it exactly, as in the exact test.
struct SignTables {
    tables: Vec<[f64; 256]>,
}

impl SignTables {
    fn new(diffs: &[f64]) -> SignTables {
        let tables = diffs
            .chunks(8)
            .map(|block| {
                let mut table = [0.0f64; 256];
                // table over the first k differences of the block → over k + 1:
                // entry m + 2^k (bit k set) subtracts d_k, entry m adds it, so
                // every entry is a left-to-right sum in index order.
                let mut filled = 1usize;
                for d in block {
                    for m in 0..filled {
                        let partial = table[m];
                        table[m] = partial + d;
                        table[m + filled] = partial - d;
                    }
                    filled *= 2;
                }
                // Past the last difference each bit adds ±0, which leaves the
                // partial sum's value as it is: copy it up.
                while filled < 256 {
                    table.copy_within(0..filled, filled);
                    filled *= 2;
                }
                table
            })
            .collect();
        SignTables { tables }
    }

    /// The sum with the signs of `flips` (bit i of word i / 64 set flips
    /// d_i; missing words flip nothing).
    fn signed_sum(&self, flips: &[u64]) -> f64 {
        self.tables.iter().enumerate().fold(0.0, |sum, (j, table)| sum + table[byte(flips, j)])
    }
}

/// Byte j of the flip words (bits 8j … 8j + 7), 0 past the end.
#[inline]
fn byte(flips: &[u64], j: usize) -> usize {
    flips.get(j / 8).map_or(0, |w| ((w >> ((j % 8) * 8)) & 0xff) as usize)
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
        // n = 17 … 20 (sampled, > 16: forced through the byte tables and the
        // keyed streams), shifted so that the exact p is well inside (0, 1)
        // (about 0.06 for n = 20, near the usual 0.05 threshold); the exact
        // value by brute force over the 2^n masks (the definition, summed in
        // index order) takes well under 2 s even in a debug build.
        for (n, shift) in [(17, 0.15), (18, 0.12), (19, 0.18), (20, 0.2)] {
            let system: Vec<f64> = (0..n).map(|i| f64::from((i * 41 + 7) % 100) / 100.0).collect();
            let baseline: Vec<f64> =
                (0..n).map(|i| f64::from((i * 59 + 3) % 100) / 100.0 - shift).collect();
            let diffs = differences(&system, &baseline).expect("same length");
            let exact = brute_force_p(&diffs);
            let b = 10_000u32;
            let sampled = randomization_test(&system, &baseline, b, 42).expect("n > 16");
            // The sampled p estimates the exact one with binomial standard
            // error √(p(1 − p)/B) (plus the (c + 1)/(B + 1) shift of at most
            // 1/(B + 1)); 4 standard errors leave a false-failure chance below
            // 1e-4 for any seed (normal approximation to the binomial, common
            // practice).
            let se = (exact * (1.0 - exact) / f64::from(b)).sqrt();
            assert!(
                exact > 0.01 && exact < 0.99,
                "n = {n}: exact = {exact}: pick a less extreme case"
            );
            assert!(
                (sampled - exact).abs() <= 4.0 * se + 1.0 / f64::from(b + 1),
                "n = {n}: sampled {sampled} vs exact {exact} (se {se})"
            );
            // Same seed → same p, bit for bit; another seed is still close.
            assert_eq!(randomization_test(&system, &baseline, b, 42), Some(sampled));
            let other = randomization_test(&system, &baseline, b, 43).expect("n > 16");
            assert!((other - exact).abs() <= 4.0 * se + 1.0 / f64::from(b + 1), "n = {n}");
        }
    }

    #[test]
    fn table_sums_match_index_order_sums() {
        // The byte tables regroup the additions; every sign assignment's sum
        // must still equal the definition (index-order sum) up to rounding,
        // and the all-minus assignment must mirror the observed one exactly.
        let diffs: Vec<f64> =
            (0..77).map(|i| f64::from((i * 37 + 11) % 101) / 101.0 - 0.4).collect();
        let tables = SignTables::new(&diffs);
        let mut stream = Stream::new(9, Purpose::SignFlips, 0);
        for _ in 0..200 {
            let flips: Vec<u64> = (0..2).map(|_| stream.next_u64()).collect();
            let by_table = tables.signed_sum(&flips);
            let by_definition = signed_sum(&diffs, &flips);
            assert!((by_table - by_definition).abs() < 1e-12, "{by_table} vs {by_definition}");
        }
        let observed = tables.signed_sum(&[]);
        assert_eq!(tables.signed_sum(&[u64::MAX, u64::MAX]), -observed);
    }

    #[test]
    fn sampled_p_does_not_depend_on_the_batches() {
        // B not a multiple of the 64-assignment batches: the last batch is
        // shorter; p over B = 1001 must count the same assignments as one by
        // one.
        let system: Vec<f64> = (0..30).map(|i| f64::from((i * 41 + 7) % 100) / 100.0).collect();
        let baseline: Vec<f64> = (0..30).map(|i| f64::from((i * 59 + 3) % 100) / 100.0).collect();
        let diffs = differences(&system, &baseline).expect("same length");
        let n = diffs.len() as f64;
        let tables = SignTables::new(&diffs);
        let threshold = (tables.signed_sum(&[]) / n).abs() - TOLERANCE;
        let count = (0..1001u64)
            .filter(|&b| {
                let flips = [Stream::new(42, Purpose::SignFlips, b).next_u64()];
                (tables.signed_sum(&flips) / n).abs() >= threshold
            })
            .count();
        let want = (count + 1) as f64 / 1002.0;
        assert_eq!(randomization_test(&system, &baseline, 1001, 42), Some(want));
    }
}
