//! Skipped checks of a test binary, said where `cargo test` shows them. A
//! test that cannot make its check (the shared open data absent, no
//! browser) passes, since the suite must pass without them; so that such a
//! pass is not taken for a check made, [`skip`] prints the reason at once
//! and, when the test binary ends (right after libtest's `test result:`
//! line), a summary: how many checks were skipped, and why.
//!
//! Compiled into both test harnesses, never into the program: the
//! library's unit tests (`#[cfg(test)] mod test_skips` in `lib.rs`) and the
//! integration tests (`tests/it/main.rs`, by path).

use std::io::Write;
use std::sync::{Mutex, Once};

/// The reasons of this binary's skipped checks, in the order they came.
static SKIPPED: Mutex<Vec<String>> = Mutex::new(Vec::new());

/// Registers [`print_summary`] to run at exit, once.
static AT_EXIT: Once = Once::new();

/// Write `msg` as one line straight to the process's stderr. The test
/// harness captures only the `print!`/`eprint!` macros (and shows them only
/// for failing tests), so unlike `eprintln!` this line appears in a plain
/// `cargo test --release` run: for skip reasons and measured figures.
pub fn report_line(msg: &str) {
    let _ = writeln!(std::io::stderr().lock(), "{msg}");
}

/// Say that a check was skipped and why (`skipped: REASON` now, and in the
/// summary at exit).
pub fn skip(reason: &str) {
    report_line(&format!("skipped: {reason}"));
    if let Ok(mut reasons) = SKIPPED.lock() {
        reasons.push(reason.to_string());
    }
    AT_EXIT.call_once(|| {
        extern "C" {
            fn atexit(callback: extern "C" fn()) -> std::os::raw::c_int;
        }
        // SAFETY: `atexit` is the C library's (ISO C 7.22.4.2), linked into
        // every Rust program on the platforms we test on; the callback is a
        // plain `extern "C" fn` that does not unwind (it cannot panic: a
        // poisoned lock or a failed write is ignored). libtest's harness
        // returns from `main` (or calls `exit`) after its summary, and both
        // run the registered callbacks.
        unsafe {
            atexit(print_summary);
        }
    });
}

/// The summary printed at exit, after libtest's own.
extern "C" fn print_summary() {
    let Ok(reasons) = SKIPPED.lock() else { return };
    if reasons.is_empty() {
        return;
    }
    let mut err = std::io::stderr().lock();
    let _ = writeln!(
        err,
        "postassay tests: {} skipped in this test binary (the tests that hold {} passed \
         without {}):",
        if reasons.len() == 1 {
            "1 check".to_string()
        } else {
            format!("{} checks", reasons.len())
        },
        if reasons.len() == 1 { "it" } else { "them" },
        if reasons.len() == 1 { "it" } else { "them" },
    );
    for reason in reasons.iter() {
        let _ = writeln!(err, "  - {reason}");
    }
}
