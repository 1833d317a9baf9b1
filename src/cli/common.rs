//! Flags shared by `run` and `score`: metrics, relevance threshold, gain,
//! baseline and the statistics settings.

use std::path::{Path, PathBuf};

use clap::{Args, ValueEnum};

use postassay::bench::EvalOptions;
use postassay::error::Error;
use postassay::eval::{self, EvalSettings, Gain};
use postassay::ids::ChainName;
use postassay::stats::StatSettings;

/// Where reports go when `--out` is not given.
pub const DEFAULT_OUT: &str = "reports";

/// Gain of nDCG.
#[derive(Debug, Clone, Copy, ValueEnum)]
pub enum GainArg {
    /// 2^grade − 1 (Burges et al. 2005).
    Exp,
    /// The grade itself.
    Linear,
}

/// Evaluation and statistics flags.
#[derive(Debug, Args)]
pub struct EvalFlags {
    /// Comma-separated metric keys (ndcg@k, map, p@k, recall@k, mrr, err@k,
    /// bpref, unjudged@k; any k ≥ 1).
    #[arg(long, value_name = "LIST", default_value = eval::DEFAULT_METRICS)]
    pub metrics: String,
    /// Lowest grade that counts as relevant (≥ 1).
    #[arg(long, value_name = "N", default_value_t = 1)]
    pub relevant_from: u32,
    /// Gain of nDCG.
    #[arg(long, value_enum, default_value = "exp")]
    pub gain: GainArg,
    /// Highest grade of the scale, for ERR (default: highest grade in the judgments).
    #[arg(long, value_name = "N")]
    pub max_grade: Option<u32>,
    /// The system the others are tested against (default: the first).
    #[arg(long, value_name = "NAME")]
    pub baseline: Option<String>,
    /// Seed of the randomization test and the bootstrap.
    #[arg(long, value_name = "N", default_value_t = StatSettings::default().seed)]
    pub seed: u64,
    /// Random sign assignments of the randomization test (exact enumeration
    /// is used with 16 queries or fewer).
    #[arg(long, value_name = "B", default_value_t = StatSettings::default().permutations)]
    pub permutations: u32,
    /// Significance level for the "significant" marks.
    #[arg(long, value_name = "A", default_value_t = StatSettings::default().alpha)]
    pub alpha: f64,
    /// Directory for the reports (created when missing).
    #[arg(long, value_name = "DIR", default_value = DEFAULT_OUT)]
    pub out: PathBuf,
    /// Print no progress on stderr.
    #[arg(long, short)]
    pub quiet: bool,
}

impl EvalFlags {
    /// Validate and convert into the library's options.
    pub fn options(&self) -> Result<EvalOptions, Error> {
        if self.relevant_from == 0 {
            return Err(Error::usage("--relevant-from: expected an integer ≥ 1, found 0"));
        }
        if !(self.alpha > 0.0 && self.alpha < 1.0) {
            return Err(Error::usage(format!(
                "--alpha: expected a number between 0 and 1, found {}",
                self.alpha
            )));
        }
        if self.permutations == 0 {
            return Err(Error::usage("--permutations: expected an integer ≥ 1, found 0"));
        }
        let metrics = eval::parse_metric_list(&self.metrics)?;
        Ok(EvalOptions {
            metrics,
            eval: EvalSettings {
                relevant_from: self.relevant_from,
                gain: match self.gain {
                    GainArg::Exp => Gain::Exponential,
                    GainArg::Linear => Gain::Linear,
                },
                max_grade: self.max_grade,
            },
            stats: StatSettings {
                permutations: self.permutations,
                seed: self.seed,
                alpha: self.alpha,
                ..StatSettings::default()
            },
            baseline: self.baseline.clone().map(ChainName::from),
        })
    }

    /// A progress printer honouring `--quiet`.
    pub fn progress(&self) -> impl FnMut(&str) {
        let quiet = self.quiet;
        move |line: &str| {
            if !quiet {
                eprintln!("postassay: {line}");
            }
        }
    }
}

/// Refuse an output directory that is an existing file.
pub fn check_out_dir(out: &Path) -> Result<(), Error> {
    if out.exists() && !out.is_dir() {
        return Err(Error::usage(format!(
            "--out {}: expected a directory, found a file",
            out.display()
        )));
    }
    Ok(())
}
