//! `postassay fetch`: send every query to one or more live search endpoints
//! (one request template per candidate) and write one run file per
//! candidate for `score` and `gate`. Flags → checked templates and queries →
//! `fetch::fetch_endpoint` per candidate; progress and the closing summary
//! go to stderr through a small callback.

use std::path::PathBuf;
use std::process::ExitCode;
use std::time::{Duration, Instant};

use clap::Args;

use postassay::error::Error;
use postassay::fetch::{self, Endpoint, FetchEvent, FetchSettings, FetchSummary, RetrySettings};
use postassay::input::read_queries;
use postassay::output::write_atomic;

use postassay::plural::counted;
use postassay::progress::{Mode, Progress, Step};

use super::common::{check_file_flag, named_files};

/// Least time between two progress lines of one candidate.
const PROGRESS_EVERY: Duration = Duration::from_secs(2);

#[derive(Debug, Args)]
pub struct FetchArgs {
    /// Queries: CSV `query_id,text[,lang][,tags]`.
    #[arg(long, value_name = "FILE")]
    queries: PathBuf,
    /// A candidate, `NAME=TEMPLATE` (a TOML request template); repeat for
    /// each. Its run is written to DIR/NAME.csv.
    #[arg(long = "endpoint", value_name = "NAME=TEMPLATE", required = true)]
    endpoints: Vec<String>,
    /// Directory for the run files (created when missing).
    #[arg(long, value_name = "DIR")]
    out: PathBuf,
    /// Posts kept per query (also the template's {depth}).
    #[arg(long, value_name = "N", default_value_t = 100)]
    depth: usize,
    /// Requests in flight at once, per candidate.
    #[arg(long, value_name = "N", default_value_t = 4)]
    parallel: usize,
    /// Time limit of one request, in seconds (connecting to the end of the
    /// answer).
    #[arg(long, value_name = "SECONDS", default_value_t = 30.0)]
    timeout: f64,
    /// Attempts per query, the first included (time-outs, broken
    /// connections, 429 and 5xx are tried again).
    #[arg(long, value_name = "N", default_value_t = 3)]
    tries: u32,
    /// Wait before the first retry, in seconds; doubled for each further
    /// one (a longer Retry-After, up to 60 s, wins).
    #[arg(long, value_name = "SECONDS", default_value_t = 0.5)]
    backoff: f64,
    /// Print no progress on stderr.
    #[arg(long, short)]
    quiet: bool,
}

pub fn execute(args: FetchArgs) -> anyhow::Result<ExitCode> {
    let settings = settings(&args)?;
    check_file_flag("--queries", &args.queries)?;
    let named = named_files("--endpoint", &args.endpoints)?;
    // Every input is checked before the first request.
    let env = |name: &str| std::env::var(name).ok();
    let endpoints = named
        .into_iter()
        .map(|(name, file)| Ok(Endpoint { name, template: fetch::read_template(&file, &env)? }))
        .collect::<Result<Vec<_>, Error>>()?;
    let queries = read_queries(&args.queries)?;
    let mut summaries = Vec::new();
    for endpoint in &endpoints {
        let mut printer = Printer::new(args.quiet);
        let summary = fetch::fetch_endpoint(
            endpoint,
            &queries,
            &settings,
            &args.out,
            &write_atomic,
            &mut |event| printer.event(event),
        )?;
        if !args.quiet {
            eprintln!("postassay: {}", summary_line(&summary));
        }
        summaries.push(summary);
    }
    if !args.quiet {
        let runs: Vec<String> = summaries
            .iter()
            .map(|s| format!("--run {}={}", s.endpoint.as_str(), s.run_file.display()))
            .collect();
        eprintln!("postassay: next: postassay score --judgments FILE {}", runs.join(" "));
    }
    Ok(ExitCode::SUCCESS)
}

fn settings(args: &FetchArgs) -> Result<FetchSettings, Error> {
    let seconds = |flag: &str, x: f64, least: f64| {
        if x.is_finite() && x >= least && x <= 86_400.0 {
            Ok(Duration::from_secs_f64(x))
        } else {
            Err(Error::usage(format!(
                "{flag}: expected seconds between {least} and 86400, found {x}"
            )))
        }
    };
    for (flag, value) in [("--depth", args.depth), ("--parallel", args.parallel)] {
        if value == 0 {
            return Err(Error::usage(format!("{flag}: expected an integer ≥ 1, found 0")));
        }
    }
    if args.tries == 0 {
        return Err(Error::usage("--tries: expected an integer ≥ 1, found 0"));
    }
    Ok(FetchSettings {
        depth: args.depth,
        parallel: args.parallel,
        retry: RetrySettings {
            timeout: seconds("--timeout", args.timeout, 0.001)?,
            tries: args.tries,
            backoff: seconds("--backoff", args.backoff, 0.0)?,
        },
    })
}

/// Progress on stderr: a bar per candidate on a terminal; otherwise plain
/// lines, at most one per [`PROGRESS_EVERY`] (and the last); a retry is
/// always told; nothing with `--quiet`.
struct Printer {
    progress: Progress,
    step: Option<Step>,
    seen: u64,
    last: Option<Instant>,
}

impl Printer {
    fn new(quiet: bool) -> Printer {
        Printer { progress: Progress::for_stderr(quiet), step: None, seen: 0, last: None }
    }

    fn event(&mut self, event: FetchEvent<'_>) {
        let bars = self.progress.mode() == Mode::Bars;
        match event {
            FetchEvent::Started { endpoint, total, resumed } => {
                let from = if resumed > 0 {
                    format!(" ({resumed} already fetched, resuming)")
                } else {
                    String::new()
                };
                self.progress.line(&format!(
                    "fetch {}: {}{from}",
                    endpoint.as_str(),
                    queries(total)
                ));
                self.last = Some(Instant::now());
                self.seen = resumed as u64;
                self.step = bars.then(|| {
                    let step = self.progress.step(
                        &format!("fetch {}", endpoint.as_str()),
                        total as u64,
                        "queries",
                    );
                    step.advance(resumed as u64);
                    step
                });
            }
            FetchEvent::Fetched { endpoint, done, total } => {
                if let Some(step) = &self.step {
                    step.advance((done as u64).saturating_sub(self.seen));
                    self.seen = done as u64;
                    if done == total {
                        self.step = None;
                    }
                    return;
                }
                let due = self.last.is_none_or(|t| t.elapsed() >= PROGRESS_EVERY);
                if due || done == total {
                    self.progress
                        .line(&format!("fetch {}: {done}/{total} queries", endpoint.as_str()));
                    self.last = Some(Instant::now());
                }
            }
            FetchEvent::Retrying { endpoint, query, cause: _, detail, wait } => {
                self.progress.line(&format!(
                    "fetch {}: query {:?}: {detail}; trying again in {:.2} s",
                    endpoint.as_str(),
                    query.as_str(),
                    wait.as_secs_f64()
                ))
            }
        }
    }
}

/// The closing line of one candidate: queries, hits, retries by cause,
/// latency percentiles, wall time and the file written.
fn summary_line(s: &FetchSummary) -> String {
    let retries: usize = s.retries.values().sum();
    let causes: Vec<String> =
        s.retries.iter().map(|(cause, n)| format!("{} {n}", cause.as_str())).collect();
    let causes =
        if causes.is_empty() { String::new() } else { format!(" ({})", causes.join(", ")) };
    let ms = |d: Duration| format!("{:.1}", d.as_secs_f64() * 1000.0);
    let repeats = if s.repeats > 0 {
        format!(", {} repeated posts dropped", s.repeats)
    } else {
        String::new()
    };
    format!(
        "fetch {}: {} ({} fetched, {} resumed), {} hits{repeats}; {}{causes}; \
         latency ms p50 {} p90 {} p99 {} max {}; {:.2} s; wrote {}",
        s.endpoint.as_str(),
        queries(s.queries),
        s.fetched,
        s.resumed,
        s.hits,
        counted(retries, "retry", "retries"),
        ms(s.latency.p50),
        ms(s.latency.p90),
        ms(s.latency.p99),
        ms(s.latency.max),
        s.wall.as_secs_f64(),
        s.run_file.display()
    )
}

fn queries(n: usize) -> String {
    counted(n, "query", "queries")
}
