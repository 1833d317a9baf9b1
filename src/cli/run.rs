//! `postassay run`: the whole bench over chains; with `--vet`, also the
//! chains' diagnostics on open data (as `postassay vet` computes them),
//! stored in the report.

use std::path::PathBuf;
use std::process::ExitCode;

use clap::Args;

use postassay::bench::{self, RunDiagnostics, RunPlan};
use postassay::error::Error;
use postassay::output;
use postassay::report;

use super::common::{
    resolve_data_dir, wrote_reports, CacheFlags, ChainFlags, EvalFlags, InputFlags, DEFAULT_TOP,
};

#[derive(Debug, Args)]
pub struct RunArgs {
    #[command(flatten)]
    inputs: InputFlags,
    #[command(flatten)]
    chains: ChainFlags,
    /// Results kept per query.
    #[arg(long, value_name = "N", default_value_t = 100)]
    depth: usize,
    /// Leave post texts out of the reports (post ids only), for reports that
    /// leave the team.
    #[arg(long)]
    redact: bool,
    /// Also diagnose the chains on open linguistic data, as `postassay vet`
    /// does (conflation, routing, hashtag segmentation with this corpus's
    /// word frequencies), and add a Diagnostics section to the reports.
    #[arg(long)]
    vet: bool,
    /// Directory of open data for --vet (layout as `vet --data`) [default:
    /// ../shared/data when it exists].
    #[arg(long, value_name = "DIR", requires = "vet")]
    vet_data: Option<PathBuf>,
    #[command(flatten)]
    cache: CacheFlags,
    #[command(flatten)]
    eval: EvalFlags,
}

pub fn execute(args: RunArgs) -> anyhow::Result<ExitCode> {
    let plan = plan(&args)?;
    output::out_dir::check_out_dir(&args.eval.out)?;
    let progress = args.eval.progress();
    let out = bench::run(&plan, &progress)?;
    let runs: Vec<_> = out.runs.iter().map(|(n, r)| (n.clone(), r)).collect();
    report::write_outputs(&args.eval.out, &out.report, &runs)?;
    progress.line(&wrote_reports(&args.eval.out));
    Ok(ExitCode::SUCCESS)
}

fn plan(args: &RunArgs) -> Result<RunPlan, Error> {
    let (corpus, queries, judgments) = args.inputs.resolve()?;
    if args.depth == 0 {
        return Err(Error::usage("--depth: expected an integer ≥ 1, found 0"));
    }
    Ok(RunPlan {
        corpus,
        queries,
        judgments,
        chain_file: args.chains.chain_file.clone(),
        chains: args.chains.resolve()?,
        depth: args.depth,
        redact: args.redact,
        options: args.eval.options()?,
        cache: args.cache.root(),
        diagnostics: if args.vet {
            Some(RunDiagnostics {
                data: resolve_data_dir(args.vet_data.as_deref(), "--vet-data")?,
                top: DEFAULT_TOP,
            })
        } else {
            None
        },
    })
}
