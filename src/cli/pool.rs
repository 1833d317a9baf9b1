//! `postassay pool`: gather the unjudged pairs of every system's top K into a
//! CSV to judge, from a report directory or from run files. Counting and
//! ordering are the library's (`postassay::pool`); this file finds the
//! inputs, reads them and prints each system's contribution on stderr.

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use clap::Args;

use postassay::error::Error;
use postassay::ids::ChainName;
use postassay::input::{self, Post, Query, Run};
use postassay::judge::read_judgments_allow_empty;
use postassay::output::write_atomic;
use postassay::plural::counted;
use postassay::pool::{self, PoolSources};

use super::common::{check_file_flag, refuse_directory};

#[derive(Debug, Args)]
pub struct PoolArgs {
    /// Pool the top K of each system.
    #[arg(long, value_name = "K")]
    depth: usize,
    /// A report directory: its runs (runs/NAME.csv, or the run files a
    /// `score` report names) and the corpus, queries and judgments it names.
    #[arg(long, value_name = "DIR", conflicts_with = "runs", required_unless_present = "runs")]
    report: Option<PathBuf>,
    /// A named run, NAME=FILE (CSV query_id,doc_id,rank,score); repeat for
    /// each system. Needs --corpus, --queries and --judgments.
    #[arg(long = "run", value_name = "NAME=FILE")]
    runs: Vec<String>,
    /// Posts, for the texts to judge (overrides the report's).
    #[arg(long, value_name = "FILE")]
    corpus: Option<PathBuf>,
    /// Queries, for their texts (overrides the report's).
    #[arg(long, value_name = "FILE")]
    queries: Option<PathBuf>,
    /// Judgments: pairs they hold are not pooled (overrides the report's). A
    /// missing file or one with a header alone means nothing is judged yet.
    #[arg(long, value_name = "FILE")]
    judgments: Option<PathBuf>,
    /// Write the pool here (atomically) instead of stdout.
    #[arg(long, value_name = "FILE")]
    out: Option<PathBuf>,
    /// Print no counts on stderr.
    #[arg(long, short)]
    quiet: bool,
}

pub fn execute(args: PoolArgs) -> anyhow::Result<ExitCode> {
    if args.depth == 0 {
        return Err(Error::usage("--depth: expected an integer ≥ 1, found 0").into());
    }
    let sources = sources(&args)?;
    let need = |path: &Option<PathBuf>, flag: &str| -> Result<PathBuf, Error> {
        path.clone().ok_or_else(|| {
            Error::usage(format!(
                "{flag}: no file given{}",
                if args.report.is_some() { " and the report names none" } else { "" }
            ))
        })
    };
    let corpus_path = need(&sources.corpus, "--corpus")?;
    let queries_path = need(&sources.queries, "--queries")?;
    let judgments_path = need(&sources.judgments, "--judgments")?;
    for (flag, path) in
        [("--corpus", &corpus_path), ("--queries", &queries_path), ("--judgments", &judgments_path)]
    {
        check_file_flag(flag, path)?;
    }
    if let Some(out) = &args.out {
        check_file_flag("--out", out)?;
    }
    if let Some(report) = &args.report {
        for (path, flag) in [(&corpus_path, "--corpus"), (&queries_path, "--queries")] {
            if !path.exists() {
                return Err(Error::usage(format!(
                    "the report {} names {}, which is not here (paths are relative to where \
                     the report was made): give {flag}",
                    report.display(),
                    path.display()
                ))
                .into());
            }
        }
    }
    if args.runs.is_empty() && args.report.is_some() && !judgments_path.exists() {
        return Err(Error::usage(format!(
            "the report names the judgments {}, which are not here: give --judgments",
            judgments_path.display()
        ))
        .into());
    }

    // Read and check every input before writing anything.
    let mut runs: Vec<(ChainName, Run)> = Vec::new();
    for (name, path) in &sources.runs {
        runs.push((name.clone(), input::read_run(path)?));
    }
    let (judgments, mut warnings) = read_judgments_allow_empty(&judgments_path)?;
    if !judgments_path.exists() {
        warnings.push(format!(
            "{} does not exist: every pair counts as unjudged",
            judgments_path.display()
        ));
    }
    let queries: Vec<Query> = input::read_queries(&queries_path)?;
    let posts: Vec<Post> = input::read_corpus(&corpus_path)?;

    let refs: Vec<(ChainName, &Run)> = runs.iter().map(|(n, r)| (n.clone(), r)).collect();
    let pool = pool::build_pool(&refs, &judgments, args.depth);
    let mut bytes = Vec::new();
    warnings.extend(pool::write_pool(&pool, &queries, &posts, &mut bytes)?);
    match &args.out {
        Some(path) => write_atomic(path, &bytes)?,
        None => {
            use std::io::Write;
            let mut stdout = std::io::stdout().lock();
            stdout.write_all(&bytes)?;
            stdout.flush()?;
        }
    }
    if !args.quiet {
        let queries_pooled: std::collections::BTreeSet<_> =
            pool.entries.iter().map(|e| &e.query).collect();
        eprintln!(
            "postassay: pool: {} over {} from the top {} of {}",
            counted(pool.entries.len(), "unjudged pair", "unjudged pairs"),
            counted(queries_pooled.len(), "query", "queries"),
            args.depth,
            counted(pool.contributions.len(), "system", "systems")
        );
        for c in &pool.contributions {
            eprintln!(
                "postassay: pool: {} contributes {} ({} only from it)",
                c.system,
                counted(c.pairs, "pair", "pairs"),
                c.unique
            );
        }
        for w in &warnings {
            eprintln!("postassay: warning: {w}");
        }
        if let Some(out) = &args.out {
            eprintln!("postassay: wrote {}", out.display());
        }
    }
    Ok(ExitCode::SUCCESS)
}

/// The runs and inputs: from the report (flags override its inputs) or from
/// the flags alone.
fn sources(args: &PoolArgs) -> Result<PoolSources, Error> {
    let mut sources = match &args.report {
        Some(dir) => pool::sources_from_report(dir)?,
        None => PoolSources {
            runs: parse_runs(&args.runs)?,
            corpus: None,
            queries: None,
            judgments: None,
        },
    };
    let replace = |flag: &Option<PathBuf>, slot: &mut Option<PathBuf>| {
        if let Some(p) = flag {
            *slot = Some(p.clone());
        }
    };
    replace(&args.corpus, &mut sources.corpus);
    replace(&args.queries, &mut sources.queries);
    replace(&args.judgments, &mut sources.judgments);
    Ok(sources)
}

/// `NAME=FILE` specs, names unique.
fn parse_runs(specs: &[String]) -> Result<Vec<(ChainName, PathBuf)>, Error> {
    let mut runs: Vec<(ChainName, PathBuf)> = Vec::new();
    for spec in specs {
        let (name, file) = spec
            .split_once('=')
            .filter(|(n, f)| !n.is_empty() && !f.is_empty())
            .ok_or_else(|| Error::usage(format!("--run: expected NAME=FILE, found {spec:?}")))?;
        if runs.iter().any(|(n, _)| n.as_str() == name) {
            return Err(Error::usage(format!("--run: the name {name:?} is given twice")));
        }
        refuse_directory(&format!("--run {spec}"), Path::new(file))?;
        runs.push((ChainName::from(name), Path::new(file).to_path_buf()));
    }
    Ok(runs)
}
