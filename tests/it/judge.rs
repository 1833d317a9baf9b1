//! `postassay judge` driven through stdin (one key per line, since stdin is
//! not a terminal there) and through a pseudo-terminal (single raw keys, as
//! a person types them), including a `kill -9` after 100 grades.
//!
//! The small pool is the one `pool.rs` expects from tests/fixtures/pool/ at
//! depth 3: seven pairs, q1 p3 p4 p9, q10 `10`, q2 p6 p7 p8. The kill tests
//! use a generated pool of 120 numbered pairs.

use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::time::{Duration, Instant};

use postassay::input::read_judgments;

use crate::pool::pool_runs;
use crate::util::texts;

/// Write the fixture pool into `dir` and return its path.
fn make_pool(dir: &Path) -> PathBuf {
    let out = dir.join("pool.csv");
    let res = pool_runs(dir, "3", &["--out", out.to_str().unwrap(), "--quiet"]);
    assert_eq!(res.status.code(), Some(0), "{}", texts(&res).1);
    out
}

/// `postassay judge` on `pool` into `judgments`, colour off, every stream piped.
pub(crate) fn judge_command(dir: &Path, pool: &Path, judgments: &Path) -> Command {
    let mut command = Command::new(env!("CARGO_BIN_EXE_postassay"));
    command
        .current_dir(dir)
        .args(["judge", "--pool", pool.to_str().unwrap(), "--judgments"])
        .arg(judgments)
        .env("NO_COLOR", "1")
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped());
    command
}

/// Run `judge` with `script` on stdin, to its end.
pub(crate) fn judge(dir: &Path, pool: &Path, judgments: &Path, script: &str) -> Output {
    let mut child = judge_command(dir, pool, judgments).spawn().expect("the binary starts");
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
    // The undo cut p4's line; p3's grade stays saved (and could be undone next).
    assert!(
        out.contains(
            "undone: grade 0 of the pair below\nsaved: q1 / p3 = 2 (u to undo)\n── pair 2 of 7 ──"
        ),
        "{out}"
    );
    assert!(!out.contains('\x1b'), "NO_COLOR and no terminal: no escape codes");
    // `q` ends the session: the line `4` after it is never read.
    assert!(out.trim_end().ends_with(
        "saved 3 grades to {}; 1 skipped and 3 not reached are left for the next session"
            .replace("{}", &judgments.display().to_string())
            .as_str()
    ));
    let (read, _) = read_judgments(&judgments).expect("the file is valid judgments");
    assert_eq!(read.len(), 3);

    // A second session resumes: skipped p9 first, then q2's pairs; the
    // grade is on disk when input ends.
    let res = judge(tmp.path(), &pool, &judgments, "0\n");
    let (out, _) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "{out}");
    assert!(out.contains("7 pairs in the pool, 3 already judged, 4 to go"), "{out}");
    assert!(out.contains("── pair 4 of 7 ──\nquery q1: ferry delays\npost p9 "), "{out}");
    assert_eq!(lines(&judgments).last().unwrap(), "q1,p9,0");
}

#[test]
fn a_bad_script_line_exits_2_keeping_the_grades_before_it() {
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
    assert!(
        err.contains(
            "torn.csv:3: the last line has no line end and does not read as a judgment \
             (expected 3 fields as in the header, found 2): it may be a torn write"
        ),
        "{err}"
    );
    assert_eq!(
        std::fs::read_to_string(&judgments).unwrap(),
        "query_id,doc_id,grade\nq1,p3,2\nq1,p4"
    );
}

/// Issue 12: a file whose last, complete line has no line end (as many
/// editors save it) is judged into, as `run` reads it; the line end is added
/// before the first new grade.
#[test]
fn a_complete_last_line_without_line_end_is_accepted() {
    let tmp = tempfile::tempdir().unwrap();
    let pool = make_pool(tmp.path());
    let judgments = tmp.path().join("saved.csv");
    std::fs::write(&judgments, "query_id,doc_id,grade\nq1,p3,2").unwrap();
    let res = judge(tmp.path(), &pool, &judgments, "1\nq\n");
    let (out, err) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "{err}");
    assert!(out.contains(": 7 pairs in the pool, 1 already judged, 6 to go\n"), "{out}");
    assert_eq!(
        std::fs::read_to_string(&judgments).unwrap(),
        "query_id,doc_id,grade\nq1,p3,2\nq1,p4,1\n"
    );
    assert!(out.contains("saved 1 grade to "), "one grade, singular: {out}");
}

/// A pool of `n` pairs, ten posts per query, written as `postassay pool`
/// would (the header is the pool module's).
pub(crate) fn numbered_pool(dir: &Path, n: usize) -> PathBuf {
    let mut text = postassay::pool::POOL_HEADER.join(",") + "\n";
    for i in 0..n {
        let (q, rank) = (i / 10, i % 10 + 1);
        text += &format!("q{q:02},p{i:03},{rank},a,query {q},post number {i}\n");
    }
    let path = dir.join("pool100.csv");
    std::fs::write(&path, text).unwrap();
    path
}

/// The judgments a test expects after grading the first `n` pairs of
/// [`numbered_pool`] with grade `i % 4`.
pub(crate) fn numbered_grades(n: usize) -> String {
    let mut text = "query_id,doc_id,grade\n".to_string();
    for i in 0..n {
        text += &format!("q{:02},p{i:03},{}\n", i / 10, i % 4);
    }
    text
}

/// Poll until `path` has `lines` lines (the judge writes as keys come in).
fn wait_for_lines(path: &Path, lines: usize) {
    let started = Instant::now();
    while std::fs::read_to_string(path).map_or(0, |t| t.lines().count()) < lines {
        assert!(started.elapsed() < Duration::from_secs(60), "judge never wrote {lines} lines");
        std::thread::sleep(Duration::from_millis(20));
    }
}

/// After a kill: the file is whole, holds every grade entered, parses as
/// judgments, and a new session resumes at the first pair not graded.
fn assert_nothing_lost(dir: &Path, pool: &Path, judgments: &Path, graded: usize) {
    let text = std::fs::read_to_string(judgments).unwrap();
    assert!(text.ends_with('\n'), "no torn line: {text:?}");
    assert_eq!(text, numbered_grades(graded));
    let (read, warnings) = read_judgments(judgments).expect("the file still parses");
    assert_eq!((read.len(), warnings.len()), (graded, 0));
    let res = judge(dir, pool, judgments, "q\n");
    let (out, _) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "{out}");
    assert!(out.contains(&format!("120 pairs in the pool, {graded} already judged")), "{out}");
    assert!(out.contains(&format!("── pair {} of 120 ──", graded + 1)), "{out}");
    assert!(out.contains(&format!("post p{graded:03} ")), "{out}");
}

#[test]
fn kill_9_after_100_grades_from_a_script_loses_nothing() {
    let tmp = tempfile::tempdir().unwrap();
    let pool = numbered_pool(tmp.path(), 120);
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
    for i in 0..100 {
        stdin.write_all(format!("{}\n", i % 4).as_bytes()).unwrap();
    }
    stdin.flush().unwrap();
    wait_for_lines(&judgments, 101);
    // Child::kill sends SIGKILL on Unix: no chance to save anything more.
    child.kill().unwrap();
    child.wait().unwrap();
    drop(stdin);
    assert_nothing_lost(tmp.path(), &pool, &judgments, 100);
}

/// The interactive front end: single keys (no Enter) typed into a
/// pseudo-terminal, so the judge runs in raw mode as it does for a person.
#[cfg(unix)]
#[test]
fn kill_9_after_100_grades_typed_in_a_terminal_loses_nothing() {
    use std::io::Read;
    use std::os::fd::OwnedFd;

    use rustix::pty::{grantpt, openpt, ptsname, unlockpt, OpenptFlags};

    let tmp = tempfile::tempdir().unwrap();
    let pool = numbered_pool(tmp.path(), 120);
    let judgments = tmp.path().join("typed.csv");
    let master = openpt(OpenptFlags::RDWR | OpenptFlags::NOCTTY).expect("a pseudo-terminal");
    grantpt(&master).unwrap();
    unlockpt(&master).unwrap();
    let name = ptsname(&master, Vec::new()).unwrap();
    let terminal = || -> OwnedFd {
        std::fs::OpenOptions::new()
            .read(true)
            .write(true)
            .open(name.to_str().unwrap())
            .expect("the terminal side opens")
            .into()
    };
    let mut child = Command::new(env!("CARGO_BIN_EXE_postassay"))
        .current_dir(tmp.path())
        .args(["judge", "--pool", pool.to_str().unwrap(), "--judgments"])
        .arg(&judgments)
        .env_remove("NO_COLOR")
        .stdin(terminal())
        .stdout(terminal())
        .stderr(terminal())
        .spawn()
        .expect("the binary starts");
    // Drain the screen in the background (a full terminal buffer would
    // block the judge) and keep it to look at.
    let mut screen_side = std::fs::File::from(master.try_clone().unwrap());
    let screen = std::sync::Arc::new(std::sync::Mutex::new(Vec::new()));
    let sink = std::sync::Arc::clone(&screen);
    std::thread::spawn(move || {
        let mut buf = [0u8; 4096];
        while let Ok(n) = screen_side.read(&mut buf) {
            if n == 0 {
                break;
            }
            sink.lock().unwrap().extend_from_slice(&buf[..n]);
        }
    });
    let shown = |what: &str| String::from_utf8_lossy(&screen.lock().unwrap()).contains(what);
    // Type only once the first card is up (raw mode is on by then).
    let started = Instant::now();
    while !shown("pair 1 of 120") {
        assert!(started.elapsed() < Duration::from_secs(60), "the judge never showed a pair");
        std::thread::sleep(Duration::from_millis(20));
    }
    let mut keys = std::fs::File::from(master);
    // An arrow key (an escape sequence, ignored), then 100 grades with no
    // Enter; the 101st pair is graded, then undone.
    keys.write_all(b"\x1b[A").unwrap();
    for i in 0..100 {
        keys.write_all((i % 4).to_string().as_bytes()).unwrap();
    }
    keys.write_all(b"2").unwrap();
    wait_for_lines(&judgments, 102);
    keys.write_all(b"u").unwrap();
    let started = Instant::now();
    while !shown("undone: grade 2 of the pair below") {
        assert!(started.elapsed() < Duration::from_secs(60), "the undo was never shown");
        std::thread::sleep(Duration::from_millis(20));
    }
    // Colour on a terminal without NO_COLOR.
    assert!(shown("\x1b[1mquery 10\x1b[0m"));
    child.kill().unwrap();
    child.wait().unwrap();
    assert_nothing_lost(tmp.path(), &pool, &judgments, 100);
}
