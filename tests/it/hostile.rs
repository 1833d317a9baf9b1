//! Issue 17, item 6: hostile sizes through the binary. Each input either
//! works within memory proportional to its size or exits 2 with a short
//! message; never a stack overflow or an abort (a signal). Peak memory is
//! the child's maximum resident set, from `wait4`, and is printed.

use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::Path;
use std::process::{Command, Stdio};

use crate::util::{fixture, report_line};

#[path = "../common/peak_memory.rs"]
mod peak_memory;
use peak_memory::wait_with_peak_memory;

/// How a child ended, its output and its peak resident memory.
struct Ended {
    code: Option<i32>,
    signal: Option<i32>,
    stdout: String,
    stderr: String,
    max_rss_bytes: u64,
}

/// Run the binary in `dir` with `args` to its end (stdout and stderr go
/// to files, so no pipe fills) and collect its peak memory.
fn run_measured(dir: &Path, args: &[&str]) -> Ended {
    let out_path = dir.join("child.stdout");
    let err_path = dir.join("child.stderr");
    let child = Command::new(env!("CARGO_BIN_EXE_postassay"))
        .current_dir(dir)
        .args(args)
        .stdin(Stdio::null())
        .stdout(File::create(&out_path).unwrap())
        .stderr(File::create(&err_path).unwrap())
        .spawn()
        .expect("the binary starts");
    let waited = wait_with_peak_memory(child);
    Ended {
        code: waited.code,
        signal: waited.signal,
        stdout: std::fs::read_to_string(out_path).unwrap(),
        stderr: std::fs::read_to_string(err_path).unwrap(),
        max_rss_bytes: waited.max_rss_bytes,
    }
}

const MIB: u64 = 1 << 20;

/// The stemming fixture's queries and judgments, and flags for `run`.
fn run_args<'a>(corpus: &'a str, queries: &'a str, qrels: &'a str, out: &'a str) -> Vec<&'a str> {
    vec![
        "run",
        "--quiet",
        "--chains",
        "standard",
        "--corpus",
        corpus,
        "--queries",
        queries,
        "--judgments",
        qrels,
        "--out",
        out,
    ]
}

/// A corpus whose first post has a 100 MB text: read, indexed and scored
/// (formats.md: "No length limit applies to a post"), with a peak memory of
/// a few times the text (the huge post is judged nowhere, so no report
/// quotes it).
#[test]
fn a_100_mb_post_is_indexed_in_proportional_memory() {
    let tmp = tempfile::tempdir().unwrap();
    let corpus = tmp.path().join("posts.jsonl");
    let size = 100 * MIB;
    {
        let mut w = BufWriter::new(File::create(&corpus).unwrap());
        w.write_all(br#"{"id": "huge", "text": ""#).unwrap();
        let chunk = "ferry delays again ".repeat(1000);
        let mut written = 0;
        while written < size {
            w.write_all(chunk.as_bytes()).unwrap();
            written += chunk.len() as u64;
        }
        w.write_all(b"\"}\n{\"id\": \"small\", \"text\": \"ferry\"}\n").unwrap();
    }
    let (q, j) = (fixture("stemming/queries.csv"), fixture("stemming/qrels.csv"));
    let c = corpus.to_str().unwrap();
    let out = tmp.path().join("out");
    let res = run_measured(
        tmp.path(),
        &run_args(c, q.to_str().unwrap(), j.to_str().unwrap(), out.to_str().unwrap()),
    );
    assert_eq!((res.code, res.signal), (Some(0), None), "{}", res.stderr);
    let report = std::fs::read_to_string(out.join("report.json")).unwrap();
    assert!(report.contains("\"posts\": 2"), "both posts read");
    for file in ["report.md", "report.html", "report.json"] {
        let bytes = std::fs::metadata(out.join(file)).unwrap().len();
        assert!(bytes < MIB, "{file}: {bytes} bytes");
    }
    report_line(&format!(
        "hostile: 100 MB post indexed, peak memory {} MiB",
        res.max_rss_bytes / MIB
    ));
    assert!(res.max_rss_bytes < 4 * size + 100 * MIB, "peak {} bytes", res.max_rss_bytes);
}

/// A post with a 10,000-deep JSON array in a field postassay does not use
/// is read (the unused field is skipped without recursion) and the run
/// works; the same nesting as a post's `text` is refused (exit 2) naming
/// the line, not a stack overflow (serde_json stops at 128 levels; RFC 8259
/// §9 lets a parser limit the depth).
#[test]
fn json_nested_10000_deep_works_in_an_unused_field_and_exits_2_in_text() {
    let tmp = tempfile::tempdir().unwrap();
    let deep = format!("{}{}", "[".repeat(10_000), "]".repeat(10_000));
    let (q, j) = (fixture("stemming/queries.csv"), fixture("stemming/qrels.csv"));
    let corpus = tmp.path().join("posts.jsonl");
    let c = corpus.to_str().unwrap();
    let out = tmp.path().join("out");
    let args = run_args(c, q.to_str().unwrap(), j.to_str().unwrap(), out.to_str().unwrap());

    std::fs::write(
        &corpus,
        format!(
            "{{\"id\": \"a\", \"text\": \"ferry delays\", \"extra\": {deep}}}\n\
             {{\"id\": \"b\", \"text\": \"pier\"}}\n"
        ),
    )
    .unwrap();
    let res = run_measured(tmp.path(), &args);
    assert_eq!((res.code, res.signal), (Some(0), None), "{}", res.stderr);
    let report = std::fs::read_to_string(out.join("report.json")).unwrap();
    assert!(report.contains("\"posts\": 2"), "both posts read");

    std::fs::write(&corpus, format!("{{\"id\": \"a\", \"text\": {deep}}}\n")).unwrap();
    let res = run_measured(tmp.path(), &args);
    assert_eq!((res.code, res.signal), (Some(2), None), "{}", res.stderr);
    assert!(res.stderr.contains(&format!("{c}:1: invalid JSON at column ")), "{}", res.stderr);
    assert!(res.stderr.contains("recursion limit exceeded"), "{}", res.stderr);
    assert!(res.stderr.len() < 1000, "{}", res.stderr);
}

/// A chain file with a 1 MB string, as a chain's name and as a step's
/// value: exit 2 with a message of bounded length (the value cut), in
/// memory proportional to the file.
#[test]
fn a_chain_file_with_a_1_mb_string_exits_2_with_a_short_message() {
    let tmp = tempfile::tempdir().unwrap();
    let long = "a".repeat(MIB as usize);
    let cases = [
        ("name.toml", format!("[[chain]]\nname = \"{long}\"\ntokenizer = \"words\"\nsteps = []\n")),
        (
            "stop.toml",
            format!(
                "[[chain]]\nname = \"x\"\ntokenizer = \"words\"\nsteps = [{{ step = \"stop\", language = \"{long}\" }}]\n"
            ),
        ),
        ("key.toml", format!("[[chain]]\nname = \"x\"\n{long} = 1\n")),
    ];
    for (name, text) in cases {
        let path = tmp.path().join(name);
        std::fs::write(&path, text).unwrap();
        let res = run_measured(
            tmp.path(),
            &["tokens", "--chain-file", path.to_str().unwrap(), "--chain", "x", "ferry"],
        );
        assert_eq!((res.code, res.signal), (Some(2), None), "{name}: {:.300}", res.stderr);
        assert!(
            res.stderr.contains(&format!("{}:", path.display())),
            "{name}: {:.300}",
            res.stderr
        );
        assert!(res.stderr.len() < 2000, "{name}: a {} byte message", res.stderr.len());
        assert!(res.max_rss_bytes < 200 * MIB, "{name}: peak {} bytes", res.max_rss_bytes);
        report_line(&format!(
            "hostile: chain file {name} with a 1 MB string, peak memory {} MiB",
            res.max_rss_bytes / MIB
        ));
    }
}

/// 10^6 judgments for one query (and a run ranking 1,000 of its posts):
/// `score` works, and its peak memory stays within a small multiple of the
/// judgments file.
#[test]
fn a_million_judgments_for_one_query_are_scored() {
    let tmp = tempfile::tempdir().unwrap();
    let qrels = tmp.path().join("qrels.csv");
    {
        let mut w = BufWriter::new(File::create(&qrels).unwrap());
        w.write_all(b"query_id,doc_id,grade\n").unwrap();
        for i in 0..1_000_000u32 {
            writeln!(w, "q1,d{i:07},{}", u32::from(i % 1000 == 0)).unwrap();
        }
    }
    let run = tmp.path().join("run.csv");
    {
        let mut w = BufWriter::new(File::create(&run).unwrap());
        w.write_all(b"query_id,doc_id,rank,score\n").unwrap();
        // Every 500th post: half of them (the even thousands) relevant.
        for r in 0..1000u32 {
            writeln!(w, "q1,d{:07},{},{}", r * 500, r + 1, 1000 - r).unwrap();
        }
    }
    let size = std::fs::metadata(&qrels).unwrap().len();
    let out = tmp.path().join("out");
    let res = run_measured(
        tmp.path(),
        &[
            "score",
            "--quiet",
            "--judgments",
            qrels.to_str().unwrap(),
            "--run",
            &format!("big={}", run.display()),
            "--metrics",
            "p@10,recall@1000",
            "--out",
            out.to_str().unwrap(),
        ],
    );
    assert_eq!((res.code, res.signal), (Some(0), None), "{}\n{}", res.stdout, res.stderr);
    let summary = std::fs::read_to_string(out.join("summary.csv")).unwrap();
    // 1,000 relevant posts (d0000000, d0001000, …); the run's even ranks
    // hold them: p@10 = 5/10, recall@1000 = 500/1000 (hand computed).
    assert!(summary.contains(",0.5,"), "{summary}");
    report_line(&format!(
        "hostile: 10^6 judgments of one query ({} MiB), peak memory {} MiB",
        size / MIB,
        res.max_rss_bytes / MIB
    ));
    assert!(res.max_rss_bytes < 20 * size + 100 * MIB, "peak {} bytes", res.max_rss_bytes);
}
