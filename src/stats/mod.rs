//! Paired significance tests, multiple-comparison adjustment and bootstrap intervals.
