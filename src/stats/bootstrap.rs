//! 95% percentile-bootstrap confidence interval of a system's mean metric
//! over queries (Efron & Tibshirani, *An Introduction to the Bootstrap*,
//! 1993, ch. 13; chapter from memory).
//!
//! Data flow: `eval` → **`stats`** → `report`. Works on one system's
//! per-query values (not on differences); the report prints the interval
//! beside the mean.
//!
//! Determinism: each resample draws its indices from its own keyed
//! counter-based stream (Philox4x64-10 keyed by the caller's seed, see
//! `stream.rs`), so resamples can be computed on any number of threads and
//! the interval is the same.

use std::collections::BTreeMap;

use super::stream::{Purpose, Stream};
use crate::parallel::map_indexed;

/// Coverage of the interval (metrics.md: "95% confidence interval").
pub const CONFIDENCE: f64 = 0.95;

/// 95% percentile-bootstrap interval `(low, high)` of the mean of `values`.
///
/// Resample b (0 ≤ b < `resamples`) draws n indices with replacement, in
/// order, from the stream (`seed`, resample, b) (Philox4x64-10 with key
/// (seed, 2) and counter (block, b, 0, 0); each index is Lemire's exactly
/// uniform multiply-and-reject on the next 32 bits, low half of a word
/// first), and takes the mean of the values drawn. The bounds are the 2.5%
/// and 97.5% quantiles of the resample means with linear interpolation
/// between order statistics — Hyndman & Fan (The American Statistician
/// 50(4) 1996) type 7, the default of R's `quantile` and of numpy's
/// `percentile`: with sorted means x_0 ≤ … ≤ x_{B−1} and h = (B − 1) q, the
/// q-quantile is x_⌊h⌋ + (h − ⌊h⌋)(x_⌊h⌋+1 − x_⌊h⌋).
///
/// Each resample mean is computed as r + (Σ_i c_i · (v_i − r))/n, with r
/// the first input value, c_i the number of times value i was drawn and the
/// sum taken over i in input order. A constant input therefore gives
/// exactly that constant as every mean and a degenerate interval at it (a
/// plain Σv/n can be off by an ulp), and the rounding of a mean depends only
/// on which values were drawn how often, not on the order of the draws.
///
/// `None` when `values` holds fewer than two values (or more than 2^32 − 1),
/// `resamples` is 0 or a value is not finite. One value has no spread to
/// resample: every resample would repeat it and the "interval" would be that
/// value twice, which reads as certainty; the reports leave the interval
/// empty instead (metrics.md: with n < 2 nothing is computed).
pub fn bootstrap_ci(values: &[f64], resamples: u32, seed: u64) -> Option<(f64, f64)> {
    bootstrap_cis(&[values], resamples, seed, 1).into_iter().next().flatten()
}

/// [`bootstrap_ci`] of every column, computed together on up to `threads`
/// threads; entry c is exactly `bootstrap_ci(columns[c], resamples, seed)`,
/// whatever `threads` is.
///
/// Columns of equal length share each resample's indices (they are the same
/// stream), so the indices are drawn and counted once per resample for all
/// of them. Resamples are cut into chunks that
/// the threads share.
pub fn bootstrap_cis(
    columns: &[&[f64]],
    resamples: u32,
    seed: u64,
    threads: usize,
) -> Vec<Option<(f64, f64)>> {
    let mut intervals = vec![None; columns.len()];
    let mut by_length: BTreeMap<usize, Vec<usize>> = BTreeMap::new();
    for (c, column) in columns.iter().enumerate() {
        let usable = column.len() >= 2
            && u32::try_from(column.len()).is_ok()
            && column.iter().all(|v| v.is_finite());
        if usable && resamples > 0 {
            by_length.entry(column.len()).or_default().push(c);
        }
    }
    for members in by_length.values() {
        let group: Vec<&[f64]> = members.iter().filter_map(|&c| columns.get(c).copied()).collect();
        let group_intervals = ResampleGroup::new(&group).intervals(resamples, seed, threads);
        for (&c, interval) in members.iter().zip(group_intervals) {
            if let Some(slot) = intervals.get_mut(c) {
                *slot = interval;
            }
        }
    }
    intervals
}

/// Columns summed side by side: 8 doubles, one 64-byte cache line per row.
const TILE: usize = 8;

/// Resamples per piece of work shared among threads.
const CHUNK_RESAMPLES: u32 = 250;

/// Resamples that share one read of each tile ([`ResampleGroup::resample_means`]).
const GROUP: usize = 16;

/// Columns of one length n, laid out for resampling: r_c (the first value
/// of column c) and, per tile of [`TILE`] columns, an n × TILE row-major
/// array of v − r_c (padded with zero columns) starting on a cache line, so
/// a resample reads each tile front to back, one cache line per query.
struct ResampleGroup {
    n: usize,
    references: Vec<f64>,
    /// Per tile: the storage and the offset where its cache-aligned rows start.
    tiles: Vec<(Vec<f64>, usize)>,
}

impl ResampleGroup {
    /// `columns` all hold n ≥ 2 finite values, n < 2^32.
    fn new(columns: &[&[f64]]) -> ResampleGroup {
        let n = columns.first().map_or(0, |c| c.len());
        let references: Vec<f64> =
            columns.iter().map(|c| c.first().copied().unwrap_or(0.0)).collect();
        let tiles = columns
            .chunks(TILE)
            .zip(references.chunks(TILE))
            .map(|(tile_columns, tile_references)| {
                let mut storage = vec![0.0; n * TILE + TILE];
                let misalignment = storage.as_ptr() as usize % 64;
                let offset = ((64 - misalignment) % 64) / std::mem::size_of::<f64>();
                let rows = storage.get_mut(offset..offset + n * TILE).unwrap_or_default();
                for (t, (column, r)) in tile_columns.iter().zip(tile_references).enumerate() {
                    for (row, v) in rows.chunks_exact_mut(TILE).zip(column.iter()) {
                        if let Some(slot) = row.get_mut(t) {
                            *slot = v - r;
                        }
                    }
                }
                (storage, offset)
            })
            .collect();
        ResampleGroup { n, references, tiles }
    }

    /// The interval of every column.
    fn intervals(&self, resamples: u32, seed: u64, threads: usize) -> Vec<Option<(f64, f64)>> {
        let k = self.references.len();
        let chunks = resamples.div_ceil(CHUNK_RESAMPLES);
        // Each chunk: resample-major means, k per resample.
        let parts = map_indexed(chunks as usize, threads, |chunk| {
            let first = chunk as u32 * CHUNK_RESAMPLES;
            let last = first.saturating_add(CHUNK_RESAMPLES).min(resamples);
            self.resample_means(first..last, seed)
        });
        (0..k)
            .map(|c| {
                let mut means: Vec<f64> = parts
                    .iter()
                    .flat_map(|p| p.chunks_exact(k.max(1)).map(move |m| m[c]))
                    .collect();
                percentile_interval(&mut means)
            })
            .collect()
    }

    /// Means of every column for resamples `range`, resample-major.
    ///
    /// Resamples go in groups of [`GROUP`]: their drawn queries are listed
    /// first, then each tile is summed for every resample of the group in
    /// turn, so a tile is read from memory once per group and from the
    /// core's cache for the others (a tile of 13,000 queries is 832 KB).
    /// Each (resample, column) sum is still one pass over its drawn queries
    /// in query order, so the grouping changes no number.
    fn resample_means(&self, range: std::ops::Range<u32>, seed: u64) -> Vec<f64> {
        let k = self.references.len();
        let n = self.n as f64;
        let mut means = vec![0.0; range.len() * k];
        let mut counts = vec![0u32; self.n];
        let resamples: Vec<u32> = range.collect();
        // One list of n slots per resample of a group, reused by every group.
        let mut lists = vec![(vec![(0u32, 0u32); self.n], 0usize); GROUP];
        for (group_index, group) in resamples.chunks(GROUP).enumerate() {
            for (&b, (list, len)) in group.iter().zip(lists.iter_mut()) {
                *len = self.drawn(b, seed, &mut counts, list);
            }
            for (t, (storage, offset)) in self.tiles.iter().enumerate() {
                let rows = storage.get(*offset..).unwrap_or_default();
                for (g, (list, len)) in lists.iter().take(group.len()).enumerate() {
                    let list = list.get(..*len).unwrap_or_default();
                    let first = (group_index * GROUP + g) * k + t * TILE;
                    let columns = first..(first + TILE).min((group_index * GROUP + g + 1) * k);
                    let references = self.references.iter().skip(t * TILE);
                    let slots = means.get_mut(columns).unwrap_or_default();
                    for ((slot, r), sum) in
                        slots.iter_mut().zip(references).zip(tile_sums(rows, list))
                    {
                        *slot = r + sum / n;
                    }
                }
            }
        }
        means
    }

    /// Writes the queries resample `b` draws to the start of `drawn` (n
    /// slots), as (query, times drawn) in query order, and returns how many
    /// there are; `counts` is scratch space of n entries.
    ///
    /// About 1/e of the queries are not drawn: their terms would add
    /// 0 · (v − r) = ±0, which leaves a sum that starts at +0 unchanged, so
    /// they are left out. The list is written without a branch on the count,
    /// which a processor cannot predict: every query is written at the end
    /// of the list, which only grows past a drawn one.
    fn drawn(&self, b: u32, seed: u64, counts: &mut [u32], drawn: &mut [(u32, u32)]) -> usize {
        let n_u32 = u32::try_from(self.n).unwrap_or(u32::MAX);
        counts.fill(0);
        let mut stream = Stream::new(seed, Purpose::Resample, u64::from(b));
        stream.each_below(n_u32, self.n, |index| {
            if let Some(count) = counts.get_mut(index as usize) {
                *count += 1;
            }
        });
        let mut len = 0;
        for (i, &count) in (0u32..).zip(counts.iter()) {
            if let Some(slot) = drawn.get_mut(len) {
                *slot = (i, count);
            }
            len += usize::from(count > 0);
        }
        len
    }
}

/// Σ_i c_i · row_i over the rows i of an n × TILE array listed in `drawn`
/// as (i, c_i), in that (ascending) order: every column's weighted sum, TILE
/// independent accumulators, the rows read front to back.
fn tile_sums(rows: &[f64], drawn: &[(u32, u32)]) -> [f64; TILE] {
    let mut sums = [0.0f64; TILE];
    let (rows, _) = rows.as_chunks::<TILE>();
    for &(i, count) in drawn {
        let Some(row) = rows.get(i as usize) else { continue };
        let weight = f64::from(count);
        for (sum, v) in sums.iter_mut().zip(row) {
            *sum += weight * v;
        }
    }
    sums
}

/// The percentile interval of the resample means (reordered in place):
/// type-7 quantiles at (1 − [`CONFIDENCE`]) / 2 and 1 − that.
fn percentile_interval(means: &mut [f64]) -> Option<(f64, f64)> {
    let tail = (1.0 - CONFIDENCE) / 2.0;
    Some((quantile_type7_select(means, tail)?, quantile_type7_select(means, 1.0 - tail)?))
}

/// [`quantile_type7`] of an unsorted slice, by selection instead of a full
/// sort: the two order statistics it needs are found in linear time (the
/// slice is reordered), and the result is the same number.
fn quantile_type7_select(values: &mut [f64], q: f64) -> Option<f64> {
    let last = values.len().checked_sub(1)?;
    let h = last as f64 * q.clamp(0.0, 1.0);
    let below = (h.floor() as usize).min(last);
    let (_, &mut low, above_part) = values.select_nth_unstable_by(below, f64::total_cmp);
    let high = above_part.iter().copied().min_by(f64::total_cmp).unwrap_or(low);
    Some(low + (h - below as f64) * (high - low))
}

/// Hyndman–Fan type-7 quantile of an ascending slice; `None` when empty
/// (the definition [`quantile_type7_select`] is checked against).
#[cfg(test)]
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
        // Selection gives the same numbers as the sorted definition.
        let mut shuffled = [3.0, 1.0, 4.0, 2.0];
        for q in [0.0, 0.025, 0.5, 0.975, 1.0] {
            assert_eq!(quantile_type7_select(&mut shuffled, q), quantile_type7(&sorted, q));
        }
        let mut many: Vec<f64> = (0..1001).map(|i| f64::from((i * 7919) % 1001) / 7.0).collect();
        let mut sorted_many = many.clone();
        sorted_many.sort_by(f64::total_cmp);
        for q in [0.025, 0.3, 0.975] {
            assert_eq!(quantile_type7_select(&mut many, q), quantile_type7(&sorted_many, q));
        }
        assert_eq!(quantile_type7_select(&mut [], 0.5), None);
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

    #[derive(serde::Deserialize)]
    struct ScipyCase {
        name: String,
        values: Vec<f64>,
        low: f64,
        high: f64,
        bootstrap_se: f64,
    }

    #[derive(serde::Deserialize)]
    struct ScipyFixture {
        resamples: u32,
        cases: Vec<ScipyCase>,
    }

    #[test]
    fn agrees_with_scipy_within_monte_carlo_error() {
        // Source: scipy.stats.bootstrap (scipy 1.17.1, method "percentile",
        // 10,000 resamples), written by scripts/scipy_bootstrap.py. Both
        // intervals are Monte Carlo estimates from different draws: for a
        // near-normal resampling distribution each 2.5% / 97.5% endpoint has a
        // standard error of about √(0.025 · 0.975 / B) / φ(1.96) ≈ 0.027
        // bootstrap standard errors at B = 10,000 (asymptotic variance of a
        // sample quantile, from memory), so the two estimates differ by about
        // 0.04 of them; 0.25 is over six such deviations, while a resampler
        // that draws the wrong number of values or the wrong spread misses
        // it on the larger cases.
        let path =
            concat!(env!("CARGO_MANIFEST_DIR"), "/tests/fixtures/stats/scipy_bootstrap.json");
        let text = std::fs::read_to_string(path).expect("committed fixture is readable");
        let fixture: ScipyFixture = serde_json::from_str(&text).expect("committed fixture is JSON");
        assert!(fixture.cases.len() >= 5);
        for case in &fixture.cases {
            let (low, high) =
                bootstrap_ci(&case.values, fixture.resamples, 42).expect("at least 2 values");
            let tolerance = 0.25 * case.bootstrap_se;
            assert!(
                (low - case.low).abs() <= tolerance && (high - case.high).abs() <= tolerance,
                "{}: ours [{low}, {high}] vs scipy [{}, {}] (tolerance {tolerance})",
                case.name,
                case.low,
                case.high
            );
        }
    }

    #[test]
    fn batch_equals_one_by_one_for_any_thread_count() {
        // Mixed lengths (two groups), an unusable column, more columns than
        // one tile: each entry is exactly the single-column interval.
        let owned: Vec<Vec<f64>> = (0..19)
            .map(|c| {
                let n = if c % 3 == 0 { 25 } else { 40 };
                (0..n).map(|i| ((i * 7919 + c * 31 + 13) % 1000) as f64 / 1000.0).collect()
            })
            .chain([vec![0.5, f64::NAN, 0.25], vec![0.5]])
            .collect();
        let columns: Vec<&[f64]> = owned.iter().map(Vec::as_slice).collect();
        let one_by_one: Vec<Option<(f64, f64)>> =
            columns.iter().map(|c| bootstrap_ci(c, 1_000, 5)).collect();
        assert!(one_by_one.iter().take(19).all(Option::is_some));
        assert_eq!(one_by_one[19..], [None, None]);
        for threads in [1, 2, 3] {
            assert_eq!(bootstrap_cis(&columns, 1_000, 5, threads), one_by_one, "{threads} threads");
        }
    }
}
