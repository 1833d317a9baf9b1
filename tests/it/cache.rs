//! `run` on several threads and through the index cache: the outputs do not
//! depend on either, a killed build is never reused, a changed chain or
//! corpus is rebuilt, and `postassay cache` lists and removes entries.

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

use crate::util::{postassay, root, texts, write};

/// Every output of a run, Timing left out: each CSV and run file whole,
/// report.md up to its Timing section, report.html without it and
/// report.json without its `timing` member.
fn outputs_without_timing(out: &Path) -> Vec<(String, String)> {
    let mut files = Vec::new();
    let mut stack = vec![out.to_path_buf()];
    while let Some(dir) = stack.pop() {
        for entry in std::fs::read_dir(&dir).expect("out dir") {
            let path = entry.expect("entry").path();
            if path.is_dir() {
                stack.push(path);
                continue;
            }
            let rel = path.strip_prefix(out).expect("inside").to_string_lossy().into_owned();
            let text = std::fs::read_to_string(&path).expect("text output");
            let text = match rel.as_str() {
                "report.md" => text[..text.find("\n## Timing").expect("Timing section")].into(),
                "report.html" => {
                    let a = text.find(postassay::report::html::TIMING_BEGIN).expect("begin");
                    let b = text.find(postassay::report::html::TIMING_END).expect("end");
                    format!("{}{}", &text[..a], &text[b..])
                }
                "report.json" => {
                    let mut v: serde_json::Value = serde_json::from_str(&text).expect("JSON");
                    v.as_object_mut().expect("object").remove("timing");
                    v.to_string()
                }
                _ => text,
            };
            files.push((rel, text));
        }
    }
    files.sort();
    files
}

/// Which chains of the report at `out` were read from the cache.
fn from_cache(out: &Path) -> Vec<(String, bool)> {
    let text = std::fs::read_to_string(out.join("report.json")).expect("report.json");
    let v: serde_json::Value = serde_json::from_str(&text).expect("JSON");
    v["timing"]["chains"]
        .as_array()
        .expect("timing chains")
        .iter()
        .map(|c| {
            (
                c["name"].as_str().expect("name").to_string(),
                c["from_cache"].as_bool().expect("bool"),
            )
        })
        .collect()
}

fn run_ok(cwd: &Path, args: &[&str]) {
    let res = postassay(cwd, args);
    assert_eq!(res.status.code(), Some(0), "{args:?}: {}", texts(&res).1);
}

fn s(p: &Path) -> &str {
    p.to_str().expect("UTF-8 temp path")
}

/// The demo bench with its four built-in chains (the routed one detects
/// languages): on one thread with a cold cache, on two threads from the
/// warm cache and on two threads with no cache, every output but Timing is
/// the same byte for byte. (Determinism is the contract's promise of
/// reproducible reports: formats.md, report.json's settings.)
#[test]
fn outputs_do_not_depend_on_threads_or_the_index_cache() {
    let tmp = tempfile::tempdir().expect("temp dir");
    let cache = tmp.path().join("cache");
    let (cold, warm, none) = (tmp.path().join("a"), tmp.path().join("b"), tmp.path().join("c"));
    let base = ["run", "--quiet", "--permutations", "500"];
    let with = |out: &Path, extra: &[&str]| {
        let mut args: Vec<&str> = base.to_vec();
        args.extend(extra);
        args.extend(["--out", s(out)]);
        run_ok(&root(), &args);
    };
    with(&cold, &["--threads", "1", "--cache-dir", s(&cache)]);
    with(&warm, &["--threads", "2", "--cache-dir", s(&cache)]);
    with(&none, &["--threads", "2", "--no-cache"]);
    let reference = outputs_without_timing(&cold);
    assert!(reference.iter().any(|(f, _)| f == "runs/routed.csv"), "{reference:?}");
    assert_eq!(outputs_without_timing(&warm), reference, "warm cache, 2 threads");
    assert_eq!(outputs_without_timing(&none), reference, "no cache, 2 threads");
    let names = ["standard", "stemmed", "hashtag", "routed"];
    let all = |cached: bool| names.iter().map(|n| (n.to_string(), cached)).collect::<Vec<_>>();
    assert_eq!(from_cache(&cold), all(false));
    assert_eq!(from_cache(&warm), all(true));
    assert_eq!(from_cache(&none), all(false));
    // The warm report says so in its Timing section.
    let md = std::fs::read_to_string(warm.join("report.md")).expect("report.md");
    assert!(md.contains("| `routed` | ") && md.contains(" (cached) |"), "{md}");
}

/// A small bench of generated posts: `n` posts, ten queries, ten judgments.
fn generated_bench(dir: &Path, n: usize) -> (PathBuf, PathBuf, PathBuf) {
    let words = ["harbour", "ferry", "storm", "market", "fish", "bridge", "tram", "rain"];
    let mut posts = String::with_capacity(n * 80);
    for i in 0..n {
        let a = words[i % words.len()];
        let b = words[(i / 8) % words.len()];
        let c = words[(i / 64) % words.len()];
        posts.push_str(&format!(
            "{{\"id\":\"p{i}\",\"text\":\"{a} {b} {c} post number {i} #{a}{b}\"}}\n"
        ));
    }
    let corpus = write(dir, "posts.jsonl", &posts);
    let mut q = String::from("query_id,text\n");
    let mut j = String::from("query_id,doc_id,grade\n");
    for k in 0..10 {
        q.push_str(&format!("q{k},{} {}\n", words[k % 8], words[(k + 3) % 8]));
        j.push_str(&format!("q{k},p{},2\n", k * 7));
    }
    (corpus, write(dir, "queries.csv", &q), write(dir, "qrels.csv", &j))
}

/// `run --quiet` on the three files of [`generated_bench`], then `rest`.
fn bench_args(files: &(PathBuf, PathBuf, PathBuf), rest: &[&str]) -> Vec<String> {
    let (corpus, queries, qrels) = files;
    let mut args: Vec<String> = ["run", "--quiet", "--corpus", s(corpus), "--queries", s(queries)]
        .iter()
        .chain(&["--judgments", s(qrels)])
        .map(|a| a.to_string())
        .collect();
    args.extend(rest.iter().map(|a| a.to_string()));
    args
}

/// Two chains of our own, `b`'s `longest` set to `longest`.
fn chain_file(dir: &Path, longest: u32) -> PathBuf {
    write(
        dir,
        "chains.toml",
        &format!(
            "[[chain]]\nname = \"a\"\ntokenizer = \"words\"\nsteps = [{{ step = \"lowercase\" }}]\n\n\
             [[chain]]\nname = \"b\"\ntokenizer = \"words\"\nsteps = [{{ step = \"lowercase\" }}, \
             {{ step = \"keep_sizes\", shortest = 2, longest = {longest} }}]\n"
        ),
    )
}

/// Changing one parameter of one chain rebuilds that chain only; changing
/// the corpus rebuilds every chain; the same inputs again reuse both.
#[test]
fn a_changed_chain_or_corpus_is_rebuilt_and_nothing_else() {
    let tmp = tempfile::tempdir().expect("temp dir");
    let dir = tmp.path();
    let cache = dir.join("cache");
    let files = generated_bench(dir, 300);
    let corpus = files.0.clone();
    let run = |out: &str| {
        let rest = ["--chain-file", "chains.toml", "--cache-dir", s(&cache), "--out", out];
        let args = bench_args(&files, &rest);
        run_ok(dir, &args.iter().map(String::as_str).collect::<Vec<_>>());
        from_cache(&dir.join(out))
    };
    let pair = |a: bool, b: bool| vec![("a".to_string(), a), ("b".to_string(), b)];
    chain_file(dir, 30);
    assert_eq!(run("o1"), pair(false, false), "cold");
    assert_eq!(run("o2"), pair(true, true), "same inputs");
    chain_file(dir, 31);
    assert_eq!(run("o3"), pair(true, false), "b's longest changed");
    let mut text = std::fs::read_to_string(&corpus).expect("corpus");
    text.push_str("{\"id\":\"extra\",\"text\":\"one more post\"}\n");
    std::fs::write(&corpus, text).expect("corpus written");
    assert_eq!(run("o4"), pair(false, false), "corpus changed");

    // `postassay cache` lists the five entries (a, b with 30, b with 31,
    // and a, b of the new corpus) and removes them.
    let list = postassay(dir, &["cache", "--cache-dir", s(&cache)]);
    let (out, err) = texts(&list);
    assert_eq!(list.status.code(), Some(0), "{err}");
    assert_eq!(out.lines().filter(|l| l.ends_with("  whole")).count(), 5, "{out}");
    assert!(out.contains("5 entries"), "{out}");
    let key = out
        .lines()
        .find(|l| l.ends_with("  whole"))
        .and_then(|l| l.split_whitespace().next())
        .expect("a key")
        .to_string();
    let dropped = postassay(dir, &["cache", "--cache-dir", s(&cache), "drop", &key]);
    assert_eq!(
        texts(&dropped).0.trim_end(),
        format!(
            "removed 1 entry ({}) from {}",
            {
                let line = out.lines().find(|l| l.starts_with(&key)).expect("listed");
                let cols: Vec<&str> = line.split_whitespace().collect();
                format!("{} {}", cols[3], cols[4])
            },
            cache.join("indexes").display()
        )
    );
    let short = postassay(dir, &["cache", "--cache-dir", s(&cache), "drop", "ab"]);
    assert_eq!(short.status.code(), Some(2), "a key of two characters is refused");
    let all = postassay(dir, &["cache", "--cache-dir", s(&cache), "drop", "--all"]);
    assert!(texts(&all).0.starts_with("removed 4 entries"), "{}", texts(&all).0);
    let empty = postassay(dir, &["cache", "--cache-dir", s(&cache)]);
    assert!(texts(&empty).0.contains("(empty)"));
}

/// SIGKILL while an index is being built: the unfinished entry is never
/// taken for a whole one; the next run builds it again and gives the same
/// outputs as a run without the cache.
#[cfg(unix)]
#[test]
fn a_run_killed_during_a_build_leaves_nothing_the_next_run_reuses() {
    let tmp = tempfile::tempdir().expect("temp dir");
    let dir = tmp.path();
    let cache = dir.join("cache");
    let indexes = cache.join("indexes");
    let files = generated_bench(dir, 200_000);
    let args = |out: &str, cached: bool| {
        let cache_flags = if cached { vec!["--cache-dir", s(&cache)] } else { vec!["--no-cache"] };
        let mut rest = vec!["--chains", "standard,stemmed", "--threads", "1", "--out", out];
        rest.extend(cache_flags);
        bench_args(&files, &rest)
    };
    let mut child = Command::new(env!("CARGO_BIN_EXE_postassay"))
        .current_dir(dir)
        .args(args("killed", true))
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .expect("starts");
    // Wait (however slow the machine) until a build has begun, then kill.
    let unfinished = |d: &Path| {
        std::fs::read_dir(d)
            .into_iter()
            .flatten()
            .flatten()
            .any(|e| e.file_name().to_string_lossy().starts_with(".unfinished-"))
    };
    let waited = Instant::now();
    while !unfinished(&indexes) {
        assert!(child.try_wait().expect("waits").is_none(), "the run ended before a build began");
        assert!(waited.elapsed() < Duration::from_secs(600), "no build began in 10 minutes");
        std::thread::sleep(Duration::from_millis(2));
    }
    child.kill().expect("killed");
    child.wait().expect("reaped");
    assert!(!dir.join("killed").exists(), "no output of the killed run");
    // Whatever the kill interrupted is not whole; whatever is whole has a manifest.
    let list = postassay(dir, &["cache", "--cache-dir", s(&cache)]);
    let listing = texts(&list).0;
    for line in listing.lines().skip(2).filter(|l| l.contains("  ")) {
        assert!(line.ends_with("whole") || line.ends_with("unfinished"), "{listing}");
    }
    let again = postassay(dir, &args("again", true).iter().map(String::as_str).collect::<Vec<_>>());
    assert_eq!(again.status.code(), Some(0), "{}", texts(&again).1);
    let fresh =
        postassay(dir, &args("fresh", false).iter().map(String::as_str).collect::<Vec<_>>());
    assert_eq!(fresh.status.code(), Some(0), "{}", texts(&fresh).1);
    assert_eq!(
        outputs_without_timing(&dir.join("again")),
        outputs_without_timing(&dir.join("fresh"))
    );
    // The torn directory is left for `cache drop --unfinished`, which removes it.
    let drop = postassay(dir, &["cache", "--cache-dir", s(&cache), "drop", "--unfinished"]);
    assert_eq!(drop.status.code(), Some(0), "{}", texts(&drop).1);
    assert!(!unfinished(&indexes), "unfinished builds removed");
    let whole = postassay(dir, &["cache", "--cache-dir", s(&cache)]);
    assert_eq!(texts(&whole).0.lines().filter(|l| l.ends_with("  whole")).count(), 2);
}
