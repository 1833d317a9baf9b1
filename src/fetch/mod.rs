//! `fetch`: send every query of a query file to a live search endpoint and
//! turn the answers into a run that `score` and `gate` take. It sits with
//! the input stage (it produces a run, as a run file would) and stands in for
//! the search stage of `run`: the endpoint searches, postassay judges.
//!
//! One endpoint (a candidate: one index or field in the user's cluster) is
//! described by a request [`template`]; [`fetch_endpoint`] sends its
//! requests from a bounded pool of threads through [`http::Client`]
//! (time limit, retries), takes each ranking out of the answer
//! ([`hits::take_ranking`]), appends it to the [`partial::Partial`] file at
//! once, and when every query is in, writes the run file in the run layout
//! (queries in byte order, ranks 1..n in answer order) through the writer
//! it is given (the CLI passes the report stage's atomic write), then
//! deletes the partial file. The output depends neither on the number of
//! threads nor on the order answers arrive in.

pub mod hits;
pub mod http;
pub mod partial;
pub mod template;

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
use std::sync::mpsc;
use std::time::{Duration, Instant};

use crate::error::{Error, Result};
use crate::ids::{ChainName, PostId, QueryId};
use crate::input::{write_run, Query, RankedDoc, Run};

pub use http::{RetryCause, RetrySettings};
pub use template::{read_template, Template};

/// One candidate: a name (its run file is `NAME.csv`) and its template.
#[derive(Debug, Clone)]
pub struct Endpoint {
    /// The candidate's name.
    pub name: ChainName,
    /// How to ask it.
    pub template: Template,
}

/// Settings of a fetch.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FetchSettings {
    /// Hits kept per query (also the `{depth}` placeholder).
    pub depth: usize,
    /// Requests in flight at once (threads).
    pub parallel: usize,
    /// Time limits and retries.
    pub retry: RetrySettings,
}

/// What a fetch reports while it works (the CLI prints it; a progress bar
/// can draw it).
#[derive(Debug, Clone, PartialEq)]
pub enum FetchEvent<'a> {
    /// An endpoint starts: `resumed` of `total` queries are already in its
    /// partial file.
    Started {
        /// The candidate.
        endpoint: &'a ChainName,
        /// Queries of the query file.
        total: usize,
        /// Queries found in the partial file.
        resumed: usize,
    },
    /// One more query is in (`done` counts the resumed ones too).
    Fetched {
        /// The candidate.
        endpoint: &'a ChainName,
        /// Queries in so far.
        done: usize,
        /// Queries of the query file.
        total: usize,
    },
    /// A request is tried again after `wait`.
    Retrying {
        /// The candidate.
        endpoint: &'a ChainName,
        /// The query.
        query: &'a QueryId,
        /// Why.
        cause: RetryCause,
        /// The failure in words.
        detail: &'a str,
        /// The wait before the next try.
        wait: Duration,
    },
}

/// Latency percentiles of the successful requests (nearest-rank method).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Latency {
    /// Median.
    pub p50: Duration,
    /// 90th percentile.
    pub p90: Duration,
    /// 99th percentile.
    pub p99: Duration,
    /// Slowest.
    pub max: Duration,
}

/// How one endpoint's fetch went.
#[derive(Debug, Clone, PartialEq)]
pub struct FetchSummary {
    /// The candidate.
    pub endpoint: ChainName,
    /// The run file written.
    pub run_file: PathBuf,
    /// Queries of the query file.
    pub queries: usize,
    /// Queries taken from the partial file instead of the endpoint.
    pub resumed: usize,
    /// Requests that succeeded in this invocation.
    pub fetched: usize,
    /// Ranked posts written.
    pub hits: usize,
    /// Posts that came back twice for one query (repeats dropped).
    pub repeats: usize,
    /// Retries by cause.
    pub retries: BTreeMap<RetryCause, usize>,
    /// Latency of the successful requests (all zero when none was sent).
    pub latency: Latency,
    /// Wall time of this endpoint's fetch.
    pub wall: Duration,
}

/// Messages from the worker threads.
enum Message {
    Done { index: usize, hits: Vec<(PostId, f64)>, repeats: usize, latency: Duration },
    Retry { index: usize, cause: RetryCause, detail: String, wait: Duration },
    Failed { index: usize, message: String },
}

/// The partial file of the run file `run_file`.
pub fn partial_path(run_file: &Path) -> PathBuf {
    let mut name = run_file.file_name().map(|n| n.to_os_string()).unwrap_or_default();
    name.push(".partial");
    run_file.with_file_name(name)
}

/// Fetch every query from one endpoint into `out_dir/NAME.csv` (resuming
/// from `NAME.csv.partial` when present). `write_file` writes the run file
/// (atomically, in the CLI). A failure keeps the partial file and names the
/// query.
pub fn fetch_endpoint(
    endpoint: &Endpoint,
    queries: &[Query],
    settings: &FetchSettings,
    out_dir: &Path,
    write_file: &dyn Fn(&Path, &[u8]) -> Result<()>,
    progress: &mut dyn FnMut(FetchEvent<'_>),
) -> Result<FetchSummary> {
    let start = Instant::now();
    std::fs::create_dir_all(out_dir).map_err(|e| Error::io(out_dir, e))?;
    let run_file = out_dir.join(format!("{}.csv", endpoint.name.as_str()));
    let partial_file = partial_path(&run_file);
    let (mut partial, mut fetched) =
        partial::Partial::open(&partial_file, &endpoint.template.sha256, settings.depth)?;
    let wanted: std::collections::BTreeSet<&QueryId> = queries.iter().map(|q| &q.id).collect();
    fetched.retain(|q, _| wanted.contains(q));
    let todo: Vec<&Query> = queries.iter().filter(|q| !fetched.contains_key(&q.id)).collect();
    let total = queries.len();
    let resumed = total - todo.len();
    progress(FetchEvent::Started { endpoint: &endpoint.name, total, resumed });

    let client = http::Client::new(settings.retry);
    let next = AtomicUsize::new(0);
    let stop = AtomicBool::new(false);
    let (tx, rx) = mpsc::channel::<Message>();
    let mut latencies = Vec::new();
    let mut retries: BTreeMap<RetryCause, usize> = BTreeMap::new();
    let mut repeats = 0;
    let mut failure: Option<String> = None;
    let mut write_failure: Option<Error> = None;
    let template = &endpoint.template;
    std::thread::scope(|scope| {
        for _ in 0..settings.parallel.clamp(1, todo.len().max(1)) {
            let tx = tx.clone();
            let (client, next, stop, todo) = (&client, &next, &stop, &todo);
            scope.spawn(move || {
                while !stop.load(Ordering::SeqCst) {
                    let index = next.fetch_add(1, Ordering::SeqCst);
                    let Some(query) = todo.get(index) else { break };
                    let request = template.fill(query, settings.depth);
                    let mut on_retry = |cause, detail: &str, wait| {
                        let detail = detail.to_string();
                        let _ = tx.send(Message::Retry { index, cause, detail, wait });
                    };
                    let message = match client.send(template, &request, &mut on_retry) {
                        Ok(answer) => {
                            match hits::take_ranking(
                                &answer.body,
                                &template.response,
                                settings.depth,
                            ) {
                                Ok(r) => Message::Done {
                                    index,
                                    hits: r.hits,
                                    repeats: r.repeats,
                                    latency: answer.latency,
                                },
                                Err(m) => Message::Failed {
                                    index,
                                    message: format!(
                                        "the answer does not match the template: {m}; answer: {}",
                                        hits::excerpt(&answer.body)
                                    ),
                                },
                            }
                        }
                        Err(message) => Message::Failed { index, message },
                    };
                    if tx.send(message).is_err() {
                        break;
                    }
                }
            });
        }
        drop(tx);
        let mut done = resumed;
        for message in rx {
            match message {
                Message::Done { index, hits, repeats: r, latency } => {
                    let Some(query) = todo.get(index) else { continue };
                    if let Err(e) = partial.append(&query.id, &hits) {
                        stop.store(true, Ordering::SeqCst);
                        write_failure.get_or_insert(e);
                        continue;
                    }
                    repeats += r;
                    latencies.push(latency);
                    fetched.insert(query.id.clone(), hits);
                    done += 1;
                    progress(FetchEvent::Fetched { endpoint: &endpoint.name, done, total });
                }
                Message::Retry { index, cause, detail, wait } => {
                    *retries.entry(cause).or_default() += 1;
                    if let Some(query) = todo.get(index) {
                        progress(FetchEvent::Retrying {
                            endpoint: &endpoint.name,
                            query: &query.id,
                            cause,
                            detail: &detail,
                            wait,
                        });
                    }
                }
                Message::Failed { index, message } => {
                    stop.store(true, Ordering::SeqCst);
                    let query = todo.get(index).map_or("?", |q| q.id.as_str());
                    failure.get_or_insert_with(|| {
                        format!(
                            "endpoint {} ({}): query {query:?}: {message}",
                            endpoint.name.as_str(),
                            template.path.display(),
                        )
                    });
                }
            }
        }
    });
    if let Some(e) = write_failure {
        return Err(e);
    }
    if let Some(message) = failure {
        // A partial file that holds no query is no use to a restart.
        if partial.records() == 0 {
            partial.remove()?;
            return Err(Error::remote(message));
        }
        return Err(Error::remote(format!(
            "{message}\n(kept in {}: {} fetched so far; run the same command again to fetch \
             the rest)",
            partial_file.display(),
            crate::plural::counted(partial.records(), "query", "queries")
        )));
    }
    let mut run = Run::default();
    let mut hit_count = 0;
    for (query, hits) in fetched {
        hit_count += hits.len();
        let docs = hits.into_iter().map(|(doc, s)| RankedDoc { doc, score: Some(s) }).collect();
        run.by_query.insert(query, docs);
    }
    let mut bytes = Vec::new();
    write_run(&run, &mut bytes)?;
    write_file(&run_file, &bytes)?;
    partial.remove()?;
    Ok(FetchSummary {
        endpoint: endpoint.name.clone(),
        run_file,
        queries: total,
        resumed,
        fetched: latencies.len(),
        hits: hit_count,
        repeats,
        retries,
        latency: latency_percentiles(&mut latencies),
        wall: start.elapsed(),
    })
}

/// Nearest-rank percentiles (the smallest value with at least p % of the
/// values at or below it).
fn latency_percentiles(values: &mut [Duration]) -> Latency {
    values.sort_unstable();
    let at = |p: usize| {
        let rank = (p * values.len()).div_ceil(100).max(1);
        values.get(rank - 1).copied().unwrap_or_default()
    };
    Latency {
        p50: at(50),
        p90: at(90),
        p99: at(99),
        max: values.last().copied().unwrap_or_default(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn nearest_rank_percentiles() {
        // Nearest-rank definition, rank = ceil(p/100 · n) (from memory):
        // n = 10, p = 90 → rank 9; p = 99 → rank 10.
        let mut v: Vec<Duration> = (1..=10).rev().map(Duration::from_millis).collect();
        let l = latency_percentiles(&mut v);
        assert_eq!(
            (l.p50, l.p90, l.p99, l.max),
            (
                Duration::from_millis(5),
                Duration::from_millis(9),
                Duration::from_millis(10),
                Duration::from_millis(10)
            )
        );
        assert_eq!(latency_percentiles(&mut []), Latency::default());
    }

    #[test]
    fn partial_sits_beside_the_run_file() {
        assert_eq!(partial_path(Path::new("out/a.b.csv")), Path::new("out/a.b.csv.partial"));
    }
}
