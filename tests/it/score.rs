//! `postassay score` on a hand-checkable fixture (tests/fixtures/score/).
//!
//! Judgments: q1 = {d1: 3, d2: 1, d3: 0, d4: 2}, q2 = {d5: 1, d6: 0},
//! q3 = {d7: 0} (no relevant post: skipped). Run `a` ranks q1: d1 d3 d2 and
//! q2: d6 d5, plus q9 which is not judged (warning). Run `b` ranks q1: d4 d1
//! and returns nothing for q2 (scores 0 on every metric).

use std::collections::BTreeMap;

use approx::assert_relative_eq;

use crate::util::{fixture, postassay, read_csv, texts};

fn per_query(dir: &std::path::Path) -> BTreeMap<(String, String, String), f64> {
    read_csv(&dir.join("per-query.csv"))
        .into_iter()
        .skip(1)
        .map(|r| ((r[0].clone(), r[1].clone(), r[2].clone()), r[3].parse().unwrap()))
        .collect()
}

const ALL_METRICS: &str = "ndcg@3,map,p@2,mrr,recall@2,bpref,err@3,unjudged@2";

fn score(out: &std::path::Path, metrics: &str, extra: &[&str]) -> std::process::Output {
    let qrels = fixture("score/qrels.csv");
    let a = format!("a={}", fixture("score/run_a.csv").display());
    let b = format!("b={}", fixture("score/run_b.csv").display());
    let mut args = vec![
        "score",
        "--judgments",
        qrels.to_str().unwrap(),
        "--run",
        &a,
        "--run",
        &b,
        "--out",
        out.to_str().unwrap(),
        "--metrics",
        metrics,
    ];
    args.extend_from_slice(extra);
    postassay(out.parent().unwrap(), &args)
}

#[test]
fn score_reproduces_hand_computed_values() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("out");
    let res = score(&out, ALL_METRICS, &[]);
    let (_, err) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "stderr: {err}");
    let v = per_query(&out);
    let get = |s: &str, q: &str, m: &str| v[&(s.to_string(), q.to_string(), m.to_string())];

    // nDCG@3, exponential gain 2^g − 1, log2(i + 1) discount (Järvelin &
    // Kekäläinen 2002; Burges et al. 2005 gain). Ideal order of q1: 3, 2, 1.
    let idcg_q1 = 7.0 + 3.0 / 3f64.log2() + 1.0 / 4f64.log2();
    assert_relative_eq!(
        get("a", "q1", "ndcg@3"),
        (7.0 + 0.0 + 1.0 / 4f64.log2()) / idcg_q1,
        epsilon = 1e-12
    );
    assert_relative_eq!(
        get("b", "q1", "ndcg@3"),
        (3.0 + 7.0 / 3f64.log2()) / idcg_q1,
        epsilon = 1e-12
    );
    assert_relative_eq!(get("a", "q2", "ndcg@3"), 1.0 / 3f64.log2(), epsilon = 1e-12);
    // AP (Manning, Raghavan & Schütze 2008, §8.4): relevant at ranks 1 and 3 of R = 3.
    assert_relative_eq!(get("a", "q1", "map"), (1.0 + 2.0 / 3.0) / 3.0, epsilon = 1e-12);
    assert_relative_eq!(get("b", "q1", "map"), (1.0 + 1.0) / 3.0, epsilon = 1e-12);
    assert_relative_eq!(get("a", "q2", "map"), 0.5, epsilon = 1e-12);
    // P@2 divides by k; MRR is 1 / first relevant rank.
    assert_relative_eq!(get("a", "q1", "p@2"), 0.5, epsilon = 1e-12);
    assert_relative_eq!(get("b", "q1", "p@2"), 1.0, epsilon = 1e-12);
    assert_relative_eq!(get("a", "q2", "mrr"), 0.5, epsilon = 1e-12);
    assert_relative_eq!(get("a", "q1", "recall@2"), 1.0 / 3.0, epsilon = 1e-12);
    // bpref (Buckley & Voorhees 2004): q1 has R = 3, N = 1; run a: d1 has no
    // judged non-relevant above it (1), d2 has d3 above it (1 − 1/1 = 0).
    assert_relative_eq!(get("a", "q1", "bpref"), 1.0 / 3.0, epsilon = 1e-12);
    // ERR@3 (Chapelle et al. 2009), gmax = 3 (highest grade in the file):
    // R(g) = (2^g − 1) / 8. Run b, q1: grades 2 then 3.
    let (r2, r3) = (3.0 / 8.0, 7.0 / 8.0);
    assert_relative_eq!(get("b", "q1", "err@3"), r2 + (1.0 - r2) * r3 / 2.0, epsilon = 1e-12);
    // Every judged doc → unjudged@2 = 0.
    assert_relative_eq!(get("a", "q1", "unjudged@2"), 0.0, epsilon = 1e-12);
    // An evaluated query a run found nothing for scores 0 on every metric.
    for m in ["ndcg@3", "map", "p@2", "mrr", "recall@2", "bpref", "err@3", "unjudged@2"] {
        assert_eq!(get("b", "q2", m), 0.0, "{m}");
    }
    // q3 (no relevant post) is skipped; q9 (not judged) is ignored.
    assert!(!v.keys().any(|k| k.1 == "q3" || k.1 == "q9"));
    let report: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("report.json")).unwrap()).unwrap();
    assert_eq!(report["skipped_queries"], serde_json::json!(["q3"]));
    assert_eq!(report["schema_version"], 1);
    assert!(report["warnings"].to_string().contains("q9"));
}

#[test]
fn score_outputs_follow_the_contract() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("out");
    let res = score(&out, "map,p@2", &[]);
    assert_eq!(res.status.code(), Some(0), "{}", texts(&res).1);
    let summary = read_csv(&out.join("summary.csv"));
    assert_eq!(summary[0].join(","), "system,metric,mean,ci_low,ci_high,queries");
    // Rows: system in command-line order, then metric in --metrics order.
    let keys: Vec<String> = summary[1..].iter().map(|r| format!("{}/{}", r[0], r[1])).collect();
    assert_eq!(keys, ["a/map", "a/p@2", "b/map", "b/p@2"]);
    assert_eq!(summary[1][5], "2");
    let mean_a_map: f64 = summary[1][2].parse().unwrap();
    assert_relative_eq!(mean_a_map, ((1.0 + 2.0 / 3.0) / 3.0 + 0.5) / 2.0, epsilon = 1e-12);
    let per_query = read_csv(&out.join("per-query.csv"));
    assert_eq!(per_query[0].join(","), "system,query_id,metric,value");
    assert_eq!(per_query.len(), 1 + 2 * 2 * 2);
    let cmp = read_csv(&out.join("comparisons.csv"));
    assert_eq!(
        cmp[0].join(","),
        "baseline,system,metric,delta,p_ttest,p_randomization,p_holm,wins,losses,ties"
    );
    assert_eq!(cmp.len(), 3);
    assert_eq!(&cmp[1][..3], ["a", "b", "map"]);
    // With n = 2 queries the exact randomization test enumerates the 2^2 sign
    // assignments (Fisher 1935). MAP differences b − a: q1 2/3 − 5/9 = +1/9,
    // q2 0 − 1/2 = −1/2; observed |mean| = 7/36 ≈ 0.194. The four assignments
    // give |mean| 7/36, 7/36, 11/36, 11/36, all ≥ observed → p = 4/4.
    let p: f64 = cmp[1][5].parse().unwrap();
    assert_relative_eq!(p, 1.0, epsilon = 1e-12);
    let delta: f64 = cmp[1][3].parse().unwrap();
    assert_relative_eq!(delta, -7.0 / 36.0, epsilon = 1e-12);
    assert_eq!(&cmp[1][7..], ["1", "1", "0"]);
    for f in ["report.json", "report.md"] {
        assert!(out.join(f).is_file(), "{f}");
    }
    // Outputs are ordinary files, not private temporaries (assumes the
    // usual umask 022 of CI runners and login shells).
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        let mode = std::fs::metadata(out.join("summary.csv")).unwrap().permissions().mode();
        assert_eq!(mode & 0o644, 0o644, "mode {mode:o}");
    }
    // Written atomically: no temporary file is left behind.
    let leftovers: Vec<_> = std::fs::read_dir(&out)
        .unwrap()
        .filter_map(|e| e.ok())
        .filter(|e| e.file_name().to_string_lossy().ends_with(".tmp"))
        .collect();
    assert!(leftovers.is_empty());
}

#[test]
fn score_is_byte_identical_across_runs() {
    let tmp = tempfile::tempdir().unwrap();
    let (o1, o2) = (tmp.path().join("o1"), tmp.path().join("o2"));
    assert_eq!(score(&o1, ALL_METRICS, &[]).status.code(), Some(0));
    assert_eq!(score(&o2, ALL_METRICS, &[]).status.code(), Some(0));
    for f in ["summary.csv", "per-query.csv", "comparisons.csv"] {
        assert_eq!(std::fs::read(o1.join(f)).unwrap(), std::fs::read(o2.join(f)).unwrap(), "{f}");
    }
}

/// The paired t-test of `score` end to end: per-query MRR of the runs in
/// `tests/fixtures/score/scipy/` (each query has one relevant post; `system`
/// finds nothing for q10), then `p_ttest` of comparisons.csv.
#[test]
fn p_ttest_of_score_matches_scipy_ttest_rel() {
    // Source: scipy.stats.ttest_rel (scipy 1.17.1) on the same per-query
    // values, case "score_fixture_mrr" written by scripts/scipy_stats.py
    // (which computes the reciprocal ranks from the fixture's files) into
    // tests/fixtures/stats/scipy_stats.json.
    let doc: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(fixture("stats/scipy_stats.json")).unwrap())
            .unwrap();
    let case = doc["cases"]
        .as_array()
        .unwrap()
        .iter()
        .find(|c| c["name"] == "score_fixture_mrr")
        .expect("the fixture holds the score case");
    let values = |key: &str| -> Vec<f64> {
        case[key].as_array().unwrap().iter().map(|v| v.as_f64().unwrap()).collect()
    };
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("out");
    let res = postassay(
        &fixture("score/scipy"),
        &[
            "score",
            "--quiet",
            "--judgments",
            "qrels.csv",
            "--run",
            "base=base.csv",
            "--run",
            "system=system.csv",
            "--metrics",
            "mrr",
            "--out",
            out.to_str().unwrap(),
        ],
    );
    assert_eq!(res.status.code(), Some(0), "{}", texts(&res).1);
    // The per-query values are the case's vectors, bit for bit (query ids
    // q01…q10 sort the same in both).
    let v = per_query(&out);
    let column = |system: &str| -> Vec<f64> {
        v.iter().filter(|(k, _)| k.0 == system && k.2 == "mrr").map(|(_, x)| *x).collect()
    };
    assert_eq!(column("system"), values("system"));
    assert_eq!(column("base"), values("baseline"));
    let cmp = read_csv(&out.join("comparisons.csv"));
    assert_eq!(&cmp[1][..3], ["base", "system", "mrr"]);
    let p: f64 = cmp[1][4].parse().unwrap();
    assert_relative_eq!(p, case["p_ttest_rel"].as_f64().unwrap(), max_relative = 1e-9);
}

/// A queries file that lacks evaluated queries: those queries still count,
/// but the breakdowns put them under language "(none)"; a warning says how
/// many, on stderr and in the report.
#[test]
fn queries_file_missing_evaluated_queries_is_a_warning() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("out");
    // q1 and q2 are evaluated (score/qrels.csv); the file has q1 only.
    let queries = crate::util::write(tmp.path(), "q.csv", "query_id,text,lang\nq1,ferry,en\n");
    let res = score(&out, "map", &["--queries", queries.to_str().unwrap()]);
    let (_, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "{stderr}");
    let expected = "1 of the 2 evaluated queries is not in the queries file";
    assert!(
        stderr.contains(&format!("postassay: warning: {}: {expected}", queries.display())),
        "{stderr}"
    );
    assert!(stderr.contains("with no tag in the breakdowns: q2"), "{stderr}");
    let report: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("report.json")).unwrap()).unwrap();
    let warnings = report["warnings"].as_array().unwrap();
    assert_eq!(warnings.iter().filter(|w| w.as_str().unwrap().contains(expected)).count(), 1);
    // The full file (q1, q2, q3) raises no such warning.
    let out2 = tmp.path().join("out2");
    let full = fixture("score/queries.csv");
    let res = score(&out2, "map", &["--queries", full.to_str().unwrap()]);
    assert!(!texts(&res).1.contains("not in the queries file"));
}

/// One evaluated query: no interval (empty CSV cells, as formats.md leaves
/// an absent value) and a sentence that says no test ran, and why.
#[test]
fn one_evaluated_query_has_no_interval_and_no_test() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("out");
    // score/qrels.csv without q2's only relevant post: q1 alone is evaluated.
    let qrels = std::fs::read_to_string(fixture("score/qrels.csv")).unwrap();
    let qrels: String =
        qrels.lines().filter(|l| !l.starts_with("q2,d5,")).map(|l| format!("{l}\n")).collect();
    let qrels = crate::util::write(tmp.path(), "qrels.csv", &qrels);
    let a = format!("a={}", fixture("score/run_a.csv").display());
    let b = format!("b={}", fixture("score/run_b.csv").display());
    let res = postassay(
        tmp.path(),
        &[
            "score",
            "--judgments",
            qrels.to_str().unwrap(),
            "--run",
            &a,
            "--run",
            &b,
            "--metrics",
            "map",
            "--out",
            out.to_str().unwrap(),
        ],
    );
    assert_eq!(res.status.code(), Some(0), "{}", texts(&res).1);
    let summary = read_csv(&out.join("summary.csv"));
    // Hand-computed MAP of q1 (see score_reproduces_hand_computed_values):
    // a = (1 + 2/3) / 3 = 5/9, b = (1 + 1) / 3 = 2/3; no interval with n = 1.
    assert_eq!(summary[1][..2], ["a", "map"]);
    assert_relative_eq!(summary[1][2].parse::<f64>().unwrap(), 5.0 / 9.0, epsilon = 1e-12);
    assert_eq!(
        (summary[1][3].as_str(), summary[1][4].as_str(), summary[1][5].as_str()),
        ("", "", "1")
    );
    assert_eq!((summary[2][3].as_str(), summary[2][4].as_str()), ("", ""));
    let cmp = read_csv(&out.join("comparisons.csv"));
    assert_eq!(cmp[1][4..7], ["", "", ""], "no p-values with n = 1 (metrics.md)");
    let md = std::fs::read_to_string(out.join("report.md")).unwrap();
    // Delta 2/3 − 5/9 = 1/9 ≈ +0.111.
    assert!(
        md.contains(
            "- `b` differs from `a` by +0.111 on map overall, not tested: 1 evaluated query (a \
             paired test needs at least 2)."
        ),
        "{md}"
    );
    assert!(!md.contains("p = n/a"), "{md}");
}

/// Issue 12, item 1: an evaluated query a run has no result for scores 0
/// (metrics.md), and the user is told so: a warning per run on stderr, the
/// same line in the reports' inputs section, coverage per run in
/// report.json. Run `b` of the fixture has nothing for q2 (module docs).
#[test]
fn runs_that_miss_evaluated_queries_are_named_with_their_coverage() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("out");
    let res = score(&out, "ndcg@3,map", &[]);
    let (_, err) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "stderr: {err}");
    let line = "run b has no results for 1 of the 2 evaluated queries (q2); it scores 0 on every \
                metric";
    assert!(err.contains(&format!("postassay: warning: {line}\n")), "{err}");
    assert!(!err.contains("run a has no results"), "{err}");
    let md = std::fs::read_to_string(out.join("report.md")).unwrap();
    let inputs = md.split("## Inputs and settings\n").nth(1).expect("inputs section in report.md");
    assert!(inputs.contains(&format!("- {line}\n")), "{inputs}");
    let html = std::fs::read_to_string(out.join("report.html")).unwrap();
    let inputs = html.split("<section id=\"inputs\">").nth(1).expect("inputs section in html");
    assert!(inputs.contains(&format!("<li>{line}</li>")), "{inputs}");
    let report: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("report.json")).unwrap()).unwrap();
    assert_eq!(
        report["systems"][1]["coverage"],
        serde_json::json!({"evaluated": 2, "answered": 1, "unanswered": ["q2"]})
    );
    assert_eq!(report["systems"][0]["coverage"]["answered"], 2);
    // --quiet silences the warning; the report keeps it.
    let quiet = tmp.path().join("quiet");
    let res = score(&quiet, "ndcg@3", &["--quiet"]);
    assert!(texts(&res).1.is_empty(), "{}", texts(&res).1);
    let report: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(quiet.join("report.json")).unwrap()).unwrap();
    assert!(report["warnings"].as_array().unwrap().iter().any(|w| w == line), "{report}");
}

/// Issue 12: a run file without a `score` column is read (only the rank
/// orders a run) and scores exactly as the same run with scores.
#[test]
fn runs_without_a_score_column_score_the_same() {
    let tmp = tempfile::tempdir().unwrap();
    let with = std::fs::read_to_string(fixture("score/run_a.csv")).unwrap();
    // Drop the last column of every line (the fixture's `score`), and put
    // `rank` first to show that columns are found by name.
    let without: String = with
        .lines()
        .map(|l| {
            let fields: Vec<&str> = l.split(',').collect();
            format!("{},{},{}\n", fields[2], fields[0], fields[1])
        })
        .collect();
    assert!(without.starts_with("rank,query_id,doc_id\n"), "{without}");
    let ranks_only = crate::util::write(tmp.path(), "ranks_only.csv", &without);
    let qrels = fixture("score/qrels.csv");
    let run = |name: &str, file: &std::path::Path| {
        let out = tmp.path().join(name);
        let spec = format!("a={}", file.display());
        let res = postassay(
            tmp.path(),
            &["score", "--quiet", "--judgments", qrels.to_str().unwrap(), "--run", &spec]
                .into_iter()
                .chain(["--metrics", ALL_METRICS, "--out", out.to_str().unwrap()])
                .collect::<Vec<_>>(),
        );
        assert_eq!(res.status.code(), Some(0), "{}", texts(&res).1);
        per_query(&out)
    };
    let scored = run("with", &fixture("score/run_a.csv"));
    assert!(!scored.is_empty());
    assert_eq!(run("without", &ranks_only), scored);
}

/// `report.md` of a `score` of the fixture's runs with `--metrics`.
fn recommendation(runs: &[&str], metrics: &str) -> String {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("out");
    let qrels = fixture("score/qrels.csv");
    let mut args = vec!["score", "--quiet", "--judgments", qrels.to_str().unwrap()];
    let specs: Vec<String> = runs
        .iter()
        .map(|r| format!("{r}={}", fixture(&format!("score/run_{r}.csv")).display()))
        .collect();
    for s in &specs {
        args.extend(["--run", s.as_str()]);
    }
    args.extend(["--metrics", metrics, "--out", out.to_str().unwrap()]);
    let res = postassay(tmp.path(), &args);
    assert_eq!(res.status.code(), Some(0), "{}", texts(&res).1);
    let md = std::fs::read_to_string(out.join("report.md")).unwrap();
    md.split("## Recommendation\n\n")
        .nth(1)
        .and_then(|r| r.split("\n## ").next())
        .unwrap()
        .to_string()
}

/// Issue 12: `--metrics unjudged@10` alone gives no headline metric; the
/// recommendation says that, not that only one system was scored.
#[test]
fn only_unjudged_metrics_say_there_is_no_quality_metric() {
    let case = recommendation(&["a", "b"], "unjudged@10");
    assert_eq!(
        case.trim_end(),
        "**No quality metric to compare on.** `--metrics` lists only `unjudged@10`, which \
         counts the posts nobody judged (lower is better) and says nothing about which of the 2 \
         runs ranks better, so there is no case for or against a switch. Put a quality metric \
         first, for example `--metrics ndcg@10,unjudged@10`."
    );
}

/// Issue 12: `score` compares systems already built: its recommendation
/// speaks of systems and of a switch, never of reindexing.
#[test]
fn score_speaks_of_systems_not_of_reindexing() {
    let one = recommendation(&["a"], "ndcg@3");
    assert_eq!(
        one.trim_end(),
        "**Nothing to compare.** Only one system was scored, on 2 evaluated queries, so there \
         is no case for or against a switch."
    );
    let two = recommendation(&["a", "b"], "ndcg@3");
    assert!(
        two.starts_with("**No system is detectably better than the baseline `a` on ndcg@3.**"),
        "{two}"
    );
    assert!(!one.contains("reindex") && !two.contains("reindex"), "{one}\n{two}");
}

/// Writes a generated bench for `score` into `dir`: 60 queries (langs en,
/// de, fr; tags), one relevant post each at a query-dependent rank in each of
/// three runs, so every test of the whole set and of the larger breakdown
/// cells takes the sampled path (n > 16). Deterministic (a fixed linear
/// congruential pattern); common practice, no source.
fn write_generated_bench(dir: &std::path::Path) -> Vec<String> {
    let mut qrels = String::from("query_id,doc_id,grade\n");
    let mut queries = String::from("query_id,text,lang,tags\n");
    let mut runs = vec![String::from("query_id,doc_id,rank,score\n"); 3];
    for q in 0..60u32 {
        let id = format!("q{q:02}");
        qrels.push_str(&format!("{id},{id}_rel,{}\n", 1 + q % 3));
        let lang = ["en", "de", "fr"][(q % 3) as usize];
        let tag = if q % 4 == 0 { "short" } else { "long;plain" };
        queries.push_str(&format!("{id},text {q},{lang},{tag}\n"));
        for (s, run) in runs.iter_mut().enumerate() {
            let s = s as u32;
            let rel_rank = 1 + (q * (7 + 2 * s) + 3 * s) % 12;
            for rank in 1..=10 {
                let doc =
                    if rank == rel_rank { format!("{id}_rel") } else { format!("{id}_x{rank}") };
                run.push_str(&format!("{id},{doc},{rank},{}\n", 20 - rank));
            }
        }
    }
    std::fs::write(dir.join("qrels.csv"), qrels).unwrap();
    std::fs::write(dir.join("queries.csv"), queries).unwrap();
    let mut specs = Vec::new();
    for (s, run) in runs.iter().enumerate() {
        let path = dir.join(format!("run{s}.csv"));
        std::fs::write(&path, run).unwrap();
        specs.push(format!("s{s}={}", path.display()));
    }
    specs
}

#[test]
fn report_is_identical_for_one_and_two_threads() {
    // Issue 14: outputs do not depend on --threads. Every sampled statistic
    // (randomization p-values, bootstrap intervals of means and differences,
    // whole set and breakdown cells) is in report.json; only `timing` may
    // differ.
    let tmp = tempfile::tempdir().unwrap();
    let runs = write_generated_bench(tmp.path());
    let qrels = tmp.path().join("qrels.csv");
    let queries = tmp.path().join("queries.csv");
    let report = |threads: &str| {
        let out = tmp.path().join(format!("out{threads}"));
        let mut args = vec![
            "score",
            "--judgments",
            qrels.to_str().unwrap(),
            "--queries",
            queries.to_str().unwrap(),
            "--threads",
            threads,
            "--out",
            out.to_str().unwrap(),
        ];
        for run in &runs {
            args.extend(["--run", run.as_str()]);
        }
        let res = postassay(tmp.path(), &args);
        assert_eq!(res.status.code(), Some(0), "stderr: {}", texts(&res).1);
        let mut json: serde_json::Value =
            serde_json::from_str(&std::fs::read_to_string(out.join("report.json")).unwrap())
                .unwrap();
        json.as_object_mut().unwrap().remove("timing");
        (json, std::fs::read(out.join("summary.csv")).unwrap())
    };
    let (one, one_summary) = report("1");
    let (two, two_summary) = report("2");
    // The case exercises what it claims: sampled p-values (n = 60 > 16) and
    // intervals, in the whole set and in breakdown cells.
    let rows = one["comparisons"].as_array().unwrap();
    assert!(rows.iter().any(|r| r["queries"] == 60 && r["p_randomization"].as_f64().is_some()));
    assert!(rows.iter().all(|r| r["delta_ci_low"].as_f64().is_some()));
    let cells = one["breakdowns"].as_array().unwrap();
    assert!(cells
        .iter()
        .any(|c| c["queries"].as_u64().unwrap() > 16
            && !c["comparisons"].as_array().unwrap().is_empty()));
    assert_eq!(one, two);
    assert_eq!(one_summary, two_summary);
}
