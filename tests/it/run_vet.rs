//! `postassay run --vet`: the chains' diagnostics on the tiny open-data
//! fixture (`tests/fixtures/diagnose/data`, figures computed by hand in
//! tests/it/vet.rs) land in `report.md`, `report.html` and `report.json`;
//! without `--vet` none of it appears; a missing or empty data directory
//! stops the run with exit 2 before anything is written.
//!
//! The bench is `tests/fixtures/html/bench/` (14 posts), run from its own
//! directory with relative paths, so the reports name no machine path.

use std::path::Path;
use std::process::Output;

use sha2::{Digest, Sha256};

use crate::util::{fixture, postassay, texts};

/// The tiny data directory, relative to the `html/bench` fixture.
const DATA: &str = "../../diagnose/data";

/// `postassay run` on the `html/bench` fixture into `out`, with `extra` flags.
fn run_bench(out: &Path, extra: &[&str]) -> Output {
    let mut args = vec![
        "run",
        "--quiet",
        "--corpus",
        "posts.jsonl",
        "--queries",
        "queries.csv",
        "--judgments",
        "qrels.csv",
        "--out",
        out.to_str().expect("temp path is UTF-8"),
    ];
    args.extend_from_slice(extra);
    postassay(&fixture("html/bench"), &args)
}

fn read(path: &Path) -> String {
    std::fs::read_to_string(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

fn sha256_hex(path: &Path) -> String {
    let bytes = std::fs::read(path).expect("fixture readable");
    Sha256::digest(&bytes).iter().map(|b| format!("{b:02x}")).collect()
}

/// The Markdown between `## Diagnostics` and the next `## ` heading.
fn diagnostics_section(md: &str) -> &str {
    let start = md.find("## Diagnostics\n").unwrap_or_else(|| panic!("no Diagnostics in {md}"));
    let rest = &md[start + 3..];
    let end = rest.find("\n## ").map_or(rest.len(), |i| i + 1);
    &md[start..start + 3 + end]
}

#[test]
fn vet_adds_a_diagnostics_section_to_every_report() {
    let tmp = tempfile::tempdir().expect("temp dir");
    let out = tmp.path().join("out");
    let res = run_bench(&out, &["--vet", "--vet-data", DATA]);
    assert_eq!(res.status.code(), Some(0), "stderr: {}", texts(&res).1);

    let md = read(&out.join("report.md"));
    let section = diagnostics_section(&md);
    for heading in [
        "### Conflation against lemma classes",
        "### Routing by length: `routed`",
        "### Hashtag segmentation",
    ] {
        assert!(section.contains(heading), "{heading} missing from {section}");
    }
    // Placed after Cost, before Timing.
    let at = |h: &str| md.find(h).unwrap_or_else(|| panic!("{h} missing"));
    assert!(at("## Cost") < at("## Diagnostics") && at("## Diagnostics") < at("## Timing"));
    // Hand-computed in tests/it/vet.rs (data/ud/en.lemmas.tsv): standard
    // misses every desired merge (UI 7/7, OI 0); stemmed (English Snowball)
    // UI = 3/7 = 0.4286, OI = 1/21 = 4.76e-2, SW = 1/9 = 1.11e-1, one of two
    // multi-form lemmas whole, (2 + 1)/2 terms per lemma.
    assert!(
        section.contains("| en | standard | standard | 8 | 2 | 1.0000 | 0 | 0 | 0.0% | 3.00 |"),
        "{section}"
    );
    assert!(
        section.contains(
            "| en | stemmed | stemmed (stem(en, current)) | 8 | 2 | 0.4286 | 4.76e-2 | 1.11e-1 | \
             50.0% | 1.50 |"
        ),
        "{section}"
    );
    // data/ud_pud/ru.sentences.tsv: two Russian sentences of 71 and 72
    // characters; Russian is not among `routed`'s languages, so both go to
    // the fallback field (↪: the share sent there); the last cell is the
    // measured CPU time per sentence.
    assert!(
        section.contains("| ud_pud | ru | 2 | not routed | – | – | ↪ 100.0% (2) | – | 100.0% | "),
        "{section}"
    );
    // Both detectors are shown, the chain's own first.
    let lingua = section.find("detector `lingua`").expect("lingua's table");
    let whatlang = section.find("detector `whatlang`").expect("whatlang's table");
    assert!(lingua < whatlang, "{section}");
    // The three longer English sentences reach text_en (measured in vet.rs).
    let en_row = section.lines().find(|l| l.starts_with("| ud | en | 4 |")).expect("en row");
    assert!(en_row.contains("| 100.0% (1) | 100.0% (1) | 100.0% (1) |"), "{en_row}");
    // Segmentation with this corpus's words (it has none of what, dream, run,
    // it): HarbourMarket splits on case (exact); whatadream and runit stay
    // whole. Exact 1/3; boundaries: 1 predicted, 1 right, 4 in the gold:
    // P = 1, R = 1/4, F1 = 2·1·¼/(1 + ¼) = 0.4.
    let seg = section
        .lines()
        .find(|l| l.starts_with("| hashtag | tiny | corpus:posts.jsonl |"))
        .unwrap_or_else(|| panic!("segmentation row in {section}"));
    assert!(seg.ends_with("| 3 | 33.3% | 1.000 | 0.250 | 0.400 | 0 |"), "{seg}");
    assert!(section.contains("| gold:tiny | `../../diagnose/data/hashtags/tiny.tsv` |"));

    let json: serde_json::Value =
        serde_json::from_str(&read(&out.join("report.json"))).expect("valid JSON");
    let d = &json["diagnostics"];
    let stemmed = d["conflation"]
        .as_array()
        .expect("conflation results")
        .iter()
        .find(|c| c["chain"] == "stemmed")
        .expect("stemmed measured");
    let ui = stemmed["figures"]["understemming"].as_f64().expect("UI");
    approx::assert_relative_eq!(ui, 3.0 / 7.0);
    let f1 = d["segmentation"][0]["figures"]["f1"].as_f64().expect("F1");
    approx::assert_relative_eq!(f1, 0.4);
    // Every data file read, with its SHA-256; the frequency source is the
    // run's own corpus, hashed like the report's corpus input.
    let inputs = d["inputs"].as_array().expect("inputs");
    let roles: Vec<&str> = inputs.iter().filter_map(|i| i["role"].as_str()).collect();
    assert_eq!(
        roles,
        ["lemmas:en", "sentences:ud/en", "sentences:ud_pud/ru", "gold:tiny", "freq-corpus"]
    );
    let lemmas = fixture("diagnose/data/ud/en.lemmas.tsv");
    assert_eq!(inputs[0]["sha256"].as_str(), Some(sha256_hex(&lemmas).as_str()));
    let corpus = json["inputs"]
        .as_array()
        .expect("report inputs")
        .iter()
        .find(|i| i["role"] == "corpus")
        .expect("corpus input");
    assert_eq!(inputs[4]["sha256"], corpus["sha256"]);
    // The report's own inputs (what the gate compares) are unchanged.
    let report_roles: Vec<&str> = json["inputs"]
        .as_array()
        .expect("report inputs")
        .iter()
        .filter_map(|i| i["role"].as_str())
        .collect();
    assert_eq!(report_roles, ["corpus", "queries", "judgments"]);

    let html = read(&out.join("report.html"));
    assert!(html.contains("<a href=\"#diagnostics\">Diagnostics</a>"));
    assert!(html.contains("<section id=\"diagnostics\">\n<h2>Diagnostics</h2>"));
    for detector in ["lingua", "whatlang"] {
        assert!(html.contains(&format!(
            "<h3>Routing by length: <code>routed</code>, detector <code>{detector}</code></h3>"
        )));
    }
    assert!(html.contains("<td class=\"num\">0.4286</td>"), "stemmed UI in an HTML table");
    // 100% accuracy: a bar across the whole cell, tinted Okabe–Ito blue
    // (#0072B2 mixed 30% with white: 255 − 255·0.3 = 178.5 → b3, and so on).
    assert!(html.contains(
        "<td class=\"num\" style=\"background:linear-gradient(90deg, #b3d5e8 100.0%, \
         transparent 100.0%)\">100.0% (1)</td>"
    ));
    assert!(!html.contains("http"), "still self-contained");
}

#[test]
fn without_vet_there_is_no_diagnostics() {
    let tmp = tempfile::tempdir().expect("temp dir");
    let out = tmp.path().join("out");
    let res = run_bench(&out, &[]);
    assert_eq!(res.status.code(), Some(0), "stderr: {}", texts(&res).1);
    assert!(!read(&out.join("report.md")).contains("Diagnostics"));
    assert!(!read(&out.join("report.html")).contains("diagnostics"));
    let json: serde_json::Value =
        serde_json::from_str(&read(&out.join("report.json"))).expect("valid JSON");
    assert!(json.get("diagnostics").is_none(), "no key at all, as before --vet existed");
    assert!(json.get("moved").is_some(), "the neighbouring keys are there");
}

#[test]
fn missing_open_data_stops_the_run_before_writing() {
    let tmp = tempfile::tempdir().expect("temp dir");
    let out = tmp.path().join("out");
    // A named directory that does not exist.
    let res = run_bench(&out, &["--vet", "--vet-data", "nowhere"]);
    let (stdout, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(2), "{stderr}");
    assert!(stdout.is_empty());
    assert!(
        stderr.contains("--vet-data nowhere: expected a directory of open data, found nothing"),
        "{stderr}"
    );
    assert!(!out.exists(), "nothing written");
    // A directory without any data file (the bench's own): nothing to diagnose.
    let res = run_bench(&out, &["--vet", "--vet-data", "."]);
    let (_, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(2), "{stderr}");
    assert!(stderr.contains("nothing to diagnose in ."), "{stderr}");
    assert!(!out.exists(), "nothing written");
    // No --vet-data and no ../shared/data from here (two levels down in a
    // temp dir): the message names the flag and the layout.
    let cwd = tmp.path().join("a");
    std::fs::create_dir_all(&cwd).expect("dir");
    let bench = fixture("html/bench");
    let file = |name: &str| bench.join(name).to_str().expect("UTF-8 path").to_string();
    let (corpus, queries, judgments) =
        (file("posts.jsonl"), file("queries.csv"), file("qrels.csv"));
    let res = postassay(
        &cwd,
        &["run", "--vet", "--corpus", &corpus, "--queries", &queries, "--judgments", &judgments],
    );
    let (_, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(2), "{stderr}");
    assert!(stderr.contains("no open data: give --vet-data DIR"), "{stderr}");
    assert!(stderr.contains("ud/LANG.lemmas.tsv"), "{stderr}");
    assert_eq!(std::fs::read_dir(&cwd).expect("dir").count(), 0, "no reports/ written");
    // --vet-data alone is refused: it means nothing without --vet.
    let res = run_bench(&out, &["--vet-data", DATA]);
    assert_eq!(res.status.code(), Some(2));
    assert!(texts(&res).1.contains("--vet"), "{}", texts(&res).1);
    assert!(!out.exists(), "nothing written");
}
