//! Bad input of any kind: exit code 2, one message naming the file and line
//! and what was expected, nothing written into `--out`, inputs untouched.

use std::path::Path;

use crate::util::{fixture, postassay, texts, write};

const GOOD_CORPUS: &str = "{\"id\": \"d1\", \"text\": \"ferry delayed\"}\n{\"id\": 2, \"text\": \"Fähre\", \"lang\": \"de\"}\n";
const GOOD_QUERIES: &str = "query_id,text\nq1,ferry\n";
const GOOD_QRELS: &str = "query_id,doc_id,grade\nq1,d1,1\n";

/// Run `score` with a judgments file and one run file; expect exit 2 and a
/// message containing every `needle`; check `--out` stayed empty.
fn expect_score_error(qrels: &str, run: &str, extra: &[&str], needles: &[&str]) {
    let tmp = tempfile::tempdir().unwrap();
    let q = write(tmp.path(), "qrels.csv", qrels);
    let r = write(tmp.path(), "run.csv", run);
    let before = (std::fs::read(&q).unwrap(), std::fs::read(&r).unwrap());
    let out = tmp.path().join("out");
    let run_arg = format!("x={}", r.display());
    let mut args = vec![
        "score",
        "--judgments",
        q.to_str().unwrap(),
        "--run",
        &run_arg,
        "--out",
        out.to_str().unwrap(),
    ];
    args.extend_from_slice(extra);
    check(tmp.path(), &args, &out, needles);
    assert_eq!(
        before,
        (std::fs::read(&q).unwrap(), std::fs::read(&r).unwrap()),
        "inputs unchanged"
    );
}

/// Run `run` on the given three files; expect exit 2 with every needle.
fn expect_run_error(corpus: &str, queries: &str, qrels: &str, corpus_name: &str, needles: &[&str]) {
    expect_run_error_with(corpus, queries, qrels, corpus_name, needles, &[]);
}

/// [`expect_run_error`] with `extra` flags.
fn expect_run_error_with(
    corpus: &str,
    queries: &str,
    qrels: &str,
    corpus_name: &str,
    needles: &[&str],
    extra: &[&str],
) {
    let tmp = tempfile::tempdir().unwrap();
    let c = write(tmp.path(), corpus_name, corpus);
    let q = write(tmp.path(), "queries.csv", queries);
    let j = write(tmp.path(), "qrels.csv", qrels);
    let out = tmp.path().join("out");
    let args = [
        "run",
        "--corpus",
        c.to_str().unwrap(),
        "--queries",
        q.to_str().unwrap(),
        "--judgments",
        j.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--chains",
        "standard",
    ];
    let args: Vec<&str> = args.iter().chain(extra).copied().collect();
    check(tmp.path(), &args, &out, needles);
}

fn check(cwd: &Path, args: &[&str], out: &Path, needles: &[&str]) {
    let res = postassay(cwd, args);
    let (stdout, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(2), "args {args:?}\nstderr: {stderr}");
    assert!(stdout.is_empty(), "nothing on stdout: {stdout}");
    assert!(!stderr.contains("panicked"), "{stderr}");
    for n in needles {
        assert!(stderr.contains(n), "expected {n:?} in:\n{stderr}");
    }
    assert!(!out.exists(), "--out must not be created on failure");
}

const RUN_OK: &str = "query_id,doc_id,rank,score\nq1,d1,1,1.0\n";

#[test]
fn judgments_negative_grade() {
    expect_score_error(
        "query_id,doc_id,grade\nq1,d1,2\nq1,d2,-1\n",
        RUN_OK,
        &[],
        &["qrels.csv:3", "grade"],
    );
}

#[test]
fn judgments_non_integer_grade() {
    expect_score_error("query_id,doc_id,grade\nq1,d1,x\n", RUN_OK, &[], &["qrels.csv:2", "\"x\""]);
}

#[test]
fn judgments_conflicting_grades_name_both_lines() {
    expect_score_error(
        "query_id,doc_id,grade\nq1,d1,2\nq1,d2,0\nq1,d1,1\n",
        RUN_OK,
        &[],
        &["qrels.csv:4", "2"],
    );
}

#[test]
fn judgments_empty() {
    expect_score_error(
        "query_id,doc_id,grade\n",
        RUN_OK,
        &[],
        &["qrels.csv", "at least one judgment"],
    );
}

#[test]
fn judgments_unknown_layout_names_the_csv_header() {
    expect_score_error("q1 d1 1\n", RUN_OK, &[], &["qrels.csv:1", "query_id,doc_id,grade"]);
}

#[test]
fn judgments_missing_column() {
    expect_score_error("query_id,doc_id\nq1,d1\n", RUN_OK, &[], &["qrels.csv:1", "grade"]);
}

#[test]
fn run_rank_not_integer() {
    expect_score_error(
        GOOD_QRELS,
        "query_id,doc_id,rank,score\nq1,d1,first,1\n",
        &[],
        &["run.csv:2", "rank"],
    );
}

#[test]
fn run_score_not_finite() {
    expect_score_error(
        GOOD_QRELS,
        "query_id,doc_id,rank,score\nq1,d1,1,NaN\n",
        &[],
        &["run.csv:2", "score"],
    );
}

#[test]
fn run_duplicate_document() {
    expect_score_error(
        GOOD_QRELS,
        "query_id,doc_id,rank,score\nq1,d1,1,2\nq1,d2,2,1\nq1,d1,3,0.5\n",
        &[],
        &["run.csv:4", "line 2"],
    );
}

#[test]
fn run_missing_rank_column() {
    // The rank orders a run, so it is required; `score` is optional (issue 12).
    expect_score_error(
        GOOD_QRELS,
        "query_id,doc_id,score\nq1,d1,1\n",
        &[],
        &["run.csv:1", "\"rank\""],
    );
}

#[test]
fn max_grade_below_an_occurring_grade() {
    expect_score_error(
        "query_id,doc_id,grade\nq1,d1,3\n",
        RUN_OK,
        &["--max-grade", "2"],
        &["--max-grade", "3"],
    );
}

/// Issue 12, item 4: a threshold no grade reaches used to write a full
/// report on 0 evaluated queries. Grades here go up to 3 (hand-made file).
#[test]
fn relevance_threshold_no_grade_reaches() {
    let qrels = "query_id,doc_id,grade\nq1,d1,3\nq1,d2,1\n";
    expect_score_error(
        qrels,
        RUN_OK,
        &["--relevant-from", "4"],
        &[
            "qrels.csv: --relevant-from 4 is above the highest grade in the judgments (3)",
            "give a grade from 1 to 3",
        ],
    );
    expect_score_error(
        qrels,
        RUN_OK,
        &["--relevant-from", "3", "--max-grade", "2"],
        &["--relevant-from 3 is above --max-grade 2"],
    );
    expect_run_error_with(
        GOOD_CORPUS,
        GOOD_QUERIES,
        GOOD_QRELS,
        "posts.jsonl",
        &["qrels.csv", "--relevant-from 2 is above the highest grade in the judgments (1)"],
        &["--relevant-from", "2"],
    );
}

#[test]
fn unknown_metric_lists_accepted_keys() {
    expect_score_error(GOOD_QRELS, RUN_OK, &["--metrics", "ndcg@10,f1"], &["f1", "ndcg@k"]);
}

#[test]
fn relevance_threshold_zero() {
    expect_score_error(GOOD_QRELS, RUN_OK, &["--relevant-from", "0"], &["--relevant-from"]);
}

#[test]
fn run_argument_without_name() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("out");
    let q = fixture("score/qrels.csv");
    check(
        tmp.path(),
        &[
            "score",
            "--judgments",
            q.to_str().unwrap(),
            "--run",
            "runfile.csv",
            "--out",
            out.to_str().unwrap(),
        ],
        &out,
        &["NAME=FILE"],
    );
}

#[test]
fn same_run_name_twice() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("out");
    let q = fixture("score/qrels.csv");
    let a = format!("a={}", fixture("score/run_a.csv").display());
    check(
        tmp.path(),
        &[
            "score",
            "--judgments",
            q.to_str().unwrap(),
            "--run",
            &a,
            "--run",
            &a,
            "--out",
            out.to_str().unwrap(),
        ],
        &out,
        &["twice"],
    );
}

#[test]
fn missing_file_is_named() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("out");
    check(
        tmp.path(),
        &[
            "score",
            "--judgments",
            "nowhere.csv",
            "--run",
            "a=also-nowhere.csv",
            "--out",
            out.to_str().unwrap(),
        ],
        &out,
        &["nowhere.csv"],
    );
}

#[test]
fn corpus_bad_json_line() {
    expect_run_error(
        "{\"id\": \"d1\", \"text\": \"ok\"}\n{\"id\": \"d2\", \"text\": \n",
        GOOD_QUERIES,
        GOOD_QRELS,
        "posts.jsonl",
        &["posts.jsonl:2"],
    );
}

#[test]
fn corpus_missing_text() {
    expect_run_error(
        "{\"id\": \"d1\"}\n",
        GOOD_QUERIES,
        GOOD_QRELS,
        "posts.jsonl",
        &["posts.jsonl:1", "text"],
    );
}

#[test]
fn corpus_float_id() {
    expect_run_error(
        "{\"id\": 1.5, \"text\": \"x\"}\n",
        GOOD_QUERIES,
        GOOD_QRELS,
        "posts.jsonl",
        &["posts.jsonl:1", "id"],
    );
}

#[test]
fn corpus_duplicate_id_integer_and_string() {
    // A JSON integer id 7 is the same id as the string "7" (formats.md).
    expect_run_error(
        "{\"id\": 7, \"text\": \"a\"}\n{\"id\": \"7\", \"text\": \"b\"}\n",
        GOOD_QUERIES,
        GOOD_QRELS,
        "posts.jsonl",
        &["posts.jsonl:2", "7"],
    );
}

#[test]
fn corpus_bad_language_code() {
    expect_run_error(
        "{\"id\": \"d1\", \"text\": \"a\", \"lang\": \"deu-CH\"}\n",
        GOOD_QUERIES,
        GOOD_QRELS,
        "posts.jsonl",
        &["posts.jsonl:1", "ISO 639-1", "deu-CH"],
    );
}

#[test]
fn corpus_csv_missing_text_column() {
    expect_run_error(
        "id,body\nd1,hello\n",
        GOOD_QUERIES,
        GOOD_QRELS,
        "posts.csv",
        &["posts.csv:1", "text"],
    );
}

#[test]
fn queries_duplicate_id() {
    expect_run_error(
        GOOD_CORPUS,
        "query_id,text\nq1,a\nq1,b\n",
        GOOD_QRELS,
        "posts.jsonl",
        &["queries.csv:3", "q1"],
    );
}

#[test]
fn queries_bad_language() {
    expect_run_error(
        GOOD_CORPUS,
        "query_id,text,lang\nq1,ferry,english\n",
        GOOD_QRELS,
        "posts.jsonl",
        &["queries.csv:2", "lang", "english"],
    );
}

#[test]
fn partial_input_flags_are_a_usage_error() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("out");
    check(
        tmp.path(),
        &["run", "--corpus", "x.jsonl", "--out", out.to_str().unwrap()],
        &out,
        &["--judgments"],
    );
}

/// An I/O error prints the operating system's text once, whatever the
/// command: the library error already holds it, and `main` prints the
/// error's source chain too (the bug printed "No such file or directory
/// (os error 2): No such file or directory (os error 2)").
#[test]
fn io_error_text_appears_once_in_every_command() {
    let tmp = tempfile::tempdir().unwrap();
    let qrels = fixture("score/qrels.csv");
    let qrels = qrels.to_str().unwrap();
    let run_a = format!("a={}", fixture("score/run_a.csv").display());
    let queries = fixture("score/queries.csv");
    let queries = queries.to_str().unwrap();
    let data = fixture("diagnose/data");
    let cases: Vec<(Vec<&str>, &str)> = vec![
        (
            vec!["score", "--judgments", qrels, "--run", &run_a, "--queries", "nosuch.csv"],
            "nosuch.csv",
        ),
        (vec!["score", "--judgments", "nosuch-qrels.csv", "--run", &run_a], "nosuch-qrels.csv"),
        (vec!["score", "--judgments", qrels, "--run", "a=nosuch-run.csv"], "nosuch-run.csv"),
        (
            vec![
                "run",
                "--corpus",
                "nosuch.jsonl",
                "--queries",
                queries,
                "--judgments",
                qrels,
                "--chains",
                "standard",
            ],
            "nosuch.jsonl",
        ),
        (
            vec!["vet", "--data", data.to_str().unwrap(), "--chain-file", "nosuch.toml"],
            "nosuch.toml",
        ),
    ];
    for (mut args, file) in cases {
        let out = tmp.path().join("out");
        let out_arg = out.to_str().unwrap().to_string();
        if args[0] != "vet" {
            args.extend(["--out", &out_arg]);
        }
        let res = postassay(tmp.path(), &args);
        let (stdout, stderr) = texts(&res);
        assert_eq!(res.status.code(), Some(2), "{args:?}: {stderr}");
        assert!(stdout.is_empty(), "{args:?}: {stdout}");
        assert_eq!(stderr.lines().count(), 1, "{args:?}: one line: {stderr}");
        assert!(stderr.starts_with(&format!("postassay: {file}: ")), "{args:?}: {stderr}");
        // The OS text (on Linux "No such file or directory (os error 2)") once.
        assert_eq!(stderr.matches("(os error").count(), 1, "{args:?}: {stderr}");
        assert!(!out.exists(), "--out must not be created on failure");
    }
}

/// A `--baseline` that names no system quotes the name as the user typed
/// it, not as the id type's debug form (`ChainName("nosuch")`).
#[test]
fn unknown_baseline_is_quoted_plainly() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("out");
    let q = fixture("score/qrels.csv");
    let a = format!("a={}", fixture("score/run_a.csv").display());
    let b = format!("b={}", fixture("score/run_b.csv").display());
    let args = [
        "score",
        "--judgments",
        q.to_str().unwrap(),
        "--run",
        &a,
        "--run",
        &b,
        "--baseline",
        "nosuch",
        "--out",
        out.to_str().unwrap(),
    ];
    check(tmp.path(), &args, &out, &["--baseline \"nosuch\" is not one of the systems (a, b)"]);
    assert!(!texts(&postassay(tmp.path(), &args)).1.contains("ChainName"));
}
