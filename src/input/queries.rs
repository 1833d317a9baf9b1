//! The query set: CSV with columns `query_id` and `text`, optional `lang`
//! (ISO 639-1) and `tags` (`;`-separated labels for breakdowns). Input stage:
//! the search stage runs these against every chain's index.
//!
//! Choices the spec leaves open: ids are trimmed of surrounding whitespace
//! (as in every reader); the text is kept as written but must hold something
//! other than whitespace; an empty `lang` cell means "not declared"; tags are
//! trimmed, empty labels dropped and repeats within one query dropped (a query
//! counted twice in a breakdown would skew it). A file with no query is an
//! error. File order is kept.

use std::collections::HashMap;
use std::path::Path;

use crate::error::{Problems, Result};
use crate::ids::QueryId;
use crate::input::text::{check_id, check_lang, in_column, CsvTable};
use crate::input::LangCode;

/// One query.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Query {
    /// Unique id.
    pub id: QueryId,
    /// The query text as a user would type it.
    pub text: String,
    /// Declared language, if any.
    pub lang: Option<LangCode>,
    /// Labels for breakdowns, in file order.
    pub tags: Vec<String>,
}

/// Read and validate a queries file, listing every bad line.
pub fn read_queries(path: &Path) -> Result<Vec<Query>> {
    let mut table = CsvTable::open(path, "query_id,text")?;
    let ([id_col, text_col], [lang_col, tags_col]) =
        table.columns(["query_id", "text"], ["lang", "tags"])?;
    let mut problems = Problems::new(path);
    let mut first_line: HashMap<String, u64> = HashMap::new();
    let mut queries = Vec::new();
    while let Some(row) = table.next_row(&mut problems)? {
        let id = match check_id(row.get(id_col)) {
            Ok(id) => Some(id),
            Err(msg) => {
                problems.push(row.line, in_column("query_id", &msg));
                None
            }
        };
        if let Some(id) = id {
            if let Some(first) = first_line.get(id) {
                problems
                    .push(row.line, format!("duplicate query id {id:?} (first at line {first})"));
            } else {
                first_line.insert(id.to_string(), row.line);
            }
        }
        let text = row.get(text_col);
        if text.trim().is_empty() {
            problems.push(
                row.line,
                in_column("text", "expected a non-empty query text, found an empty value"),
            );
        }
        let lang = check_lang(row.get_opt(lang_col))
            .map_err(|msg| problems.push(row.line, in_column("lang", &msg)))
            .ok()
            .flatten();
        if let Some(id) = id.filter(|_| problems.is_empty()) {
            queries.push(Query {
                id: QueryId::from(id),
                text: text.to_string(),
                lang,
                tags: split_tags(row.get_opt(tags_col)),
            });
        }
    }
    if problems.is_empty() && queries.is_empty() {
        problems.push_file("expected at least one query after the header, found none");
    }
    problems.finish(queries)
}

/// Split a `tags` cell on `;`, trimming labels and dropping empty and
/// repeated ones (first occurrence kept).
fn split_tags(cell: &str) -> Vec<String> {
    let mut tags: Vec<String> = Vec::new();
    for tag in cell.split(';').map(str::trim).filter(|t| !t.is_empty()) {
        if !tags.iter().any(|t| t == tag) {
            tags.push(tag.to_string());
        }
    }
    tags
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::input::text::testutil::{cranfield_counts, cranfield_dir, temp_file};

    fn error_of(content: &[u8]) -> String {
        let (_dir, path) = temp_file("queries.csv", content);
        read_queries(&path).expect_err("should be rejected").to_string()
    }

    #[test]
    fn reads_columns_by_name_with_optional_lang_and_tags() {
        let (_dir, path) = temp_file(
            "queries.csv",
            "tags,extra,text,lang,query_id\n\
             \" hashtag ; ;emoji;hashtag\",x,Café #ÜberRaschung 🎉,de,q2\n\
             ,y,привет мир,,q1\n"
                .as_bytes(),
        );
        let queries = read_queries(&path).expect("valid");
        assert_eq!(
            queries,
            vec![
                Query {
                    id: QueryId::from("q2"),
                    text: "Café #ÜberRaschung 🎉".to_string(),
                    lang: LangCode::parse("de"),
                    tags: vec!["hashtag".to_string(), "emoji".to_string()],
                },
                Query {
                    id: QueryId::from("q1"),
                    text: "привет мир".to_string(),
                    lang: None,
                    tags: vec![],
                },
            ]
        );
    }

    #[test]
    fn accepts_bom_crlf_and_multi_line_text() {
        let (_dir, path) = temp_file(
            "queries.csv",
            b"\xEF\xBB\xBFquery_id,text\r\nq1,\"two\r\nlines\"\r\nq2,b\r\n",
        );
        let queries = read_queries(&path).expect("valid");
        let ids: Vec<&str> = queries.iter().map(|q| q.id.as_str()).collect();
        assert_eq!(ids, ["q1", "q2"]);
        assert_eq!(queries.first().map(|q| q.text.as_str()), Some("two\r\nlines"));
    }

    #[test]
    fn bad_lang_names_file_line_column_and_value() {
        let msg = error_of(b"query_id,text,lang\nq1,a,en\nq2,b,deu-CH\nq3,c,EN\n");
        assert!(
            msg.contains(
                r#"queries.csv:3: column "lang": expected an ISO 639-1 code, found "deu-CH""#
            ),
            "{msg}"
        );
        assert!(msg.contains(r#"queries.csv:4: column "lang": expected an ISO 639-1 code, found "EN" (codes are lower case: "en")"#), "{msg}");
    }

    #[test]
    fn duplicate_query_id_names_both_lines() {
        let msg = error_of(b"query_id,text\nq1,a\nq2,b\n q1 ,c\n");
        assert_eq!(msg.lines().count(), 1, "{msg}");
        assert!(
            msg.contains(r#"queries.csv:4: duplicate query id "q1" (first at line 2)"#),
            "{msg}"
        );
    }

    #[test]
    fn empty_text_and_empty_id_are_errors() {
        let msg = error_of(b"query_id,text\nq1,  \n,b\n");
        assert!(
            msg.contains(r#"queries.csv:2: column "text": expected a non-empty query text, found an empty value"#),
            "{msg}"
        );
        assert!(
            msg.contains(r#"queries.csv:3: column "query_id": expected a non-empty id, found """#),
            "{msg}"
        );
    }

    #[test]
    fn missing_column_is_one_error_at_line_1_listing_the_header() {
        let msg = error_of(b"id,text,lang\nq1,a,en\n");
        assert_eq!(
            msg.lines().collect::<Vec<_>>().len(),
            1,
            "only the header problem is reported: {msg}"
        );
        assert!(msg.contains(r#"queries.csv:1: missing column "query_id": expected a header with columns "query_id", "text" (optional: "lang", "tags"), found "id,text,lang""#), "{msg}");
    }

    #[test]
    fn wrong_field_count_is_reported_at_the_record_start() {
        let msg = error_of(b"query_id,text\nq1,\"a\nb\",extra\nq2\n");
        assert!(
            msg.contains("queries.csv:2: expected 2 fields as in the header, found 3"),
            "{msg}"
        );
        assert!(
            msg.contains("queries.csv:4: expected 2 fields as in the header, found 1"),
            "{msg}"
        );
    }

    #[test]
    fn invalid_utf8_names_line_and_column() {
        let msg = error_of(b"query_id,text\nq1,ok\nq2,caf\xE9\n");
        assert!(msg.contains(r#"queries.csv:3: column "text": expected UTF-8 text, found an invalid byte sequence at byte 4 of the field"#), "{msg}");
    }

    #[test]
    fn header_only_and_empty_files_are_errors() {
        let msg = error_of(b"query_id,text\n");
        assert!(
            msg.contains("queries.csv: expected at least one query after the header, found none"),
            "{msg}"
        );
        let msg = error_of(b"");
        assert!(
            msg.contains(
                r#"queries.csv: expected a CSV header "query_id,text", found an empty file"#
            ),
            "{msg}"
        );
    }

    #[test]
    fn every_bad_line_is_listed() {
        let msg = error_of(b"query_id,text,lang\nq1,a,xx\nq2,b,yy\nq3,c,zz\n");
        let lines: Vec<&str> = msg.lines().collect();
        assert_eq!(lines.len(), 3, "{msg}");
        assert!(
            lines.iter().zip(2..).all(|(l, n)| l.contains(&format!("queries.csv:{n}:"))),
            "{msg}"
        );
    }

    #[test]
    fn missing_file_is_an_io_error() {
        let dir = tempfile::tempdir().expect("temp dir");
        let path = dir.path().join("absent.csv");
        let err = read_queries(&path).expect_err("no file");
        assert!(matches!(err.kind(), crate::error::ErrorKind::Io { .. }));
        assert!(err.to_string().contains("absent.csv"));
    }

    #[test]
    fn cranfield_queries() {
        let Some(dir) = cranfield_dir() else { return };
        // Expected values: scripts/cranfield_input_counts.py (Python csv module).
        let counts = cranfield_counts();
        let queries = read_queries(&dir.join("queries.csv")).expect("valid");
        assert_eq!(Some(queries.len() as u64), counts["queries"].as_u64());
        let first = queries.first().map(|q| (q.id.as_str(), q.text.as_str()));
        assert_eq!(first, Some(("1", counts["first_query"][1].as_str().unwrap_or("?"))));
        assert_eq!(queries.last().map(|q| q.id.as_str()), counts["last_query_id"].as_str());
        assert!(queries.iter().all(|q| q.lang.is_none() && q.tags.is_empty()));
    }
}
