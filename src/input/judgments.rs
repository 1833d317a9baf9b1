//! Graded relevance judgments: `query_id,doc_id,grade` CSV or the
//! whitespace-separated four-column layout of public test collections
//! (`query_id iteration doc_id grade`). Input stage: the eval stage scores
//! every run against these.
//!
//! The layout is chosen by content, as formats.md says: if the first
//! non-blank line has a comma-separated field `query_id` (quotes and spaces
//! around it ignored) the file is CSV, located by header name; otherwise four
//! fields separated by runs of spaces or tabs on that line mean the
//! four-column layout (every non-blank line must then have four fields; the
//! second is ignored; blank lines are skipped); anything else is one error
//! naming the expected CSV header. A grade is a non-negative integer written
//! with ASCII digits only (`+1`, `1.5`, `-1` are rejected). Ids are trimmed.

use std::collections::BTreeMap;
use std::path::Path;

use crate::error::{Problems, Result};
use crate::ids::{PostId, QueryId};
use crate::input::text::{
    check_id, choose_layout, in_column, quoted, read_columns, CsvTable, Layout,
};

/// What a file must start with, for the message when it does not.
const EXPECTED_LAYOUT: &str = "expected a CSV header \"query_id,doc_id,grade\" or four \
     whitespace-separated fields (query_id iteration doc_id grade)";

/// Graded judgments, by query then post. Grades are non-negative integers.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct Judgments {
    by_query: BTreeMap<QueryId, BTreeMap<PostId, u32>>,
    count: usize,
}

impl Judgments {
    /// Build judgments from `(query, post, grade)` triples; a later triple for
    /// the same pair replaces an earlier one (readers reject conflicts before
    /// calling this).
    pub fn from_triples<I, Q, P>(triples: I) -> Judgments
    where
        I: IntoIterator<Item = (Q, P, u32)>,
        Q: Into<QueryId>,
        P: Into<PostId>,
    {
        let mut by_query: BTreeMap<QueryId, BTreeMap<PostId, u32>> = BTreeMap::new();
        for (q, p, g) in triples {
            by_query.entry(q.into()).or_default().insert(p.into(), g);
        }
        let count = by_query.values().map(BTreeMap::len).sum();
        Judgments { by_query, count }
    }

    /// The judged posts of one query with their grades, if the query is judged.
    pub fn for_query(&self, query: &QueryId) -> Option<&BTreeMap<PostId, u32>> {
        self.by_query.get(query)
    }

    /// Judged queries in byte order of their ids.
    pub fn queries(&self) -> impl Iterator<Item = (&QueryId, &BTreeMap<PostId, u32>)> {
        self.by_query.iter()
    }

    /// Number of judged (query, post) pairs.
    pub fn len(&self) -> usize {
        self.count
    }

    /// True when there is no judgment at all.
    pub fn is_empty(&self) -> bool {
        self.count == 0
    }

    /// The highest grade in the whole file (0 when empty); ERR's default gmax.
    pub fn max_grade(&self) -> u32 {
        self.by_query.values().flat_map(|m| m.values().copied()).max().unwrap_or(0)
    }
}

/// Read a judgments file; returns the judgments and warnings (duplicate pairs
/// with the same grade), each warning a full line `path:line: message`.
pub fn read_judgments(path: &Path) -> Result<(Judgments, Vec<String>)> {
    read_with(path, false)
}

/// [`read_judgments`], except that a file with a header and no judgment
/// gives none instead of an error (a judgments file `judge` is about to
/// fill). Everything else is read and checked the same way.
pub fn read_judgments_or_none(path: &Path) -> Result<(Judgments, Vec<String>)> {
    read_with(path, true)
}

fn read_with(path: &Path, none_allowed: bool) -> Result<(Judgments, Vec<String>)> {
    let mut pairs = Pairs::new(path);
    pairs.none_allowed = none_allowed;
    match choose_layout(path, 4, EXPECTED_LAYOUT)? {
        Layout::Csv => read_csv(path, &mut pairs)?,
        Layout::Columns => read_four_columns(path, &mut pairs)?,
    }
    pairs.finish()
}

/// Where the columns of a CSV judgments file are.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct CsvColumns {
    /// Columns the header names.
    pub width: usize,
    /// Position of `query_id`.
    pub query: usize,
    /// Position of `doc_id`.
    pub doc: usize,
    /// Position of `grade`.
    pub grade: usize,
    /// The field separator (`,`, or what a first line `sep=X` declares).
    pub separator: u8,
}

/// How a judgments file is laid out.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum JudgmentsLayout {
    /// CSV, with its header's columns.
    Csv(CsvColumns),
    /// The whitespace-separated four-column layout.
    FourColumns,
}

/// The layout of the judgments file `path` as [`read_judgments`] sees it:
/// chosen by content the same way, and for CSV the header read by the same
/// parser, with the same errors (encoding, separator line, quotes, line
/// ends, repeated or missing columns). A program that appends judgment
/// lines (`judge`) asks here, so that what it writes is what the reader
/// reads.
pub fn judgments_layout(path: &Path) -> Result<JudgmentsLayout> {
    Ok(match choose_layout(path, 4, EXPECTED_LAYOUT)? {
        Layout::Csv => JudgmentsLayout::Csv(open_csv(path)?.1),
        Layout::Columns => JudgmentsLayout::FourColumns,
    })
}

/// Open a CSV judgments file and find its three columns.
fn open_csv(path: &Path) -> Result<(CsvTable, CsvColumns)> {
    let table = CsvTable::open(path, "query_id,doc_id,grade")?;
    let ([query, doc, grade], []) = table.columns(["query_id", "doc_id", "grade"], [])?;
    let columns =
        CsvColumns { width: table.width(), query, doc, grade, separator: table.separator() };
    Ok((table, columns))
}

fn read_csv(path: &Path, pairs: &mut Pairs) -> Result<()> {
    let (mut table, CsvColumns { query: q_col, doc: d_col, grade: g_col, .. }) = open_csv(path)?;
    while let Some(row) = table.next_row(&mut pairs.problems)? {
        let query = check_id(row.get(q_col)).map_err(|m| in_column("query_id", &m));
        let doc = check_id(row.get(d_col)).map_err(|m| in_column("doc_id", &m));
        let grade = parse_grade(row.get(g_col)).map_err(|m| in_column("grade", &m));
        pairs.add(row.line, query, doc, grade);
    }
    Ok(())
}

fn read_four_columns(path: &Path, pairs: &mut Pairs) -> Result<()> {
    read_columns(path, &["query_id", "iteration", "doc_id", "grade"], |line, fields| match fields {
        Ok([query, _iteration, doc, grade]) => {
            let grade = parse_grade(grade).map_err(|m| format!("field 4 (grade): {m}"));
            pairs.add(line, Ok(query), Ok(doc), grade);
        }
        Ok(_) => {}
        Err(message) => pairs.problems.push(line, message),
    })
}

/// A grade: ASCII digits only, fitting a `u32` (surrounding whitespace ignored).
fn parse_grade(raw: &str) -> std::result::Result<u32, String> {
    let digits = raw.trim();
    if !digits.is_empty() && digits.bytes().all(|b| b.is_ascii_digit()) {
        if let Ok(grade) = digits.parse::<u32>() {
            return Ok(grade);
        }
        return Err(format!(
            "expected a non-negative integer grade up to {}, found {}",
            u32::MAX,
            quoted(raw)
        ));
    }
    Err(format!("expected a non-negative integer grade, found {}", quoted(raw)))
}

/// Judged pairs with the line of their first occurrence, plus the problems
/// and warnings found so far.
struct Pairs {
    path: std::path::PathBuf,
    seen: BTreeMap<(QueryId, PostId), (u32, u64)>,
    problems: Problems,
    warnings: Vec<String>,
    /// A file without any judgment is not an error.
    none_allowed: bool,
}

impl Pairs {
    fn new(path: &Path) -> Pairs {
        Pairs {
            path: path.to_path_buf(),
            seen: BTreeMap::new(),
            problems: Problems::new(path),
            warnings: Vec::new(),
            none_allowed: false,
        }
    }

    /// Record one judgment line; each `Err` is a message for that line.
    fn add(
        &mut self,
        line: u64,
        query: std::result::Result<&str, String>,
        doc: std::result::Result<&str, String>,
        grade: std::result::Result<u32, String>,
    ) {
        for message in
            [query.as_ref().err(), doc.as_ref().err(), grade.as_ref().err()].into_iter().flatten()
        {
            self.problems.push(line, message.clone());
        }
        let (Ok(query), Ok(doc), Ok(grade)) = (query, doc, grade) else { return };
        let key = (QueryId::from(query), PostId::from(doc));
        match self.seen.get(&key) {
            None => {
                self.seen.insert(key, (grade, line));
            }
            Some(&(first, first_line)) if first == grade => self.warnings.push(format!(
                "{}:{line}: query {query:?} doc {doc:?} is judged again with the same grade \
                 {grade} (first at line {first_line}); the repeat is ignored",
                self.path.display()
            )),
            Some(&(first, first_line)) => self.problems.push(
                line,
                format!(
                    "query {query:?} doc {doc:?}: grade {grade} conflicts with grade {first} \
                     at line {first_line}"
                ),
            ),
        }
    }

    fn finish(mut self) -> Result<(Judgments, Vec<String>)> {
        if self.problems.is_empty() && self.seen.is_empty() && !self.none_allowed {
            self.problems.push_file("expected at least one judgment, found none");
        }
        let triples = self.seen.into_iter().map(|((q, d), (g, _))| (q, d, g));
        let judgments = Judgments::from_triples(triples);
        self.problems.finish((judgments, self.warnings))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::input::text::testutil::{cranfield_counts, cranfield_dir, temp_file};

    fn read(content: &[u8]) -> (Judgments, Vec<String>) {
        let (_dir, path) = temp_file("qrels.txt", content);
        read_judgments(&path).expect("valid")
    }

    fn error_of(content: &[u8]) -> String {
        let (_dir, path) = temp_file("qrels.txt", content);
        read_judgments(&path).expect_err("should be rejected").to_string()
    }

    fn triples(j: &Judgments) -> Vec<(String, String, u32)> {
        j.queries()
            .flat_map(|(q, docs)| docs.iter().map(move |(d, g)| (q.to_string(), d.to_string(), *g)))
            .collect()
    }

    fn t(q: &str, d: &str, g: u32) -> (String, String, u32) {
        (q.to_string(), d.to_string(), g)
    }

    #[test]
    fn csv_layout_by_header_name_with_bom_and_crlf() {
        let (j, warnings) = read(
            b"\xEF\xBB\xBFgrade,doc_id,note,query_id\r\n2,d1,x,q1\r\n0,d2,,q1\r\n1,7,y,q10\r\n",
        );
        assert_eq!(triples(&j), [t("q1", "d1", 2), t("q1", "d2", 0), t("q10", "7", 1)]);
        assert_eq!((j.len(), j.max_grade()), (3, 2));
        assert!(warnings.is_empty());
    }

    #[test]
    fn four_column_layout_with_blank_lines_tabs_and_runs_of_spaces() {
        let (j, warnings) = read(b"\n1 0 184 2\n1\t0\t29   3\r\n\n  2  Q0 12 0\n");
        assert_eq!(triples(&j), [t("1", "184", 2), t("1", "29", 3), t("2", "12", 0)]);
        assert!(warnings.is_empty());
    }

    #[test]
    fn same_pair_same_grade_is_a_warning_naming_both_lines() {
        let (j, warnings) = read(b"query_id,doc_id,grade\nq1,d1,2\nq1,d2,1\nq1,d1,2\n");
        assert_eq!(j.len(), 2);
        assert_eq!(warnings.len(), 1);
        let w = warnings.first().map(String::as_str).unwrap_or("");
        assert!(w.contains("qrels.txt:4: query \"q1\" doc \"d1\" is judged again with the same grade 2 (first at line 2)"), "{w}");
    }

    #[test]
    fn same_pair_different_grade_is_an_error_naming_both_lines() {
        let msg = error_of(b"q1 0 d1 2\nq1 0 d2 1\n\nq1 0 d1 0\n");
        assert_eq!(msg.lines().count(), 1, "{msg}");
        assert!(
            msg.contains(
                r#"qrels.txt:4: query "q1" doc "d1": grade 0 conflicts with grade 2 at line 1"#
            ),
            "{msg}"
        );
    }

    #[test]
    fn bad_grades_are_each_reported_with_what_was_found() {
        let msg = error_of(
            b"query_id,doc_id,grade\nq,a,-1\nq,b,1.5\nq,c,x\nq,d,\nq,e,+1\nq,f,99999999999\n",
        );
        for expected in [
            r#"qrels.txt:2: column "grade": expected a non-negative integer grade, found "-1""#,
            r#"qrels.txt:3: column "grade": expected a non-negative integer grade, found "1.5""#,
            r#"qrels.txt:4: column "grade": expected a non-negative integer grade, found "x""#,
            r#"qrels.txt:5: column "grade": expected a non-negative integer grade, found """#,
            r#"qrels.txt:6: column "grade": expected a non-negative integer grade, found "+1""#,
            r#"qrels.txt:7: column "grade": expected a non-negative integer grade up to 4294967295, found "99999999999""#,
        ] {
            assert!(msg.contains(expected), "missing {expected:?} in {msg}");
        }
    }

    #[test]
    fn four_column_bad_grade_and_wrong_field_count() {
        let msg = error_of(b"q1 0 d1 1\nq1 0 d2 -1\nq1 0 d3\nq1 0 d4 1 extra\n");
        assert!(
            msg.contains(
                r#"qrels.txt:2: field 4 (grade): expected a non-negative integer grade, found "-1""#
            ),
            "{msg}"
        );
        assert!(msg.contains(r#"qrels.txt:3: expected 4 whitespace-separated fields (query_id iteration doc_id grade), found 3: "q1 0 d3""#), "{msg}");
        assert!(msg.contains("qrels.txt:4: expected 4 whitespace-separated fields (query_id iteration doc_id grade), found 5"), "{msg}");
    }

    #[test]
    fn unknown_layout_names_the_expected_csv_header() {
        let msg = error_of(b"\n\nqid,docno,rel\n1,2,3\n");
        assert_eq!(msg.lines().count(), 1, "{msg}");
        assert!(msg.ends_with("qrels.txt:3: expected a CSV header \"query_id,doc_id,grade\" or four whitespace-separated fields (query_id iteration doc_id grade), found \"qid,docno,rel\""), "{msg}");
    }

    #[test]
    fn csv_header_missing_grade_is_one_error_at_line_1() {
        let msg = error_of(b"query_id,doc_id,relevance\nq1,d1,1\n");
        assert!(msg.contains(r#"qrels.txt:1: missing column "grade": expected a header with columns "query_id", "doc_id", "grade", found "query_id,doc_id,relevance""#), "{msg}");
    }

    #[test]
    fn no_judgments_is_an_error() {
        let header_only = error_of(b"query_id,doc_id,grade\r\n");
        assert!(
            header_only.contains("qrels.txt: expected at least one judgment, found none"),
            "{header_only}"
        );
        let empty = error_of(b" \n\n");
        assert!(empty.contains("qrels.txt: expected a CSV header \"query_id,doc_id,grade\" or four whitespace-separated fields (query_id iteration doc_id grade), found an empty file"), "{empty}");
    }

    #[test]
    fn invalid_utf8_is_reported_with_its_line() {
        let msg = error_of(b"q1 0 d1 1\nq1 0 d\xFF2 1\n");
        assert!(msg.contains("qrels.txt:2: expected UTF-8 text, found an invalid byte sequence at byte 7 of the line"), "{msg}");
    }

    #[test]
    fn cranfield_qrels_in_both_layouts() {
        let Some(dir) = cranfield_dir() else { return };
        // Expected counts: scripts/cranfield_input_counts.py (Python csv module).
        let counts = cranfield_counts();
        let (j, warnings) = read_judgments(&dir.join("qrels.csv")).expect("valid");
        assert!(warnings.is_empty());
        assert_eq!(Some(j.len() as u64), counts["judged_pairs"].as_u64());
        assert_eq!(Some(j.queries().count() as u64), counts["judged_queries"].as_u64());
        assert_eq!(Some(u64::from(j.max_grade())), counts["max_grade"].as_u64());
        let mut per_grade = BTreeMap::new();
        for (_, docs) in j.queries() {
            for g in docs.values() {
                *per_grade.entry(g.to_string()).or_insert(0u64) += 1;
            }
        }
        let expected: BTreeMap<String, u64> = counts["grade_counts"]
            .as_object()
            .map(|m| m.iter().filter_map(|(k, v)| Some((k.clone(), v.as_u64()?))).collect())
            .unwrap_or_default();
        assert_eq!(per_grade, expected);
        // The same judgments in the four-column layout read back identically.
        let four: String =
            triples(&j).iter().map(|(q, d, g)| format!("{q}\t0  {d} {g}\n")).collect();
        let (_tmp, path) = temp_file("cranqrel", four.as_bytes());
        let (j4, _) = read_judgments(&path).expect("valid four-column");
        assert_eq!(j4, j);
    }
}
