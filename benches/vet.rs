//! Speed benchmark of `postassay vet` over the shared open data (the vet
//! target: a full pass in under a minute).
//!
//! Not part of the data flow: a stand-alone program that runs the built
//! `postassay` binary with the README's Diagnostics command (the built-in
//! chains, `routed` with both language detectors, the default frequency
//! sources, output into a temporary directory), from the
//! repository root, in several rounds. Each round first measures a
//! baseline: reading and SHA-256 hashing every file the pass read (the list
//! is `inputs` of the pass's own `diagnostics.json`), the I/O no pass can
//! avoid (median of [`BASELINE_REPEATS`] measurements). Machines are
//! noisy, so the figure to keep is the ratio of the pass to that baseline
//! measured in the same round (median and range over the rounds); the
//! absolute seconds are printed against the one-minute target too. One
//! untimed pass first warms the page cache and yields the list of inputs.
//!
//! Run: `cargo bench --bench vet`. Environment: `POSTASSAY_BENCH_DATA=DIR`
//! (the open data; default `../shared/data` from the repository root; the
//! benchmark prints why it skipped when it is absent),
//! `POSTASSAY_BENCH_REPEATS=N` (rounds, default 3). DEVELOPERS.md
//! ("Benchmarks") explains the output.

mod common;
use common::{env_usize, median};

use std::path::{Path, PathBuf};
use std::process::Command;
use std::time::Instant;

use postassay::input::sha256_of;

/// Rounds when `POSTASSAY_BENCH_REPEATS` is not set.
const DEFAULT_REPEATS: usize = 3;

/// Times the baseline is measured per round (its median is the round's
/// baseline: it takes milliseconds, so one measurement is noisy).
const BASELINE_REPEATS: usize = 5;

/// The target for one full pass, in seconds.
const TARGET_SECONDS: f64 = 60.0;

/// The README's Diagnostics command, without `--data` and `--out`.
const README_VET: [&str; 3] = ["vet", "--chains", "standard,stemmed,hashtag,routed"];

fn main() {
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    let data = match std::env::var_os("POSTASSAY_BENCH_DATA") {
        Some(d) => PathBuf::from(d),
        None => PathBuf::from("../shared/data"),
    };
    if !root.join(&data).join("ud").is_dir() {
        println!(
            "skipped: {} (the shared open data) is not present; set POSTASSAY_BENCH_DATA=DIR",
            data.display()
        );
        return;
    }
    let repeats = env_usize("POSTASSAY_BENCH_REPEATS", DEFAULT_REPEATS).max(1);
    let out_root = tempfile::tempdir().expect("a temporary directory");

    // Untimed: warms the page cache and lists the files a pass reads.
    let warm_out = out_root.path().join("warm");
    vet_pass(&root, &data, &warm_out);
    let inputs = read_inputs(&warm_out.join("diagnostics.json"));
    let bytes: u64 =
        inputs.iter().map(|(p, _)| std::fs::metadata(root.join(p)).map_or(0, |m| m.len())).sum();
    println!(
        "postassay vet benchmark: {} files read per pass ({:.1} MB) from {}; {repeats} rounds",
        inputs.len(),
        bytes as f64 / 1e6,
        data.display()
    );
    println!("command: postassay {} --data {} --out DIR", README_VET.join(" "), data.display());

    let (mut pass, mut baseline, mut ratios) = (Vec::new(), Vec::new(), Vec::new());
    for round in 0..repeats {
        let b = median(
            &(0..BASELINE_REPEATS).map(|_| read_and_hash(&root, &inputs)).collect::<Vec<_>>(),
        );
        let out = out_root.path().join(format!("round{round}"));
        let t = Instant::now();
        vet_pass(&root, &data, &out);
        let p = t.elapsed().as_secs_f64();
        println!("  round {}: vet {p:.2} s, baseline {b:.3} s, ratio {:.1}", round + 1, p / b);
        pass.push(p);
        baseline.push(b);
        ratios.push(p / b);
    }

    let (lo, hi) = range(&ratios);
    let seconds = median(&pass);
    println!();
    println!("                                      seconds (median)  range");
    println!(
        "  baseline: read + SHA-256 of inputs  {:>16.3}  {}",
        median(&baseline),
        range_text(&baseline, 3)
    );
    println!("  vet, full pass                      {seconds:>16.2}  {}", range_text(&pass, 2));
    println!("  ratio vet ÷ baseline                {:>16.1}  {lo:.1}–{hi:.1}", median(&ratios));
    let verdict = if seconds < TARGET_SECONDS { "met" } else { "MISSED" };
    println!("target: a full pass under {TARGET_SECONDS:.0} s: {seconds:.2} s, {verdict}");
}

/// One `postassay vet` run of the README command into `out`, from `root`.
fn vet_pass(root: &Path, data: &Path, out: &Path) {
    let status = Command::new(env!("CARGO_BIN_EXE_postassay"))
        .current_dir(root)
        .args(README_VET)
        .arg("--quiet")
        .arg("--data")
        .arg(data)
        .arg("--out")
        .arg(out)
        .status()
        .expect("the postassay binary runs");
    assert!(status.success(), "postassay vet failed with {status}");
}

/// `(path, sha256)` of every input a pass recorded in its diagnostics.json
/// (paths as given, relative to the repository root).
fn read_inputs(json: &Path) -> Vec<(PathBuf, String)> {
    let text = std::fs::read_to_string(json).expect("the pass wrote diagnostics.json");
    let value: serde_json::Value = serde_json::from_str(&text).expect("diagnostics.json is JSON");
    value["inputs"]
        .as_array()
        .expect("diagnostics.json lists its inputs")
        .iter()
        .filter_map(|i| {
            Some((PathBuf::from(i["path"].as_str()?), i["sha256"].as_str()?.to_string()))
        })
        .collect()
}

/// Seconds to read every input and hash it with SHA-256 (the library's own
/// streamed hashing, as the pass does); each digest is checked against the
/// one the pass recorded.
fn read_and_hash(root: &Path, inputs: &[(PathBuf, String)]) -> f64 {
    let started = Instant::now();
    for (path, expected) in inputs {
        let digest = sha256_of(&root.join(path)).unwrap_or_else(|e| panic!("{e}"));
        assert_eq!(&digest, expected, "{} changed during the benchmark", path.display());
    }
    started.elapsed().as_secs_f64()
}

fn range(values: &[f64]) -> (f64, f64) {
    let lo = values.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = values.iter().copied().fold(0.0, f64::max);
    (lo, hi)
}

fn range_text(values: &[f64], decimals: usize) -> String {
    let (lo, hi) = range(values);
    format!("{lo:.decimals$}–{hi:.decimals$}")
}
