//! `map`: per-query average precision, whose mean over queries is MAP (eval
//! stage: input → analysis → index → search → **eval** → stats → report).
//!
//! Definition (metrics.md; Manning, Raghavan & Schütze, *Introduction to
//! Information Retrieval*, 2008, §8.4):
//!
//! ```text
//! AP = (1/R) Σ_{i ≤ n, rel(d_i) = 1} p@i
//! ```
//!
//! A relevant document the run does not return contributes a precision of 0
//! (it is still counted in R).

use super::is_relevant;

/// Average precision of one ranking. `ranked` holds the grade at each rank
/// (`None` when unjudged), `relevant_from` is the threshold t and `relevant`
/// is R. Returns 0 when R is 0 (such a query is never evaluated).
pub fn average_precision(ranked: &[Option<u32>], relevant_from: u32, relevant: usize) -> f64 {
    if relevant == 0 {
        return 0.0;
    }
    let mut hits = 0usize;
    let mut sum = 0.0;
    for (index, grade) in ranked.iter().enumerate() {
        if is_relevant(*grade, relevant_from) {
            hits += 1;
            sum += hits as f64 / (index + 1) as f64; // p@i with i = index + 1
        }
    }
    sum / relevant as f64
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    #[test]
    fn manning_exercise_average_precision() {
        // Manning, Raghavan & Schütze (2008), ch. 8, exercise 8.9 (list from
        // memory): "R R N N N N N N R N R N N N R N N N N R", 8 relevant in
        // the collection, the 20 documents are the whole result set.
        // Relevant at ranks 1, 2, 9, 11, 15, 20:
        // AP = (1/1 + 2/2 + 3/9 + 4/11 + 5/15 + 6/20) / 8
        //    = (1 + 1 + 0.33333 + 0.36364 + 0.33333 + 0.3) / 8 = 3.33030 / 8 = 0.41629
        let ranked: Vec<Option<u32>> =
            "RRNNNNNNRNRNNNRNNNNR".chars().map(|c| Some(u32::from(c == 'R'))).collect();
        let expected = (1.0 + 1.0 + 3.0 / 9.0 + 4.0 / 11.0 + 5.0 / 15.0 + 6.0 / 20.0) / 8.0;
        assert_relative_eq!(average_precision(&ranked, 1, 8), expected, epsilon = 1e-15);
        assert_relative_eq!(average_precision(&ranked, 1, 8), 0.41629, epsilon = 1e-5);
    }

    #[test]
    fn hand_computed_small_cases() {
        // N R N R with R = 2: (1/2 + 2/4) / 2 = 0.5.
        let ranked = [Some(0), Some(1), None, Some(2)];
        assert_relative_eq!(average_precision(&ranked, 1, 2), 0.5, epsilon = 1e-15);
        // Same list, R = 4 (two relevant never returned): (1/2 + 2/4) / 4 = 0.25.
        assert_relative_eq!(average_precision(&ranked, 1, 4), 0.25, epsilon = 1e-15);
        // t = 2: only the grade-2 document at rank 4 is relevant, R = 1: 1/4.
        assert_relative_eq!(average_precision(&ranked, 2, 1), 0.25, epsilon = 1e-15);
        // Perfect ranking.
        assert_eq!(average_precision(&[Some(1), Some(3)], 1, 2), 1.0);
        // Empty run and R = 0.
        assert_eq!(average_precision(&[], 1, 3), 0.0);
        assert_eq!(average_precision(&ranked, 1, 0), 0.0);
    }
}
