//! `mrr`: per-query reciprocal rank of the first relevant document, whose
//! mean over queries is MRR (eval stage: input → analysis → index → search →
//! **eval** → stats → report).
//!
//! Definition (metrics.md; Voorhees, "The TREC-8 question answering track
//! report", TREC 1999): RR = 1 / min{i : rel(d_i) = 1}, or 0 when the run
//! returns no relevant document.

use super::is_relevant;

/// Reciprocal rank of one ranking. `ranked` holds the grade at each rank
/// (`None` when unjudged); `relevant_from` is the threshold t.
pub fn reciprocal_rank(ranked: &[Option<u32>], relevant_from: u32) -> f64 {
    ranked
        .iter()
        .position(|g| is_relevant(*g, relevant_from))
        .map_or(0.0, |index| 1.0 / (index + 1) as f64)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Hand computed from Voorhees (1999)'s definition.
    #[test]
    fn first_relevant_rank() {
        // First relevant at rank 3 → 1/3.
        assert_eq!(reciprocal_rank(&[Some(0), None, Some(1), Some(2)], 1), 1.0 / 3.0);
        // t = 2: the grade-1 document no longer counts → rank 4 → 1/4.
        assert_eq!(reciprocal_rank(&[Some(0), None, Some(1), Some(2)], 2), 0.25);
        assert_eq!(reciprocal_rank(&[Some(4)], 1), 1.0);
        // No relevant document, or nothing returned → 0.
        assert_eq!(reciprocal_rank(&[Some(0), None], 1), 0.0);
        assert_eq!(reciprocal_rank(&[], 1), 0.0);
    }
}
