//! The README's CI recipe, run as written: its two shell blocks ("CI step"
//! and "Updating the baseline") are taken from README.md, not copied here, so
//! the documented recipe and the tested one cannot drift apart.
//!
//! The bench is the bundled demo (invented posts) with a chain file holding
//! one chain, `posts`, that stems English. The "change under review" drops
//! the stemming step. On the demo, stemming raises nDCG@10 by about 0.09 over
//! plain words with p ≈ 0.01 (docs/sample-report/report.md), so the CI step must fail
//! with exit 1 on `ndcg@10` for `posts`, and pass on the unchanged file.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use quick_xml::events::Event;
use quick_xml::Reader;

use crate::util::{root, texts};

const STEMMED: &str = r#"[[chain]]
name = "posts"
tokenizer = "words"
steps = [{ step = "lowercase" }, { step = "stem", language = "en" }]
"#;

const UNSTEMMED: &str = r#"[[chain]]
name = "posts"
tokenizer = "words"
steps = [{ step = "lowercase" }]
"#;

/// The `sh` code blocks of the README's CI section, in order.
fn recipe_blocks() -> Vec<String> {
    let readme = std::fs::read_to_string(root().join("README.md")).unwrap();
    let section = readme
        .split("\n## Guarding search quality in CI\n")
        .nth(1)
        .and_then(|rest| rest.split("\n## ").next())
        .expect("README has the CI section");
    section.split("```sh\n").skip(1).map(|b| b.split("```").next().unwrap().to_string()).collect()
}

/// Run a shell script in `dir` with the built binary first on PATH.
fn sh(dir: &Path, script: &str) -> Output {
    let bin = PathBuf::from(env!("CARGO_BIN_EXE_postassay"));
    let mut path = std::ffi::OsString::from(bin.parent().unwrap());
    path.push(":");
    path.push(std::env::var_os("PATH").unwrap_or_default());
    Command::new("sh")
        .current_dir(dir)
        .args(["-c", script])
        .env("PATH", path)
        .output()
        .expect("sh runs")
}

/// The failed test cases of a JUnit file, as `classname name`.
fn junit_failures(path: &Path) -> Vec<String> {
    let xml = std::fs::read_to_string(path).unwrap();
    let mut reader = Reader::from_str(&xml);
    let (mut failed, mut case) = (Vec::new(), String::new());
    loop {
        match reader.read_event().expect("well-formed JUnit XML") {
            Event::Start(e) | Event::Empty(e) if e.name().as_ref() == b"testcase" => {
                let attr = |key: &[u8]| {
                    e.attributes()
                        .flatten()
                        .find(|a| a.key.as_ref() == key)
                        .map(|a| String::from_utf8_lossy(&a.value).into_owned())
                        .unwrap_or_default()
                };
                case = format!("{} {}", attr(b"classname"), attr(b"name"));
            }
            Event::Start(e) | Event::Empty(e) if e.name().as_ref() == b"failure" => {
                failed.push(case.clone());
            }
            Event::Eof => return failed,
            _ => {}
        }
    }
}

#[cfg(unix)]
#[test]
fn the_readme_ci_recipe_fails_the_build_when_a_chain_change_lowers_ndcg() {
    let blocks = recipe_blocks();
    assert_eq!(blocks.len(), 2, "two sh blocks in the README's CI section");
    let (ci_step, update) = (&blocks[0], &blocks[1]);
    // The update block ends with committing the baseline; there is no
    // repository here, so its git lines are left out.
    let update: String =
        update.lines().filter(|l| !l.starts_with("git ")).map(|l| format!("{l}\n")).collect();

    let tmp = tempfile::tempdir().unwrap();
    let dir = tmp.path();
    let bench = dir.join("bench");
    std::fs::create_dir_all(bench.join("baseline")).unwrap();
    for (from, to) in [
        ("corpora/demo/posts.jsonl", "posts.jsonl"),
        ("judgments/demo/queries.csv", "queries.csv"),
        ("judgments/demo/qrels.csv", "qrels.csv"),
    ] {
        std::fs::copy(root().join(from), bench.join(to)).unwrap();
    }
    std::fs::write(bench.join("chains.toml"), STEMMED).unwrap();

    let res = sh(dir, &update);
    assert_eq!(res.status.code(), Some(0), "baseline: {}", texts(&res).1);
    assert!(bench.join("baseline/report.json").is_file());

    // Unchanged chains: the build passes.
    let res = sh(dir, ci_step);
    let (out, err) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "stdout: {out}\nstderr: {err}");
    assert!(junit_failures(&dir.join("target/gate.xml")).is_empty());

    // The change under review drops stemming: the build fails on nDCG@10.
    std::fs::write(bench.join("chains.toml"), UNSTEMMED).unwrap();
    let res = sh(dir, ci_step);
    let (out, err) = texts(&res);
    assert_eq!(res.status.code(), Some(1), "stdout: {out}\nstderr: {err}");
    assert!(err.contains("retrieval quality regressed"), "{err}");
    let md = std::fs::read_to_string(dir.join("target/gate.md")).unwrap();
    assert_eq!(out, md, "the CI step prints the Markdown summary");
    let failures = junit_failures(&dir.join("target/gate.xml"));
    assert!(failures.contains(&"postassay.gate.posts ndcg@10".to_string()), "{failures:?}");
    // The PR comment: the nDCG@10 row shows the drop, a significant paired
    // test and the verdict.
    assert!(md.starts_with("### postassay gate: FAIL\n"), "{md}");
    let row: Vec<&str> = md
        .lines()
        .find(|l| l.starts_with("| posts | ndcg@10 |"))
        .expect("an nDCG@10 row")
        .split('|')
        .map(str::trim)
        .collect();
    let number = |i: usize| row[i].parse::<f64>().unwrap();
    assert!(number(5) < -0.05, "a clear drop: {row:?}");
    assert!(number(7) < 0.05 && number(8) < 0.05, "significant: {row:?}");
    assert_eq!(row[9], "**REGRESSION**");
}
