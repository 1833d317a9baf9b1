//! Holm–Bonferroni step-down adjustment (Holm, Scand. J. Statistics 6(2)
//! 1979) of the p-values of several system-vs-baseline comparisons.
//!
//! Data flow: `eval` → **`stats`** → `report`. For one metric, the
//! randomization p-values of every system against the same baseline form one
//! family; the report prints the adjusted values beside the raw ones.

/// Holm-adjusted p-values, in the input order.
///
/// Missing p-values (`None`: a comparison with no test) are skipped: m is the
/// number of `Some` entries, and `None` stays `None`. With the present
/// p-values sorted ascending, p_(1) ≤ … ≤ p_(m), the adjusted value is
///
/// p̃_(i) = min(1, max_{j ≤ i} (m − j + 1) · p_(j))
///
/// (the running maximum keeps the adjusted values in the same order as the
/// raw ones, so rejecting "p̃ ≤ α" is Holm's step-down procedure). Equal
/// p-values get equal adjusted values whatever their input order. NaN sorts
/// last and stays NaN.
pub fn holm(p_values: &[Option<f64>]) -> Vec<Option<f64>> {
    let mut present: Vec<(usize, f64)> =
        p_values.iter().enumerate().filter_map(|(i, p)| p.map(|p| (i, p))).collect();
    // Stable sort by value, so equal p-values keep their input order.
    present.sort_by(|a, b| a.1.total_cmp(&b.1));
    let m = present.len();
    let mut adjusted = vec![None; p_values.len()];
    let mut running_max = 0.0f64;
    for (rank, &(index, p)) in present.iter().enumerate() {
        let scaled = ((m - rank) as f64 * p).min(1.0);
        running_max = if scaled.is_nan() { scaled } else { running_max.max(scaled) };
        if let Some(slot) = adjusted.get_mut(index) {
            *slot = Some(running_max);
        }
    }
    adjusted
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    fn assert_all_close(actual: &[Option<f64>], expected: &[Option<f64>]) {
        assert_eq!(actual.len(), expected.len());
        for (a, e) in actual.iter().zip(expected) {
            match (a, e) {
                (Some(a), Some(e)) => assert_relative_eq!(*a, *e, max_relative = 1e-12),
                _ => assert_eq!(a, e),
            }
        }
    }

    #[test]
    fn textbook_four_p_values() {
        // The common four-p-value illustration of Holm's method (from memory;
        // the same numbers appear in many lecture notes and in the Wikipedia
        // article "Holm–Bonferroni method"): p = 0.01, 0.04, 0.03, 0.005 at
        // α = 0.05. Sorted 0.005, 0.01, 0.03, 0.04 with multipliers 4, 3, 2, 1
        // give 0.02, 0.03, 0.06, 0.04; the running maximum makes the last
        // 0.06. So H1 and H4 are rejected, H2 and H3 are not.
        let adjusted = holm(&[Some(0.01), Some(0.04), Some(0.03), Some(0.005)]);
        assert_all_close(&adjusted, &[Some(0.03), Some(0.06), Some(0.06), Some(0.02)]);
        let rejected: Vec<bool> = adjusted.iter().map(|p| p.is_some_and(|p| p <= 0.05)).collect();
        assert_eq!(rejected, [true, false, false, true]);
    }

    #[test]
    fn monotone_and_capped() {
        // Hand case: sorted 0.02, 0.021, 0.5 with multipliers 3, 2, 1 give
        // 0.06, 0.042, 0.5; the running maximum lifts 0.042 to 0.06 so the
        // larger raw p never gets the smaller adjusted p.
        assert_all_close(
            &holm(&[Some(0.5), Some(0.02), Some(0.021)]),
            &[Some(0.5), Some(0.06), Some(0.06)],
        );
        // Cap at 1: 3 × 0.4 = 1.2 → 1; then 2 × 0.6 = 1.2 → 1 and 0.9 → 1 by
        // the running maximum.
        assert_all_close(&holm(&[Some(0.9), Some(0.4), Some(0.6)]), &[Some(1.0); 3]);
    }

    #[test]
    fn none_is_skipped_and_m_counts_present_values() {
        // m = 2 present values: 0.01 × 2 = 0.02, 0.04 × 1 = 0.04.
        assert_all_close(
            &holm(&[None, Some(0.04), None, Some(0.01)]),
            &[None, Some(0.04), None, Some(0.02)],
        );
        assert_eq!(holm(&[]), Vec::<Option<f64>>::new());
        assert_eq!(holm(&[None]), vec![None]);
        // A single comparison (m = 1) is unchanged.
        assert_eq!(holm(&[Some(0.037)]), vec![Some(0.037)]);
    }

    #[test]
    fn ties_get_equal_adjustments() {
        // Two equal p-values: sorted multipliers 3, 2 give 0.03, 0.02 → the
        // running maximum makes both 0.03; then 0.2 × 1.
        assert_all_close(
            &holm(&[Some(0.01), Some(0.2), Some(0.01)]),
            &[Some(0.03), Some(0.2), Some(0.03)],
        );
    }
}
