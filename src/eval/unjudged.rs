//! `unjudged@k`: the share of the top k results that nobody judged (eval
//! stage: input → analysis → index → search → **eval** → stats → report).
//!
//! Definition (metrics.md; common practice, no single source):
//! (number of d_i, i ≤ min(k,n), with no judgment for q) / min(k,n), and 0
//! when n = 0. It is a diagnostic, not a quality measure: a high value means
//! the other metrics of that system rest on guesses (unjudged counts as not
//! relevant), typically because the system retrieves posts the judged pool
//! never saw.

/// unjudged@k of one ranking. `ranked` holds the grade at each rank, `None`
/// when unjudged. Returns 0 when the run is empty or `k` is 0.
pub fn unjudged_at(ranked: &[Option<u32>], k: usize) -> f64 {
    let depth = ranked.len().min(k);
    if depth == 0 {
        return 0.0;
    }
    let unjudged = ranked.iter().take(depth).filter(|g| g.is_none()).count();
    unjudged as f64 / depth as f64
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Hand computed from the definition in metrics.md.
    #[test]
    fn share_of_unjudged_in_top_k() {
        let ranked = [Some(1), None, Some(0), None];
        // top 2: one unjudged of 2 → 0.5
        assert_eq!(unjudged_at(&ranked, 2), 0.5);
        // k = 10 > n = 4: divides by min(k, n) = 4 → 2/4.
        assert_eq!(unjudged_at(&ranked, 10), 0.5);
        // top 3: one of 3.
        assert_eq!(unjudged_at(&ranked, 3), 1.0 / 3.0);
        assert_eq!(unjudged_at(&ranked, 1), 0.0);
        assert_eq!(unjudged_at(&[None], 10), 1.0);
        // n = 0 → 0, not NaN.
        assert_eq!(unjudged_at(&[], 10), 0.0);
    }
}
