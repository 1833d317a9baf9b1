//! The corpus of posts: JSON Lines or CSV with `id` and `text` (optional
//! `lang`). Input stage: every chain indexes these posts.
//!
//! The layout is chosen by content, never by file name: when the first
//! non-blank byte (after a BOM) is `{` the file is JSON Lines, otherwise
//! CSV located by header name. The byte is looked at before any text is
//! decoded, so a JSON Lines file whose first line is not UTF-8 is still read
//! as JSON Lines and that line reported as not UTF-8. The file is streamed line by line (record by
//! record), so only the posts themselves are held in memory.
//!
//! JSON Lines: one object per line; lines holding only whitespace are skipped.
//! `id` is a string or an integer (`7` is the id `"7"`); an integer of any
//! size is kept as its literal digits (JSON puts no limit on integers, and
//! serde_json would turn one beyond 64 bits into a float), read from the
//! raw JSON text of the field; a float (`1.0`, `1e3`), boolean, array,
//! object or `null` id is an error. `text` must be a string; it may be
//! empty (Cranfield has two empty abstracts), and it is kept exactly. `lang`
//! is optional: absent, `null` or `""` mean "not declared"; otherwise an ISO
//! 639-1 code. Other fields are allowed and unused.
//!
//! Both layouts: ids are trimmed of surrounding whitespace and must be
//! unique (a duplicate is an error naming both lines); a file without any
//! post is an error. No length limit applies to a post (formats.md).

use std::collections::HashMap;
use std::path::Path;

use serde::Deserialize;
use serde_json::value::RawValue;
use serde_json::Value;

use crate::error::{Problems, Result};
use crate::ids::PostId;
use crate::input::text::{
    check_id, check_lang, first_non_blank_byte, in_column, quoted, utf8_message, CsvTable, Lines,
};
use crate::input::LangCode;

/// One post of the corpus.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Post {
    /// Unique id.
    pub id: PostId,
    /// The post's text.
    pub text: String,
    /// The language the post declares, if any.
    pub lang: Option<LangCode>,
}

/// Read and validate a corpus file (JSON Lines or CSV, see the module docs),
/// listing every bad line.
pub fn read_corpus(path: &Path) -> Result<Vec<Post>> {
    read_corpus_metered(path, &|_| {})
}

/// [`read_corpus`], telling `meter` every few thousand posts how many bytes
/// of the file it has read (for a progress bar).
pub fn read_corpus_metered(path: &Path, meter: &dyn Fn(u64)) -> Result<Vec<Post>> {
    let is_jsonl = match first_non_blank_byte(path)? {
        None => {
            return Err(crate::Error::in_file(
                path,
                "expected JSON Lines posts or a CSV header with columns \"id\" and \"text\", \
                 found an empty file",
            ))
        }
        Some(byte) => byte == b'{',
    };
    let mut posts =
        Collector { problems: Problems::new(path), first_line: HashMap::new(), posts: Vec::new() };
    if is_jsonl {
        read_jsonl(path, &mut posts, meter)?;
    } else {
        read_csv(path, &mut posts, meter)?;
    }
    posts.finish()
}

/// Posts read so far, the line of each id, and the problems found.
struct Collector {
    problems: Problems,
    first_line: HashMap<String, u64>,
    posts: Vec<Post>,
}

impl Collector {
    /// Keep a post unless its id was seen before (then record the duplicate).
    /// Once a problem is recorded the posts are no longer kept: the result
    /// will be an error.
    fn add(&mut self, line: u64, id: &str, text: String, lang: Option<LangCode>) {
        if let Some(first) = self.first_line.get(id) {
            self.problems.push(line, format!("duplicate id {id:?} (first at line {first})"));
            return;
        }
        self.first_line.insert(id.to_string(), line);
        if self.problems.is_empty() {
            self.posts.push(Post { id: PostId::from(id), text, lang });
        }
    }

    fn finish(mut self) -> Result<Vec<Post>> {
        if self.problems.is_empty() && self.posts.is_empty() {
            self.problems.push_file("expected at least one post, found none");
        }
        self.problems.finish(self.posts)
    }
}

/// Records between two calls of a reader's meter.
const METER_EVERY: u64 = 4096;

fn read_csv(path: &Path, posts: &mut Collector, meter: &dyn Fn(u64)) -> Result<()> {
    let mut table = CsvTable::open(path, "id,text")?;
    let ([id_col, text_col], [lang_col]) =
        table.columns(["id", "text"], ["lang"]).map_err(|e| with_layout_hint(path, e))?;
    let mut records = 0u64;
    while let Some(row) = table.next_row(&mut posts.problems)? {
        records += 1;
        if records.is_multiple_of(METER_EVERY) {
            meter(table.bytes_read());
        }
        let id = check_id(row.get(id_col))
            .map_err(|m| posts.problems.push(row.line, in_column("id", &m)))
            .ok();
        let lang = check_lang(row.get_opt(lang_col))
            .map_err(|m| posts.problems.push(row.line, in_column("lang", &m)))
            .ok();
        if let (Some(id), Some(lang)) = (id, lang) {
            posts.add(row.line, id, row.get(text_col).to_string(), lang);
        }
    }
    Ok(())
}

/// A CSV header problem in a corpus may as well be a JSON Lines file that
/// does not start with `{`; say which layouts are accepted.
fn with_layout_hint(path: &Path, err: crate::Error) -> crate::Error {
    match err.kind() {
        crate::ErrorKind::Input { problems, .. } => {
            let mut out = Problems::new(path);
            for p in problems {
                let message = format!(
                    "{} (a corpus is JSON Lines, first character `{{`, or CSV with columns \
                     \"id\" and \"text\")",
                    p.message
                );
                match p.line {
                    Some(line) => out.push(line, message),
                    None => out.push_file(message),
                }
            }
            match out.finish(()) {
                Err(e) => e,
                Ok(()) => err,
            }
        }
        _ => err,
    }
}

/// The fields of one JSON line that matter; other fields are skipped
/// without being stored. The id is kept as raw JSON text so an integer's
/// digits survive whatever its size.
#[derive(Deserialize)]
struct RawPost<'a> {
    #[serde(default, borrow)]
    id: RawField<'a>,
    #[serde(default)]
    text: Field,
    #[serde(default)]
    lang: Field,
}

/// A JSON field that tells "absent" (`None`) from "present, maybe null".
#[derive(Default)]
struct Field(Option<Value>);

impl<'de> Deserialize<'de> for Field {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> std::result::Result<Self, D::Error> {
        Value::deserialize(d).map(|v| Field(Some(v)))
    }
}

/// A JSON field kept as its raw text (borrowed from the line), `None` when
/// absent.
#[derive(Default)]
struct RawField<'a>(Option<&'a RawValue>);

impl<'de: 'a, 'a> Deserialize<'de> for RawField<'a> {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> std::result::Result<Self, D::Error> {
        <&RawValue>::deserialize(d).map(|v| RawField(Some(v)))
    }
}

fn read_jsonl(path: &Path, posts: &mut Collector, meter: &dyn Fn(u64)) -> Result<()> {
    let mut lines = Lines::open(path)?;
    let mut read = 0u64;
    loop {
        if read.is_multiple_of(METER_EVERY) {
            meter(lines.bytes_read());
        }
        read += 1;
        let Some(line) = lines.next_line()? else { break };
        let number = line.number;
        let text = match line.text {
            Ok(text) if text.trim().is_empty() => continue,
            Ok(text) => text,
            Err(e) => {
                posts.problems.push(number, utf8_message(e, "the line"));
                continue;
            }
        };
        match parse_json_post(text) {
            Ok((id, body, lang)) => posts.add(number, &id, body, lang),
            Err(messages) => {
                for m in messages {
                    posts.problems.push(number, m);
                }
            }
        }
    }
    Ok(())
}

/// Parse one JSON line into (id, text, lang), or every problem of the line.
fn parse_json_post(
    line: &str,
) -> std::result::Result<(String, String, Option<LangCode>), Vec<String>> {
    let trimmed = line.trim_start();
    if !trimmed.starts_with('{') {
        return Err(vec![format!(
            "expected a JSON object with \"id\" and \"text\", found {}",
            quoted(line.trim())
        )]);
    }
    let raw: RawPost = serde_json::from_str(line).map_err(|e| vec![json_message(&e)])?;
    let mut problems = Vec::new();
    let id = json_id(raw.id.0).map_err(|m| problems.push(json_field("id", &m))).ok();
    let text = match raw.text.0 {
        Some(Value::String(s)) => Some(s),
        None => {
            problems.push(json_field("text", "expected a string, found no such field"));
            None
        }
        Some(other) => {
            problems.push(json_field(
                "text",
                &format!("expected a string, found {}", describe(&other)),
            ));
            None
        }
    };
    let lang = match raw.lang.0 {
        None | Some(Value::Null) => Some(None),
        Some(Value::String(s)) => {
            check_lang(&s).map_err(|m| problems.push(json_field("lang", &m))).ok()
        }
        Some(other) => {
            let m = format!("expected an ISO 639-1 code, found {}", describe(&other));
            problems.push(json_field("lang", &m));
            None
        }
    };
    match (id, text, lang) {
        (Some(id), Some(text), Some(lang)) if problems.is_empty() => Ok((id, text, lang)),
        _ => Err(problems),
    }
}

/// The id of a JSON post, from the field's raw JSON text: a string
/// (trimmed, non-empty) or an integer, kept as its literal digits.
fn json_id(raw: Option<&RawValue>) -> std::result::Result<String, String> {
    const EXPECTED: &str = "expected a string or an integer";
    let Some(raw) = raw else { return Err(format!("{EXPECTED}, found no such field")) };
    let text = raw.get();
    if is_json_integer(text) {
        return Ok(text.to_string());
    }
    // The line parsed, so the raw text is one valid JSON value.
    match serde_json::from_str::<Value>(text) {
        Ok(Value::String(s)) => check_id(&s).map(str::to_string),
        // A float as written (`1e3`, not serde_json's `1000.0`).
        Ok(Value::Number(_)) => Err(format!("{EXPECTED}, found the number {text}")),
        Ok(other) => Err(format!("{EXPECTED}, found {}", describe(&other))),
        Err(e) => Err(format!("{EXPECTED}, found {} ({e})", quoted(text))),
    }
}

/// True when `text` is a JSON number without fraction or exponent
/// (RFC 8259 section 6: `-`? then `0` or a digit 1-9 followed by digits).
fn is_json_integer(text: &str) -> bool {
    let digits = text.strip_prefix('-').unwrap_or(text);
    match digits.as_bytes() {
        [b'0'] => true,
        [b'1'..=b'9', rest @ ..] => rest.iter().all(u8::is_ascii_digit),
        _ => false,
    }
}

/// The message prefix naming a JSON field.
fn json_field(field: &str, message: &str) -> String {
    format!("field {field:?}: {message}")
}

/// A JSON value described for a message.
fn describe(value: &Value) -> String {
    match value {
        Value::Null => "null".to_string(),
        Value::Bool(b) => format!("the boolean {b}"),
        Value::Number(n) => format!("the number {n}"),
        Value::String(s) => quoted(s),
        Value::Array(_) => "an array".to_string(),
        Value::Object(_) => "an object".to_string(),
    }
}

/// serde_json's message with its "at line 1 column N" turned into our form
/// (the line is ours; the column is the character position in the line).
fn json_message(err: &serde_json::Error) -> String {
    let text = err.to_string();
    let suffix = format!(" at line {} column {}", err.line(), err.column());
    let bare = text.strip_suffix(&suffix).unwrap_or(&text);
    format!("invalid JSON at column {}: {bare}", err.column())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::input::text::testutil::{cranfield_counts, cranfield_dir, temp_file};

    fn read(name: &str, content: &[u8]) -> Vec<Post> {
        let (_dir, path) = temp_file(name, content);
        read_corpus(&path).expect("valid")
    }

    fn error_of(content: &[u8]) -> String {
        let (_dir, path) = temp_file("posts.jsonl", content);
        read_corpus(&path).expect_err("should be rejected").to_string()
    }

    fn post(id: &str, text: &str, lang: Option<&str>) -> Post {
        Post { id: PostId::from(id), text: text.to_string(), lang: lang.and_then(LangCode::parse) }
    }

    #[test]
    fn jsonl_with_integer_ids_bom_crlf_blank_lines_and_extra_fields() {
        let posts = read(
            "posts.txt",
            "\u{feff}{\"id\": 7, \"text\": \"Grüße aus Köln 🎉 #FeierAbend\", \"lang\": \"de\", \"likes\": [1, 2]}\r\n\
             \r\n   \n\
             {\"text\": \"@ana ¿vienes?\", \"id\": \" es-1 \", \"lang\": null, \"user\": {\"n\": 1}}\r\n\
             {\"id\": -3, \"text\": \"\", \"lang\": \"\"}"
                .as_bytes(),
        );
        assert_eq!(
            posts,
            [
                post("7", "Grüße aus Köln 🎉 #FeierAbend", Some("de")),
                post("es-1", "@ana ¿vienes?", None),
                post("-3", "", None),
            ]
        );
    }

    #[test]
    fn csv_corpus_by_header_name_with_multi_line_text() {
        let posts = read(
            "posts.jsonl",
            "lang,text,id,source\nel,\"Καλημέρα\nκόσμε\",g1,x\n,\"say \"\"hi\"\"\",2,y\n"
                .as_bytes(),
        );
        assert_eq!(
            posts,
            [post("g1", "Καλημέρα\nκόσμε", Some("el")), post("2", "say \"hi\"", None)]
        );
    }

    #[test]
    fn integer_id_equals_string_id_so_both_are_a_duplicate() {
        let msg = error_of(b"{\"id\": \"7\", \"text\": \"a\"}\n{\"id\": 8, \"text\": \"b\"}\n{\"id\": 7, \"text\": \"c\"}\n");
        assert_eq!(msg.lines().count(), 1, "{msg}");
        assert!(msg.contains(r#"posts.jsonl:3: duplicate id "7" (first at line 1)"#), "{msg}");
    }

    #[test]
    fn ids_of_other_json_types_are_errors() {
        let msg = error_of(
            b"{\"id\": 7.5, \"text\": \"a\"}\n{\"id\": [1], \"text\": \"a\"}\n{\"id\": {}, \"text\": \"a\"}\n\
              {\"id\": true, \"text\": \"a\"}\n{\"id\": null, \"text\": \"a\"}\n{\"text\": \"a\"}\n{\"id\": \" \", \"text\": \"a\"}\n",
        );
        for expected in [
            r#"posts.jsonl:1: field "id": expected a string or an integer, found the number 7.5"#,
            r#"posts.jsonl:2: field "id": expected a string or an integer, found an array"#,
            r#"posts.jsonl:3: field "id": expected a string or an integer, found an object"#,
            r#"posts.jsonl:4: field "id": expected a string or an integer, found the boolean true"#,
            r#"posts.jsonl:5: field "id": expected a string or an integer, found null"#,
            r#"posts.jsonl:6: field "id": expected a string or an integer, found no such field"#,
            r#"posts.jsonl:7: field "id": expected a non-empty id, found " ""#,
        ] {
            assert!(msg.contains(expected), "missing {expected:?} in {msg}");
        }
        assert_eq!(msg.lines().count(), 7, "{msg}");
    }

    #[test]
    fn integer_ids_beyond_64_bits_keep_their_digits() {
        // 2^64 = 18446744073709551616 (u64::MAX + 1) and 10^29 + … are
        // beyond u64 and i64; JSON (RFC 8259 section 6) puts no limit on
        // integers, so the literal digits are the id.
        let posts = read(
            "posts.jsonl",
            b"{\"id\":123456789012345678901234567890,\"text\":\"a\"}\n\
              {\"id\": -98765432109876543210987654321 , \"text\": \"b\"}\n\
              {\"id\": 18446744073709551616, \"text\": \"c\"}\n{\"id\": 0, \"text\": \"d\"}\n",
        );
        let ids: Vec<&str> = posts.iter().map(|p| p.id.as_str()).collect();
        assert_eq!(
            ids,
            [
                "123456789012345678901234567890",
                "-98765432109876543210987654321",
                "18446744073709551616",
                "0"
            ]
        );
        // Still the same id as the string of its digits (formats.md).
        let msg = error_of(
            b"{\"id\": \"123456789012345678901234567890\", \"text\": \"a\"}\n\
              {\"id\": 123456789012345678901234567890, \"text\": \"b\"}\n",
        );
        assert!(
            msg.contains(
                r#"posts.jsonl:2: duplicate id "123456789012345678901234567890" (first at line 1)"#
            ),
            "{msg}"
        );
    }

    #[test]
    fn float_ids_are_refused_as_written() {
        let msg = error_of(
            b"{\"id\": 1.0, \"text\": \"a\"}\n{\"id\": 1e3, \"text\": \"a\"}\n\
              {\"id\": 123456789012345678901234567890.5, \"text\": \"a\"}\n{\"id\": -2E-1, \"text\": \"a\"}\n",
        );
        for expected in [
            r#"posts.jsonl:1: field "id": expected a string or an integer, found the number 1.0"#,
            r#"posts.jsonl:2: field "id": expected a string or an integer, found the number 1e3"#,
            r#"posts.jsonl:3: field "id": expected a string or an integer, found the number 123456789012345678901234567890.5"#,
            r#"posts.jsonl:4: field "id": expected a string or an integer, found the number -2E-1"#,
        ] {
            assert!(msg.contains(expected), "missing {expected:?} in {msg}");
        }
        assert_eq!(msg.lines().count(), 4, "{msg}");
    }

    #[test]
    fn json_integer_grammar() {
        // RFC 8259 section 6: int = zero / ( digit1-9 *DIGIT ), minus optional.
        for yes in ["0", "-0", "7", "-3", "10", "123456789012345678901234567890"] {
            assert!(is_json_integer(yes), "{yes}");
        }
        for no in ["", "-", "01", "1.0", "1e3", "+1", "1 ", "\"7\"", "0x1"] {
            assert!(!is_json_integer(no), "{no}");
        }
    }

    #[test]
    fn jsonl_with_a_latin1_first_line_is_reported_as_not_utf8() {
        // "café" in Latin-1: é is the single byte 0xE9, byte 23 of the line
        // (`{"id": 1, "text": "caf` is 22 bytes, hand-counted).
        let (_dir, path) = temp_file(
            "lat1.jsonl",
            b"{\"id\": 1, \"text\": \"caf\xE9\"}\n{\"id\": 2, \"text\": \"ok\"}\n",
        );
        let msg = read_corpus(&path).expect_err("not UTF-8").to_string();
        assert!(
            msg.ends_with("lat1.jsonl:1: expected UTF-8 text, found an invalid byte sequence at byte 23 of the line (a Latin-1 or Windows-1252 file? save it as UTF-8)"),
            "{msg}"
        );
        assert_eq!(msg.lines().count(), 1, "{msg}");
    }

    #[test]
    fn text_and_lang_problems_are_reported_per_field() {
        let msg = error_of(
            b"{\"id\": 1, \"text\": 5}\n{\"id\": 2}\n{\"id\": 3, \"text\": \"a\", \"lang\": \"deu-CH\"}\n\
              {\"id\": 4, \"text\": null, \"lang\": 1}\n",
        );
        for expected in [
            r#"posts.jsonl:1: field "text": expected a string, found the number 5"#,
            r#"posts.jsonl:2: field "text": expected a string, found no such field"#,
            r#"posts.jsonl:3: field "lang": expected an ISO 639-1 code, found "deu-CH""#,
            r#"posts.jsonl:4: field "text": expected a string, found null"#,
            r#"posts.jsonl:4: field "lang": expected an ISO 639-1 code, found the number 1"#,
        ] {
            assert!(msg.contains(expected), "missing {expected:?} in {msg}");
        }
    }

    #[test]
    fn malformed_json_and_non_object_lines() {
        let msg = error_of(b"{\"id\": 1, \"text\": \"a\"}\n{\"id\": 2, \"text\": \"b\"\n[1, 2]\n{\"id\": 4, \"text\": \"d\"} x\n");
        assert!(
            msg.contains("posts.jsonl:2: invalid JSON at column 21: EOF while parsing an object"),
            "{msg}"
        );
        assert!(
            msg.contains(
                r#"posts.jsonl:3: expected a JSON object with "id" and "text", found "[1, 2]""#
            ),
            "{msg}"
        );
        assert!(
            msg.contains("posts.jsonl:4: invalid JSON at column 24: trailing characters"),
            "{msg}"
        );
    }

    #[test]
    fn invalid_utf8_line_is_reported() {
        let msg = error_of(b"{\"id\": 1, \"text\": \"ok\"}\n{\"id\": 2, \"text\": \"caf\xE9\"}\n");
        assert!(msg.contains("posts.jsonl:2: expected UTF-8 text, found an invalid byte sequence at byte 23 of the line"), "{msg}");
    }

    #[test]
    fn csv_without_id_column_hints_at_both_layouts() {
        let msg = error_of(b"post,text\n1,a\n");
        assert!(msg.contains(r#"posts.jsonl:1: missing column "id": expected a header with columns "id", "text" (optional: "lang"), found "post,text" (a corpus is JSON Lines, first character `{`, or CSV with columns "id" and "text")"#), "{msg}");
    }

    #[test]
    fn csv_duplicate_and_bad_lang() {
        let msg = error_of(b"id,text,lang\na,x,en\nb,y,english\n\"a\",z,\n");
        assert!(
            msg.contains(
                r#"posts.jsonl:3: column "lang": expected an ISO 639-1 code, found "english""#
            ),
            "{msg}"
        );
        assert!(msg.contains(r#"posts.jsonl:4: duplicate id "a" (first at line 2)"#), "{msg}");
    }

    #[test]
    fn empty_corpus_is_an_error() {
        let blank = error_of(b"\n \r\n");
        assert!(blank.contains(r#"posts.jsonl: expected JSON Lines posts or a CSV header with columns "id" and "text", found an empty file"#), "{blank}");
        assert!(
            error_of(b"id,text\n").contains("posts.jsonl: expected at least one post, found none")
        );
    }

    #[test]
    fn cranfield_docs_jsonl() {
        let Some(dir) = cranfield_dir() else { return };
        // Expected values: scripts/cranfield_input_counts.py (Python json module).
        let counts = cranfield_counts();
        let posts = read_corpus(&dir.join("docs.jsonl")).expect("valid");
        assert_eq!(Some(posts.len() as u64), counts["docs"].as_u64());
        let empty: Vec<&str> =
            posts.iter().filter(|p| p.text.is_empty()).map(|p| p.id.as_str()).collect();
        let expected: Vec<&str> = counts["empty_docs"]
            .as_array()
            .map(|a| a.iter().filter_map(Value::as_str).collect())
            .unwrap_or_default();
        assert_eq!(empty, expected);
        let chars: usize = posts.iter().map(|p| p.text.chars().count()).sum();
        assert_eq!(Some(chars as u64), counts["docs_text_chars"].as_u64());
    }
}
