//! Flags shared by `run` and `score`: metrics, relevance threshold, gain,
//! baseline and the statistics settings.

use std::path::{Path, PathBuf};

use clap::{Args, ValueEnum};

use postassay::analysis::{self, ChainSpec};
use postassay::bench::EvalOptions;
use postassay::error::Error;
use postassay::eval::{self, EvalSettings, Gain};
use postassay::ids::ChainName;
use postassay::input::LangCode;
use postassay::progress::Progress;
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
    /// Worker threads for building, searching and the statistics (default:
    /// every core). Outputs do not depend on it.
    #[arg(long, value_name = "N")]
    pub threads: Option<usize>,
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
        if self.threads == Some(0) {
            return Err(Error::usage("--threads: expected an integer ≥ 1, found 0"));
        }
        let threads = self.threads.unwrap_or_else(|| {
            std::thread::available_parallelism().map(std::num::NonZeroUsize::get).unwrap_or(1)
        });
        let metrics = eval::parse_metric_list(&self.metrics)?;
        Ok(EvalOptions {
            threads,
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

    /// Progress on stderr honouring `--quiet` (bars on a terminal, plain
    /// lines otherwise).
    pub fn progress(&self) -> Progress {
        Progress::for_stderr(self.quiet)
    }
}

/// Where language detections and chain indexes are cached.
#[derive(Debug, Args)]
pub struct CacheFlags {
    /// Cache directory for language detections and chain indexes (default:
    /// $POSTASSAY_CACHE_DIR, else the user's cache directory).
    #[arg(long, value_name = "DIR", conflicts_with = "no_cache")]
    pub cache_dir: Option<PathBuf>,
    /// Neither read nor write the cache (also: POSTASSAY_NO_CACHE=1).
    #[arg(long)]
    pub no_cache: bool,
}

impl CacheFlags {
    /// The cache directory, `None` when caching is off or no directory is
    /// known.
    pub fn root(&self) -> Option<PathBuf> {
        if self.no_cache {
            return None;
        }
        self.cache_dir.clone().or_else(postassay::bench::detect_cache::cache_root_from_env)
    }
}

/// Refuse a directory given where a file is expected, naming the flag it
/// came from (the operating system's "Is a directory" names neither).
pub fn check_file_flag(flag: &str, path: &Path) -> Result<(), Error> {
    refuse_directory(&format!("{flag} {}", path.display()), path)
}

/// [`check_file_flag`] for an argument shown as typed (`--run a=FILE`).
pub fn refuse_directory(argument: &str, path: &Path) -> Result<(), Error> {
    if path.is_dir() {
        return Err(Error::usage(format!("{argument}: expected a file, found a directory")));
    }
    Ok(())
}

/// Parse repeated `NAME=FILE` arguments of `flag` (`--run`, `--endpoint`):
/// names use letters, digits, `-`, `_` and `.` (they become file and column
/// names) and are unique; a FILE that is a directory is refused.
pub fn named_files(flag: &str, specs: &[String]) -> Result<Vec<(ChainName, PathBuf)>, Error> {
    let mut named: Vec<(ChainName, PathBuf)> = Vec::new();
    for spec in specs {
        let expected = || Error::usage(format!("{flag}: expected NAME=FILE, found {spec:?}"));
        let (name, file) = spec.split_once('=').ok_or_else(expected)?;
        if name.is_empty() || file.is_empty() {
            return Err(expected());
        }
        if !name.chars().all(|c| c.is_alphanumeric() || "-_.".contains(c)) {
            return Err(Error::usage(format!(
                "{flag}: a NAME uses letters, digits, '-', '_' and '.', found {name:?}"
            )));
        }
        if named.iter().any(|(n, _)| n.as_str() == name) {
            return Err(Error::usage(format!("{flag}: the name {name:?} is given twice")));
        }
        refuse_directory(&format!("{flag} {spec}"), Path::new(file))?;
        named.push((ChainName::from(name), PathBuf::from(file)));
    }
    Ok(named)
}

/// The last progress line of `run` and `score`: where the reports went,
/// naming the page to open first.
pub fn wrote_reports(out: &Path) -> String {
    format!(
        "wrote {}: open {} first (report.md, report.json and the CSV tables are beside it)",
        out.display(),
        out.join("report.html").display()
    )
}

/// The bundled demo bench, relative to the repository root.
pub const DEMO_CORPUS: &str = "corpora/demo/posts.jsonl";
/// Demo queries.
pub const DEMO_QUERIES: &str = "judgments/demo/queries.csv";
/// Demo judgments.
pub const DEMO_JUDGMENTS: &str = "judgments/demo/qrels.csv";

/// The three bench inputs; all given, or none for the demo bench.
#[derive(Debug, Args)]
pub struct InputFlags {
    /// Posts: JSON Lines (`id`, `text`, optional `lang`) or CSV with `id,text`.
    #[arg(long, value_name = "FILE")]
    pub corpus: Option<PathBuf>,
    /// Queries: CSV `query_id,text[,lang][,tags]`.
    #[arg(long, value_name = "FILE")]
    pub queries: Option<PathBuf>,
    /// Judgments: CSV `query_id,doc_id,grade` or the four-column layout.
    #[arg(long, value_name = "FILE")]
    pub judgments: Option<PathBuf>,
}

impl InputFlags {
    /// `(corpus, queries, judgments)`: the three given files, or the demo
    /// bench's when none is given.
    pub fn resolve(&self) -> Result<(PathBuf, PathBuf, PathBuf), Error> {
        match (&self.corpus, &self.queries, &self.judgments) {
            (Some(c), Some(q), Some(j)) => {
                check_file_flag("--corpus", c)?;
                check_file_flag("--queries", q)?;
                check_file_flag("--judgments", j)?;
                Ok((c.clone(), q.clone(), j.clone()))
            }
            (None, None, None) => {
                for f in [DEMO_CORPUS, DEMO_QUERIES, DEMO_JUDGMENTS] {
                    if !Path::new(f).is_file() {
                        return Err(Error::usage(format!(
                            "no input flags given and the demo bench file {f} is not here: \
                             run from the repository root, or give --corpus, --queries and \
                             --judgments"
                        )));
                    }
                }
                Ok((DEMO_CORPUS.into(), DEMO_QUERIES.into(), DEMO_JUDGMENTS.into()))
            }
            _ => Err(Error::usage(
                "give all three of --corpus, --queries and --judgments, or none of them (the \
                 demo bench)",
            )),
        }
    }
}

/// The chains of a chain file; each use of a step name of the previous
/// release is printed as `postassay: warning: FILE:LINE: …` with its new
/// name (it does not fail the run).
pub fn read_chain_file(path: &Path) -> Result<Vec<ChainSpec>, Error> {
    let file = analysis::read_chain_file(path)?;
    for note in &file.deprecations {
        eprintln!("postassay: warning: {note}");
    }
    Ok(file.chains)
}

/// Which chains to use.
#[derive(Debug, Args)]
pub struct ChainFlags {
    /// Comma-separated chain names (built-in: standard, stemmed, hashtag,
    /// routed; plus those of --chain-file). Default: every built-in chain, or
    /// every chain of --chain-file when one is given.
    #[arg(long, value_name = "LIST")]
    pub chains: Option<String>,
    /// A TOML file of chain definitions.
    #[arg(long, value_name = "FILE")]
    pub chain_file: Option<PathBuf>,
    /// Language of the built-in `stemmed` chain (ISO 639-1).
    #[arg(long, value_name = "CODE", default_value = "en")]
    pub stem_lang: String,
}

impl ChainFlags {
    /// The selected chain definitions, in order.
    pub fn resolve(&self) -> Result<Vec<ChainSpec>, Error> {
        let stem_lang = LangCode::parse(&self.stem_lang).ok_or_else(|| {
            Error::usage(format!(
                "--stem-lang: expected an ISO 639-1 code, found {:?}",
                self.stem_lang
            ))
        })?;
        let builtins = analysis::builtin_chains(stem_lang)?;
        let from_file = match &self.chain_file {
            Some(f) => {
                check_file_flag("--chain-file", f)?;
                read_chain_file(f)?
            }
            None => Vec::new(),
        };
        match (&self.chains, from_file.is_empty()) {
            (Some(list), _) => {
                let mut available = from_file;
                for b in builtins {
                    if !available.iter().any(|c| c.name == b.name) {
                        available.push(b);
                    }
                }
                analysis::select_chains(&available, list)
            }
            (None, true) => Ok(builtins),
            (None, false) => Ok(from_file),
        }
    }
}

/// The open-data directory of `vet --data` and `run --vet-data` when the
/// flag is not given (relative to the working directory), if it exists.
pub const DEFAULT_DATA: &str = "../shared/data";

/// Worst offenders and misses kept per diagnostics result, by default.
pub const DEFAULT_TOP: usize = 3;

/// The open-data directory for diagnostics: `given` (named `flag` in
/// messages), else [`DEFAULT_DATA`] when it exists. A missing directory is a
/// usage error that says what the directory must hold.
pub fn resolve_data_dir(given: Option<&Path>, flag: &str) -> Result<PathBuf, Error> {
    let data = match given {
        Some(d) => d.to_path_buf(),
        None if Path::new(DEFAULT_DATA).is_dir() => PathBuf::from(DEFAULT_DATA),
        None => {
            return Err(Error::usage(format!(
                "no open data: give {flag} DIR, a directory with ud/LANG.lemmas.tsv (conflation), \
                 ud/LANG.sentences.tsv and ud_pud/LANG.sentences.tsv (routing) and \
                 hashtags/NAME.tsv (hashtag segmentation); the default {DEFAULT_DATA} does not exist"
            )))
        }
    };
    if !data.is_dir() {
        return Err(Error::usage(format!(
            "{flag} {}: expected a directory of open data, found {}",
            data.display(),
            if data.exists() { "a file" } else { "nothing" }
        )));
    }
    Ok(data)
}
