//! Pooling: the (query, post) pairs that some system ranks in its top K but
//! nobody has judged, gathered into one CSV ready to judge. A side branch of
//! the data flow: it reads runs (those `run` wrote under `runs/`, or any run
//! files), the judgments, queries and corpus (input stage), and feeds
//! `postassay judge`, whose new judgments go back into the next bench run.
//! Judging the union of every compared system's top K is how test
//! collections are completed (the depth-K pool: Spärck Jones & van
//! Rijsbergen, British Library R&D report 5266, 1975; Voorhees & Harman
//! (eds.), *TREC: Experiment and Evaluation in Information Retrieval*, MIT
//! Press 2005; both from memory).
//!
//! The pool CSV has the header [`POOL_HEADER`]: `query_id,doc_id,best_rank,
//! systems,query_text,post_text`, one row per pair, ordered by query id
//! (byte order), then best rank, then post id (byte order). `best_rank` is
//! the best 1-based position of the post among the systems that retrieved it
//! (after the run's own tie-breaking); `systems` lists them, `;`-separated,
//! in system order.

use std::collections::{BTreeMap, HashMap};
use std::path::{Path, PathBuf};

use crate::error::{Error, Problems, Result};
use crate::gate::load_report;
use crate::ids::{ChainName, PostId, QueryId};
use crate::input::{Judgments, Post, Query, Run};
use crate::plural::counted;

/// The header of a pool file, in this order.
pub const POOL_HEADER: [&str; 6] =
    ["query_id", "doc_id", "best_rank", "systems", "query_text", "post_text"];

/// One unjudged pair of the pool.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct PoolEntry {
    /// The query.
    pub query: QueryId,
    /// The retrieved post.
    pub doc: PostId,
    /// Best 1-based position among the systems that retrieved it.
    pub best_rank: usize,
    /// The systems that have it in their top K, in system order.
    pub systems: Vec<ChainName>,
}

/// What one system brings to the pool.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Contribution {
    /// The system.
    pub system: ChainName,
    /// Unjudged pairs in its top K.
    pub pairs: usize,
    /// Of those, the pairs no other system has in its top K.
    pub unique: usize,
}

/// A pool: its pairs in file order and each system's contribution.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Pool {
    /// Pairs ordered by query id, best rank, post id.
    pub entries: Vec<PoolEntry>,
    /// One per system, in system order.
    pub contributions: Vec<Contribution>,
}

/// Gather the unjudged pairs of every system's top `depth`.
///
/// A pair counts as judged when the judgments hold any grade for it (0
/// included). `runs` are in system order, which orders `systems` and the
/// contributions.
pub fn build_pool(runs: &[(ChainName, &Run)], judgments: &Judgments, depth: usize) -> Pool {
    let mut pairs: BTreeMap<(QueryId, PostId), (usize, Vec<usize>)> = BTreeMap::new();
    let mut counts = vec![0usize; runs.len()];
    for (s, (_, run)) in runs.iter().enumerate() {
        for (query, ranked) in &run.by_query {
            let judged = judgments.for_query(query);
            for (i, doc) in ranked.iter().take(depth).enumerate() {
                if judged.is_some_and(|j| j.contains_key(&doc.doc)) {
                    continue;
                }
                let entry = pairs
                    .entry((query.clone(), doc.doc.clone()))
                    .or_insert_with(|| (usize::MAX, Vec::new()));
                entry.0 = entry.0.min(i + 1);
                // A run lists a post once per query (the run reader
                // enforces it), so a system is pushed once per pair.
                if entry.1.last() != Some(&s) {
                    entry.1.push(s);
                    if let Some(c) = counts.get_mut(s) {
                        *c += 1;
                    }
                }
            }
        }
    }
    let mut unique = vec![0usize; runs.len()];
    let mut entries: Vec<PoolEntry> = pairs
        .into_iter()
        .map(|((query, doc), (best_rank, systems))| {
            if let [only] = systems.as_slice() {
                if let Some(u) = unique.get_mut(*only) {
                    *u += 1;
                }
            }
            let systems =
                systems.iter().filter_map(|&s| runs.get(s).map(|(n, _)| n.clone())).collect();
            PoolEntry { query, doc, best_rank, systems }
        })
        .collect();
    entries.sort_by(|a, b| (&a.query, a.best_rank, &a.doc).cmp(&(&b.query, b.best_rank, &b.doc)));
    let contributions = runs
        .iter()
        .zip(counts.iter().zip(&unique))
        .map(|((name, _), (&pairs, &unique))| Contribution { system: name.clone(), pairs, unique })
        .collect();
    Pool { entries, contributions }
}

/// Write a pool as CSV ([`POOL_HEADER`]), with the query and post texts
/// looked up in `queries` and `posts` (empty when missing). Returns warnings
/// naming pooled queries or posts that have no text.
pub fn write_pool<W: std::io::Write>(
    pool: &Pool,
    queries: &[Query],
    posts: &[Post],
    out: W,
) -> Result<Vec<String>> {
    let query_text: HashMap<&QueryId, &str> =
        queries.iter().map(|q| (&q.id, q.text.as_str())).collect();
    let post_text: HashMap<&PostId, &str> =
        posts.iter().map(|p| (&p.id, p.text.as_str())).collect();
    let mut writer =
        csv::WriterBuilder::new().terminator(csv::Terminator::Any(b'\n')).from_writer(out);
    let io = |e: csv::Error| Error::usage(format!("writing the pool: {e}"));
    writer.write_record(POOL_HEADER).map_err(io)?;
    let mut missing_queries: Vec<&str> = Vec::new();
    let mut missing_posts = 0usize;
    for e in &pool.entries {
        let q = query_text.get(&e.query).copied().unwrap_or_else(|| {
            if missing_queries.last() != Some(&e.query.as_str()) {
                missing_queries.push(e.query.as_str());
            }
            ""
        });
        let p = post_text.get(&e.doc).copied().unwrap_or_else(|| {
            missing_posts += 1;
            ""
        });
        let systems: Vec<&str> = e.systems.iter().map(ChainName::as_str).collect();
        let rank = e.best_rank.to_string();
        writer
            .write_record([e.query.as_str(), e.doc.as_str(), &rank, &systems.join(";"), q, p])
            .map_err(io)?;
    }
    writer.flush().map_err(|e| Error::usage(format!("writing the pool: {e}")))?;
    let mut warnings = Vec::new();
    if !missing_queries.is_empty() {
        warnings.push(format!(
            "{} not in the query file ({} text is left empty): {}",
            counted(missing_queries.len(), "pooled query is", "pooled queries are"),
            if missing_queries.len() == 1 { "its" } else { "their" },
            abbreviate(&missing_queries)
        ));
    }
    if missing_posts > 0 {
        warnings.push(format!(
            "{} not in the corpus ({} text is left empty)",
            counted(missing_posts, "pooled post is", "pooled posts are"),
            if missing_posts == 1 { "its" } else { "their" }
        ));
    }
    Ok(warnings)
}

fn abbreviate(items: &[&str]) -> String {
    const SHOWN: usize = 10;
    let shown: Vec<&str> = items.iter().take(SHOWN).copied().collect();
    if items.len() > SHOWN {
        format!("{}, … ({} more)", shown.join(", "), items.len() - SHOWN)
    } else {
        shown.join(", ")
    }
}

/// Where a pool's inputs are, as found in a report directory.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct PoolSources {
    /// Each system's run file, in the report's system order.
    pub runs: Vec<(ChainName, PathBuf)>,
    /// The corpus the report was built on, if it names one.
    pub corpus: Option<PathBuf>,
    /// The queries, if the report names them.
    pub queries: Option<PathBuf>,
    /// The judgments the report was scored with.
    pub judgments: Option<PathBuf>,
}

/// Find a report's runs and inputs: `runs/NAME.csv` for each system (what
/// `run` writes), else the `run:NAME` input (what `score` records), and the
/// `corpus`, `queries` and `judgments` inputs. Input paths are as recorded,
/// that is relative to the directory the report was made in.
pub fn sources_from_report(dir: &Path) -> Result<PoolSources> {
    let loaded = load_report(dir)?;
    let report = &loaded.report;
    let base = loaded.path.parent().map_or_else(PathBuf::new, Path::to_path_buf);
    let input =
        |role: &str| report.inputs.iter().find(|i| i.role == role).map(|i| PathBuf::from(&i.path));
    let mut runs = Vec::new();
    for system in &report.systems {
        let written = base.join("runs").join(format!("{}.csv", system.name));
        let path = if written.is_file() {
            written
        } else if let Some(p) = input(&format!("run:{}", system.name)) {
            p
        } else {
            return Err(Error::in_file(
                &loaded.path,
                format!(
                    "system {} has no run: expected {} or a \"run:{}\" input",
                    system.name,
                    written.display(),
                    system.name
                ),
            ));
        };
        runs.push((system.name.clone(), path));
    }
    Ok(PoolSources {
        runs,
        corpus: input("corpus"),
        queries: input("queries"),
        judgments: input("judgments"),
    })
}

/// One row of a pool file, as read back by `judge`.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct PoolItem {
    /// Physical line of the row (the header is line 1).
    pub line: u64,
    /// The query.
    pub query: QueryId,
    /// The post.
    pub doc: PostId,
    /// Best rank, when the file has the column (empty otherwise).
    pub best_rank: String,
    /// Systems, when the file has the column.
    pub systems: String,
    /// The query's text, when the file has it.
    pub query_text: String,
    /// The post's text, when the file has it.
    pub post_text: String,
}

/// Read a pool file: CSV located by header name, `query_id` and `doc_id`
/// required, the other [`POOL_HEADER`] columns optional. Every bad line is
/// listed.
pub fn read_pool(path: &Path) -> Result<Vec<PoolItem>> {
    let file = std::fs::File::open(path).map_err(|e| Error::io(path, e))?;
    let mut reader = csv::ReaderBuilder::new().flexible(true).from_reader(file);
    let wrap = |e: csv::Error| {
        let line = e.position().map_or(1, csv::Position::line);
        let message = format!("CSV error: {e}");
        match e.into_kind() {
            csv::ErrorKind::Io(io) => Error::io(path, io),
            _ => Error::at_line(path, line, message),
        }
    };
    let header: Vec<String> = reader
        .headers()
        .map_err(wrap)?
        .iter()
        .map(|h| h.trim_start_matches('\u{feff}').trim().to_string())
        .collect();
    let find = |name: &str| header.iter().position(|h| h == name);
    let (Some(q_col), Some(d_col)) = (find("query_id"), find("doc_id")) else {
        return Err(Error::at_line(
            path,
            1,
            format!(
                "expected a pool header with columns \"query_id\", \"doc_id\" (as `postassay \
                 pool` writes: {}), found {:?}",
                POOL_HEADER.join(","),
                header.join(",")
            ),
        ));
    };
    let optional = [find("best_rank"), find("systems"), find("query_text"), find("post_text")];
    let mut problems = Problems::new(path);
    let mut items = Vec::new();
    for record in reader.records() {
        let record = record.map_err(wrap)?;
        let line = record.position().map_or(0, csv::Position::line);
        if record.len() != header.len() {
            problems.push(
                line,
                format!(
                    "expected {} fields as in the header, found {}",
                    header.len(),
                    record.len()
                ),
            );
            continue;
        }
        let get = |c: Option<usize>| c.and_then(|c| record.get(c)).unwrap_or("").to_string();
        let (query, doc) = (get(Some(q_col)), get(Some(d_col)));
        if query.trim().is_empty() || doc.trim().is_empty() {
            problems.push(line, "expected non-empty query_id and doc_id");
            continue;
        }
        let [rank, systems, query_text, post_text] = optional.map(get);
        items.push(PoolItem {
            line,
            query: QueryId::from(query.trim()),
            doc: PostId::from(doc.trim()),
            best_rank: rank,
            systems,
            query_text,
            post_text,
        });
    }
    problems.finish(items)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::input::RankedDoc;

    fn run(rows: &[(&str, &[&str])]) -> Run {
        Run {
            by_query: rows
                .iter()
                .map(|(q, docs)| {
                    let ranked = docs
                        .iter()
                        .map(|d| RankedDoc { doc: PostId::from(*d), score: Some(1.0) })
                        .collect();
                    (QueryId::from(*q), ranked)
                })
                .collect(),
        }
    }

    #[test]
    fn pool_dedups_orders_and_counts() {
        // q1: a = d1 d2 d3, b = d3 d4 d1; d1 judged. q0: only b retrieves d9.
        let a = run(&[("q1", &["d1", "d2", "d3", "d7"])]);
        let b = run(&[("q1", &["d3", "d4", "d1"]), ("q0", &["d9"])]);
        let j = Judgments::from_triples([("q1", "d1", 0)]);
        let runs = [(ChainName::from("a"), &a), (ChainName::from("b"), &b)];
        let pool = build_pool(&runs, &j, 3);
        let got: Vec<(&str, &str, usize, usize)> = pool
            .entries
            .iter()
            .map(|e| (e.query.as_str(), e.doc.as_str(), e.best_rank, e.systems.len()))
            .collect();
        // d7 is at rank 4 of a, below the depth of 3.
        assert_eq!(
            got,
            [("q0", "d9", 1, 1), ("q1", "d3", 1, 2), ("q1", "d2", 2, 1), ("q1", "d4", 2, 1)]
        );
        let c: Vec<(usize, usize)> =
            pool.contributions.iter().map(|c| (c.pairs, c.unique)).collect();
        // a: d2, d3 (d2 only from a); b: d3, d4, d9 (d4, d9 only from b).
        assert_eq!(c, [(2, 1), (3, 2)]);
    }

    #[test]
    fn pool_csv_quotes_texts_and_reads_back() {
        let a = run(&[("q1", &["d2", "d1"])]);
        let pool = build_pool(&[(ChainName::from("a"), &a)], &Judgments::default(), 10);
        let queries = vec![Query {
            id: QueryId::from("q1"),
            text: "Fähre, spät".to_string(),
            lang: None,
            tags: vec![],
        }];
        let posts = vec![Post {
            id: PostId::from("d2"),
            text: "line one\n\"quoted\" 🚢".to_string(),
            lang: None,
        }];
        let mut bytes = Vec::new();
        let warnings = write_pool(&pool, &queries, &posts, &mut bytes).unwrap();
        assert_eq!(warnings, ["1 pooled post is not in the corpus (its text is left empty)"]);
        let text = String::from_utf8(bytes).unwrap();
        assert_eq!(
            text,
            "query_id,doc_id,best_rank,systems,query_text,post_text\n\
             q1,d2,1,a,\"Fähre, spät\",\"line one\n\"\"quoted\"\" 🚢\"\n\
             q1,d1,2,a,\"Fähre, spät\",\n"
        );
        let f = tempfile::NamedTempFile::new().unwrap();
        std::fs::write(f.path(), &text).unwrap();
        let items = read_pool(f.path()).unwrap();
        assert_eq!(items.len(), 2);
        assert_eq!(items[0].post_text, "line one\n\"quoted\" 🚢");
        assert_eq!((items[1].line, items[1].doc.as_str()), (4, "d1"));
    }

    #[test]
    fn pool_reader_names_bad_lines() {
        let f = tempfile::NamedTempFile::new().unwrap();
        std::fs::write(f.path(), "query_id,doc_id\nq1,d1\n,d2\nq2\n").unwrap();
        let msg = read_pool(f.path()).unwrap_err().to_string();
        assert!(msg.contains(":3: expected non-empty query_id and doc_id"), "{msg}");
        assert!(msg.contains(":4: expected 2 fields as in the header, found 1"), "{msg}");
        std::fs::write(f.path(), "q,d\n").unwrap();
        let msg = read_pool(f.path()).unwrap_err().to_string();
        assert!(msg.contains(":1: expected a pool header"), "{msg}");
    }
}
