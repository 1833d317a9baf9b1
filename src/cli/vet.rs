//! `postassay vet`: diagnostics of analysis chains on open linguistic data
//! (conflation against lemma classes, routing accuracy, hashtag
//! segmentation), before any query is judged. Turns the flags into a
//! [`DiagnosePlan`] and hands it to `postassay::diagnose`.

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use clap::Args;

use postassay::analysis::{self, ChainSpec, StepSpec};
use postassay::diagnose::{self, DiagnosePlan, FreqSource, Sections};
use postassay::error::Error;
use postassay::input::LangCode;
use postassay::report::{self, diagnostics as render};

use super::common::{check_file_flag, read_chain_file, resolve_data_dir, DEFAULT_TOP, DEMO_CORPUS};

#[derive(Debug, Args)]
pub struct VetArgs {
    /// Directory of open data: ud/LANG.lemmas.tsv, ud/LANG.sentences.tsv,
    /// ud_pud/LANG.sentences.tsv, hashtags/NAME.tsv, ud_nospace/LANG.words.tsv
    /// [default: ../shared/data
    /// when it exists].
    #[arg(long, value_name = "DIR")]
    data: Option<PathBuf>,
    /// Comma-separated chain names (built-in: standard, stemmed, hashtag,
    /// routed; plus those of --chain-file). Default: every built-in chain, or
    /// every chain of --chain-file when one is given. The built-in `stemmed`
    /// stems each language with its own Snowball stemmer.
    #[arg(long, value_name = "LIST")]
    chains: Option<String>,
    /// A TOML file of chain definitions.
    #[arg(long, value_name = "FILE")]
    chain_file: Option<PathBuf>,
    /// Comma-separated sections: conflation, routing, segmentation, unspaced.
    #[arg(long, value_name = "LIST", default_value = "conflation,routing,segmentation,unspaced")]
    sections: String,
    /// Only the data sets with these names or language codes
    /// (comma-separated, e.g. `de,it-pud`). Default: all.
    #[arg(long, value_name = "LIST")]
    langs: Option<String>,
    /// Corpus of posts (JSON Lines or CSV) to learn the hashtag segmenter's
    /// word frequencies from [default: corpora/demo/posts.jsonl when it
    /// exists].
    #[arg(long, value_name = "FILE")]
    freq_corpus: Option<PathBuf>,
    /// A `word<TAB>count` list of word frequencies (repeatable); each is
    /// measured as its own source. Words are lower-cased and a word listed
    /// more than once counts the sum of its lines. [default: the English
    /// list tests/fixtures/analysis/hashtag/wordfreq_en.tsv when it exists]
    #[arg(long, value_name = "FILE")]
    freq_list: Vec<PathBuf>,
    /// Word lists built into the binary to measure as sources, comma-
    /// separated: de, en, es, fr, it, nl, pt, or all for the merged list of
    /// the seven (e.g. `en,all`). Measured beside the sources above.
    #[arg(long, value_name = "LIST")]
    freq_builtin: Option<String>,
    /// Worst offenders and misses listed per result.
    #[arg(long, value_name = "N", default_value_t = DEFAULT_TOP)]
    top: usize,
    /// Directory for diagnostics.md, diagnostics.json and the CSVs (created
    /// when missing). Without it, the Markdown goes to stdout.
    #[arg(long, value_name = "DIR")]
    out: Option<PathBuf>,
    /// Print no progress on stderr.
    #[arg(long, short)]
    quiet: bool,
}

/// The English word-frequency list measured by default (relative to the
/// working directory, as the demo corpus is): exported from the `wordfreq`
/// package by `scripts/wordfreq_export.py`, licence beside it.
pub const DEFAULT_FREQ_LIST: &str = "tests/fixtures/analysis/hashtag/wordfreq_en.tsv";

pub fn execute(args: VetArgs) -> anyhow::Result<ExitCode> {
    let plan = plan(&args)?;
    if let Some(out) = &args.out {
        postassay::output::out_dir::check_out_dir(out)?;
    }
    let quiet = args.quiet;
    let mut progress = move |line: &str| {
        if !quiet {
            eprintln!("postassay: {line}");
        }
    };
    let started = std::time::Instant::now();
    let mut found = diagnose::run(&plan, &mut progress)?;
    if let Some(note) = missing_default_list(&args, &plan, &found) {
        progress(&format!("note: {note}"));
        found.notes.push(note);
    }
    match &args.out {
        Some(out) => {
            report::write_diagnostics(out, &found)?;
            progress(&format!(
                "wrote {} in {:.1} s",
                out.join(render::MARKDOWN_FILE).display(),
                started.elapsed().as_secs_f64()
            ));
        }
        None => {
            use std::io::Write;
            let mut stdout = std::io::stdout().lock();
            stdout.write_all(render::markdown(&found).as_bytes())?;
            stdout.flush()?;
            progress(&format!("done in {:.1} s", started.elapsed().as_secs_f64()));
        }
    }
    Ok(ExitCode::SUCCESS)
}

fn plan(args: &VetArgs) -> Result<DiagnosePlan, Error> {
    let data = resolve_data_dir(args.data.as_deref(), "--data")?;
    let sections = Sections::parse(&args.sections)?;
    let languages = args.langs.as_ref().map(|list| {
        list.split(',').map(str::trim).filter(|s| !s.is_empty()).map(String::from).collect()
    });
    for list in &args.freq_list {
        check_file_flag("--freq-list", list)?;
    }
    let mut freq_sources = Vec::new();
    match &args.freq_corpus {
        Some(f) => {
            check_file_flag("--freq-corpus", f)?;
            freq_sources.push(FreqSource::Corpus(f.clone()))
        }
        None if Path::new(DEMO_CORPUS).is_file() => {
            freq_sources.push(FreqSource::Corpus(DEMO_CORPUS.into()))
        }
        None => {}
    }
    if args.freq_list.is_empty() {
        if Path::new(DEFAULT_FREQ_LIST).is_file() {
            freq_sources.push(FreqSource::List(DEFAULT_FREQ_LIST.into()));
        }
    } else {
        freq_sources.extend(args.freq_list.iter().cloned().map(FreqSource::List));
    }
    if let Some(list) = &args.freq_builtin {
        freq_sources.extend(builtin_sources(list)?);
    }
    Ok(DiagnosePlan {
        data,
        chains: diagnose::chains_under_test(chains(args)?)?,
        sections,
        languages,
        freq_sources,
        chain_file: args.chain_file.clone(),
        top: args.top,
    })
}

/// The built-in lists named by `--freq-builtin` (`all`: the merged list),
/// in the order given, each once.
fn builtin_sources(list: &str) -> Result<Vec<FreqSource>, Error> {
    let listed = analysis::word_lists::list_languages();
    let mut sources = Vec::new();
    for name in list.split(',').map(str::trim).filter(|n| !n.is_empty()) {
        let source = match LangCode::parse(name).filter(|l| listed.contains(l)) {
            Some(code) => FreqSource::Builtin(Some(code)),
            None if name == "all" => FreqSource::Builtin(None),
            None => {
                return Err(Error::usage(format!(
                    "--freq-builtin: no built-in word list {name:?}; accepted: {}, all",
                    diagnose::join_list_languages()
                )))
            }
        };
        if !sources.contains(&source) {
            sources.push(source);
        }
    }
    if sources.is_empty() {
        return Err(Error::usage(format!(
            "--freq-builtin: name at least one list; accepted: {}, all",
            diagnose::join_list_languages()
        )));
    }
    Ok(sources)
}

/// Why the default English list was not measured, when segmentation ran
/// with learned frequencies and no `--freq-list` was given but the list is
/// not where it is expected.
fn missing_default_list(
    args: &VetArgs,
    plan: &DiagnosePlan,
    found: &diagnose::Diagnostics,
) -> Option<String> {
    let learns = |step: &StepSpec| matches!(step, StepSpec::Hashtags { vocabulary, .. } if vocabulary.uses_corpus());
    let learned = !found.segmentation.is_empty()
        && plan.chains.iter().any(|c| c.spec().pipelines().any(|p| p.steps.iter().any(learns)));
    (learned && args.freq_list.is_empty() && !Path::new(DEFAULT_FREQ_LIST).is_file()).then(|| {
        format!(
            "segmentation: the English word-frequency list was not measured: \
             {DEFAULT_FREQ_LIST} is not here (run from the repository root, or give \
             --freq-list FILE)"
        )
    })
}

/// The chains, chosen as `run` chooses them.
fn chains(args: &VetArgs) -> Result<Vec<ChainSpec>, Error> {
    let builtins = analysis::builtin_chains(LangCode::parse("en").expect("en is ISO 639-1"))?;
    let from_file = match &args.chain_file {
        Some(f) => {
            check_file_flag("--chain-file", f)?;
            read_chain_file(f)?
        }
        None => Vec::new(),
    };
    Ok(match (&args.chains, from_file.is_empty()) {
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
    })
}
