//! Issue 17, items 3 and 4, through the binary: two `judge` sessions on one
//! file (an advisory lock), and outputs that cannot be written (a full disk,
//! a read-only file system) for `run` and `judge`.
//!
//! The disk faults are real: a small tmpfs mounted for the test (and filled,
//! or remounted read-only). Mounting needs root; without it those tests skip
//! with the reason printed (`util::skip`).

use std::io::{BufRead, BufReader, Write};
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Output, Stdio};

use postassay::input::read_judgments;

use crate::judge::{judge, judge_command, numbered_grades, numbered_pool};
use crate::util::{postassay, skip, texts};

/// A tmpfs mounted on a fresh temporary directory, unmounted on drop.
pub(crate) struct Tmpfs {
    dir: tempfile::TempDir,
}

impl Tmpfs {
    /// Mount a tmpfs of `size` (`mount -o size=…` syntax); `None`, after
    /// printing why, where the test may not mount one.
    pub(crate) fn mount(size: &str) -> Option<Tmpfs> {
        let dir = tempfile::tempdir().unwrap();
        let res = Command::new("mount")
            .args(["-t", "tmpfs", "-o", &format!("size={size}"), "tmpfs"])
            .arg(dir.path())
            .output();
        match res {
            Ok(out) if out.status.success() => Some(Tmpfs { dir }),
            Ok(out) => {
                skip(&format!(
                    "cannot mount a tmpfs (root needed): {}",
                    String::from_utf8_lossy(&out.stderr).trim()
                ));
                None
            }
            Err(e) => {
                skip(&format!("cannot run mount: {e}"));
                None
            }
        }
    }

    pub(crate) fn path(&self) -> &Path {
        self.dir.path()
    }

    /// Remount read-only.
    fn read_only(&self) {
        let out = Command::new("mount")
            .args(["-o", "remount,ro"])
            .arg(self.path())
            .output()
            .expect("mount runs");
        assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    }

    /// Write a file that takes every free byte (ENOSPC ends it), minus
    /// `keep` bytes left free by removing a tail of that size.
    fn fill(&self, keep: u64) -> PathBuf {
        let path = self.path().join("filler");
        let mut f = std::fs::File::create(&path).unwrap();
        let chunk = vec![b'x'; 4096];
        loop {
            match f.write(&chunk) {
                Ok(0) => break,
                Ok(_) => {}
                Err(e) => {
                    assert_eq!(e.raw_os_error(), Some(28), "ENOSPC expected: {e}");
                    break;
                }
            }
        }
        let len = f.metadata().unwrap().len();
        f.set_len(len.saturating_sub(keep)).unwrap();
        path
    }
}

impl Drop for Tmpfs {
    fn drop(&mut self) {
        let _ = Command::new("umount").arg("-l").arg(self.dir.path()).output();
    }
}

/// Every file under `dir` with its bytes, sorted by path.
pub(crate) fn snapshot(dir: &Path) -> Vec<(String, Vec<u8>)> {
    let mut out = Vec::new();
    let mut stack = vec![dir.to_path_buf()];
    while let Some(d) = stack.pop() {
        for e in std::fs::read_dir(&d).unwrap() {
            let p = e.unwrap().path();
            if p.is_dir() {
                stack.push(p);
            } else {
                let rel = p.strip_prefix(dir).unwrap().display().to_string();
                out.push((rel, std::fs::read(&p).unwrap()));
            }
        }
    }
    out.sort();
    out
}

/// Names in `dir`, sorted.
pub(crate) fn names(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    v.sort();
    v
}

/// `run` of the stemming fixture into `out` with the binary, not asserting
/// the exit code.
pub(crate) fn run_into(cwd: &Path, out: &Path) -> Output {
    let input = |name: &str| crate::util::fixture(&format!("stemming/{name}"));
    let out_arg = out.to_str().unwrap();
    postassay(
        cwd,
        &[
            "run",
            "--quiet",
            "--corpus",
            input("posts.jsonl").to_str().unwrap(),
            "--queries",
            input("queries.csv").to_str().unwrap(),
            "--judgments",
            input("qrels.csv").to_str().unwrap(),
            "--chains",
            "standard,stemmed",
            "--out",
            out_arg,
        ],
    )
}

/// Start `judge` on `judgments` with stdin kept open; return once it has
/// printed its opening line (so it has opened, and locked, the file).
fn start_judge(
    dir: &Path,
    pool: &Path,
    judgments: &Path,
) -> (Child, BufReader<std::process::ChildStdout>) {
    let mut child = judge_command(dir, pool, judgments)
        .stderr(Stdio::null())
        .spawn()
        .expect("the binary starts");
    let mut stdout = BufReader::new(child.stdout.take().unwrap());
    let mut first = String::new();
    stdout.read_line(&mut first).unwrap();
    assert!(first.starts_with("judging into "), "opening line: {first:?}");
    (child, stdout)
}

/// Item 3: while one `judge` holds a file, a second one refuses at once
/// (exit 2) naming the first's process, and writes nothing; the first goes
/// on and saves its grades. Common practice (an advisory lock per file), no
/// source.
#[test]
fn a_second_judge_on_the_same_file_refuses_naming_the_holder() {
    let tmp = tempfile::tempdir().unwrap();
    let pool = numbered_pool(tmp.path(), 20);
    let judgments = tmp.path().join("judged.csv");
    let (mut first, _stdout) = start_judge(tmp.path(), &pool, &judgments);
    let before = std::fs::read(&judgments).unwrap();

    let second = judge(tmp.path(), &pool, &judgments, "1\n1\nq\n");
    let (out, err) = texts(&second);
    assert_eq!(second.status.code(), Some(2), "stdout: {out}\nstderr: {err}");
    assert!(
        err.contains(&format!("{}: process {} (", judgments.display(), first.id())),
        "names the holder's process: {err}"
    );
    assert!(err.contains("is judging into this file"), "{err}");
    assert!(err.contains("judge --pool"), "the holder's command line: {err}");
    assert_eq!(err.lines().count(), 1, "one message: {err}");
    assert_eq!(std::fs::read(&judgments).unwrap(), before, "the refused judge wrote nothing");

    // The first session is unaffected: it grades two pairs and quits.
    let mut stdin = first.stdin.take().unwrap();
    stdin.write_all(b"0\n1\nq\n").unwrap();
    drop(stdin);
    assert!(first.wait().unwrap().success());
    assert_eq!(std::fs::read_to_string(&judgments).unwrap(), numbered_grades(2));
}

/// Item 3: the lock dies with its process. A session killed with SIGKILL
/// (after one grade) leaves no lock behind: the next session opens the
/// file at once and resumes after the saved grade.
#[test]
fn a_killed_judge_leaves_no_stale_lock() {
    let tmp = tempfile::tempdir().unwrap();
    let pool = numbered_pool(tmp.path(), 20);
    let judgments = tmp.path().join("judged.csv");
    let (mut first, mut stdout) = start_judge(tmp.path(), &pool, &judgments);
    let mut stdin = first.stdin.take().unwrap();
    stdin.write_all(b"0\n").unwrap();
    stdin.flush().unwrap();
    // The judge prints `saved: …` once the grade is synced.
    let mut line = String::new();
    while !line.starts_with("saved: ") {
        line.clear();
        assert!(stdout.read_line(&mut line).unwrap() > 0, "the judge ended early");
    }
    first.kill().unwrap();
    first.wait().unwrap();
    drop(stdin);

    let next = judge(tmp.path(), &pool, &judgments, "1\nq\n");
    let (out, err) = texts(&next);
    assert_eq!(next.status.code(), Some(0), "stdout: {out}\nstderr: {err}");
    assert!(out.contains("20 pairs in the pool, 1 already judged"), "{out}");
    assert_eq!(std::fs::read_to_string(&judgments).unwrap(), numbered_grades(2));
}

/// A 2 MiB tmpfs holding `reports/`, the outputs of a first `run`; a
/// working directory; the path of `reports/` and its files.
type WithOutputs = (Tmpfs, tempfile::TempDir, PathBuf, Vec<(String, Vec<u8>)>);

/// [`WithOutputs`], or `None` (skipped, saying why) without a tmpfs.
fn tmpfs_with_outputs() -> Option<WithOutputs> {
    let fs = Tmpfs::mount("2m")?;
    let cwd = tempfile::tempdir().unwrap();
    let out = fs.path().join("reports");
    let first = run_into(cwd.path(), &out);
    assert_eq!(first.status.code(), Some(0), "{}", texts(&first).1);
    let before = snapshot(&out);
    Some((fs, cwd, out, before))
}

/// Item 4: `run` whose `--out` fills the disk while being written exits 2
/// naming `--out` and the system's reason; the previous outputs are
/// byte-for-byte as they were and nothing temporary is left beside them.
/// A real full disk: a 2 MiB tmpfs, filled up to 16 KiB (the outputs of
/// the stemming fixture take about 100 KiB).
#[test]
fn run_on_a_full_disk_keeps_the_previous_outputs() {
    let Some((fs, cwd, out, before)) = tmpfs_with_outputs() else { return };
    assert!(before.iter().any(|(p, _)| p == "report.html"));

    let filler = fs.fill(16 * 1024);
    let res = run_into(cwd.path(), &out);
    let (_, err) = texts(&res);
    assert_eq!(res.status.code(), Some(2), "{err}");
    assert!(
        err.contains(&format!("--out {}: the outputs could not be written", out.display())),
        "{err}"
    );
    assert!(err.contains("No space left on device"), "the OS's reason: {err}");
    assert_eq!(snapshot(&out), before, "previous outputs untouched");
    assert_eq!(names(fs.path()), ["filler", "reports"], "no temporary file left");

    // With space again, the same command works.
    std::fs::remove_file(filler).unwrap();
    let again = run_into(cwd.path(), &out);
    assert_eq!(again.status.code(), Some(0), "{}", texts(&again).1);
    assert_eq!(names(fs.path()), ["reports"]);
}

/// Item 4: `--out` on a read-only file system: exit 2 with the path and the
/// system's reason, previous outputs untouched; a new `--out` there fails
/// the same way and creates nothing.
#[test]
fn run_into_a_read_only_place_exits_2_and_changes_nothing() {
    let Some((fs, cwd, out, before)) = tmpfs_with_outputs() else { return };
    fs.read_only();

    let res = run_into(cwd.path(), &out);
    let (_, err) = texts(&res);
    assert_eq!(res.status.code(), Some(2), "{err}");
    assert!(err.contains(&format!("--out {}: ", out.display())), "{err}");
    assert!(err.contains("Read-only file system"), "the OS's reason: {err}");
    assert_eq!(snapshot(&out), before);

    let fresh = fs.path().join("new");
    let res = run_into(cwd.path(), &fresh);
    let (_, err) = texts(&res);
    assert_eq!(res.status.code(), Some(2), "{err}");
    assert!(err.contains(&format!("--out {}: ", fresh.display())), "{err}");
    assert!(err.contains("Read-only file system"), "{err}");
    assert_eq!(names(fs.path()), ["reports"]);
}

/// Item 4: `judge` on a disk that fills up keeps every grade confirmed
/// before, leaves no torn line, and says which grade was not saved; with
/// space again the next session resumes at that pair. The judgments file
/// is padded with other queries' grades so that its page has room for
/// exactly one more line (15 bytes free; a grade line here is 11 bytes):
/// the second grade needs a new page on the full tmpfs.
#[test]
fn judge_on_a_full_disk_keeps_confirmed_grades_and_names_the_lost_one() {
    let Some(fs) = Tmpfs::mount("256k") else { return };
    let tmp = tempfile::tempdir().unwrap();
    let pool = numbered_pool(tmp.path(), 20);
    let judgments = fs.path().join("judged.csv");
    let mut text = "query_id,doc_id,grade\n".to_string();
    let mut i = 0;
    while text.len() + 15 + 30 < 4096 {
        text += &format!("z,{i},1\n");
        i += 1;
    }
    // A last padding line whose post id takes the rest: "z," + id + ",1\n".
    let rest = 4096 - 15 - text.len();
    text += &format!("z,last{},1\n", "0".repeat(rest - 9));
    assert_eq!(text.len(), 4096 - 15);
    std::fs::write(&judgments, &text).unwrap();
    let filler = fs.fill(0);

    let res = judge(tmp.path(), &pool, &judgments, "0\n1\n2\nq\n");
    let (out, err) = texts(&res);
    assert_eq!(res.status.code(), Some(2), "stdout: {out}\nstderr: {err}");
    assert!(
        err.contains(&format!(
            "{}: grade 1 for query q00, post p001 was NOT saved: No space left on device",
            judgments.display()
        )),
        "{err}"
    );
    assert!(err.contains("every grade before it is saved"), "{err}");
    let saved = std::fs::read_to_string(&judgments).unwrap();
    assert_eq!(saved, format!("{text}q00,p000,0\n"), "the confirmed grade, nothing torn");
    assert!(read_judgments(&judgments).is_ok());

    std::fs::remove_file(filler).unwrap();
    let next = judge(tmp.path(), &pool, &judgments, "q\n");
    let (out, _) = texts(&next);
    assert_eq!(next.status.code(), Some(0), "{out}");
    assert!(out.contains("── pair 2 of 20 ──"), "resumes at the lost grade's pair: {out}");
}
