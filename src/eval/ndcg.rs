//! `ndcg@k` and the gain function it shares with the report's settings
//! (eval stage: input → analysis → index → search → **eval** → stats → report).
//!
//! Definition (metrics.md; Järvelin & Kekäläinen, "Cumulated gain-based
//! evaluation of IR techniques", ACM TOIS 20(4), 2002, in the form with the
//! discount log2(i + 1) on every rank used by Burges et al., ICML 2005):
//!
//! ```text
//! DCG@k  = Σ_{i ≤ min(k,n)} gain(g(d_i)) / log2(i + 1)
//! IDCG@k = DCG@k of all judged documents of q sorted by grade, highest first
//! nDCG@k = DCG@k / IDCG@k
//! ```
//!
//! nDCG uses the raw grade whatever the relevance threshold: a grade below
//! `--relevant-from` still gains and still counts in the ideal ranking.

use std::fmt;
use std::str::FromStr;

use crate::error::{Error, Result};

/// How a grade g becomes a gain (metrics.md, "gain").
///
/// Default: [`Gain::Exponential`].
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Gain {
    /// 2^g − 1 (Burges et al., "Learning to rank using gradient descent",
    /// ICML 2005). Written `exp`.
    #[default]
    Exponential,
    /// g itself. Written `linear`.
    Linear,
}

impl Gain {
    /// The gain of one grade: 2^g − 1 or g. An exponential gain overflows to
    /// infinity above grade 1023; [`ndcg_at`] never calls this, it uses a
    /// scaled form that cannot overflow.
    pub fn of(self, grade: u32) -> f64 {
        match self {
            Gain::Exponential => pow2(i64::from(grade)) - 1.0,
            Gain::Linear => f64::from(grade),
        }
    }

    /// The gain multiplied by 2^−top, for the exponential gain. nDCG is a
    /// ratio, so a common factor cancels; scaling by a power of two is exact
    /// in floating point, so for ordinary grades (≤ 53) the ratio is
    /// bit-identical to the unscaled one, while a huge grade no longer
    /// overflows to ∞/∞ = NaN.
    fn scaled(self, grade: u32, top: u32) -> f64 {
        match self {
            // (2^g − 1) · 2^−top = 2^(g − top) − 2^−top
            Gain::Exponential => pow2(i64::from(grade) - i64::from(top)) - pow2(-i64::from(top)),
            Gain::Linear => f64::from(grade),
        }
    }
}

impl fmt::Display for Gain {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            Gain::Exponential => "exp",
            Gain::Linear => "linear",
        })
    }
}

impl FromStr for Gain {
    type Err = Error;

    /// Accepts `exp` (also `exponential`) and `linear`.
    fn from_str(s: &str) -> Result<Gain> {
        match s {
            "exp" | "exponential" => Ok(Gain::Exponential),
            "linear" => Ok(Gain::Linear),
            _ => Err(Error::usage(format!("unknown gain {s:?}: expected `exp` or `linear`"))),
        }
    }
}

/// 2^e as an f64, exact for −1022 ≤ e ≤ 1023 (repeated squaring of 2 only
/// produces powers of two), +∞ above and 0 below that range.
pub(crate) fn pow2(e: i64) -> f64 {
    if e > 1023 {
        f64::INFINITY
    } else if e < -1074 {
        0.0
    } else {
        // In range of i32 by the two tests above.
        2f64.powi(e as i32)
    }
}

/// nDCG@k of one ranking.
///
/// `ranked` holds the grade of the document at each rank (index 0 is rank
/// 1), `None` for an unjudged document, which gains as grade 0. `judged`
/// holds the grades of every judged document of the query, in any order:
/// they make the ideal ranking. Returns 0 when the ideal gains nothing (no
/// judged grade above 0) or when `k` is 0.
pub fn ndcg_at(ranked: &[Option<u32>], judged: &[u32], k: usize, gain: Gain) -> f64 {
    let mut ideal = judged.to_vec();
    ideal.sort_unstable_by(|a, b| b.cmp(a));
    let top = ranked.iter().flatten().chain(ideal.first()).copied().max().unwrap_or(0);
    let idcg = dcg(ideal.iter().copied(), k, gain, top);
    if idcg <= 0.0 {
        return 0.0;
    }
    dcg(ranked.iter().map(|g| g.unwrap_or(0)), k, gain, top) / idcg
}

/// DCG@k of grades in rank order, gains scaled by 2^−top (see [`Gain::scaled`]).
fn dcg(grades: impl Iterator<Item = u32>, k: usize, gain: Gain, top: u32) -> f64 {
    grades
        .take(k)
        .enumerate()
        // rank i = index + 1, discount log2(i + 1) = log2(index + 2)
        .map(|(index, g)| gain.scaled(g, top) / ((index + 2) as f64).log2())
        // Folded from +0.0: `Sum` for f64 starts at -0.0, so an empty
        // ranking would print as `-0`.
        .fold(0.0, |sum, g| sum + g)
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    /// An evaluated query a system returned nothing for scores 0 (metrics.md),
    /// and a plain 0, not -0, so the CSV cell reads `0`.
    #[test]
    fn empty_ranking_scores_positive_zero() {
        let v = ndcg_at(&[], &[2, 1], 10, Gain::Exponential);
        assert!(v == 0.0 && v.is_sign_positive(), "{v:?}");
        assert_eq!(v.to_string(), "0");
    }
    use serde::Deserialize;

    #[test]
    fn gain_values() {
        // Definitions in metrics.md: exponential 2^g − 1, linear g.
        assert_eq!(Gain::Exponential.of(0), 0.0);
        assert_eq!(Gain::Exponential.of(1), 1.0);
        assert_eq!(Gain::Exponential.of(3), 7.0);
        assert_eq!(Gain::Linear.of(3), 3.0);
        assert_eq!(Gain::default(), Gain::Exponential);
    }

    #[test]
    fn gain_parses_and_prints() {
        assert_eq!("exp".parse::<Gain>().unwrap(), Gain::Exponential);
        assert_eq!("exponential".parse::<Gain>().unwrap(), Gain::Exponential);
        assert_eq!("linear".parse::<Gain>().unwrap(), Gain::Linear);
        let err = "log".parse::<Gain>().unwrap_err().to_string();
        assert!(err.contains("\"log\"") && err.contains("`exp`") && err.contains("`linear`"));
        assert_eq!(Gain::Exponential.to_string(), "exp");
        assert_eq!(Gain::Linear.to_string(), "linear");
    }

    #[test]
    fn pow2_is_exact_and_saturates() {
        assert_eq!(pow2(0), 1.0);
        assert_eq!(pow2(10), 1024.0);
        assert_eq!(pow2(-2), 0.25);
        // 2^1023: biased exponent 2046, zero mantissa (IEEE 754 binary64).
        assert_eq!(pow2(1023), f64::from_bits(0x7FE0_0000_0000_0000));
        assert_eq!(pow2(1024), f64::INFINITY);
        assert_eq!(pow2(-1075), 0.0);
    }

    /// The example of the English Wikipedia article "Discounted cumulative
    /// gain" (section "Example"), which follows Järvelin & Kekäläinen (2002);
    /// values from memory, re-derived by hand here. Linear gain.
    /// Ranked grades D1..D6 = 3, 2, 3, 0, 1, 2; two further judged documents
    /// (grades 3 and 2) were not retrieved, so the ideal top 6 is
    /// 3, 3, 3, 2, 2, 2.
    #[test]
    fn wikipedia_jarvelin_kekalainen_example() {
        let ranked = [Some(3), Some(2), Some(3), Some(0), Some(1), Some(2)];
        let judged = [3, 2, 3, 0, 1, 2, 3, 2];
        // DCG6 = 3/log2 2 + 2/log2 3 + 3/log2 4 + 0/log2 5 + 1/log2 6 + 2/log2 7
        //      = 3 + 1.26186 + 1.5 + 0 + 0.38685 + 0.71241 = 6.86112 (article: 6.861)
        let dcg6 = 3.0 + 2.0 / 3f64.log2() + 1.5 + 1.0 / 6f64.log2() + 2.0 / 7f64.log2();
        // IDCG6 = 3 + 3/log2 3 + 3/2 + 2/log2 5 + 2/log2 6 + 2/log2 7
        //       = 3 + 1.89279 + 1.5 + 0.86135 + 0.77371 + 0.71241 = 8.74026 (article: 8.740)
        let idcg6 = 3.0
            + 3.0 / 3f64.log2()
            + 1.5
            + 2.0 / 5f64.log2()
            + 2.0 / 6f64.log2()
            + 2.0 / 7f64.log2();
        let got = ndcg_at(&ranked, &judged, 6, Gain::Linear);
        assert_relative_eq!(got, dcg6 / idcg6, epsilon = 1e-15);
        // The article's rounded result: nDCG6 = 0.785.
        assert_relative_eq!(got, 0.785, epsilon = 5e-4);
    }

    #[test]
    fn hand_computed_exponential_with_unjudged_and_short_list() {
        // ranked: grade 1, unjudged, grade 2; judged grades {2, 1, 0, 1}; k = 5 > n = 3.
        // DCG  = (2^1−1)/log2 2 + 0/log2 3 + (2^2−1)/log2 4 = 1 + 0 + 3/2 = 2.5
        // IDCG over 2, 1, 1, 0 = 3/1 + 1/log2 3 + 1/log2 4 + 0 = 3 + 0.63093 + 0.5
        let ranked = [Some(1), None, Some(2)];
        let judged = [2, 1, 0, 1];
        let idcg = 3.0 + 1.0 / 3f64.log2() + 0.5;
        assert_relative_eq!(
            ndcg_at(&ranked, &judged, 5, Gain::Exponential),
            2.5 / idcg,
            epsilon = 1e-15
        );
        // k = 1: DCG = 1, IDCG = 3.
        assert_relative_eq!(
            ndcg_at(&ranked, &judged, 1, Gain::Exponential),
            1.0 / 3.0,
            epsilon = 1e-15
        );
    }

    #[test]
    fn perfect_empty_and_gainless() {
        let judged = [2, 1, 0];
        let perfect = [Some(2), Some(1), Some(0)];
        assert_eq!(ndcg_at(&perfect, &judged, 10, Gain::Exponential), 1.0);
        assert_eq!(ndcg_at(&[], &judged, 10, Gain::Exponential), 0.0);
        // No judged grade above 0: the ideal gains nothing, score 0 (not NaN).
        assert_eq!(ndcg_at(&[Some(0)], &[0, 0], 10, Gain::Linear), 0.0);
        assert_eq!(ndcg_at(&perfect, &judged, 0, Gain::Linear), 0.0);
    }

    #[test]
    fn huge_grades_do_not_overflow() {
        // 2^5000 overflows an f64; the scaled gain keeps nDCG finite.
        // Exact value: the ideal is (5000, 1) and the run (1, 5000), so with
        // gains a = 2^5000 − 1 ≈ 2^5000 and b = 1 the ratio is
        // (b + a/log2 3) / (a + b/log2 3) → 1/log2 3 as a dominates.
        let got = ndcg_at(&[Some(1), Some(5000)], &[5000, 1], 2, Gain::Exponential);
        assert_relative_eq!(got, 1.0 / 3f64.log2(), epsilon = 1e-15);
        assert_eq!(ndcg_at(&[Some(5000)], &[5000], 2, Gain::Exponential), 1.0);
    }

    #[derive(Deserialize)]
    struct Case {
        /// Grades of the judged documents, by document index.
        grades: Vec<u32>,
        /// Distinct engine scores, by document index; rank = descending score.
        scores: Vec<f64>,
        k: usize,
        gain: String,
        /// scikit-learn's `ndcg_score`.
        expected: f64,
    }

    #[derive(Deserialize)]
    struct Fixture {
        cases: Vec<Case>,
    }

    /// Values produced by scikit-learn's `sklearn.metrics.ndcg_score`
    /// (scripts/sklearn_ndcg.py, output committed as
    /// tests/fixtures/eval/sklearn_ndcg.json). Every judged document is
    /// ranked, so scikit-learn's ideal (from `y_true`) equals ours.
    #[test]
    fn matches_scikit_learn_ndcg_score() {
        let path = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/fixtures/eval/sklearn_ndcg.json");
        let text = std::fs::read_to_string(path).expect("fixture is committed");
        let fixture: Fixture = serde_json::from_str(&text).expect("fixture is valid JSON");
        assert!(fixture.cases.len() >= 30);
        for (i, case) in fixture.cases.iter().enumerate() {
            let mut order: Vec<usize> = (0..case.grades.len()).collect();
            order.sort_by(|&a, &b| case.scores[b].total_cmp(&case.scores[a]));
            let ranked: Vec<Option<u32>> = order.iter().map(|&d| Some(case.grades[d])).collect();
            let gain: Gain = case.gain.parse().expect("fixture gain is exp or linear");
            let got = ndcg_at(&ranked, &case.grades, case.k, gain);
            assert!(
                (got - case.expected).abs() <= 1e-12,
                "case {i}: got {got}, scikit-learn {}",
                case.expected
            );
            assert_relative_eq!(got, case.expected, epsilon = 1e-12);
        }
    }
}
