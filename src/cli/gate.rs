//! `postassay gate`: compare a current report with a baseline report and
//! exit 1 on a regression (0 pass, 2 bad input). The rule is the library's
//! (`postassay::gate`); this file only turns flags into settings and prints.

use std::path::PathBuf;
use std::process::ExitCode;

use clap::Args;

use postassay::error::Error;
use postassay::eval;
use postassay::gate::{self, GateSettings, Thresholds};
use postassay::ids::ChainName;
use postassay::output::write_atomic;

use super::common::check_file_flag;

/// Exit code of a gate that found a regression.
const EXIT_REGRESSION: u8 = 1;

#[derive(Debug, Args)]
pub struct GateArgs {
    /// The reference report: a report directory or its report.json.
    #[arg(long, value_name = "DIR_OR_JSON")]
    baseline: PathBuf,
    /// The report to check: a report directory or its report.json.
    #[arg(long, value_name = "DIR_OR_JSON")]
    current: PathBuf,
    /// Largest allowed absolute drop of a metric's mean, METRIC=VALUE (e.g.
    /// ndcg@10=0.02; `*=VALUE` for every metric without its own). Repeatable.
    /// A metric with no limit at all may not drop.
    #[arg(long = "max-drop", value_name = "METRIC=VALUE")]
    max_drop: Vec<String>,
    /// Largest allowed drop in percent of the baseline mean, METRIC=PCT (e.g.
    /// map=5). Repeatable. With both kinds for a metric, exceeding either fails.
    #[arg(long = "max-drop-relative", value_name = "METRIC=PCT")]
    max_drop_relative: Vec<String>,
    /// Fail only on drops whose paired randomization test (recomputed from
    /// both reports' per-query values) has p < --alpha.
    #[arg(long)]
    require_significance: bool,
    /// Significance level for --require-significance.
    #[arg(long, value_name = "A", default_value_t = gate::DEFAULT_ALPHA)]
    alpha: f64,
    /// Gate only these metrics (comma-separated keys; default: every metric
    /// both reports have).
    #[arg(long, value_name = "LIST")]
    metrics: Option<String>,
    /// Compare reports built on different judgments, queries or scoring
    /// settings (refused by default; the differences become warnings).
    #[arg(long)]
    allow_different_inputs: bool,
    /// A system of the baseline that may be missing from the current report
    /// (comma-separated, repeatable). Without it a baseline system the
    /// current report lacks fails the gate.
    #[arg(long = "allow-missing", value_name = "NAME")]
    allow_missing: Vec<String>,
    /// Also write the checks as JUnit XML to FILE (one test case per system
    /// and metric).
    #[arg(long, value_name = "FILE")]
    junit: Option<PathBuf>,
}

pub fn execute(args: GateArgs) -> anyhow::Result<ExitCode> {
    let settings = settings(&args)?;
    if let Some(junit) = &args.junit {
        check_file_flag("--junit", junit)?;
    }
    let baseline = gate::load_report(&args.baseline)?;
    let current = gate::load_report(&args.current)?;
    let outcome = gate::run_gate(&baseline, &current, &settings)?;
    // Render both before writing either, so a failure writes nothing.
    let markdown = gate::render_markdown(&outcome);
    if let Some(path) = &args.junit {
        write_atomic(path, gate::render_junit(&outcome).as_bytes())?;
    }
    use std::io::Write;
    let mut stdout = std::io::stdout().lock();
    stdout.write_all(markdown.as_bytes())?;
    stdout.flush()?;
    Ok(if outcome.passed() { ExitCode::SUCCESS } else { ExitCode::from(EXIT_REGRESSION) })
}

fn settings(args: &GateArgs) -> Result<GateSettings, Error> {
    let mut thresholds = Thresholds::default();
    for spec in &args.max_drop {
        thresholds.add_absolute(spec)?;
    }
    for spec in &args.max_drop_relative {
        thresholds.add_relative(spec)?;
    }
    let metrics = match &args.metrics {
        Some(list) => Some(eval::parse_metric_list(list)?.iter().map(|m| m.key()).collect()),
        None => None,
    };
    Ok(GateSettings {
        thresholds,
        require_significance: args.require_significance,
        alpha: args.alpha,
        allow_different_inputs: args.allow_different_inputs,
        metrics,
        allow_missing: args
            .allow_missing
            .iter()
            .flat_map(|list| list.split(','))
            .map(str::trim)
            .filter(|n| !n.is_empty())
            .map(ChainName::from)
            .collect(),
    })
}
