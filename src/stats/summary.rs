//! Small descriptive statistics shared by the tests of `stats`: the mean, the
//! paired differences and their sample standard deviation.
//!
//! Data flow: `eval` hands `stats` one value per evaluated query and system;
//! everything in `stats` starts from these helpers. They are pure functions
//! over plain slices and never see a query id, a ranking or an index.

/// Arithmetic mean of `values`, summed in slice order; `None` when empty.
///
/// Summation runs in slice order so that the same slice always gives the same
/// bits, whatever else the caller does.
pub fn mean(values: &[f64]) -> Option<f64> {
    if values.is_empty() {
        return None;
    }
    Some(values.iter().sum::<f64>() / values.len() as f64)
}

/// Paired differences `system[i] - baseline[i]`, in query order.
///
/// `None` when the slices differ in length: the two sides of a paired test
/// must hold one value per evaluated query, in the same query order.
pub fn differences(system: &[f64], baseline: &[f64]) -> Option<Vec<f64>> {
    if system.len() != baseline.len() {
        return None;
    }
    Some(system.iter().zip(baseline).map(|(s, b)| s - b).collect())
}

/// Sample standard deviation (denominator n − 1, two-pass) of `values`;
/// `None` with fewer than two values.
pub fn sample_sd(values: &[f64]) -> Option<f64> {
    if values.len() < 2 {
        return None;
    }
    let m = mean(values)?;
    // Two passes (mean first, then squared deviations) rather than the
    // one-pass sum-of-squares formula, which cancels catastrophically when the
    // differences are nearly equal (common practice, no source).
    let ss: f64 = values.iter().map(|v| (v - m) * (v - m)).sum();
    Some((ss / (values.len() - 1) as f64).sqrt())
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    #[test]
    fn mean_of_empty_is_none_and_of_values_is_arithmetic() {
        assert_eq!(mean(&[]), None);
        // Hand-computed: (1 + 2 + 6) / 3 = 3.
        assert_eq!(mean(&[1.0, 2.0, 6.0]), Some(3.0));
    }

    #[test]
    fn differences_pair_by_position_and_reject_length_mismatch() {
        assert_eq!(differences(&[1.0, 0.5], &[0.25, 0.5]), Some(vec![0.75, 0.0]));
        assert_eq!(differences(&[1.0], &[0.25, 0.5]), None);
    }

    #[test]
    fn sample_sd_uses_n_minus_one() {
        assert_eq!(sample_sd(&[1.0]), None);
        // Hand-computed: values 2, 4, 4, 4, 5, 5, 7, 9 have mean 5 and squared
        // deviations summing to 32; 32 / 7 is the sample variance.
        let sd = sample_sd(&[2.0, 4.0, 4.0, 4.0, 5.0, 5.0, 7.0, 9.0]).expect("8 values");
        assert_relative_eq!(sd, (32.0f64 / 7.0).sqrt(), max_relative = 1e-15);
        assert_eq!(sample_sd(&[0.25, 0.25, 0.25]), Some(0.0));
    }
}
