//! Shared helpers: a fresh temporary directory per test, fixture paths, a
//! runner for the built binary, and [`report_line`] for what a test must
//! show in a plain `cargo test` run (skip reasons, measured figures).

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// The repository root (where `corpora/` and `judgments/` live).
pub fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// A fixture file under `tests/fixtures/`.
pub fn fixture(rel: &str) -> PathBuf {
    root().join("tests/fixtures").join(rel)
}

/// The cache directory every test run of the binary uses (under cargo's
/// target directory, so tests never write to the user's cache).
pub fn test_cache_dir() -> PathBuf {
    PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("it-cache")
}

/// Run the binary with `args` in directory `cwd`.
pub fn postassay(cwd: &Path, args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_postassay"))
        .env("POSTASSAY_CACHE_DIR", test_cache_dir())
        .current_dir(cwd)
        .args(args)
        .output()
        .expect("the test binary runs")
}

/// Stdout and stderr as text.
pub fn texts(out: &Output) -> (String, String) {
    (
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// Run the binary in `cwd` with `args` (a `tokens … --format json` call),
/// expecting exit 0: the first text's tokens, and stderr.
pub fn token_texts(cwd: &Path, args: &[&str]) -> (Vec<String>, String) {
    let res = postassay(cwd, args);
    let (stdout, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "{stderr}");
    let v: serde_json::Value = serde_json::from_str(&stdout).expect("JSON on stdout");
    let tokens = v[0]["tokens"]
        .as_array()
        .expect("a token list")
        .iter()
        .map(|t| t["token"].as_str().expect("a token text").to_string())
        .collect();
    (tokens, stderr)
}

/// Write `content` to `dir/name` and return the path.
pub fn write(dir: &Path, name: &str, content: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, content).expect("temp file written");
    p
}

/// Read a CSV output into rows of fields (header included).
pub fn read_csv(path: &Path) -> Vec<Vec<String>> {
    let text = std::fs::read_to_string(path).expect("output exists");
    text.lines().map(|l| l.split(',').map(str::to_string).collect()).collect()
}

/// Print a line that must show in a plain `cargo test --release` run (the
/// figures a full pass measured), and [`skip`] a check with its reason
/// (also counted in the summary at the end of the test binary); see
/// `src/test_skips.rs`, shared with the library's unit tests.
pub use crate::test_skips::{report_line, skip};
