//! `postassay score`: evaluate and compare existing runs.

use std::path::PathBuf;
use std::process::ExitCode;

use clap::Args;

use postassay::bench::{self, ScorePlan};
use postassay::error::Error;
use postassay::output;
use postassay::report;

use super::common::{check_file_flag, named_files, wrote_reports, EvalFlags};

/// Where `score` writes when `--out` is not given: not `reports/` itself,
/// which holds the committed sample of the demo `run` (README) that a
/// `score` of other runs would overwrite.
const DEFAULT_SCORE_OUT: &str = "reports/score";

#[derive(Debug, Args)]
#[command(mut_arg("out", |a| a.default_value(DEFAULT_SCORE_OUT)))]
pub struct ScoreArgs {
    /// Judgments: CSV `query_id,doc_id,grade` or the four-column layout.
    #[arg(long, value_name = "FILE")]
    judgments: PathBuf,
    /// A named run, `NAME=FILE` (CSV `query_id,doc_id,rank`, optional
    /// `score`); repeat for each system. The first is the baseline unless --baseline says otherwise.
    #[arg(long = "run", value_name = "NAME=FILE", required = true)]
    runs: Vec<String>,
    /// Optional queries file, for breakdowns by query language and tag.
    #[arg(long, value_name = "FILE")]
    queries: Option<PathBuf>,
    #[command(flatten)]
    eval: EvalFlags,
}

pub fn execute(args: ScoreArgs) -> anyhow::Result<ExitCode> {
    let plan = plan(&args)?;
    output::out_dir::check_out_dir(&args.eval.out)?;
    let progress = args.eval.progress();
    // The report's warnings come through `progress` (bench::score).
    let out = bench::score(&plan, &progress)?;
    report::write_outputs(&args.eval.out, &out.report, &[])?;
    progress.line(&wrote_reports(&args.eval.out));
    Ok(ExitCode::SUCCESS)
}

fn plan(args: &ScoreArgs) -> Result<ScorePlan, Error> {
    let runs = named_files("--run", &args.runs)?;
    check_file_flag("--judgments", &args.judgments)?;
    if let Some(q) = &args.queries {
        check_file_flag("--queries", q)?;
    }
    Ok(ScorePlan {
        judgments: args.judgments.clone(),
        queries: args.queries.clone(),
        runs,
        options: args.eval.options()?,
    })
}
