//! Input gaps found by an audit, end to end: a CSV quote left open at end of
//! file, JSON integer ids beyond 64 bits, a JSON Lines corpus whose first
//! line is not UTF-8, warnings that reached the report but not stderr, and
//! `score` without `--out` overwriting the demo run's `reports/`; and (issue
//! 12) a directory given for a file, files separated by semicolons or tabs,
//! a spreadsheet's `sep=` line, Latin-1 and UTF-16 files.
//! Bad input: exit code 2, one message naming file and line, no `--out`.

use std::path::{Path, PathBuf};
use std::process::Output;

use crate::util::{postassay, read_csv, texts, write};

const QUERIES: &str = "query_id,text\nq1,ferry\n";
const QRELS: &str = "query_id,doc_id,grade\nq1,p1,1\n";
const CORPUS: &str =
    "{\"id\": \"p1\", \"text\": \"ferry delayed\"}\n{\"id\": \"p2\", \"text\": \"bike stolen\"}\n";

/// A temp dir holding the three bench inputs (the corpus as raw bytes under
/// `corpus_name`) and the `--out` path inside it (not created).
struct Bench {
    tmp: tempfile::TempDir,
    corpus: PathBuf,
    queries: PathBuf,
    qrels: PathBuf,
    out: PathBuf,
}

impl Bench {
    fn new(corpus_name: &str, corpus: &[u8], queries: &str, qrels: &str) -> Bench {
        let tmp = tempfile::tempdir().unwrap();
        let corpus_path = tmp.path().join(corpus_name);
        std::fs::write(&corpus_path, corpus).unwrap();
        Bench {
            corpus: corpus_path,
            queries: write(tmp.path(), "queries.csv", queries),
            qrels: write(tmp.path(), "qrels.csv", qrels),
            out: tmp.path().join("out"),
            tmp,
        }
    }

    /// `postassay run` with the `standard` chain on the three files.
    fn run(&self, extra: &[&str]) -> Output {
        let mut args = vec![
            "run",
            "--corpus",
            self.corpus.to_str().unwrap(),
            "--queries",
            self.queries.to_str().unwrap(),
            "--judgments",
            self.qrels.to_str().unwrap(),
            "--chains",
            "standard",
            "--out",
            self.out.to_str().unwrap(),
        ];
        args.extend_from_slice(extra);
        postassay(self.tmp.path(), &args)
    }

    /// Expect `run` to fail with exit 2 and exactly `message` (one line,
    /// after the program name), with `--out` not created.
    fn expect_error(&self, message: &str) {
        let res = self.run(&[]);
        let (stdout, stderr) = texts(&res);
        assert_eq!(res.status.code(), Some(2), "stderr: {stderr}");
        assert!(stdout.is_empty(), "nothing on stdout: {stdout}");
        assert_eq!(stderr, format!("postassay: {message}\n"));
        assert!(!self.out.exists(), "--out must not be created on failure");
    }
}

/// The `warnings` array of `dir/report.json`.
fn report_warnings(dir: &Path) -> Vec<String> {
    let text = std::fs::read_to_string(dir.join("report.json")).unwrap();
    let report: serde_json::Value = serde_json::from_str(&text).unwrap();
    report["warnings"].as_array().unwrap().iter().map(|w| w.as_str().unwrap().into()).collect()
}

/// The stderr lines that are warnings, without the `postassay: warning: ` prefix.
fn stderr_warnings(stderr: &str) -> Vec<String> {
    stderr
        .lines()
        .filter_map(|l| l.strip_prefix("postassay: warning: "))
        .map(String::from)
        .collect()
}

#[test]
fn csv_corpus_quote_left_open_is_an_error_at_its_line() {
    // The audit's corpus: before, exit 0 with one post holding lines 2-4.
    let bench = Bench::new(
        "posts.csv",
        b"id,text\np1,\"ferry delayed\np2,ferries late\np3,bike stolen\n",
        QUERIES,
        QRELS,
    );
    bench.expect_error(&format!(
        "{}:2: column \"text\": expected a closing quote (\") for the quoted field opened on \
         this line, found the end of the file",
        bench.corpus.display()
    ));
}

#[test]
fn csv_queries_quote_left_open_is_an_error_at_its_line() {
    // The audit's queries: before, exit 0 with q2 swallowed into q1's text.
    let bench =
        Bench::new("posts.jsonl", CORPUS.as_bytes(), "query_id,text\nq1,\"ferry\nq2,bike\n", QRELS);
    bench.expect_error(&format!(
        "{}:2: column \"text\": expected a closing quote (\") for the quoted field opened on \
         this line, found the end of the file",
        bench.queries.display()
    ));
}

#[test]
fn csv_corpus_quoted_line_end_stays_one_valid_post() {
    // formats.md: a quoted field may span lines. Three records, hand-counted:
    // p1 (lines 2-3, text with a line end), p2, p3 (with a doubled quote).
    let bench = Bench::new(
        "posts.csv",
        b"id,text\np1,\"ferry\ndelayed\"\np2,bike stolen\np3,\"the \"\"fast\"\" ferry\"",
        QUERIES,
        QRELS,
    );
    let res = bench.run(&["--quiet"]);
    assert_eq!(res.status.code(), Some(0), "{}", texts(&res).1);
    let text = std::fs::read_to_string(bench.out.join("report.json")).unwrap();
    let report: serde_json::Value = serde_json::from_str(&text).unwrap();
    assert_eq!(report["counts"]["posts"], 3);
}

#[test]
fn jsonl_integer_id_beyond_64_bits_is_kept_as_its_digits() {
    // 123456789012345678901234567890 > u64::MAX = 18446744073709551615;
    // formats.md allows integer ids with no size limit. Before, the line
    // was refused as "the number 1.2345678901234568e+29".
    let big = "123456789012345678901234567890";
    let corpus = format!(
        "{{\"id\":{big},\"text\":\"ferry delayed\"}}\n{{\"id\":2,\"text\":\"bike stolen\"}}\n"
    );
    let bench = Bench::new(
        "posts.jsonl",
        corpus.as_bytes(),
        QUERIES,
        &format!("query_id,doc_id,grade\nq1,{big},1\n"),
    );
    let res = bench.run(&["--quiet"]);
    assert_eq!(res.status.code(), Some(0), "{}", texts(&res).1);
    // The only post with "ferry" is the big-id post, so it is q1's only hit.
    let rows = read_csv(&bench.out.join("runs/standard.csv"));
    assert_eq!(rows.len(), 2, "{rows:?}");
    assert_eq!(rows[1][..3], ["q1", big, "1"]);
}

#[test]
fn jsonl_float_ids_are_refused_as_written() {
    let bench = Bench::new(
        "posts.jsonl",
        b"{\"id\": 1.0, \"text\": \"ferry\"}\n{\"id\": 1e3, \"text\": \"bike\"}\n",
        QUERIES,
        QRELS,
    );
    let path = bench.corpus.display();
    bench.expect_error(&format!(
        "{path}:1: field \"id\": expected a string or an integer, found the number 1.0\n\
         {path}:2: field \"id\": expected a string or an integer, found the number 1e3"
    ));
}

#[test]
fn jsonl_first_line_in_latin1_is_reported_as_not_utf8() {
    // `é` in Latin-1 is the byte 0xE9: byte 23 of the line, after the 22
    // bytes of `{"id": 1, "text": "caf` (hand-counted). Before, the file was read as CSV
    // and the message spoke of "header field 2".
    let bench = Bench::new(
        "lat1.jsonl",
        b"{\"id\": 1, \"text\": \"caf\xE9\"}\n{\"id\": 2, \"text\": \"ferry\"}\n",
        QUERIES,
        QRELS,
    );
    bench.expect_error(&format!(
        "{}:1: expected UTF-8 text, found an invalid byte sequence at byte 23 of the line (a \
         Latin-1 or Windows-1252 file? save it as UTF-8)",
        bench.corpus.display()
    ));
}

#[test]
fn run_warnings_are_printed_on_stderr_unless_quiet() {
    // qrels line 3 repeats line 2; q3 is judged but not in the query file;
    // q2 is in the query file (so in the run) but not judged.
    let bench = Bench::new(
        "posts.jsonl",
        CORPUS.as_bytes(),
        "query_id,text\nq1,ferry\nq2,bike\n",
        "query_id,doc_id,grade\nq1,p1,1\nq1,p1,1\nq3,p2,1\n",
    );
    let res = bench.run(&[]);
    let (_, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "{stderr}");
    let qrels = bench.qrels.display();
    // The messages of src/input/judgments.rs, src/bench/mod.rs and
    // src/eval/mod.rs, in the order the report collects them.
    let expected = [
        format!(
            "{qrels}:3: query \"q1\" doc \"p1\" is judged again with the same grade 1 (first at \
             line 2); the repeat is ignored"
        ),
        format!("{qrels}: 1 judged query is not in the query file and was not evaluated: q3"),
        "standard: ignored 1 query of the run without judgments: q2".to_string(),
        "only 1 evaluated query: significance tests need at least 2, p-values are left empty"
            .to_string(),
    ];
    assert_eq!(stderr_warnings(&stderr), expected, "{stderr}");
    assert_eq!(report_warnings(&bench.out), expected);

    std::fs::remove_dir_all(&bench.out).unwrap();
    let quiet = bench.run(&["--quiet"]);
    let (_, stderr) = texts(&quiet);
    assert_eq!(quiet.status.code(), Some(0), "{stderr}");
    assert_eq!(stderr, "", "--quiet prints nothing");
    assert_eq!(report_warnings(&bench.out), expected, "the report keeps them");
}

/// `score` on `dir`'s qrels.csv and run.csv, relative paths, run in `dir`.
fn score_in(dir: &Path, extra: &[&str]) -> Output {
    let mut args = vec!["score", "--judgments", "qrels.csv", "--run", "a=run.csv"];
    args.extend_from_slice(extra);
    postassay(dir, &args)
}

const SCORE_QRELS: &str = "query_id,doc_id,grade\nq1,d1,2\nq2,d2,1\nq1,d1,2\n";
const SCORE_RUN: &str = "query_id,doc_id,rank,score\nq1,d1,1,2.5\nq2,d9,1,1.5\n";

#[test]
fn score_warnings_are_printed_on_stderr_unless_quiet() {
    let tmp = tempfile::tempdir().unwrap();
    write(tmp.path(), "qrels.csv", SCORE_QRELS);
    write(tmp.path(), "run.csv", SCORE_RUN);
    let res = score_in(tmp.path(), &["--out", "out"]);
    let (_, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "{stderr}");
    // The message of src/input/judgments.rs for line 4 repeating line 2.
    let expected = ["qrels.csv:4: query \"q1\" doc \"d1\" is judged again with the same grade 2 \
                     (first at line 2); the repeat is ignored"];
    assert_eq!(stderr_warnings(&stderr), expected, "{stderr}");
    assert_eq!(report_warnings(&tmp.path().join("out")), expected);

    let quiet = score_in(tmp.path(), &["--out", "quiet", "--quiet"]);
    assert_eq!(quiet.status.code(), Some(0));
    assert_eq!(texts(&quiet).1, "", "--quiet prints nothing");
    assert_eq!(report_warnings(&tmp.path().join("quiet")), expected, "the report keeps them");
}

#[test]
fn score_without_out_leaves_the_demo_run_in_reports() {
    // `reports/` holds the output of the demo `run` (README); before,
    // `score` without --out overwrote it.
    let tmp = tempfile::tempdir().unwrap();
    write(tmp.path(), "qrels.csv", "query_id,doc_id,grade\nq1,d1,2\nq2,d2,1\n");
    write(tmp.path(), "run.csv", SCORE_RUN);
    let reports = tmp.path().join("reports");
    std::fs::create_dir(&reports).unwrap();
    let sample = write(&reports, "report.md", "# the demo run's report\n");
    let res = score_in(tmp.path(), &[]);
    let (_, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(0), "{stderr}");
    assert_eq!(std::fs::read_to_string(&sample).unwrap(), "# the demo run's report\n");
    assert_eq!(std::fs::read_dir(&reports).unwrap().count(), 2, "report.md and score/ only");
    let summary = read_csv(&reports.join("score/summary.csv"));
    assert_eq!(summary[0].join(","), "system,metric,mean,ci_low,ci_high,queries");
    assert!(
        stderr.ends_with(
            "postassay: wrote reports/score: open reports/score/report.html first (report.md, \
             report.json and the CSV tables are beside it)\n"
        ),
        "{stderr}"
    );
}

/// Issue 12: a directory given where a file is expected names the flag it
/// came from (before, only the operating system's "Is a directory").
#[test]
fn a_directory_for_a_file_names_its_flag() {
    let bench = Bench::new("posts.jsonl", CORPUS.as_bytes(), QUERIES, QRELS);
    let dir = bench.tmp.path().join("a_dir");
    std::fs::create_dir(&dir).unwrap();
    let d = dir.to_str().unwrap();
    let run_dir = format!("a={d}");
    let cases: [(String, Vec<&str>); 4] = [
        (
            format!("--queries {d}"),
            vec!["run", "--corpus", bench.corpus.to_str().unwrap(), "--queries", d],
        ),
        (format!("--judgments {d}"), vec!["score", "--judgments", d, "--run", "a=x.csv"]),
        (format!("--run a={d}"), vec!["score", "--judgments", "q.csv", "--run", &run_dir]),
        (
            format!("--chain-file {d}"),
            vec!["tokens", "--chain", "standard", "--chain-file", d, "x"],
        ),
    ];
    for (argument, mut args) in cases {
        if args[0] == "run" {
            args.extend(["--judgments", bench.qrels.to_str().unwrap(), "--out"]);
            args.push(bench.out.to_str().unwrap());
        }
        let res = postassay(bench.tmp.path(), &args);
        let (_, stderr) = texts(&res);
        assert_eq!(res.status.code(), Some(2), "{stderr}");
        assert_eq!(stderr, format!("postassay: {argument}: expected a file, found a directory\n"));
    }
    assert!(!bench.out.exists());
}

/// Issue 12: files saved by spreadsheets and editors in another layout or
/// encoding get a message that says what to do, and a first line `sep=;`
/// (a spreadsheet's separator declaration) is read.
#[test]
fn separators_and_encodings_get_a_hint() {
    // Semicolons without a declaration.
    let bench = Bench::new("posts.jsonl", CORPUS.as_bytes(), "query_id;text\nq1;ferry\n", QRELS);
    bench.expect_error(&format!(
        "{}:1: missing columns \"query_id\", \"text\": expected a header with columns \
         \"query_id\", \"text\" (optional: \"lang\", \"tags\"), found \"query_id;text\"; the \
         header has no comma but 1 semicolon: save the file as comma-separated CSV, or make its \
         first line \"sep=;\" to declare the separator",
        bench.queries.display()
    ));
    // Tabs in judgments.
    let bench = Bench::new(
        "posts.jsonl",
        CORPUS.as_bytes(),
        QUERIES,
        "query_id\tdoc_id\tgrade\nq1\tp1\t1\n",
    );
    bench.expect_error(&format!(
        "{}:1: expected a CSV header \"query_id,doc_id,grade\" or four whitespace-separated \
         fields (query_id iteration doc_id grade), found \"query_id\\tdoc_id\\tgrade\"; the \
         header has no comma but 2 tabs: save the file as comma-separated CSV, or make its \
         first line \"sep=\" and a tab to declare the separator",
        bench.qrels.display()
    ));
    // Latin-1 in a CSV corpus: `é` is the byte 0xE9, byte 4 of `café`.
    let bench = Bench::new("posts.csv", b"id,text\np1,caf\xE9\n", QUERIES, QRELS);
    bench.expect_error(&format!(
        "{}:2: column \"text\": expected UTF-8 text, found an invalid byte sequence at byte 4 of \
         the field (a Latin-1 or Windows-1252 file? save it as UTF-8)",
        bench.corpus.display()
    ));
    // UTF-16, with and without its byte order mark (UTF-16LE of `{"id"…`).
    let utf16: Vec<u8> = CORPUS.encode_utf16().flat_map(u16::to_le_bytes).collect();
    for (bytes, found) in [
        ([&[0xFF, 0xFE][..], &utf16].concat(), "the byte order mark FF FE"),
        (utf16.clone(), "a zero byte beside every character"),
    ] {
        let bench = Bench::new("posts.jsonl", &bytes, QUERIES, QRELS);
        bench.expect_error(&format!(
            "{}: expected UTF-8 text, found UTF-16 ({found}): save the file as UTF-8 (in a \
             spreadsheet: \"CSV UTF-8\"; in an editor: the encoding UTF-8)",
            bench.corpus.display()
        ));
    }
}

#[test]
fn a_sep_line_declares_the_separator() {
    // Queries, judgments and corpus as a spreadsheet saves them with
    // semicolons (CRLF, a `sep=;` first line), with a comma inside a text.
    let bench = Bench::new(
        "posts.csv",
        b"sep=;\r\nid;text\r\np1;ferry delayed, again\r\np2;bike stolen\r\n",
        "sep=;\r\nquery_id;text\r\nq1;ferry, delayed\r\n",
        "SEP=;\r\nquery_id;doc_id;grade\r\nq1;p1;1\r\n",
    );
    let res = bench.run(&["--quiet"]);
    assert_eq!(res.status.code(), Some(0), "{}", texts(&res).1);
    let per_query = read_csv(&bench.out.join("per-query.csv"));
    assert!(
        per_query.iter().any(|r| r[1] == "q1" && r[2] == "ndcg@10" && r[3] == "1"),
        "{per_query:?}"
    );
    // Line numbers stay physical: the `sep=` line is line 1.
    let bench = Bench::new("posts.jsonl", CORPUS.as_bytes(), "sep=;\nquery_id;text\nq1; \n", QRELS);
    let res = bench.run(&[]);
    let (_, stderr) = texts(&res);
    assert_eq!(res.status.code(), Some(2), "{stderr}");
    assert!(
        stderr.contains(&format!("{}:3: column \"text\"", bench.queries.display())),
        "{stderr}"
    );
    // A separator that cannot be one.
    let bench = Bench::new("posts.jsonl", CORPUS.as_bytes(), "sep=x\nquery_id,text\nq1,a\n", QRELS);
    bench.expect_error(&format!(
        "{}:1: expected a separator declaration \"sep=,\", \"sep=;\", \"sep=|\" or \"sep=\" and a \
         tab, found \"sep=x\"",
        bench.queries.display()
    ));
}
