//! `err@k`, expected reciprocal rank (eval stage: input → analysis → index →
//! search → **eval** → stats → report).
//!
//! Definition (metrics.md; Chapelle, Metzler, Zhang & Grinspan, "Expected
//! reciprocal rank for graded relevance", CIKM 2009, §4, the cascade model):
//!
//! ```text
//! R_i   = (2^{g(d_i)} − 1) / 2^{gmax}
//! ERR@k = Σ_{i ≤ min(k,n)} (1/i) · R_i · Π_{j<i} (1 − R_j)
//! ```
//!
//! R_i is the probability that the user is satisfied by the document at
//! rank i. gmax is `--max-grade`, else the highest grade of the whole
//! judgment file (not of the query), so the same grade means the same
//! satisfaction for every query. Like nDCG, ERR uses the raw grade whatever
//! the relevance threshold; an unjudged document counts as grade 0.

use super::ndcg::pow2;

/// ERR@k of one ranking.
///
/// `ranked` holds the grade of the document at each rank (index 0 is rank
/// 1), `None` for an unjudged document (grade 0). Precondition: every grade
/// is at most `gmax` (`validate_settings` checks this against the whole
/// judgment file), so every R_i lies in [0, 1).
pub fn err_at(ranked: &[Option<u32>], k: usize, gmax: u32) -> f64 {
    let mut not_stopped = 1.0; // Π_{j<i} (1 − R_j)
    let mut sum = 0.0;
    for (index, grade) in ranked.iter().take(k).enumerate() {
        let g = i64::from(grade.unwrap_or(0));
        // (2^g − 1) / 2^gmax = 2^(g − gmax) − 2^−gmax: no overflow for any grade.
        let r = pow2(g - i64::from(gmax)) - pow2(-i64::from(gmax));
        sum += not_stopped * r / (index + 1) as f64;
        not_stopped *= 1.0 - r;
    }
    sum
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    /// Hand computed from Chapelle et al. (2009)'s definition.
    #[test]
    fn hand_computed_cascade() {
        // gmax = 2; grades 2, 0, 1 → R = 3/4, 0, 1/4.
        // ERR = 1/1·3/4 + 1/2·0·(1/4) + 1/3·(1/4)·(1/4·1) = 0.75 + 0 + 1/48
        //     = 0.7708333…
        let ranked = [Some(2), Some(0), Some(1)];
        assert_relative_eq!(err_at(&ranked, 10, 2), 0.75 + 1.0 / 48.0, epsilon = 1e-15);
        // k = 2 stops before the third document.
        assert_relative_eq!(err_at(&ranked, 2, 2), 0.75, epsilon = 1e-15);
        // k = 1.
        assert_relative_eq!(err_at(&ranked, 1, 2), 0.75, epsilon = 1e-15);
    }

    #[test]
    fn gmax_is_a_parameter_not_the_query_maximum() {
        // The query's best grade is 1 but the file's gmax is 3:
        // R_1 = (2 − 1)/8 = 1/8, so ERR = 0.125, not (2 − 1)/2 = 0.5.
        assert_relative_eq!(err_at(&[Some(1)], 10, 3), 0.125, epsilon = 1e-15);
        assert_relative_eq!(err_at(&[Some(1)], 10, 1), 0.5, epsilon = 1e-15);
    }

    #[test]
    fn unjudged_counts_as_zero_and_empty_is_zero() {
        // None, grade 1 with gmax 1: R = 0, 1/2 → ERR = 1/2 · 1/2 · 1 = 0.25.
        assert_relative_eq!(err_at(&[None, Some(1)], 10, 1), 0.25, epsilon = 1e-15);
        assert_eq!(err_at(&[], 10, 4), 0.0);
        // gmax 0: every grade is 0, R = 0.
        assert_eq!(err_at(&[Some(0), None], 10, 0), 0.0);
    }

    #[test]
    fn huge_grades_stay_finite() {
        // g = gmax = 2000: R_1 = 1 − 2^−2000 which rounds to 1.0, ERR = 1.
        assert_eq!(err_at(&[Some(2000), Some(2000)], 10, 2000), 1.0);
    }
}
