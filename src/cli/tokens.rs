//! `postassay tokens`: show what a chain makes of a text — each token with
//! its position and byte offsets, or (`--trace`) the stream after the
//! tokenizer and after every step, so a user sees which step changed what.

use std::io::{BufRead, Write};
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::sync::Arc;

use clap::{Args, ValueEnum};
use serde::Serialize;

use postassay::analysis::hashtag::WordFreqs;
use postassay::analysis::inspect::{self, TokenView, TraceStage};
use postassay::analysis::{AnalysisContext, Analyzer};
use postassay::error::Error;
use postassay::input::{self, LangCode};

use super::common::{ChainFlags, DEMO_CORPUS};

#[derive(Debug, Clone, Copy, ValueEnum)]
enum Format {
    Text,
    Json,
}

#[derive(Debug, Args)]
pub struct TokensArgs {
    /// The chain to apply (built-in or from --chain-file).
    #[arg(long = "chain", value_name = "NAME")]
    chain: String,
    /// A TOML file of chain definitions.
    #[arg(long, value_name = "FILE")]
    chain_file: Option<PathBuf>,
    /// Language of the built-in `stemmed` chain (ISO 639-1).
    #[arg(long, value_name = "CODE", default_value = "en")]
    stem_lang: String,
    /// Declared language of the text (routed chains route by it; otherwise
    /// they detect).
    #[arg(long, value_name = "CODE")]
    lang: Option<String>,
    /// Show the token stream after the tokenizer and after each step.
    #[arg(long)]
    trace: bool,
    /// Learn hashtag-splitting word frequencies from this corpus, as `run`
    /// does from its own [default: corpora/demo/posts.jsonl when present;
    /// else tags split only at case, digit and underscore boundaries].
    #[arg(long, value_name = "FILE")]
    corpus: Option<PathBuf>,
    /// Output format.
    #[arg(long, value_enum, default_value = "text")]
    format: Format,
    /// The text (several words are joined by spaces); `-` reads standard
    /// input, one text per line.
    #[arg(required = true, value_name = "TEXT")]
    text: Vec<String>,
}

#[derive(Serialize)]
struct Output {
    text: String,
    /// The index field the text is analysed for (routed chains: its language).
    field: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    tokens: Option<Vec<TokenView>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    stages: Option<Vec<TraceStage>>,
}

pub fn execute(args: TokensArgs) -> anyhow::Result<ExitCode> {
    let lang = match &args.lang {
        Some(l) => Some(LangCode::parse(l).ok_or_else(|| {
            Error::usage(format!("--lang: expected an ISO 639-1 code, found {l:?}"))
        })?),
        None => None,
    };
    let flags = ChainFlags {
        chains: Some(args.chain.clone()),
        chain_file: args.chain_file.clone(),
        stem_lang: args.stem_lang.clone(),
    };
    let spec = flags.resolve()?.into_iter().next().ok_or_else(|| Error::usage("no chain"))?;
    // `run` learns the word frequencies of `hashtags` steps from its corpus;
    // without --corpus the demo corpus stands in (as for `run` and `vet`),
    // and the user is told, since tags may split otherwise than in a run.
    let corpus = match (&args.corpus, spec.needs_word_freqs()) {
        (Some(path), _) => Some(path.clone()),
        (None, false) => None,
        (None, true) if Path::new(DEMO_CORPUS).is_file() => {
            eprintln!(
                "postassay: tokens: hashtag words learned from the demo corpus {DEMO_CORPUS}; \
                 pass --corpus FILE to split tags as a run on FILE does"
            );
            Some(PathBuf::from(DEMO_CORPUS))
        }
        (None, true) => {
            eprintln!(
                "postassay: tokens: no corpus to learn hashtag words from (no --corpus, and \
                 {DEMO_CORPUS} is absent): tags split only at case, digit and underscore \
                 boundaries, unlike a run"
            );
            None
        }
    };
    let ctx = AnalysisContext {
        word_freqs: match &corpus {
            Some(path) => {
                let posts = input::read_corpus(path)?;
                Some(Arc::new(WordFreqs::learn(posts.iter().map(|p| p.text.as_str()))))
            }
            None => None,
        },
    };
    let texts: Vec<String> = if args.text.len() == 1 && args.text[0] == "-" {
        let mut lines = Vec::new();
        for line in std::io::stdin().lock().lines() {
            let line = line.map_err(|e| Error::io(std::path::Path::new("<stdin>"), e))?;
            if !line.trim().is_empty() {
                lines.push(line);
            }
        }
        lines
    } else {
        vec![args.text.join(" ")]
    };
    let analyzer = Analyzer::build(&spec, &ctx)?;
    let mut outputs = Vec::with_capacity(texts.len());
    for text in texts {
        let (tokens, stages) = if args.trace {
            (None, Some(inspect::trace(&spec, &ctx, &text, lang)?))
        } else {
            (Some(inspect::tokenize(&analyzer, &text, lang)), None)
        };
        let detected = analyzer.detector().and_then(|d| d.detect(&text));
        let slot = analyzer.field_for_post(lang, detected.as_ref());
        let field = analyzer.fields().get(slot).map(|f| f.key.clone()).unwrap_or_default();
        outputs.push(Output { text, field, tokens, stages });
    }
    let rendered = match args.format {
        Format::Json => serde_json::to_string_pretty(&outputs)? + "\n",
        Format::Text => render(&outputs),
    };
    std::io::stdout().lock().write_all(rendered.as_bytes())?;
    Ok(ExitCode::SUCCESS)
}

fn token_line(t: &TokenView) -> String {
    format!("{:>4}  {:>5}..{:<5}  {}\n", t.position, t.offset_from, t.offset_to, t.text)
}

fn render(outputs: &[Output]) -> String {
    let mut s = String::new();
    for (i, o) in outputs.iter().enumerate() {
        if i > 0 {
            s.push('\n');
        }
        s.push_str(&format!("\"{}\" → field {}\n", o.text, o.field));
        if let Some(tokens) = &o.tokens {
            s.push_str(" pos  bytes         token\n");
            for t in tokens {
                s.push_str(&token_line(t));
            }
        }
        if let Some(stages) = &o.stages {
            for st in stages {
                let words: Vec<String> =
                    st.tokens.iter().map(|t| format!("{}@{}", t.text, t.position)).collect();
                s.push_str(&format!("  [{}] {:<22} {}\n", st.field, st.stage, words.join(" ")));
            }
        }
    }
    s
}
