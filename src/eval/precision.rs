//! `p@k` and `recall@k` (eval stage: input → analysis → index → search →
//! **eval** → stats → report).
//!
//! Definitions (metrics.md; Manning, Raghavan & Schütze, *Introduction to
//! Information Retrieval*, 2008, ch. 8, §8.3 and §8.4):
//!
//! ```text
//! p@k      = (Σ_{i ≤ min(k,n)} rel(d_i)) / k
//! recall@k = (Σ_{i ≤ min(k,n)} rel(d_i)) / R
//! ```
//!
//! p@k divides by k even when the run holds fewer than k documents: a system
//! that returns less is not rewarded for it. rel(d) = 1 when the grade is at
//! least the relevance threshold t; an unjudged document is not relevant.

use super::is_relevant;

/// Number of relevant documents among the first min(k, n).
fn relevant_in_top(ranked: &[Option<u32>], relevant_from: u32, k: usize) -> usize {
    ranked.iter().take(k).filter(|g| is_relevant(**g, relevant_from)).count()
}

/// p@k of one ranking. `ranked` holds the grade at each rank (`None` when
/// unjudged), `relevant_from` is the threshold t. Returns 0 when `k` is 0.
pub fn precision_at(ranked: &[Option<u32>], relevant_from: u32, k: usize) -> f64 {
    if k == 0 {
        return 0.0;
    }
    relevant_in_top(ranked, relevant_from, k) as f64 / k as f64
}

/// recall@k of one ranking; `relevant` is R, the number of judged documents
/// of the query with a grade of at least t. Returns 0 when R is 0 (such a
/// query is never evaluated).
pub fn recall_at(ranked: &[Option<u32>], relevant_from: u32, k: usize, relevant: usize) -> f64 {
    if relevant == 0 {
        return 0.0;
    }
    relevant_in_top(ranked, relevant_from, k) as f64 / relevant as f64
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    /// Manning, Raghavan & Schütze (2008), ch. 8, exercise 8.9 (the ranked
    /// list from memory): 20 results "R R N N N N N N R N R N N N R N N N N
    /// R", 8 relevant documents in the collection.
    fn mrs_exercise() -> Vec<Option<u32>> {
        "RRNNNNNNRNRNNNRNNNNR".chars().map(|c| Some(u32::from(c == 'R'))).collect()
    }

    #[test]
    fn manning_exercise_precision_and_recall_at_20() {
        let ranked = mrs_exercise();
        // (a) precision on the top 20: 6 relevant / 20 = 0.3.
        assert_relative_eq!(precision_at(&ranked, 1, 20), 0.3, epsilon = 1e-15);
        // recall on the top 20: 6 / 8 = 0.75.
        assert_relative_eq!(recall_at(&ranked, 1, 20, 8), 0.75, epsilon = 1e-15);
        // Hand computed: the top 10 hold ranks 1, 2, 9 → p@10 = 0.3, recall@10 = 3/8.
        assert_relative_eq!(precision_at(&ranked, 1, 10), 0.3, epsilon = 1e-15);
        assert_relative_eq!(recall_at(&ranked, 1, 10, 8), 0.375, epsilon = 1e-15);
        // p@2 = 1, p@1 = 1.
        assert_eq!(precision_at(&ranked, 1, 2), 1.0);
        assert_eq!(precision_at(&ranked, 1, 1), 1.0);
    }

    #[test]
    fn k_larger_than_the_list_divides_by_k() {
        // 2 relevant of 3 returned, k = 10 → p@10 = 2/10, recall@10 = 2/2.
        let ranked = [Some(1), None, Some(3)];
        assert_relative_eq!(precision_at(&ranked, 1, 10), 0.2, epsilon = 1e-15);
        assert_eq!(recall_at(&ranked, 1, 10, 2), 1.0);
    }

    #[test]
    fn threshold_and_degenerate_inputs() {
        // t = 2: the grade-1 document is not relevant → p@3 = 1/3.
        let ranked = [Some(1), Some(2), Some(0)];
        assert_relative_eq!(precision_at(&ranked, 2, 3), 1.0 / 3.0, epsilon = 1e-15);
        assert_relative_eq!(precision_at(&ranked, 1, 3), 2.0 / 3.0, epsilon = 1e-15);
        assert_eq!(precision_at(&[], 1, 5), 0.0);
        assert_eq!(recall_at(&[], 1, 5, 3), 0.0);
        assert_eq!(precision_at(&ranked, 1, 0), 0.0);
        assert_eq!(recall_at(&ranked, 1, 3, 0), 0.0);
    }
}
