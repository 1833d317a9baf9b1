//! Scale benchmark (issue 14): the whole bench at a million posts and ten
//! thousand queries, timed in ONE run against a bare build of the same
//! posts, so every figure is a ratio measured on the same machine at the
//! same time.
//!
//! Not part of the data flow: a stand-alone program. It generates, with
//! fixed seeds, the corpus of the chain benchmark (`benches/common/corpus.rs`)
//! and known-item queries drawn from it, then measures
//! - **bare build**: the posts indexed with tantivy's `default` tokenizer
//!   and 2 writer threads (the baseline of every ratio; twice, mean);
//! - **each chain**: `ChainIndex::build` of every built-in chain, in
//!   process, one after the other (the routed chain with its languages
//!   read from the detection cache the `run` below filled);
//! - **run**: `postassay run` on every core with a fresh cache (reading,
//!   detection, four builds, searching, statistics, reports), wall-clock
//!   and peak resident memory; then again with the detections cached and
//!   no index cached (every chain built, no language detected);
//! - **score**: `postassay score` of five runs of 10,000 queries, 8 default
//!   metrics, default resamples;
//! - **cached re-run**: `postassay run` of five chains on the first
//!   200,000 posts, cold, then again after changing one parameter of one
//!   chain (only that chain is rebuilt).
//!
//! Run: `cargo bench --bench scale`. Environment: `POSTASSAY_SCALE_POSTS`
//! (default 1,000,000), `POSTASSAY_SCALE_QUERIES` (queries of the run,
//! default 1,000), `POSTASSAY_SCALE_SCORE_QUERIES` (default 10,000),
//! `POSTASSAY_SCALE_REUSE_POSTS` (posts of the cached re-run, default
//! 200,000), `POSTASSAY_SCALE_DIR` (keep the generated files and outputs
//! there instead of a temporary directory). DEVELOPERS.md ("Benchmarks")
//! explains how to read the output.

mod common;
use common::{env_usize, median};
#[path = "common/corpus.rs"]
mod corpus;
#[path = "../tests/common/peak_memory.rs"]
mod peak_memory;
use peak_memory::wait_with_peak_memory;

use std::fmt::Write as _;
use std::io::Write as _;
use std::path::{Path, PathBuf};
use std::process::Command;
use std::time::Instant;

use postassay::analysis::hashtag::WordFreqs;
use postassay::analysis::{builtin_chains, AnalysisContext, Analyzer};
use postassay::bench::detect_cache::DetectCache;
use postassay::index::ChainIndex;
use postassay::input::{LangCode, Post};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

/// Seed of the queries, judgments and runs (the corpus has its own).
const SEED: u64 = 0x7363_616c;

fn main() {
    let posts_n = env_usize("POSTASSAY_SCALE_POSTS", 1_000_000);
    let queries_n = env_usize("POSTASSAY_SCALE_QUERIES", 1_000);
    let score_n = env_usize("POSTASSAY_SCALE_SCORE_QUERIES", 10_000);
    let reuse_n = env_usize("POSTASSAY_SCALE_REUSE_POSTS", 200_000).min(posts_n);
    let kept = std::env::var_os("POSTASSAY_SCALE_DIR").map(PathBuf::from);
    let tmp = tempfile::Builder::new().prefix("postassay-scale-").tempdir().expect("temp dir");
    let dir = kept.unwrap_or_else(|| tmp.path().to_path_buf());
    std::fs::create_dir_all(&dir).expect("work dir");
    let threads = std::thread::available_parallelism().map_or(1, |n| n.get());
    println!(
        "scale benchmark: {posts_n} posts, {queries_n} queries, score at {score_n} queries, \
         cached re-run at {reuse_n} posts; {threads} cores; files in {}",
        dir.display()
    );

    let started = Instant::now();
    let posts = corpus::generate_posts(posts_n);
    write_bench(&dir, "big", &posts, queries_n);
    write_bench(&dir, "reuse", &posts[..reuse_n], queries_n.min(reuse_n));
    write_score_inputs(&dir, score_n);
    write_reuse_chains(&dir, 30);
    println!("generated the inputs in {:.1} s", started.elapsed().as_secs_f64());

    let mut rows: Vec<Row> = Vec::new();
    let bare: Vec<f64> = (0..2).map(|_| corpus::default_build(&posts, 2)).collect();
    let bare = median(&bare);
    rows.push(Row::new("bare build (tantivy default tokenizer, 2 writer threads)", bare));

    // The whole run, cold: a fresh cache directory.
    let cache = dir.join("cache-run");
    let _ = std::fs::remove_dir_all(&cache);
    let run = postassay(&dir, &run_args(&dir, "big", &cache, "out-run", None));
    rows.push(Row::new("run, 4 built-in chains, cold cache (all cores)", run.seconds).rss(run.rss));
    // Again with the detections cached but no index: every chain is built.
    std::fs::remove_dir_all(cache.join("indexes")).expect("indexes removed");
    let rebuilt = postassay(&dir, &run_args(&dir, "big", &cache, "out-run-2", None));
    rows.push(
        Row::new("run, 4 built-in chains, detections cached, no index", rebuilt.seconds)
            .rss(rebuilt.rss),
    );

    // Each chain alone, in process (the routed chain's detections from the
    // cache the run filled).
    let en = LangCode::parse("en").expect("en");
    let specs = builtin_chains(en).expect("built-ins");
    let ctx = AnalysisContext {
        word_freqs: Some(std::sync::Arc::new(WordFreqs::learn(
            posts.iter().map(|p| p.text.as_str()),
        ))),
    };
    let mut chain_sum = 0.0;
    for spec in &specs {
        let analyzer = Analyzer::build(spec, &ctx).expect("chain builds");
        let detections = match analyzer.detector() {
            Some(d) => {
                let texts: Vec<&str> = posts
                    .iter()
                    .map(|p| if p.lang.is_some() { "" } else { p.text.as_str() })
                    .collect();
                DetectCache::new(cache.join("detections")).detect_all(d, &texts).detections
            }
            None => Vec::new(),
        };
        let t = Instant::now();
        let index = ChainIndex::build(&analyzer, &posts, &detections).expect("index builds");
        let seconds = t.elapsed().as_secs_f64();
        drop(index);
        chain_sum += seconds;
        rows.push(Row::new(&format!("  build {} (1 writer thread)", spec.name), seconds));
    }
    rows.push(Row::new("  sum of the four builds", chain_sum));

    // score at score_n queries × 5 runs.
    let score = postassay(&dir, &score_args(&dir));
    rows.push(
        Row::new(&format!("score, {score_n} queries × 5 runs × 8 metrics"), score.seconds)
            .rss(score.rss),
    );

    // Cached re-run: five chains cold, then one chain changed.
    let cache = dir.join("cache-reuse");
    let _ = std::fs::remove_dir_all(&cache);
    write_reuse_chains(&dir, 30);
    let chains = Some(dir.join("reuse-chains.toml"));
    let cold =
        postassay(&dir, &run_args(&dir, "reuse", &cache, "out-reuse-cold", chains.as_deref()));
    write_reuse_chains(&dir, 31);
    let warm =
        postassay(&dir, &run_args(&dir, "reuse", &cache, "out-reuse-warm", chains.as_deref()));
    rows.push(Row::new(&format!("run, 5 chains, {reuse_n} posts, cold cache"), cold.seconds));
    rows.push(Row::new("  the same after changing one chain", warm.seconds));

    println!("\n{}", table(&rows, bare));
    println!(
        "run / sum of four bare builds: {:.2} cold, {:.2} with the detections cached (goal ≤ 2.5)",
        run.seconds / (4.0 * bare),
        rebuilt.seconds / (4.0 * bare)
    );
    println!(
        "score at {score_n} queries: {:.1} s, {:.2}× the bare build (goal ≤ 5 s)",
        score.seconds,
        score.seconds / bare
    );
    println!(
        "cached re-run: {:.0}% less wall-clock than the cold run (goal ≥ 70%)",
        100.0 * (1.0 - warm.seconds / cold.seconds)
    );
    println!("peak memory of run: {:.0} MiB (goal ≤ 2048 MiB)", run.rss as f64 / 1024.0 / 1024.0);
}

/// One line of the result table.
struct Row {
    label: String,
    seconds: f64,
    rss: Option<u64>,
}

impl Row {
    fn new(label: &str, seconds: f64) -> Row {
        Row { label: label.to_string(), seconds, rss: None }
    }

    fn rss(mut self, bytes: u64) -> Row {
        self.rss = Some(bytes);
        self
    }
}

fn table(rows: &[Row], bare: f64) -> String {
    let mut s = format!("{:<58} {:>9} {:>9} {:>10}\n", "work", "seconds", "× bare", "peak MiB");
    for r in rows {
        let _ = writeln!(
            s,
            "{:<58} {:>9.2} {:>9.2} {:>10}",
            r.label,
            r.seconds,
            r.seconds / bare,
            r.rss.map_or(String::new(), |b| format!("{:.0}", b as f64 / 1024.0 / 1024.0))
        );
    }
    s
}

/// Wall-clock seconds and peak resident bytes of one child process.
struct Measured {
    seconds: f64,
    rss: u64,
}

/// Run the built `postassay` with `args` in `dir`; panics unless it exits 0.
fn postassay(dir: &Path, args: &[String]) -> Measured {
    let started = Instant::now();
    let child = Command::new(env!("CARGO_BIN_EXE_postassay"))
        .current_dir(dir)
        .args(args)
        .spawn()
        .expect("postassay starts");
    let waited = wait_with_peak_memory(child);
    let seconds = started.elapsed().as_secs_f64();
    assert_eq!((waited.code, waited.signal), (Some(0), None), "postassay {args:?}");
    Measured { seconds, rss: waited.max_rss_bytes }
}

fn run_args(dir: &Path, name: &str, cache: &Path, out: &str, chains: Option<&Path>) -> Vec<String> {
    let mut args: Vec<String> = vec![
        "run".into(),
        "--quiet".into(),
        "--corpus".into(),
        path(&dir.join(format!("{name}-posts.jsonl"))),
        "--queries".into(),
        path(&dir.join(format!("{name}-queries.csv"))),
        "--judgments".into(),
        path(&dir.join(format!("{name}-qrels.csv"))),
        "--cache-dir".into(),
        path(cache),
        "--out".into(),
        path(&dir.join(out)),
    ];
    if let Some(c) = chains {
        args.extend([
            "--chain-file".into(),
            path(c),
            "--chains".into(),
            "standard,stemmed,hashtag,routed,short_words".into(),
        ]);
    }
    args
}

fn score_args(dir: &Path) -> Vec<String> {
    let mut args: Vec<String> = vec![
        "score".into(),
        "--quiet".into(),
        "--judgments".into(),
        path(&dir.join("score-qrels.csv")),
        "--out".into(),
        path(&dir.join("out-score")),
    ];
    for k in 0..5 {
        args.push("--run".into());
        args.push(format!("s{k}={}", path(&dir.join(format!("score-run-{k}.csv")))));
    }
    args
}

fn path(p: &Path) -> String {
    p.to_str().expect("UTF-8 path").to_string()
}

/// The posts, and `queries` known-item queries: two words of one post
/// (letters only, three or more), that post judged 2.
fn write_bench(dir: &Path, name: &str, posts: &[Post], queries: usize) {
    let mut out = std::io::BufWriter::new(
        std::fs::File::create(dir.join(format!("{name}-posts.jsonl"))).expect("posts file"),
    );
    for p in posts {
        let line = serde_json::json!({"id": p.id.0, "text": p.text});
        writeln!(out, "{line}").expect("written");
    }
    out.flush().expect("flushed");
    let mut rng = ChaCha8Rng::seed_from_u64(SEED);
    let mut q = String::from("query_id,text\n");
    let mut j = String::from("query_id,doc_id,grade\n");
    let mut made = 0;
    while made < queries {
        let post = &posts[rng.gen_range(0..posts.len())];
        let words: Vec<&str> = post
            .text
            .split_whitespace()
            .filter(|w| w.chars().count() >= 3 && w.chars().all(char::is_alphabetic))
            .collect();
        if words.len() < 2 {
            continue;
        }
        let a = words[rng.gen_range(0..words.len())];
        let b = words[rng.gen_range(0..words.len())];
        let _ = writeln!(q, "q{made},{a} {b}");
        let _ = writeln!(j, "q{made},{},2", post.id.0);
        made += 1;
    }
    std::fs::write(dir.join(format!("{name}-queries.csv")), q).expect("queries");
    std::fs::write(dir.join(format!("{name}-qrels.csv")), j).expect("judgments");
}

/// Judgments and five runs for `score`: per query 20 judged posts of grades
/// 0–3 and a ranking of 100 posts per run, the runs differing by noise on a
/// shared relevance signal (so the tests have something to find).
fn write_score_inputs(dir: &Path, queries: usize) {
    let mut rng = ChaCha8Rng::seed_from_u64(SEED ^ 1);
    let mut j = String::from("query_id,doc_id,grade\n");
    let mut runs: Vec<String> =
        (0..5).map(|_| String::from("query_id,doc_id,rank,score\n")).collect();
    for q in 0..queries {
        let grades: Vec<u32> =
            (0..200).map(|d| if d < 20 { rng.gen_range(0..4) } else { 0 }).collect();
        for (d, g) in grades.iter().enumerate().take(20) {
            let _ = writeln!(j, "q{q},d{d},{g}");
        }
        for (k, run) in runs.iter_mut().enumerate() {
            let skill = 0.5 + 0.1 * k as f64;
            let mut scored: Vec<(f64, usize)> = grades
                .iter()
                .enumerate()
                .map(|(d, &g)| (skill * f64::from(g) + rng.gen::<f64>() * 2.0, d))
                .collect();
            scored.sort_by(|a, b| b.0.total_cmp(&a.0).then(a.1.cmp(&b.1)));
            for (rank, (score, d)) in scored.iter().take(100).enumerate() {
                let _ = writeln!(run, "q{q},d{d},{},{score:.6}", rank + 1);
            }
        }
    }
    std::fs::write(dir.join("score-qrels.csv"), j).expect("judgments");
    for (k, run) in runs.iter().enumerate() {
        std::fs::write(dir.join(format!("score-run-{k}.csv")), run).expect("run");
    }
}

/// A chain of our own whose `longest` is the parameter the cached re-run
/// changes (run beside the four built-ins, see [`run_args`]).
fn write_reuse_chains(dir: &Path, longest: u32) {
    let own = format!(
        "[[chain]]\nname = \"short_words\"\ntokenizer = \"words\"\nsteps = [{{ step = \
         \"lowercase\" }}, {{ step = \"keep_sizes\", shortest = 2, longest = {longest} }}]\n"
    );
    std::fs::write(dir.join("reuse-chains.toml"), own).expect("chain file");
}
