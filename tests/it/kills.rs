//! Issue 17, item 5: `run` killed with SIGKILL at several points (reading
//! the inputs, building the indexes, writing the new output directory,
//! between the two renames of the swap, clearing the previous directory).
//! Each kill lands at a known point through the pause hook
//! (`POSTASSAY_PAUSE_AT`, `src/pause.rs`): the binary says `paused at NAME`
//! and waits; the test then kills it. After the kill `--out` holds complete
//! outputs (every file its manifest lists, nothing else) or nothing, never
//! a mix; the next run works and leaves nothing temporary behind.

use std::io::{BufRead, BufReader};
use std::path::Path;
use std::process::{Command, Stdio};

use crate::faults::{names, run_into, snapshot};
use crate::util::{fixture, texts};

/// Start `run` of the stemming fixture into `out`, pausing at `point`;
/// return once it has paused there, then SIGKILL it.
fn kill_at(cwd: &Path, out: &Path, point: &str) {
    let input = |name: &str| fixture(&format!("stemming/{name}"));
    let mut child = Command::new(env!("CARGO_BIN_EXE_postassay"))
        .current_dir(cwd)
        .args(["run", "--quiet", "--chains", "standard,stemmed", "--corpus"])
        .arg(input("posts.jsonl"))
        .arg("--queries")
        .arg(input("queries.csv"))
        .arg("--judgments")
        .arg(input("qrels.csv"))
        .arg("--out")
        .arg(out)
        .env("POSTASSAY_PAUSE_AT", point)
        .stdout(Stdio::null())
        .stderr(Stdio::piped())
        .spawn()
        .expect("the binary starts");
    let mut stderr = BufReader::new(child.stderr.take().unwrap());
    let mut seen = String::new();
    loop {
        let mut line = String::new();
        if stderr.read_line(&mut line).unwrap() == 0 {
            let status = child.wait().unwrap();
            panic!("run ended ({status}) without pausing at {point}: {seen}");
        }
        seen += &line;
        if line.trim_end() == format!("postassay: paused at {point} (POSTASSAY_PAUSE_AT)") {
            break;
        }
    }
    // Child::kill sends SIGKILL on Unix.
    child.kill().unwrap();
    child.wait().unwrap();
}

/// The files of a complete output directory: exactly what its manifest
/// lists, plus the manifest (the nested `score/` directory aside).
fn assert_complete(out: &Path) -> Vec<String> {
    let files: Vec<String> =
        snapshot(out).into_iter().map(|(p, _)| p).filter(|p| !p.starts_with("score/")).collect();
    let manifest = std::fs::read_to_string(out.join(".postassay-outputs")).expect("a manifest");
    let mut listed: Vec<String> = manifest
        .lines()
        .filter(|l| !l.starts_with('#') && !l.is_empty())
        .map(str::to_string)
        .chain([".postassay-outputs".to_string()])
        .collect();
    listed.sort();
    assert_eq!(files, listed, "a complete output directory");
    files
}

#[test]
fn run_killed_at_each_point_leaves_old_or_no_outputs_and_the_next_run_works() {
    for point in ["reading", "building", "writing", "swapping", "clearing"] {
        let cwd = tempfile::tempdir().unwrap();
        let parent = tempfile::tempdir().unwrap();
        let out = parent.path().join("reports");
        let first = run_into(cwd.path(), &out);
        assert_eq!(first.status.code(), Some(0), "{}", texts(&first).1);
        // Another command's output directory inside, carried over by every swap.
        std::fs::create_dir(out.join("score")).unwrap();
        std::fs::write(out.join("score/.postassay-outputs"), "# ours\nreport.md\n").unwrap();
        std::fs::write(out.join("score/report.md"), "score report").unwrap();
        let before = snapshot(&out);

        kill_at(cwd.path(), &out, point);
        match point {
            // Killed before the swap: the previous outputs, byte for byte.
            "reading" | "building" | "writing" => assert_eq!(snapshot(&out), before, "{point}"),
            // Between the renames: no --out at all, the previous one aside.
            "swapping" => assert!(!out.exists(), "{point}: {:?}", names(parent.path())),
            // After the swap: the new outputs, complete.
            _ => {
                assert_complete(&out);
            }
        }

        let next = run_into(cwd.path(), &out);
        assert_eq!(next.status.code(), Some(0), "after a kill at {point}: {}", texts(&next).1);
        let files = assert_complete(&out);
        let expected: Vec<String> =
            before.iter().map(|(p, _)| p.clone()).filter(|p| !p.starts_with("score/")).collect();
        assert_eq!(files, expected, "{point}: the same outputs as before");
        assert_eq!(
            std::fs::read_to_string(out.join("score/report.md")).ok().as_deref(),
            Some("score report"),
            "{point}: the nested output directory is carried over"
        );
        assert_eq!(names(parent.path()), ["reports"], "{point}: nothing temporary left");
    }
}
