//! `bpref` (eval stage: input → analysis → index → search → **eval** →
//! stats → report): a measure built only from judged documents, robust when
//! judgments are incomplete.
//!
//! Definition (metrics.md; Buckley & Voorhees, "Retrieval evaluation with
//! incomplete information", SIGIR 2004, §3, in the form whose denominator
//! is min(R, N)):
//!
//! ```text
//! bpref = (1/R) Σ_{r relevant and retrieved} (1 − min(n_r, R) / min(R, N))
//! ```
//!
//! n_r is the number of judged non-relevant documents ranked above r. When
//! N = 0 every term is 1. Unjudged documents are ignored entirely; a
//! judged document with a grade below the threshold t is non-relevant.

/// bpref of one ranking. `ranked` holds the grade at each rank (`None` when
/// unjudged); `relevant_from` is the threshold t; `relevant` is R and
/// `nonrelevant` is N (judged documents of the query with a grade below t).
/// Returns 0 when R is 0 (such a query is never evaluated).
pub fn bpref(
    ranked: &[Option<u32>],
    relevant_from: u32,
    relevant: usize,
    nonrelevant: usize,
) -> f64 {
    if relevant == 0 {
        return 0.0;
    }
    let denominator = relevant.min(nonrelevant) as f64;
    let mut above = 0usize; // n_r: judged non-relevant documents seen so far
    let mut sum = 0.0;
    for grade in ranked.iter().flatten() {
        if *grade >= relevant_from {
            sum +=
                if nonrelevant == 0 { 1.0 } else { 1.0 - above.min(relevant) as f64 / denominator };
        } else {
            above += 1;
        }
    }
    sum / relevant as f64
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    /// Hand computed from Buckley & Voorhees (2004)'s definition.
    #[test]
    fn hand_computed() {
        // R = 3, N = 2; ranking: n, r1, r2, unjudged, n, r3.
        // r1, r2: n_r = 1 → 1 − 1/min(3,2) = 1/2 each; r3: n_r = 2 → 1 − 2/2 = 0.
        // bpref = (1/2 + 1/2 + 0) / 3 = 1/3.
        let ranked = [Some(0), Some(1), Some(2), None, Some(0), Some(1)];
        assert_relative_eq!(bpref(&ranked, 1, 3, 2), 1.0 / 3.0, epsilon = 1e-15);
        // Unjudged documents change nothing: drop it.
        let without = [Some(0), Some(1), Some(2), Some(0), Some(1)];
        assert_relative_eq!(bpref(&without, 1, 3, 2), 1.0 / 3.0, epsilon = 1e-15);
    }

    #[test]
    fn no_judged_nonrelevant_documents() {
        // N = 0: every retrieved relevant document scores 1.
        // R = 2, one retrieved (after an unjudged one) → 1/2.
        assert_relative_eq!(bpref(&[None, Some(1)], 1, 2, 0), 0.5, epsilon = 1e-15);
        assert_eq!(bpref(&[Some(1), Some(2)], 1, 2, 0), 1.0);
    }

    #[test]
    fn more_relevant_than_nonrelevant() {
        // R = 3 > N = 1: denominator min(R, N) = 1.
        // ranking r, n, r: first r → 1 − 0/1 = 1; second r: n_r = 1 → 1 − 1/1 = 0.
        // bpref = (1 + 0) / 3 = 1/3.
        let ranked = [Some(1), Some(0), Some(1)];
        assert_relative_eq!(bpref(&ranked, 1, 3, 1), 1.0 / 3.0, epsilon = 1e-15);
    }

    #[test]
    fn n_r_is_capped_at_r() {
        // R = 1, N = 5; four non-relevant above the relevant one:
        // 1 − min(4, 1)/min(1, 5) = 0.
        let ranked = [Some(0), Some(0), Some(0), Some(0), Some(1)];
        assert_eq!(bpref(&ranked, 1, 1, 5), 0.0);
        // R = 2, N = 5; one non-relevant above r1, three above r2:
        // (1 − 1/2) + (1 − min(3,2)/2) = 0.5 + 0 → 0.25.
        let ranked = [Some(0), Some(1), Some(0), Some(0), Some(1)];
        assert_relative_eq!(bpref(&ranked, 1, 2, 5), 0.25, epsilon = 1e-15);
    }

    #[test]
    fn threshold_makes_low_grades_nonrelevant() {
        // t = 2: the grade-1 document at rank 1 is judged non-relevant.
        // R = 1, N = 1: 1 − 1/1 = 0. With t = 1, R = 2, N = 0 → (1 + 1)/2 = 1.
        let ranked = [Some(1), Some(2)];
        assert_eq!(bpref(&ranked, 2, 1, 1), 0.0);
        assert_eq!(bpref(&ranked, 1, 2, 0), 1.0);
        assert_eq!(bpref(&[], 1, 2, 3), 0.0);
        assert_eq!(bpref(&ranked, 1, 0, 3), 0.0);
    }
}
