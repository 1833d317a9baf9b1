//! `postassay pool` on the fixture in tests/fixtures/pool/.
//!
//! Judged: q1 = {p1: 2, p2: 0}, q2 = {p5: 1}. Top 3 of run `a`: q1 p1 p3 p4,
//! q2 p6 p5 p7; of run `b`: q1 p3 p1 p9, q2 p7 p8, q10 `10` (q10 is not in
//! the query file). Unjudged pairs: q1 p3 (a rank 2, b rank 1), p4 (a 3),
//! p9 (b 3); q10 `10` (b 1); q2 p6 (a 1), p7 (a 3, b 1), p8 (b 2). So `a`
//! brings 4 pairs (p4, p6 only from it) and `b` 5 (p9, p8, `10` only from
//! it); q10 sorts between q1 and q2 in byte order.

use std::path::Path;

use crate::util::{fixture, postassay, texts};

const EXPECTED: &str = "query_id,doc_id,best_rank,systems,query_text,post_text
q1,p3,1,a;b,ferry delays,\"ferry cancelled, waiting at the pier for an hour\"
q1,p4,3,a,ferry delays,@port_info any news on the delays?
q1,p9,3,b,ferry delays,\"Line one of a post
and its second line, with \"\"quotes\"\"\"
q10,10,1,b,,Паром опаздывает
q2,p6,1,a,Fähre Verspätung,Fährverbindung heute gestrichen #Sturm
q2,p7,1,a;b,Fähre Verspätung,\"Verspätung, Verspätung, Verspätung …\"
q2,p8,2,b,Fähre Verspätung,Le ferry a du retard ce matin
";

fn f(name: &str) -> String {
    fixture(&format!("pool/{name}")).display().to_string()
}

/// `postassay pool` at `depth` over the fixture's two runs, run in `dir`.
pub(crate) fn pool_runs(dir: &Path, depth: &str, extra: &[&str]) -> std::process::Output {
    let (a, b) = (format!("a={}", f("run_a.csv")), format!("b={}", f("run_b.csv")));
    let (corpus, queries, qrels) = (f("corpus.jsonl"), f("queries.csv"), f("qrels.csv"));
    let mut args = vec![
        "pool",
        "--depth",
        depth,
        "--run",
        &a,
        "--run",
        &b,
        "--corpus",
        &corpus,
        "--queries",
        &queries,
        "--judgments",
        &qrels,
    ];
    args.extend_from_slice(extra);
    postassay(dir, &args)
}

#[test]
fn pool_of_run_files_is_ordered_deduplicated_and_counted() {
    let tmp = tempfile::tempdir().unwrap();
    let res = pool_runs(tmp.path(), "3", &[]);
    let (out, err) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "{err}");
    assert_eq!(out, EXPECTED);
    assert!(err.contains("pool: 7 unjudged pairs over 3 queries from the top 3 of 2 systems"));
    assert!(err.contains("pool: a contributes 4 pairs (2 only from it)"), "{err}");
    assert!(err.contains("pool: b contributes 5 pairs (3 only from it)"), "{err}");
    assert!(err.contains("1 pooled query is not in the query file"), "{err}");
}

#[test]
fn pool_writes_out_file_and_depth_changes_the_pool() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("pool.csv");
    let res = pool_runs(tmp.path(), "3", &["--out", out.to_str().unwrap(), "--quiet"]);
    assert_eq!(res.status.code(), Some(0), "{}", texts(&res).1);
    assert_eq!(texts(&res), (String::new(), String::new()));
    assert_eq!(std::fs::read_to_string(&out).unwrap(), EXPECTED);
    // Depth 1: only the first posts, p3 (q1, b), `10` (q10), p6 and p7 (q2).
    let res = pool_runs(tmp.path(), "1", &[]);
    let ids: Vec<String> = texts(&res)
        .0
        .lines()
        .skip(1)
        .map(|l| l.split(',').take(2).collect::<Vec<_>>().join("/"))
        .collect();
    assert_eq!(ids, ["q1/p3", "q10/10", "q2/p6", "q2/p7"]);
}

#[test]
fn pool_from_a_score_report_directory() {
    let tmp = tempfile::tempdir().unwrap();
    let (a, b) = (format!("a={}", f("run_a.csv")), format!("b={}", f("run_b.csv")));
    let (queries, qrels) = (f("queries.csv"), f("qrels.csv"));
    let res = postassay(
        tmp.path(),
        &[
            "score",
            "--judgments",
            &qrels,
            "--queries",
            &queries,
            "--run",
            &a,
            "--run",
            &b,
            "--out",
            "rep",
            "--quiet",
        ],
    );
    assert_eq!(res.status.code(), Some(0), "{}", texts(&res).1);
    // A score report names no corpus.
    let res = postassay(tmp.path(), &["pool", "--depth", "3", "--report", "rep"]);
    assert_eq!(res.status.code(), Some(2));
    assert!(texts(&res).1.contains("--corpus: no file given and the report names none"));
    let corpus = f("corpus.jsonl");
    let res =
        postassay(tmp.path(), &["pool", "--depth", "3", "--report", "rep", "--corpus", &corpus]);
    let (out, err) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "{err}");
    assert_eq!(out, EXPECTED);
}

#[test]
fn pool_usage_errors() {
    let tmp = tempfile::tempdir().unwrap();
    let res = pool_runs(tmp.path(), "3", &["--run", "a=x.csv"]);
    assert_eq!(res.status.code(), Some(2));
    assert!(texts(&res).1.contains("the name \"a\" is given twice"));
    let res = postassay(tmp.path(), &["pool", "--depth", "0", "--run", "a=x.csv"]);
    assert_eq!(res.status.code(), Some(2));
    // Nothing written when an input is bad.
    let out = tmp.path().join("pool.csv");
    let bad = crate::util::write(tmp.path(), "bad.csv", "query_id,doc_id,rank,score\nq1,p1,x,1\n");
    let (c, q, j) = (f("corpus.jsonl"), f("queries.csv"), f("qrels.csv"));
    let spec = format!("a={}", bad.display());
    let res = postassay(
        tmp.path(),
        &[
            "pool",
            "--depth",
            "3",
            "--run",
            &spec,
            "--corpus",
            &c,
            "--queries",
            &q,
            "--judgments",
            &j,
            "--out",
            out.to_str().unwrap(),
        ],
    );
    assert_eq!(res.status.code(), Some(2));
    assert!(texts(&res).1.contains("bad.csv:2:"), "{}", texts(&res).1);
    assert!(!out.exists());
}

#[test]
fn pool_from_a_run_report_directory_uses_its_runs_and_inputs() {
    let tmp = tempfile::tempdir().unwrap();
    let (c, q, j) = (f("corpus.jsonl"), f("queries.csv"), f("qrels.csv"));
    let res = postassay(
        tmp.path(),
        &["run", "--corpus", &c, "--queries", &q, "--judgments", &j, "--out", "rep", "--quiet"],
    );
    assert_eq!(res.status.code(), Some(0), "{}", texts(&res).1);
    let res = postassay(tmp.path(), &["pool", "--depth", "5", "--report", "rep"]);
    let (out, err) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "{err}");
    let chains: Vec<String> = std::fs::read_dir(tmp.path().join("rep/runs"))
        .unwrap()
        .map(|e| e.unwrap().path().file_stem().unwrap().to_string_lossy().into_owned())
        .collect();
    assert!(!chains.is_empty());
    for chain in &chains {
        assert!(err.contains(&format!("pool: {chain} contributes ")), "{chain}: {err}");
    }
    let rows: Vec<Vec<&str>> = out.lines().skip(1).map(|l| l.split(',').collect()).collect();
    assert!(!rows.is_empty(), "{out}");
    let mut previous: Option<(String, usize, String)> = None;
    for row in &rows {
        let key = (row[0].to_string(), row[2].parse::<usize>().unwrap(), row[1].to_string());
        // Judged pairs are never pooled; rows are in (query, best rank, post) order.
        assert!(!["q1/p1", "q1/p2", "q2/p5"].contains(&format!("{}/{}", key.0, key.2).as_str()));
        assert!(key.1 >= 1 && key.1 <= 5);
        assert!(row[3].split(';').all(|s| chains.iter().any(|c| c == s)), "{row:?}");
        if let Some(p) = &previous {
            assert!(p < &key, "{p:?} before {key:?}");
        }
        previous = Some(key);
    }
}
