//! Per-query IR metrics (metrics.md): pure functions of a ranking and judgments.
