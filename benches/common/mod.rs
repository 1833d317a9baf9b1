//! Helpers shared by the benchmark programs (`benches/chains.rs`,
//! `benches/vet.rs`, `benches/scale.rs`); not a benchmark itself.

/// The median of `values` (the mean of the middle two for an even count);
/// NaN when there are none.
pub fn median(values: &[f64]) -> f64 {
    let mut v = values.to_vec();
    v.sort_by(f64::total_cmp);
    match v.len() {
        0 => f64::NAN,
        n if n % 2 == 1 => v[n / 2],
        n => (v[n / 2 - 1] + v[n / 2]) / 2.0,
    }
}

/// The whole number in the environment variable `name`, else `default`
/// (also, with a note on stderr, when the variable holds something else).
pub fn env_usize(name: &str, default: usize) -> usize {
    match std::env::var(name) {
        Ok(v) => v.trim().parse().unwrap_or_else(|_| {
            eprintln!("{name}={v:?} is not a whole number; using {default}");
            default
        }),
        Err(_) => default,
    }
}
