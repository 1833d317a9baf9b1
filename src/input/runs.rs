//! Ranked runs: CSV with columns `query_id,doc_id,rank` and optionally
//! `score`, read from the files given to `score` (input stage) and written by
//! `run` for every chain (`runs/NAME.csv`, always with `score`) and by
//! `fetch`, so a written run reads back to the same value.
//!
//! `score` also reads the whitespace-separated six-column layout that public
//! evaluation campaigns publish (`query_id ignored doc_id rank score tag`: no
//! header, fields separated by runs of spaces or tabs, blank lines skipped,
//! the second and sixth fields ignored). The layout is chosen by content as
//! the judgment reader chooses its own: a first non-blank line naming
//! `query_id` (or a `sep=` line) is CSV; otherwise six fields on it mean the
//! six-column layout, and every non-blank line must then have six; anything
//! else is one error naming the expected CSV header. The same rules as CSV
//! apply to its values (rank an integer, score a finite number, required
//! here), and the order is the same: rank ascending, equal ranks broken by
//! doc id. Some campaign tools re-sort such files by score instead; here, as
//! formats.md says of runs, the rank decides (write ranks that follow your
//! scores).
//!
//! Reading: `rank` is any integer (`i64`, negative allowed: only the order
//! matters). The order of a query's posts is rank ascending, equal ranks
//! broken by `doc_id` in byte order; the score plays no part in it, so the
//! `score` column may be left out (formats.md asks for it; issue 12 made it
//! optional, since an engine's export often has ranks only). When the column
//! is there, every value must be a finite number (Rust's `f64` syntax, so
//! `1e-3` is accepted and `NaN`/`inf` rejected). A post listed twice for one
//! query is an error naming both lines. A header-only file is a valid, empty
//! run.
//!
//! Writing: queries in byte order of their ids, ranks 1..n in list order,
//! scores in the shortest form that parses back to the same `f64` (see
//! [`format_shortest`]).

use std::collections::{BTreeMap, HashMap};
use std::path::Path;

use crate::error::{Error, Problems, Result};
use crate::ids::{PostId, QueryId};
use crate::input::text::{
    check_id, choose_layout, in_column, quoted, read_columns, CsvTable, Layout,
};

/// The run layout's header, in this order when written.
const HEADER: [&str; 4] = ["query_id", "doc_id", "rank", "score"];

/// The columns a run file must have (`score` is optional).
const REQUIRED: [&str; 3] = ["query_id", "doc_id", "rank"];

/// One retrieved post with its engine score (informational only).
#[derive(Debug, Clone, PartialEq)]
pub struct RankedDoc {
    /// The retrieved post.
    pub doc: PostId,
    /// The engine's score, finite; `None` when the run file has no `score`
    /// column.
    pub score: Option<f64>,
}

/// A system's ranked results: for each query, posts in final rank order
/// (rank ascending, equal ranks broken by doc id in byte order already
/// applied). A query absent from the map retrieved nothing.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Run {
    /// Ranked posts per query.
    pub by_query: BTreeMap<QueryId, Vec<RankedDoc>>,
}

/// What a run file must start with, for the message when it does not.
const EXPECTED_LAYOUT: &str = "expected a CSV header \"query_id,doc_id,rank,score\" or six \
     whitespace-separated fields (query_id ignored doc_id rank score tag)";

/// The fields of the six-column layout, for messages.
const SIX_COLUMNS: [&str; 6] = ["query_id", "ignored", "doc_id", "rank", "score", "tag"];

/// One row as read, kept until the file is sorted.
struct Entry {
    rank: i64,
    doc: PostId,
    score: Option<f64>,
}

/// Rows read so far, with the line of each (query, post) pair and the
/// problems found. Rows of one query usually follow each other, so the
/// query of the previous row is tried first; a query's posts are looked up
/// in its own map, by `&str` (one allocation per kept row and its post id).
struct Rows {
    queries: Vec<QueryRows>,
    by_query: HashMap<QueryId, usize>,
    last: Option<usize>,
    problems: Problems,
}

/// The rows of one query.
struct QueryRows {
    query: QueryId,
    first_line: HashMap<PostId, u64>,
    entries: Vec<Entry>,
}

impl Rows {
    fn new(path: &Path) -> Rows {
        Rows {
            queries: Vec::new(),
            by_query: HashMap::new(),
            last: None,
            problems: Problems::new(path),
        }
    }

    /// The rows of `query`, created on its first row.
    fn rows_of(&mut self, query: &str) -> usize {
        if let Some(i) =
            self.last.filter(|&i| self.queries.get(i).is_some_and(|q| q.query.as_str() == query))
        {
            return i;
        }
        let i = match self.by_query.get(query) {
            Some(&i) => i,
            None => {
                let i = self.queries.len();
                self.queries.push(QueryRows {
                    query: QueryId::from(query),
                    first_line: HashMap::new(),
                    entries: Vec::new(),
                });
                self.by_query.insert(QueryId::from(query), i);
                i
            }
        };
        self.last = Some(i);
        i
    }

    /// Record one line; each `Err` is a message for that line.
    fn add(
        &mut self,
        line: u64,
        query: std::result::Result<&str, String>,
        doc: std::result::Result<&str, String>,
        rank: std::result::Result<i64, String>,
        score: std::result::Result<Option<f64>, String>,
    ) {
        for message in
            [query.as_ref().err(), doc.as_ref().err(), rank.as_ref().err(), score.as_ref().err()]
                .into_iter()
                .flatten()
        {
            self.problems.push(line, message.clone());
        }
        let (Ok(query), Ok(doc)) = (query, doc) else { return };
        let i = self.rows_of(query);
        let Some(rows) = self.queries.get_mut(i) else { return };
        if let Some(first) = rows.first_line.get(doc) {
            self.problems.push(
                line,
                format!("query {query:?}: doc {doc:?} is listed twice (first at line {first})"),
            );
            return;
        }
        let doc = PostId::from(doc);
        rows.first_line.insert(doc.clone(), line);
        if let (Ok(rank), Ok(score)) = (rank, score) {
            rows.entries.push(Entry { rank, doc, score });
        }
    }

    fn finish(self) -> Result<Run> {
        let mut run = Run::default();
        for QueryRows { query, mut entries, .. } in self.queries {
            if entries.is_empty() {
                continue;
            }
            entries.sort_by(|a, b| a.rank.cmp(&b.rank).then_with(|| a.doc.cmp(&b.doc)));
            let docs =
                entries.into_iter().map(|e| RankedDoc { doc: e.doc, score: e.score }).collect();
            run.by_query.insert(query, docs);
        }
        self.problems.finish(run)
    }
}

/// Read and validate a run file (CSV or the six-column layout, chosen by
/// content), listing every bad line.
pub fn read_run(path: &Path) -> Result<Run> {
    let mut rows = Rows::new(path);
    match choose_layout(path, SIX_COLUMNS.len(), EXPECTED_LAYOUT)? {
        Layout::Csv => read_csv(path, &mut rows)?,
        Layout::Columns => read_columns(path, &SIX_COLUMNS, |line, fields| match fields {
            Ok([query, _ignored, doc, rank, score, _tag]) => {
                let rank = parse_rank(rank).map_err(|m| format!("field 4 (rank): {m}"));
                let score =
                    parse_score(score).map(Some).map_err(|m| format!("field 5 (score): {m}"));
                rows.add(line, Ok(query), Ok(doc), rank, score);
            }
            Ok(_) => {}
            Err(message) => rows.problems.push(line, message),
        })?,
    }
    rows.finish()
}

fn read_csv(path: &Path, rows: &mut Rows) -> Result<()> {
    let mut table = CsvTable::open(path, &HEADER.join(","))?;
    let ([q_col, d_col, r_col], [s_col]) = table.columns(REQUIRED, ["score"])?;
    while let Some(row) = table.next_row(&mut rows.problems)? {
        let query = check_id(row.get(q_col)).map_err(|m| in_column("query_id", &m));
        let doc = check_id(row.get(d_col)).map_err(|m| in_column("doc_id", &m));
        let rank = parse_rank(row.get(r_col)).map_err(|m| in_column("rank", &m));
        let score = match s_col {
            Some(col) => parse_score(row.get(col)).map(Some).map_err(|m| in_column("score", &m)),
            None => Ok(None),
        };
        rows.add(row.line, query, doc, rank, score);
    }
    Ok(())
}

/// A rank: an integer (surrounding whitespace ignored).
fn parse_rank(raw: &str) -> std::result::Result<i64, String> {
    raw.trim()
        .parse::<i64>()
        .map_err(|_| format!("expected an integer rank, found {}", quoted(raw)))
}

/// A score: a finite number (surrounding whitespace ignored).
fn parse_score(raw: &str) -> std::result::Result<f64, String> {
    match raw.trim().parse::<f64>() {
        Ok(x) if x.is_finite() => Ok(x),
        _ => Err(format!("expected a finite number, found {}", quoted(raw))),
    }
}

/// Write a run in the run layout (ranks 1..n in list order). A missing or
/// non-finite score is refused (the file must read back with its `score`
/// column); I/O errors name the output as `<run output>` since the writer
/// has no path.
pub fn write_run<W: std::io::Write>(run: &Run, out: W) -> Result<()> {
    let output = Path::new("<run output>");
    let wrap = |e: csv::Error| {
        let text = e.to_string();
        match e.into_kind() {
            csv::ErrorKind::Io(io) => Error::io(output, io),
            _ => Error::usage(format!("cannot write run: {text}")),
        }
    };
    let mut writer = csv::Writer::from_writer(out);
    writer.write_record(HEADER).map_err(wrap)?;
    for (query, docs) in &run.by_query {
        for (rank, doc) in (1u64..).zip(docs) {
            let score = match doc.score {
                Some(s) if s.is_finite() => s,
                other => {
                    return Err(Error::usage(format!(
                        "cannot write run: query {:?} doc {:?} has {}",
                        query.as_str(),
                        doc.doc.as_str(),
                        other.map_or("no score".to_string(), |s| format!(
                            "the non-finite score {s}"
                        ))
                    )))
                }
            };
            let record =
                [query.as_str(), doc.doc.as_str(), &rank.to_string(), &format_shortest(score)];
            writer.write_record(record).map_err(wrap)?;
        }
    }
    writer.flush().map_err(|e| Error::io(output, e))
}

/// The shortest decimal text that parses back to the same `f64`: Rust's
/// `Display` (`3.0` → `"3"`, `0.25` → `"0.25"`) unless scientific notation
/// (`LowerExp`) is shorter (`1e-7` rather than `"0.0000001"`, `1e21` rather
/// than 22 digits); both print the shortest round-tripping digits. Integral
/// values therefore print without `.0`. Non-finite values print as Rust
/// does (`NaN`, `inf`).
///
/// ```
/// use postassay::input::format_shortest;
/// assert_eq!(format_shortest(3.0), "3");
/// assert_eq!(format_shortest(0.1), "0.1");
/// assert_eq!(format_shortest(1e-7), "1e-7");
/// ```
pub fn format_shortest(x: f64) -> String {
    let plain = x.to_string();
    let exp = format!("{x:e}");
    if exp.len() < plain.len() {
        exp
    } else {
        plain
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::input::text::testutil::temp_file;

    fn error_of(content: &[u8]) -> String {
        let (_dir, path) = temp_file("run.csv", content);
        read_run(&path).expect_err("should be rejected").to_string()
    }

    fn docs(run: &Run, q: &str) -> Vec<(String, Option<f64>)> {
        run.by_query
            .get(&QueryId::from(q))
            .map(|v| v.iter().map(|d| (d.doc.to_string(), d.score)).collect())
            .unwrap_or_default()
    }

    #[test]
    fn orders_by_rank_then_doc_id_bytes_whatever_the_file_order() {
        // "B" (0x42) sorts before "a" (0x61) in byte order; "é" (0xC3 0xA9) after "z".
        let (_dir, path) = temp_file(
            "run.csv",
            b"score,rank,doc_id,query_id,extra\n\
              1.5,2,z,q1,x\n2.5,1,d9,q1,x\n0.5,2,\xC3\xA9,q1,x\n1.5,2,B,q1,x\n9,-3,a,q1,x\n\
              7,1,x,q0,x\n",
        );
        let run = read_run(&path).expect("valid");
        let q1 = docs(&run, "q1");
        let expected = [("a", 9.0), ("d9", 2.5), ("B", 1.5), ("z", 1.5), ("é", 0.5)]
            .map(|(d, s)| (d.to_string(), Some(s)));
        assert_eq!(q1, expected);
        let queries: Vec<&str> = run.by_query.keys().map(QueryId::as_str).collect();
        assert_eq!(queries, ["q0", "q1"]);
    }

    #[test]
    fn score_column_is_optional_and_plays_no_part_in_the_order() {
        // The same ranking as above without its scores (issue 12).
        let (_dir, path) = temp_file(
            "run.csv",
            b"rank,doc_id,query_id
2,z,q1
1,d9,q1
2,B,q1
-3,a,q1
",
        );
        let run = read_run(&path).expect("valid without a score column");
        let expected = ["a", "d9", "B", "z"].map(|d| (d.to_string(), None));
        assert_eq!(docs(&run, "q1"), expected);
        // Written back, a run without scores is refused rather than invented.
        let err = write_run(&run, Vec::new()).expect_err("no score to write");
        assert!(err.to_string().contains(r#"query "q1" doc "a" has no score"#), "{err}");
    }

    #[test]
    fn six_column_layout_is_chosen_by_content_and_read_like_csv() {
        // The layout of the issue-15 brief: query id, an ignored column, doc
        // id, rank, score, run tag; blank lines, tabs and runs of spaces.
        let (_dir, path) = temp_file(
            "run.txt",
            b"\n401 Q0 d9 2 1.5 tagA\r\n401\tQ0\td1   1\t2.5 tagA\n\n402 Q0 7 1 -3e-1 tagA\n401 Q0 B 2 1.5 x\n",
        );
        let run = read_run(&path).expect("valid six-column run");
        let expected =
            [("d1", 2.5), ("B", 1.5), ("d9", 1.5)].map(|(d, s)| (d.to_string(), Some(s)));
        assert_eq!(docs(&run, "401"), expected);
        assert_eq!(docs(&run, "402"), [("7".to_string(), Some(-0.3))]);
        // The same run as CSV reads to the same value.
        let (_dir2, csv_path) = temp_file(
            "run.csv",
            b"query_id,doc_id,rank,score\n401,d9,2,1.5\n401,d1,1,2.5\n402,7,1,-3e-1\n401,B,2,1.5\n",
        );
        assert_eq!(read_run(&csv_path).expect("valid csv"), run);
    }

    #[test]
    fn six_column_errors_name_file_line_and_what_was_expected() {
        let msg = error_of(
            b"q1 Q0 d1 1 2.0 t\nq1 Q0 d2 x 1.0 t\nq1 Q0 d3 3 NaN t\nq1 Q0 d4 4 1.0\nq1 Q0 d1 5 0.5 t\nq1 Q0 d\xFF 6 1 t\n",
        );
        for expected in [
            r#"run.csv:2: field 4 (rank): expected an integer rank, found "x""#,
            r#"run.csv:3: field 5 (score): expected a finite number, found "NaN""#,
            r#"run.csv:4: expected 6 whitespace-separated fields (query_id ignored doc_id rank score tag), found 5: "q1 Q0 d4 4 1.0""#,
            r#"run.csv:5: query "q1": doc "d1" is listed twice (first at line 1)"#,
            "run.csv:6: expected UTF-8 text, found an invalid byte sequence at byte 8 of the line",
        ] {
            assert!(msg.contains(expected), "missing {expected:?} in {msg}");
        }
        assert_eq!(msg.lines().count(), 5, "{msg}");
    }

    #[test]
    fn unknown_layout_names_the_expected_csv_header() {
        let msg = error_of(b"\nqid docno rank\n1 d 1\n");
        assert_eq!(msg.lines().count(), 1, "{msg}");
        assert!(msg.ends_with("run.csv:2: expected a CSV header \"query_id,doc_id,rank,score\" or six whitespace-separated fields (query_id ignored doc_id rank score tag), found \"qid docno rank\""), "{msg}");
        let empty = error_of(b"");
        assert!(empty.ends_with("run.csv: expected a CSV header \"query_id,doc_id,rank,score\" or six whitespace-separated fields (query_id ignored doc_id rank score tag), found an empty file"), "{empty}");
    }

    #[test]
    fn header_only_run_is_valid_and_empty() {
        let (_dir, path) = temp_file("run.csv", b"\xEF\xBB\xBFquery_id,doc_id,rank,score\r\n");
        assert_eq!(read_run(&path).expect("valid"), Run::default());
    }

    #[test]
    fn bad_rank_and_score_values_are_each_reported() {
        let msg = error_of(
            b"query_id,doc_id,rank,score\nq,a,1.5,1\nq,b,x,1\nq,c,3,NaN\nq,d,4,inf\nq,e,5,high\nq,f,6,\n",
        );
        for expected in [
            r#"run.csv:2: column "rank": expected an integer rank, found "1.5""#,
            r#"run.csv:3: column "rank": expected an integer rank, found "x""#,
            r#"run.csv:4: column "score": expected a finite number, found "NaN""#,
            r#"run.csv:5: column "score": expected a finite number, found "inf""#,
            r#"run.csv:6: column "score": expected a finite number, found "high""#,
            r#"run.csv:7: column "score": expected a finite number, found """#,
        ] {
            assert!(msg.contains(expected), "missing {expected:?} in {msg}");
        }
        assert_eq!(msg.lines().count(), 6, "{msg}");
    }

    #[test]
    fn duplicate_doc_for_a_query_names_both_lines() {
        let msg = error_of(b"query_id,doc_id,rank,score\nq1,d1,1,3\nq2,d1,1,3\n\nq1,d1,2,2\n");
        assert_eq!(msg.lines().count(), 1, "{msg}");
        assert!(
            msg.contains(r#"run.csv:5: query "q1": doc "d1" is listed twice (first at line 2)"#),
            "{msg}"
        );
    }

    #[test]
    fn missing_rank_column_lists_the_header_found() {
        let msg = error_of(b"query_id,doc_id,score\nq1,d1,1\n");
        assert!(msg.contains(r#"run.csv:1: missing column "rank": expected a header with columns "query_id", "doc_id", "rank" (optional: "score"), found "query_id,doc_id,score""#), "{msg}");
    }

    #[test]
    fn written_run_reads_back_identically() {
        let mut run = Run::default();
        let scores = [12.375, 3.0, 0.1, 1e-7, -0.0, 2.0f64.sqrt()];
        let ranked = ["p,1", "p\"2", "p3", "π", "p 5", "p6"]
            .iter()
            .zip(scores)
            .map(|(d, s)| RankedDoc { doc: PostId::from(*d), score: Some(s) })
            .collect();
        run.by_query.insert(QueryId::from("q,2"), ranked);
        run.by_query.insert(QueryId::from("q1"), vec![]);
        let mut out = Vec::new();
        write_run(&run, &mut out).expect("written");
        let text = String::from_utf8(out).expect("utf-8");
        let (_dir, path) = temp_file("run.csv", text.as_bytes());
        let back = read_run(&path).expect("reads back");
        // A query with an empty list writes no row, so it reads back absent.
        run.by_query.remove(&QueryId::from("q1"));
        assert_eq!(back.by_query.len(), 1);
        let q: Vec<(String, Option<u64>)> = back
            .by_query
            .values()
            .flatten()
            .map(|d| (d.doc.to_string(), d.score.map(f64::to_bits)))
            .collect();
        let expected: Vec<(String, Option<u64>)> = run
            .by_query
            .values()
            .flatten()
            .map(|d| (d.doc.to_string(), d.score.map(f64::to_bits)))
            .collect();
        assert_eq!(q, expected);
        assert!(
            text.starts_with("query_id,doc_id,rank,score\n\"q,2\",\"p,1\",1,12.375\n"),
            "{text}"
        );
        assert!(text.contains("\"q,2\",p3,3,0.1\n\"q,2\",π,4,1e-7\n"), "{text}");
        assert!(text.contains(",2,3\n"), "3.0 is written as 3: {text}");
    }

    #[test]
    fn written_ranks_restart_per_query_in_byte_order() {
        let mut run = Run::default();
        for q in ["b", "a", "B"] {
            let list = ["x", "y"]
                .iter()
                .map(|d| RankedDoc { doc: PostId::from(*d), score: Some(1.0) })
                .collect();
            run.by_query.insert(QueryId::from(q), list);
        }
        let mut out = Vec::new();
        write_run(&run, &mut out).expect("written");
        let text = String::from_utf8(out).expect("utf-8");
        let expected =
            "query_id,doc_id,rank,score\nB,x,1,1\nB,y,2,1\na,x,1,1\na,y,2,1\nb,x,1,1\nb,y,2,1\n";
        assert_eq!(text, expected);
    }

    #[test]
    fn non_finite_score_is_not_written() {
        let mut run = Run::default();
        run.by_query.insert(
            QueryId::from("q"),
            vec![RankedDoc { doc: PostId::from("d"), score: Some(f64::NAN) }],
        );
        let err = write_run(&run, Vec::new()).expect_err("NaN refused");
        assert!(
            err.to_string().contains(r#"query "q" doc "d" has the non-finite score NaN"#),
            "{err}"
        );
    }

    #[test]
    fn format_shortest_picks_the_shorter_round_tripping_form() {
        let cases = [
            (3.0, "3"),
            (0.1, "0.1"),
            (12.375, "12.375"),
            (1e-7, "1e-7"),
            (1.5e300, "1.5e300"),
            (123456.0, "123456"),
            (-0.0, "-0"),
            (0.30000000000000004, "0.30000000000000004"),
        ];
        for (x, text) in cases {
            assert_eq!(format_shortest(x), text);
            assert_eq!(format_shortest(x).parse::<f64>().map(f64::to_bits), Ok(x.to_bits()));
        }
    }

    #[test]
    fn problems_beyond_the_cap_are_counted_not_listed() {
        let mut content = String::from("query_id,doc_id,rank,score\n");
        for i in 0..25 {
            content.push_str(&format!("q,d{i},first,1\n"));
        }
        let msg = error_of(content.as_bytes());
        let lines: Vec<&str> = msg.lines().collect();
        assert_eq!(lines.len(), crate::error::MAX_LISTED_PROBLEMS + 1, "{msg}");
        assert!(lines.first().is_some_and(|l| l.contains("run.csv:2: column \"rank\"")), "{msg}");
        assert!(lines.last().is_some_and(|l| l.ends_with("… and 5 more problems")), "{msg}");
    }
}
