//! Pause points: the one test hook of the program. With the environment
//! variable `POSTASSAY_PAUSE_AT=NAME` set, the program stops for good when it
//! reaches the point called `NAME`: it prints `postassay: paused at NAME` on
//! stderr and waits (forever) for a signal. The kill tests
//! (`tests/it/kills.rs`) wait for that line and then SIGKILL the process,
//! so each kill lands at a known point however slow the machine is.
//!
//! The points of `run` (in the order they are reached): `reading` (every
//! input read), `building` (the first chain's index built, the others not),
//! `writing` (the first output file written into the new output directory),
//! `swapping` (the previous output directory moved aside, the new one not yet
//! in its place) and `clearing` (the new directory in place, the previous
//! one not yet removed). Without the variable (every ordinary use) a point
//! does nothing. This is the only place that reads the variable.

use std::io::Write;
use std::sync::OnceLock;

/// The variable that names the point to pause at.
pub const PAUSE_AT_VAR: &str = "POSTASSAY_PAUSE_AT";

/// Pause here, for good, when `POSTASSAY_PAUSE_AT` names `point` (see the
/// module docs); otherwise return at once.
pub fn point(point: &str) {
    static AT: OnceLock<Option<String>> = OnceLock::new();
    let at = AT.get_or_init(|| std::env::var(PAUSE_AT_VAR).ok());
    if at.as_deref() != Some(point) {
        return;
    }
    let mut err = std::io::stderr().lock();
    let _ = writeln!(err, "postassay: paused at {point} ({PAUSE_AT_VAR})");
    let _ = err.flush();
    drop(err);
    loop {
        std::thread::park();
    }
}
