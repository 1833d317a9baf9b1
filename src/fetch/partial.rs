//! The resumable partial file of one endpoint's fetch (`NAME.csv.partial`
//! beside the run file): JSON Lines, a first line that ties the file to the
//! template's bytes and the depth, then one line per fetched query, appended
//! as each answer arrives and written with one `write` call, so a killed
//! fetch leaves whole lines and at most a cut last line. Reading it back
//! drops that cut line (the file is truncated to its last line end), and a
//! restart sends only the queries the file does not hold.
//!
//! Scores are stored as text in the shortest form that parses back to the
//! same `f64` ([`format_shortest`]), so a resumed fetch writes the same run
//! file, byte for byte, as one that was never interrupted.

use std::collections::BTreeMap;
use std::fs::{File, OpenOptions};
use std::io::{Read, Write};
use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use crate::error::{Error, Result};
use crate::ids::{PostId, QueryId};
use crate::input::format_shortest;

/// First line of a partial file.
#[derive(Debug, Serialize, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
struct Header {
    postassay_fetch_partial: u32,
    template_sha256: String,
    depth: usize,
}

/// One fetched query.
#[derive(Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct Record {
    query_id: String,
    hits: Vec<(String, String)>,
}

/// Rankings fetched so far, by query.
pub type Fetched = BTreeMap<QueryId, Vec<(PostId, f64)>>;

/// An open partial file, appended to.
#[derive(Debug)]
pub struct Partial {
    path: PathBuf,
    file: File,
    records: usize,
}

impl Partial {
    /// Open (or start) the partial file at `path` for `template_sha256` and
    /// `depth`; returns it with the rankings it already holds. A file made
    /// with another template or depth is an error that says what to do.
    pub fn open(path: &Path, template_sha256: &str, depth: usize) -> Result<(Partial, Fetched)> {
        let io = |e| Error::io(path, e);
        let header = Header {
            postassay_fetch_partial: 1,
            template_sha256: template_sha256.to_string(),
            depth,
        };
        let mut bytes = Vec::new();
        match File::open(path) {
            Ok(mut f) => {
                f.read_to_end(&mut bytes).map_err(io)?;
            }
            Err(e) if e.kind() == std::io::ErrorKind::NotFound => {}
            Err(e) => return Err(io(e)),
        }
        // Whole lines only: a cut last line is dropped.
        let whole = bytes.iter().rposition(|&b| b == b'\n').map_or(0, |i| i + 1);
        let mut fetched = Fetched::new();
        let mut records = 0;
        let mut lines = bytes.get(..whole).unwrap_or_default().split(|&b| b == b'\n');
        let first = lines.next().filter(|l| !l.is_empty());
        let holds_records = lines.clone().any(|l| !l.is_empty());
        let has_header = match first {
            Some(first) => {
                let found: Header = serde_json::from_slice(first).map_err(|_| not_ours(path, 1))?;
                if found != header && !holds_records {
                    // Nothing fetched with the old template: start afresh.
                    false
                } else if found != header {
                    return Err(Error::in_file(
                        path,
                        format!(
                            "this partial fetch was made with another template or depth (depth \
                             {}, template SHA-256 {}…): delete it to fetch afresh, or restore \
                             the template and --depth it was made with",
                            found.depth,
                            found.template_sha256.get(..12).unwrap_or(&found.template_sha256)
                        ),
                    ));
                } else {
                    true
                }
            }
            None => false,
        };
        for (number, line) in (2u64..).zip(lines) {
            if line.is_empty() {
                continue;
            }
            let record: Record =
                serde_json::from_slice(line).map_err(|_| not_ours(path, number))?;
            let mut hits = Vec::with_capacity(record.hits.len());
            for (doc, score) in record.hits {
                let score = score.parse::<f64>().map_err(|_| not_ours(path, number))?;
                hits.push((PostId::from(doc), score));
            }
            fetched.insert(QueryId::from(record.query_id), hits);
            records += 1;
        }
        let file = OpenOptions::new().create(true).append(true).open(path).map_err(io)?;
        let keep = if has_header { whole as u64 } else { 0 };
        file.set_len(keep).map_err(io)?;
        let records = if has_header { records } else { 0 };
        let mut partial = Partial { path: path.to_path_buf(), file, records };
        if !has_header {
            let line = serde_json::to_string(&header).map_err(|e| Error::usage(e.to_string()))?;
            partial.append_line(line)?;
        }
        Ok((partial, fetched))
    }

    /// Append one query's ranking as one whole line.
    pub fn append(&mut self, query: &QueryId, hits: &[(PostId, f64)]) -> Result<()> {
        let record = Record {
            query_id: query.to_string(),
            hits: hits.iter().map(|(d, s)| (d.to_string(), format_shortest(*s))).collect(),
        };
        let line = serde_json::to_string(&record).map_err(|e| Error::usage(e.to_string()))?;
        self.append_line(line)?;
        self.records += 1;
        Ok(())
    }

    /// Queries the file holds (read back or appended).
    pub fn records(&self) -> usize {
        self.records
    }

    fn append_line(&mut self, mut line: String) -> Result<()> {
        line.push('\n');
        self.file.write_all(line.as_bytes()).map_err(|e| Error::io(&self.path, e))
    }

    /// Delete the file (once the run file is written).
    pub fn remove(self) -> Result<()> {
        drop(self.file);
        std::fs::remove_file(&self.path).map_err(|e| Error::io(&self.path, e))
    }
}

fn not_ours(path: &Path, line: u64) -> Error {
    Error::at_line(
        path,
        line,
        "expected a line of a partial fetch as postassay writes it: delete the file to fetch afresh",
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn resumes_whole_lines_and_drops_a_cut_one() {
        let dir = tempfile::tempdir().expect("temp dir");
        let path = dir.path().join("a.csv.partial");
        {
            let (mut p, fetched) = Partial::open(&path, "abc", 10).expect("new");
            assert!(fetched.is_empty());
            p.append(
                &QueryId::from("q1"),
                &[(PostId::from("d\"1"), 0.1), (PostId::from("7"), 1e-7)],
            )
            .expect("written");
            p.append(&QueryId::from("q2"), &[]).expect("written");
        }
        // A kill in the middle of a write leaves a cut line.
        let mut f = OpenOptions::new().append(true).open(&path).expect("open");
        f.write_all(b"{\"query_id\":\"q3\",\"hi").expect("cut line");
        drop(f);
        let (_p, fetched) = Partial::open(&path, "abc", 10).expect("resumed");
        let q1 = fetched.get(&QueryId::from("q1")).cloned().unwrap_or_default();
        assert_eq!(q1, [(PostId::from("d\"1"), 0.1), (PostId::from("7"), 1e-7)]);
        assert_eq!(fetched.get(&QueryId::from("q2")).map(Vec::len), Some(0));
        assert_eq!(fetched.len(), 2);
        let text = std::fs::read_to_string(&path).expect("read");
        assert!(text.ends_with("{\"query_id\":\"q2\",\"hits\":[]}\n"), "{text}");
        let err = Partial::open(&path, "abd", 10).expect_err("other template").to_string();
        assert!(
            err.contains("made with another template or depth (depth 10, template SHA-256 abc…)"),
            "{err}"
        );
        let err = Partial::open(&path, "abc", 5).expect_err("other depth").to_string();
        assert!(err.contains("another template or depth"), "{err}");
        // A file that holds no query yet is simply started again.
        let empty = dir.path().join("b.csv.partial");
        drop(Partial::open(&empty, "abc", 10).expect("new"));
        let (p, fetched) = Partial::open(&empty, "xyz", 10).expect("started again");
        assert_eq!((fetched.len(), p.records()), (0, 0));
        let text = std::fs::read_to_string(&empty).expect("read");
        assert_eq!(
            text,
            "{\"postassay_fetch_partial\":1,\"template_sha256\":\"xyz\",\"depth\":10}\n"
        );
    }
}
