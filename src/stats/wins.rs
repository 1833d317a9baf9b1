//! Per-query wins, losses and ties of a system against the baseline.
//!
//! Data flow: `eval` → **`stats`** → `report`. A count that a mean can hide:
//! a chain may win on average yet lose on many queries.

/// Absolute tolerance under which two per-query values tie (metrics.md).
pub const TIE_TOLERANCE: f64 = 1e-12;

/// How many queries a system wins, loses and ties against the baseline.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct WinsLossesTies {
    /// Queries where the system's value is above the baseline's by more than
    /// 1e-12.
    pub wins: usize,
    /// Queries where the system's value is below the baseline's by more than
    /// 1e-12.
    pub losses: usize,
    /// Queries where the two values are within 1e-12 of each other.
    pub ties: usize,
}

/// Counts wins, losses and ties of `system` against `baseline`, pairing the
/// values by position (metrics.md, "wins / losses / ties").
///
/// Both slices hold one value per evaluated query in the same order; when
/// their lengths differ only the common prefix is counted (callers pass equal
/// lengths, which the debug build asserts). A pair involving NaN counts as
/// neither win, loss nor tie.
pub fn wins_losses_ties(system: &[f64], baseline: &[f64]) -> WinsLossesTies {
    debug_assert_eq!(system.len(), baseline.len(), "paired values per query");
    let mut counts = WinsLossesTies::default();
    for (s, b) in system.iter().zip(baseline) {
        let diff = s - b;
        if diff.abs() <= TIE_TOLERANCE {
            counts.ties += 1;
        } else if diff > 0.0 {
            counts.wins += 1;
        } else if diff < 0.0 {
            counts.losses += 1;
        }
    }
    counts
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn counts_with_tolerance() {
        // metrics.md: equal within 1e-12 is a tie. 0.1 + 0.2 vs 0.3 differ by
        // one ulp (5.6e-17): a tie; 1e-11 apart: a win / a loss.
        let system = [0.5, 0.1 + 0.2, 0.2, 0.3 + 1e-11, 0.3, 0.0];
        let baseline = [0.25, 0.3, 0.7, 0.3, 0.3 + 1e-11, 0.0];
        assert_eq!(
            wins_losses_ties(&system, &baseline),
            WinsLossesTies { wins: 2, losses: 2, ties: 2 }
        );
        // Just under the tolerance still ties: 0.5 and 0.5 + 2^-40
        // (≈ 9.1e-13 < 1e-12); 2^-36 (≈ 1.5e-11) does not.
        let tiny = 2f64.powi(-40);
        let small = 2f64.powi(-36);
        assert_eq!(
            wins_losses_ties(&[0.5 + tiny, 0.5 + small], &[0.5, 0.5]),
            WinsLossesTies { wins: 1, losses: 0, ties: 1 }
        );
        assert_eq!(wins_losses_ties(&[], &[]), WinsLossesTies::default());
    }
}
