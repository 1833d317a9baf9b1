//! `postassay judge` driven through stdin (one key per line, since stdin is
//! not a terminal here), including a `kill -9` in the middle of a session.
//!
//! The pool is the one `pool.rs` expects from tests/fixtures/pool/ at depth
//! 3: seven pairs, q1 p3 p4 p9, q10 `10`, q2 p6 p7 p8.

use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::time::{Duration, Instant};

use postassay::input::read_judgments;

use crate::util::{fixture, postassay, texts};

/// Write the fixture pool into `dir` and return its path.
fn make_pool(dir: &Path) -> PathBuf {
    let f = |n: &str| fixture(&format!("pool/{n}")).display().to_string();
    let (a, b) = (format!("a={}", f("run_a.csv")), format!("b={}", f("run_b.csv")));
    let out = dir.join("pool.csv");
    let res = postassay(
        dir,
        &[
            "pool",
            "--depth",
            "3",
            "--run",
            &a,
            "--run",
            &b,
            "--corpus",
            &f("corpus.jsonl"),
            "--queries",
            &f("queries.csv"),
            "--judgments",
            &f("qrels.csv"),
            "--out",
            out.to_str().unwrap(),
            "--quiet",
        ],
    );
    assert_eq!(res.status.code(), Some(0), "{}", texts(&res).1);
    out
}

fn judge(dir: &Path, pool: &Path, judgments: &Path, script: &str) -> Output {
    let mut child = Command::new(env!("CARGO_BIN_EXE_postassay"))
        .current_dir(dir)
        .args(["judge", "--pool", pool.to_str().unwrap(), "--judgments"])
        .arg(judgments)
        .env("NO_COLOR", "1")
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("the binary starts");
    // A judge that refuses its input exits before reading the script: a
    // broken pipe here is expected then, and the exit code tells the rest.
    let _ = child.stdin.take().unwrap().write_all(script.as_bytes());
    child.wait_with_output().unwrap()
}

fn lines(path: &Path) -> Vec<String> {
    std::fs::read_to_string(path).unwrap().lines().map(str::to_string).collect()
}

#[test]
fn grades_skip_undo_and_quit() {
    let tmp = tempfile::tempdir().unwrap();
    let pool = make_pool(tmp.path());
    let judgments = tmp.path().join("new.csv");
    // p3 → 2, p4 → 0 then undone and regraded 1, p9 skipped, `10` → 3, quit.
    let res = judge(tmp.path(), &pool, &judgments, "2\n0\nu\n1\ns\n\n3\nq\n4\n");
    let (out, err) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "stdout: {out}\nstderr: {err}");
    assert_eq!(lines(&judgments), ["query_id,doc_id,grade", "q1,p3,2", "q1,p4,1", "q10,10,3"]);
    assert!(out.starts_with(&format!(
        "judging into {}: 7 pairs in the pool, 0 already judged, 7 to go\n",
        judgments.display()
    )));
    // The card shows the query, the post and the scale.
    assert!(out.contains(
        "── pair 1 of 7 ──\nquery q1: ferry delays\npost p3 (best rank 1; from a, b):\n    \
         ferry cancelled, waiting at the pier for an hour\n0 not relevant · 1 marginal · \
         2 relevant · 3 highly relevant · s skip · u undo · q quit\n"
    ));
    // After the undo, p3's grade is already saved: nothing is pending.
    assert!(out.contains("undone: grade 0 of the pair below\n── pair 2 of 7 ──"), "{out}");
    assert!(!out.contains('\x1b'), "NO_COLOR and no terminal: no escape codes");
    // `q` ends the session: the line `4` after it is never read.
    assert!(out.trim_end().ends_with(
        "saved 3 grades to {}; 1 skipped and 3 not reached are left for the next session"
            .replace("{}", &judgments.display().to_string())
            .as_str()
    ));
    let (read, _) = read_judgments(&judgments).expect("the file is valid judgments");
    assert_eq!(read.len(), 3);

    // A second session resumes: skipped p9 first, then q2's pairs; end of
    // input saves the pending grade.
    let res = judge(tmp.path(), &pool, &judgments, "0\n");
    let (out, _) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "{out}");
    assert!(out.contains("7 pairs in the pool, 3 already judged, 4 to go"), "{out}");
    assert!(out.contains("── pair 4 of 7 ──\nquery q1: ferry delays\npost p9 "), "{out}");
    assert_eq!(lines(&judgments).last().unwrap(), "q1,p9,0");
}

#[test]
fn a_bad_script_line_saves_the_pending_grade_and_exits_2() {
    let tmp = tempfile::tempdir().unwrap();
    let pool = make_pool(tmp.path());
    let judgments = tmp.path().join("new.csv");
    let res = judge(tmp.path(), &pool, &judgments, "2\n22\n1\n");
    let (_, err) = texts(&res);
    assert_eq!(res.status.code(), Some(2), "{err}");
    assert!(err.contains("<stdin>:2: expected one key per line"), "{err}");
    assert_eq!(lines(&judgments), ["query_id,doc_id,grade", "q1,p3,2"]);
}

#[test]
fn a_torn_tail_is_refused_and_left_alone() {
    let tmp = tempfile::tempdir().unwrap();
    let pool = make_pool(tmp.path());
    let judgments = tmp.path().join("torn.csv");
    std::fs::write(&judgments, "query_id,doc_id,grade\nq1,p3,2\nq1,p4").unwrap();
    let res = judge(tmp.path(), &pool, &judgments, "1\n");
    let (_, err) = texts(&res);
    assert_eq!(res.status.code(), Some(2), "{err}");
    assert!(err.contains("torn.csv:3: the file does not end with a line end"), "{err}");
    assert_eq!(
        std::fs::read_to_string(&judgments).unwrap(),
        "query_id,doc_id,grade\nq1,p3,2\nq1,p4"
    );
}

#[test]
fn kill_9_mid_session_loses_only_the_pending_grade() {
    let tmp = tempfile::tempdir().unwrap();
    let pool = make_pool(tmp.path());
    let judgments = tmp.path().join("new.csv");
    let mut child = Command::new(env!("CARGO_BIN_EXE_postassay"))
        .current_dir(tmp.path())
        .args(["judge", "--pool", pool.to_str().unwrap(), "--judgments"])
        .arg(&judgments)
        .stdin(Stdio::piped())
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .expect("the binary starts");
    let mut stdin = child.stdin.take().unwrap();
    // Three grades: the first two are written when the next one comes in,
    // the third stays pending (open to undo).
    for key in ["3\n", "2\n", "1\n"] {
        stdin.write_all(key.as_bytes()).unwrap();
        stdin.flush().unwrap();
    }
    let started = Instant::now();
    while std::fs::read_to_string(&judgments).map_or(0, |t| t.lines().count()) < 3 {
        assert!(started.elapsed() < Duration::from_secs(20), "judge never wrote two grades");
        std::thread::sleep(Duration::from_millis(20));
    }
    // Child::kill sends SIGKILL on Unix: no chance to save anything.
    child.kill().unwrap();
    child.wait().unwrap();
    drop(stdin);

    let text = std::fs::read_to_string(&judgments).unwrap();
    assert!(text.ends_with('\n'), "no torn line: {text:?}");
    assert_eq!(text, "query_id,doc_id,grade\nq1,p3,3\nq1,p4,2\n");
    let (read, warnings) = read_judgments(&judgments).expect("the file still parses");
    assert_eq!((read.len(), warnings.len()), (2, 0));

    // The restart resumes at the pair whose grade was pending (p9).
    let res = judge(tmp.path(), &pool, &judgments, "q\n");
    let (out, _) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "{out}");
    assert!(out.contains("7 pairs in the pool, 2 already judged, 5 to go"), "{out}");
    assert!(out.contains("── pair 3 of 7 ──\nquery q1: ferry delays\npost p9 "), "{out}");
}
