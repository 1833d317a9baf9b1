//! `postassay run`: the whole bench over chains.

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use clap::Args;

use postassay::analysis::{self, ChainSpec};
use postassay::bench::{self, RunPlan};
use postassay::error::Error;
use postassay::input::LangCode;
use postassay::report;

use super::common::{check_out_dir, EvalFlags};

/// The bundled demo bench, relative to the repository root.
pub const DEMO_CORPUS: &str = "corpora/demo/posts.jsonl";
/// Demo queries.
pub const DEMO_QUERIES: &str = "judgments/demo/queries.csv";
/// Demo judgments.
pub const DEMO_JUDGMENTS: &str = "judgments/demo/qrels.csv";

#[derive(Debug, Args)]
pub struct RunArgs {
    /// Posts: JSON Lines (`id`, `text`, optional `lang`) or CSV with `id,text`.
    #[arg(long, value_name = "FILE")]
    corpus: Option<PathBuf>,
    /// Queries: CSV `query_id,text[,lang][,tags]`.
    #[arg(long, value_name = "FILE")]
    queries: Option<PathBuf>,
    /// Judgments: CSV `query_id,doc_id,grade` or the four-column layout.
    #[arg(long, value_name = "FILE")]
    judgments: Option<PathBuf>,
    /// Comma-separated chain names (built-in: standard, stemmed, hashtag,
    /// routed; plus those of --chain-file). Default: every built-in chain, or
    /// every chain of --chain-file when one is given.
    #[arg(long, value_name = "LIST")]
    chains: Option<String>,
    /// A TOML file of chain definitions.
    #[arg(long, value_name = "FILE")]
    chain_file: Option<PathBuf>,
    /// Language of the built-in `stemmed` chain (ISO 639-1).
    #[arg(long, value_name = "CODE", default_value = "en")]
    stem_lang: String,
    /// Results kept per query.
    #[arg(long, value_name = "N", default_value_t = 100)]
    depth: usize,
    #[command(flatten)]
    eval: EvalFlags,
}

pub fn execute(args: RunArgs) -> anyhow::Result<ExitCode> {
    let plan = plan(&args)?;
    check_out_dir(&args.eval.out)?;
    let mut progress = args.eval.progress();
    let out = bench::run(&plan, &mut progress)?;
    let runs: Vec<_> = out.runs.iter().map(|(n, r)| (n.clone(), r)).collect();
    report::write_outputs(&args.eval.out, &out.report, &runs)?;
    progress(&format!("wrote {}", args.eval.out.join("report.md").display()));
    Ok(ExitCode::SUCCESS)
}

fn plan(args: &RunArgs) -> Result<RunPlan, Error> {
    let (corpus, queries, judgments) = inputs(args)?;
    if args.depth == 0 {
        return Err(Error::usage("--depth: expected an integer ≥ 1, found 0"));
    }
    let stem_lang = LangCode::parse(&args.stem_lang).ok_or_else(|| {
        Error::usage(format!(
            "--stem-lang: expected an ISO 639-1 code, found {:?}",
            args.stem_lang
        ))
    })?;
    let builtins = analysis::builtin_chains(stem_lang)?;
    let from_file = match &args.chain_file {
        Some(f) => analysis::read_chain_file(f)?,
        None => Vec::new(),
    };
    let chains: Vec<ChainSpec> = match (&args.chains, from_file.is_empty()) {
        (Some(list), _) => {
            let mut available = from_file.clone();
            for b in builtins {
                if !available.iter().any(|c| c.name == b.name) {
                    available.push(b);
                }
            }
            analysis::select_chains(&available, list)?
        }
        (None, true) => builtins,
        (None, false) => from_file,
    };
    Ok(RunPlan {
        corpus,
        queries,
        judgments,
        chain_file: args.chain_file.clone(),
        chains,
        depth: args.depth,
        options: args.eval.options()?,
    })
}

/// The three input files: all given, or none (the demo bench).
fn inputs(args: &RunArgs) -> Result<(PathBuf, PathBuf, PathBuf), Error> {
    match (&args.corpus, &args.queries, &args.judgments) {
        (Some(c), Some(q), Some(j)) => Ok((c.clone(), q.clone(), j.clone())),
        (None, None, None) => {
            for f in [DEMO_CORPUS, DEMO_QUERIES, DEMO_JUDGMENTS] {
                if !Path::new(f).is_file() {
                    return Err(Error::usage(format!(
                        "no input flags given and the demo bench file {f} is not here: run \
                         from the repository root, or give --corpus, --queries and --judgments"
                    )));
                }
            }
            Ok((DEMO_CORPUS.into(), DEMO_QUERIES.into(), DEMO_JUDGMENTS.into()))
        }
        _ => Err(Error::usage(
            "give all three of --corpus, --queries and --judgments, or none of them (the demo bench)",
        )),
    }
}
