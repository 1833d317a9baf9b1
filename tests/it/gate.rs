//! `postassay gate` on reports made by `postassay score` from the fixture
//! in tests/fixtures/gate/.
//!
//! Judgments: q1 … q8, each with one relevant post r_i (grade 2) and one
//! non-relevant post n_i (grade 0). Runs (two systems per report, `a` and
//! `b`):
//! - `run_base`: r_i at rank 1, n_i at rank 2 on every query, so nDCG@5 =
//!   P@1 = 1 and unjudged@5 = 0 everywhere;
//! - `run_small_drop`: as base but q1 has n1 first (P@1 of q1 = 0, nDCG@5 of
//!   q1 = (3 / log2 3) / 3 = 1 / log2 3) and q2 has an unjudged post x2 at
//!   rank 3 (unjudged@5 of q2 = 1/3). Means: P@1 0.875, nDCG@5
//!   (7 + 1/log2 3) / 8 = 0.9539;
//! - `run_big_drop`: n_i first on every query: P@1 = 0, nDCG@5 = 1/log2 3.
//!
//! nDCG@5 uses the exponential gain 2^g − 1 and the log2(i + 1) discount
//! (metrics.md; Järvelin & Kekäläinen, ACM TOIS 2002; Burges et al., ICML
//! 2005), so a grade-2 post at rank 2 alone gains 3 / log2 3 of an ideal 3.
//!
//! Randomization p-values (metrics.md; n = 8 ≤ 16, so exact): one non-zero
//! difference gives |sum| = |d| under every sign assignment, so p = 1; eight
//! equal differences reach the observed |sum| only with all signs equal, so
//! p = 2 / 2^8 = 0.0078 (hand-counted).

use std::path::{Path, PathBuf};
use std::process::Output;

use quick_xml::events::Event;
use quick_xml::Reader;

use crate::util::{fixture, postassay, texts, write};

const METRICS: &str = "ndcg@5,p@1,unjudged@5";

/// `score` the runs into `dir/name`; returns the report directory.
fn report(dir: &Path, name: &str, runs: &[(&str, &str)], qrels: &Path) -> PathBuf {
    let out = dir.join(name);
    let specs: Vec<String> = runs
        .iter()
        .map(|(n, f)| format!("{n}={}", fixture(&format!("gate/{f}.csv")).display()))
        .collect();
    let mut args = vec![
        "score",
        "--judgments",
        qrels.to_str().unwrap(),
        "--metrics",
        METRICS,
        "--out",
        out.to_str().unwrap(),
        "--quiet",
    ];
    for s in &specs {
        args.extend(["--run", s]);
    }
    let res = postassay(dir, &args);
    assert_eq!(res.status.code(), Some(0), "score failed: {}", texts(&res).1);
    out
}

fn qrels() -> PathBuf {
    fixture("gate/qrels.csv")
}

/// A baseline (a = b = base) and a current report with `b` = `current_run`.
fn pair(dir: &Path, current_run: &str) -> (PathBuf, PathBuf) {
    let base = report(dir, "base", &[("a", "run_base"), ("b", "run_base")], &qrels());
    let cur = report(dir, "cur", &[("a", "run_base"), ("b", current_run)], &qrels());
    (base, cur)
}

fn gate(dir: &Path, base: &Path, cur: &Path, extra: &[&str]) -> Output {
    let mut args =
        vec!["gate", "--baseline", base.to_str().unwrap(), "--current", cur.to_str().unwrap()];
    args.extend_from_slice(extra);
    postassay(dir, &args)
}

#[test]
fn identical_reports_pass() {
    let tmp = tempfile::tempdir().unwrap();
    let (base, cur) = pair(tmp.path(), "run_base");
    // A report.json path works as well as its directory.
    let res = gate(tmp.path(), &base.join("report.json"), &cur, &[]);
    let (out, err) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "stdout: {out}\nstderr: {err}");
    assert!(out.starts_with("### postassay gate: PASS\n"), "{out}");
    assert!(out.contains("| a | ndcg@5 | 1.0000 | 1.0000 | +0.0000 | no drop | 1.0000 |"), "{out}");
    assert!(out.contains("| b | unjudged@5 | 0.0000 | 0.0000 | +0.0000 | – |"), "{out}");
    // 2 systems × 2 gated metrics; unjudged@5 is not gated.
    assert!(out.trim_end().ends_with("**PASS**: no regression in 4 checks."), "{out}");
}

#[test]
fn any_drop_fails_when_no_limit_is_given() {
    let tmp = tempfile::tempdir().unwrap();
    let (base, cur) = pair(tmp.path(), "run_small_drop");
    let res = gate(tmp.path(), &base, &cur, &[]);
    let (out, err) = texts(&res);
    assert_eq!(res.status.code(), Some(1), "stdout: {out}\nstderr: {err}");
    assert!(out.starts_with("### postassay gate: FAIL\n"));
    assert!(
        out.contains("| b | p@1 | 1.0000 | 0.8750 | -0.1250 | no drop | 1.0000 |"),
        "randomization p = 1 with one non-zero difference: {out}"
    );
    assert!(out.contains("| b | ndcg@5 | 1.0000 | 0.9539 | -0.0461 | no drop |"), "{out}");
    assert!(
        out.contains("| a | p@1 | 1.0000 | 1.0000 | +0.0000 | no drop | 1.0000 | 1.0000 | pass |")
    );
    // The rise of unjudged@5 is a warning, not a failure.
    assert!(out.contains("- b: unjudged@5 rose from 0.0000 to 0.0417"), "{out}");
    let last = out.trim_end().lines().last().unwrap();
    assert_eq!(
        last,
        "**FAIL**: 2 regressions in 4 checks: `b` ndcg@5 -0.0461 (no drop), `b` p@1 -0.1250 (no drop)."
    );
}

#[test]
fn absolute_limits() {
    let tmp = tempfile::tempdir().unwrap();
    let (base, cur) = pair(tmp.path(), "run_small_drop");
    // Drops 0.0461 (nDCG@5) and 0.125 (P@1) are within 0.05 and 0.125 (a
    // drop equal to its limit passes).
    let ok =
        gate(tmp.path(), &base, &cur, &["--max-drop", "ndcg@5=0.05", "--max-drop", "p@1=0.125"]);
    let (out, err) = texts(&ok);
    assert_eq!(ok.status.code(), Some(0), "stdout: {out}\nstderr: {err}");
    assert!(out.contains("| drop ≤ 0.1250 | 1.0000 |"), "{out}");
    assert!(out.contains("pass (within limit) |"), "{out}");
    // `*` covers nDCG@5; P@1's own limit is tighter and fails.
    let fail = gate(tmp.path(), &base, &cur, &["--max-drop", "*=0.05", "--max-drop", "p@1=0.1"]);
    let (out, _) = texts(&fail);
    assert_eq!(fail.status.code(), Some(1), "{out}");
    assert!(out.contains("`b` p@1 -0.1250 (drop ≤ 0.1000)."), "{out}");
    assert!(!out.contains("`b` ndcg@5"), "{out}");
}

#[test]
fn relative_limits() {
    let tmp = tempfile::tempdir().unwrap();
    let (base, cur) = pair(tmp.path(), "run_small_drop");
    // P@1 drops by 12.5% of 1.0; nDCG@5 by 4.61%.
    let ok = gate(
        tmp.path(),
        &base,
        &cur,
        &["--max-drop-relative", "p@1=12.5%", "--max-drop-relative", "ndcg@5=5"],
    );
    assert_eq!(ok.status.code(), Some(0), "{}", texts(&ok).0);
    let fail = gate(tmp.path(), &base, &cur, &["--max-drop-relative", "*=10"]);
    let (out, _) = texts(&fail);
    assert_eq!(fail.status.code(), Some(1), "{out}");
    assert!(out.trim_end().ends_with("checks: `b` p@1 -0.1250 (drop ≤ 10%)."), "{out}");
}

#[test]
fn require_significance_passes_an_insignificant_drop_and_fails_a_significant_one() {
    let tmp = tempfile::tempdir().unwrap();
    let (base, cur) = pair(tmp.path(), "run_small_drop");
    let res = gate(tmp.path(), &base, &cur, &["--require-significance"]);
    let (out, err) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "stdout: {out}\nstderr: {err}");
    assert!(out.contains("pass (not significant) |"), "{out}");

    let big = report(tmp.path(), "big", &[("a", "run_base"), ("b", "run_big_drop")], &qrels());
    let res = gate(tmp.path(), &base, &big, &["--require-significance"]);
    let (out, _) = texts(&res);
    assert_eq!(res.status.code(), Some(1), "{out}");
    // Exact randomization p = 2/256 (module docs).
    assert!(out.contains("| b | p@1 | 1.0000 | 0.0000 | -1.0000 | no drop | 0.0078 |"), "{out}");
    // A level below the p-value lets it pass.
    let res = gate(tmp.path(), &base, &big, &["--require-significance", "--alpha", "0.005"]);
    assert_eq!(res.status.code(), Some(0), "{}", texts(&res).0);
}

/// Issue 12, item 2: the refusal says how the judgments differ (pairs
/// added, removed, grades changed), not only that their files' hashes do.
#[test]
fn reports_on_different_judgments_are_refused_unless_allowed() {
    let tmp = tempfile::tempdir().unwrap();
    let base = report(tmp.path(), "base", &[("a", "run_base")], &qrels());
    let mut changed = std::fs::read_to_string(qrels()).unwrap().replace("q3,n3,0", "q3,n3,1");
    changed.push_str("q8,x8,1\n");
    let other = write(tmp.path(), "qrels2.csv", &changed);
    let cur = report(tmp.path(), "cur", &[("a", "run_base")], &other);
    let res = gate(tmp.path(), &base, &cur, &[]);
    let (out, err) = texts(&res);
    assert_eq!(res.status.code(), Some(2), "stdout: {out}\nstderr: {err}");
    assert!(out.is_empty(), "nothing on stdout when refusing: {out}");
    assert!(err.contains("were not built on the same inputs"), "{err}");
    assert!(
        err.contains(
            "judgments: 1 pair added (q8 x8 = 1), 1 grade changed (q3 n3: 0 → 1) (baseline sha256 "
        ),
        "{err}"
    );
    assert!(err.contains("qrels2.csv"), "{err}");
    assert!(err.contains("--allow-different-inputs"), "{err}");

    // Allowed through, the added relevant post x8 lowers q8's nDCG@5 (its
    // ideal ranking now holds two relevant posts): a "regression" caused by
    // the judgments, not by the system, which is why the default refuses.
    let res = gate(tmp.path(), &base, &cur, &["--allow-different-inputs"]);
    let (out, _) = texts(&res);
    assert_eq!(res.status.code(), Some(1), "{out}");
    assert!(out.contains("| a | ndcg@5 | 1.0000 | 0.9783 |"), "{out}");
    assert!(out.contains("- different inputs allowed: judgments: 1 pair added"), "{out}");
}

/// Issue 12, item 2: the same judgments saved with a BOM and CRLF line
/// ends, in the four-column layout of public test collections, or with a
/// line repeated and the lines in another order, are the same inputs
/// (formats.md accepts each of them); so are the same queries with a BOM,
/// CRLF and their tags in another order. The gate compares them and notes
/// that the files' bytes differ. A Windows checkout of the README's CI
/// recipe used to be refused.
#[test]
fn the_same_inputs_saved_differently_are_compared() {
    let tmp = tempfile::tempdir().unwrap();
    let original = std::fs::read_to_string(qrels()).unwrap();
    let queries = "query_id,text,tags\nq1,ferry delays,short;inflected\nq2,harbour,short\n";
    let base_queries = write(tmp.path(), "queries.csv", queries);
    let base = score_with_queries(tmp.path(), "base", &qrels(), &base_queries);
    let body: Vec<&str> = original.lines().skip(1).collect();
    let four_columns: String = body
        .iter()
        .map(|l| {
            let f: Vec<&str> = l.split(',').collect();
            format!("{}\t0\t{}\t{}\n", f[0], f[1], f[2])
        })
        .collect();
    let mut shuffled: Vec<&str> = body.clone();
    shuffled.reverse();
    let repeated = format!("query_id,doc_id,grade\n{}\n{}\n", shuffled.join("\n"), body[0]);
    let variants = [
        ("bom_crlf.csv", format!("\u{feff}{}", original.replace('\n', "\r\n"))),
        ("four_columns.txt", four_columns),
        ("repeated.csv", repeated),
    ];
    let other_queries = write(
        tmp.path(),
        "queries_crlf.csv",
        &format!(
            "\u{feff}{}",
            queries.replace("short;inflected", "inflected;short").replace('\n', "\r\n")
        ),
    );
    for (name, text) in variants {
        let q = write(tmp.path(), name, &text);
        let cur = score_with_queries(tmp.path(), &format!("cur_{name}"), &q, &other_queries);
        let res = gate(tmp.path(), &base, &cur, &[]);
        let (out, err) = texts(&res);
        assert_eq!(res.status.code(), Some(0), "{name}: stdout: {out}\nstderr: {err}");
        assert!(
            out.contains("- the judgments files differ in bytes but hold the same judgments"),
            "{name}: {out}"
        );
        assert!(
            out.contains("- the queries files differ in bytes but hold the same queries"),
            "{name}: {out}"
        );
    }
    // A query whose text changed is a different input, named.
    let edited = write(tmp.path(), "queries_edited.csv", &queries.replace("harbour", "harbor"));
    let cur = score_with_queries(tmp.path(), "cur_edited", &qrels(), &edited);
    let res = gate(tmp.path(), &base, &cur, &[]);
    let (_, err) = texts(&res);
    assert_eq!(res.status.code(), Some(2), "{err}");
    assert!(err.contains("queries: 1 changed in text, language or tags (q2) (baseline"), "{err}");
}

/// `score` of run `a` = run_base with a queries file, into `dir/name`.
fn score_with_queries(dir: &Path, name: &str, qrels: &Path, queries: &Path) -> PathBuf {
    let out = dir.join(name);
    let spec = format!("a={}", fixture("gate/run_base.csv").display());
    let res = postassay(
        dir,
        &[
            "score",
            "--judgments",
            qrels.to_str().unwrap(),
            "--queries",
            queries.to_str().unwrap(),
            "--run",
            &spec,
            "--metrics",
            METRICS,
            "--out",
            out.to_str().unwrap(),
            "--quiet",
        ],
    );
    assert_eq!(res.status.code(), Some(0), "score failed: {}", texts(&res).1);
    out
}

/// Issue 12, item 3: a system of the baseline that the current report
/// lacks used to be a warning, so a gate passed when the guarded chain
/// disappeared. It fails unless `--allow-missing` names it; a system only
/// the current report has stays a warning.
#[test]
fn a_baseline_system_missing_from_the_current_report_fails_unless_allowed() {
    let tmp = tempfile::tempdir().unwrap();
    let base = report(tmp.path(), "base", &[("a", "run_base"), ("old", "run_base")], &qrels());
    let cur = report(tmp.path(), "cur", &[("a", "run_base"), ("new", "run_big_drop")], &qrels());
    let junit = tmp.path().join("gate.xml");
    let res = gate(tmp.path(), &base, &cur, &["--junit", junit.to_str().unwrap()]);
    let (out, err) = texts(&res);
    assert_eq!(res.status.code(), Some(1), "stdout: {out}\nstderr: {err}");
    assert!(out.starts_with("### postassay gate: FAIL\n"), "{out}");
    assert!(out.contains("- `old`: **MISSING**, which fails the gate"), "{out}");
    assert!(out.contains("give `--allow-missing old`"), "{out}");
    assert!(out.contains("- system new is in the current report only"), "{out}");
    assert_eq!(
        out.trim_end().lines().last().unwrap(),
        "**FAIL**: 1 system of the baseline missing from the current report: `old`; no \
         regression in 2 checks."
    );
    let xml = std::fs::read_to_string(&junit).unwrap();
    assert!(xml.contains(r#"<testsuite name="postassay gate" tests="4" failures="1""#), "{xml}");
    assert!(
        xml.contains(r#"<testcase classname="postassay.gate.old" name="present" time="0">"#),
        "{xml}"
    );
    assert!(xml.contains(r#"<failure type="missing" message="old is in the baseline"#), "{xml}");

    // Allowed by name: a pass, with the absence recorded.
    let res = gate(tmp.path(), &base, &cur, &["--allow-missing", "old"]);
    let (out, _) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "{out}");
    assert!(out.contains("- `old`: allowed by `--allow-missing`"), "{out}");
    assert!(out.trim_end().ends_with("**PASS**: no regression in 2 checks."), "{out}");
    // A name the baseline does not have allows nothing: a usage error.
    let res = gate(tmp.path(), &base, &cur, &["--allow-missing", "olld"]);
    assert_eq!(res.status.code(), Some(2));
    assert!(texts(&res).1.contains("--allow-missing olld: the baseline has no system"));
}

#[test]
fn metrics_in_one_report_only_are_warnings() {
    let tmp = tempfile::tempdir().unwrap();
    let base = report(tmp.path(), "base", &[("a", "run_base")], &qrels());
    // The current report drops unjudged@5 and adds mrr.
    let other = tmp.path().join("other");
    let spec = format!("a={}", fixture("gate/run_base.csv").display());
    let res = postassay(
        tmp.path(),
        &[
            "score",
            "--judgments",
            qrels().to_str().unwrap(),
            "--run",
            &spec,
            "--metrics",
            "mrr,p@1,ndcg@5",
            "--out",
            other.to_str().unwrap(),
            "--quiet",
        ],
    );
    assert_eq!(res.status.code(), Some(0), "{}", texts(&res).1);
    let res = gate(tmp.path(), &base, &other, &[]);
    let (out, _) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "{out}");
    assert!(out.contains("- metric mrr is in the current report only"), "{out}");
    assert!(out.contains("- metric unjudged@5 is in the baseline report only"), "{out}");
    // Rows follow the current report's metric order.
    let rows: Vec<&str> = out.lines().filter(|l| l.starts_with("| a |")).collect();
    assert_eq!(rows.len(), 2, "{out}");
    assert!(rows[0].starts_with("| a | p@1 |") && rows[1].starts_with("| a | ndcg@5 |"));
    // Gating only one metric.
    let res = gate(tmp.path(), &base, &other, &["--metrics", "ndcg@5"]);
    let (out, _) = texts(&res);
    assert!(out.trim_end().ends_with("no regression in 1 check."), "{out}");
}

#[test]
fn bad_input_and_usage_exit_2() {
    let tmp = tempfile::tempdir().unwrap();
    let (base, cur) = pair(tmp.path(), "run_base");
    let missing = tmp.path().join("nowhere");
    let res = gate(tmp.path(), &missing, &cur, &[]);
    assert_eq!(res.status.code(), Some(2));
    assert!(texts(&res).1.contains("nowhere/report.json") || texts(&res).1.contains("nowhere"));
    let broken =
        write(tmp.path(), "broken.json", "{\n  \"schema_version\": 1,\n  \"tool\": 3\n}\n");
    let res = gate(tmp.path(), &base, &broken, &[]);
    let (_, err) = texts(&res);
    assert_eq!(res.status.code(), Some(2), "{err}");
    assert!(err.contains("broken.json:3: expected a report of schema_version 1"), "{err}");
    let future = write(tmp.path(), "future.json", "{\"schema_version\": 99}");
    let res = gate(tmp.path(), &base, &future, &[]);
    assert_eq!(res.status.code(), Some(2));
    assert!(texts(&res).1.contains("expected report layout schema_version 1, found 99"));
    for bad in [["--max-drop", "ndcg@5"], ["--max-drop", "mrr=0.1"], ["--metrics", "bogus"]] {
        let res = gate(tmp.path(), &base, &cur, &bad);
        assert_eq!(res.status.code(), Some(2), "{bad:?}: {}", texts(&res).1);
    }
    let res = gate(tmp.path(), &base, &cur, &["--max-drop", "mrr=0.1"]);
    assert!(texts(&res).1.contains("names mrr, which neither report has"), "{}", texts(&res).1);
}

#[test]
fn junit_xml_is_well_formed_with_one_case_per_system_and_metric() {
    let tmp = tempfile::tempdir().unwrap();
    let (base, cur) = pair(tmp.path(), "run_small_drop");
    let junit = tmp.path().join("ci").join("gate.xml");
    std::fs::create_dir_all(junit.parent().unwrap()).unwrap();
    let res = gate(tmp.path(), &base, &cur, &["--junit", junit.to_str().unwrap()]);
    assert_eq!(res.status.code(), Some(1));
    let xml = std::fs::read_to_string(&junit).unwrap();

    let mut reader = Reader::from_str(&xml);
    let mut cases: Vec<(String, String)> = Vec::new();
    let mut failures: Vec<String> = Vec::new();
    let mut skipped = 0;
    let mut suite_counts = None;
    let attr = |e: &quick_xml::events::BytesStart, name: &str| -> String {
        e.attributes()
            .map(|a| a.expect("well-formed attribute"))
            .find(|a| a.key.as_ref() == name.as_bytes())
            .map(|a| a.unescape_value().expect("escaped value").into_owned())
            .unwrap_or_default()
    };
    loop {
        match reader.read_event().expect("well-formed JUnit XML") {
            Event::Eof => break,
            Event::Start(e) | Event::Empty(e) => match e.name().as_ref() {
                b"testsuite" => {
                    suite_counts =
                        Some((attr(&e, "tests"), attr(&e, "failures"), attr(&e, "skipped")))
                }
                b"testcase" => cases.push((attr(&e, "classname"), attr(&e, "name"))),
                b"failure" => failures.push(attr(&e, "message")),
                b"skipped" => skipped += 1,
                _ => {}
            },
            _ => {}
        }
    }
    let names: Vec<String> = cases.iter().map(|(c, n)| format!("{c} {n}")).collect();
    assert_eq!(
        names,
        [
            "postassay.gate.a ndcg@5",
            "postassay.gate.a p@1",
            "postassay.gate.a unjudged@5",
            "postassay.gate.b ndcg@5",
            "postassay.gate.b p@1",
            "postassay.gate.b unjudged@5"
        ]
    );
    assert_eq!(suite_counts, Some(("6".into(), "2".into(), "2".into())));
    assert_eq!(skipped, 2);
    assert_eq!(
        failures,
        [
            "b ndcg@5 dropped from 1.0000 to 0.9539 (-0.0461), beyond the limit (no drop)",
            "b p@1 dropped from 1.0000 to 0.8750 (-0.1250), beyond the limit (no drop)"
        ]
    );
    // Nothing but the XML file was left in its directory (atomic write).
    let entries: Vec<_> = std::fs::read_dir(junit.parent().unwrap()).unwrap().collect();
    assert_eq!(entries.len(), 1);
}

#[test]
fn reports_scored_with_different_settings_are_refused() {
    let tmp = tempfile::tempdir().unwrap();
    let base = report(tmp.path(), "base", &[("a", "run_base")], &qrels());
    let out = tmp.path().join("linear");
    let spec = format!("a={}", fixture("gate/run_base.csv").display());
    let res = postassay(
        tmp.path(),
        &[
            "score",
            "--judgments",
            qrels().to_str().unwrap(),
            "--run",
            &spec,
            "--metrics",
            METRICS,
            "--gain",
            "linear",
            "--relevant-from",
            "2",
            "--out",
            out.to_str().unwrap(),
            "--quiet",
        ],
    );
    assert_eq!(res.status.code(), Some(0), "{}", texts(&res).1);
    let res = gate(tmp.path(), &base, &out, &[]);
    let (_, err) = texts(&res);
    assert_eq!(res.status.code(), Some(2), "{err}");
    assert!(err.contains("relevant_from: baseline 1; current 2"), "{err}");
    assert!(err.contains("gain: baseline exp; current linear"), "{err}");
    assert!(!err.contains("judgments:"), "same judgments file: {err}");
}

/// Issue 12, item 6: `gate` compared a `stemmed` that stems German with the
/// English one as "the same `stemmed`". It names each chain whose
/// definition changed, with the part that changed, and still compares it
/// (that is often the point of the change).
#[test]
fn chains_whose_definition_changed_are_named() {
    let tmp = tempfile::tempdir().unwrap();
    let base = crate::run::run_stemming_fixture_with(tmp.path(), "en", "mrr", &[]);
    let cur =
        crate::run::run_stemming_fixture_with(tmp.path(), "de", "mrr", &["--stem-lang", "de"]);
    let junit = tmp.path().join("gate.xml");
    let res = gate(tmp.path(), &base, &cur, &["--junit", junit.to_str().unwrap()]);
    let (out, err) = texts(&res);
    assert!(matches!(res.status.code(), Some(0 | 1)), "compared, not refused: {err}");
    let line = "- `stemmed` steps: baseline `lowercase → stem (language en, generation current)`; \
                current `lowercase → stem (language de, generation current)`";
    assert!(out.contains(line), "{out}");
    assert!(!out.contains("`standard` steps"), "standard did not change: {out}");
    let xml = std::fs::read_to_string(&junit).unwrap();
    assert!(xml.contains("definition changed: stemmed steps: baseline lowercase → stem"), "{xml}");
    // Unchanged chains name nothing.
    let res = gate(tmp.path(), &base, &base, &[]);
    assert!(!texts(&res).0.contains("definition changed"), "{}", texts(&res).0);
}
