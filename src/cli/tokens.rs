//! `postassay tokens`: show what a chain makes of a text — each token with
//! its position and byte offsets, or (`--trace`) the stream after the
//! tokenizer and after every step, so a user sees which step changed what.
//! Several chains (`--chain a,b`) are shown side by side, each text once.

use std::io::{Read, Write};
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

use super::common::{check_file_flag, ChainFlags, DEMO_CORPUS};

#[derive(Debug, Clone, Copy, ValueEnum)]
enum Format {
    Text,
    Json,
}

#[derive(Debug, Args)]
pub struct TokensArgs {
    /// The chain to apply (built-in or from --chain-file); several,
    /// comma-separated, are shown side by side.
    #[arg(long = "chain", value_name = "NAME[,NAME...]")]
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
    /// The chain that analysed the text.
    chain: String,
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
    let specs = flags.resolve()?;
    if specs.is_empty() {
        return Err(Error::usage("--chain: expected at least one chain name").into());
    }
    // `run` learns the word frequencies of `hashtags` steps from its corpus;
    // without --corpus the demo corpus stands in (as for `run` and `vet`),
    // and the user is told, since tags may split otherwise than in a run.
    let needs_word_freqs = specs.iter().any(|s| s.needs_word_freqs());
    let corpus = match (&args.corpus, needs_word_freqs) {
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
                check_file_flag("--corpus", path)?;
                let posts = input::read_corpus(path)?;
                Some(Arc::new(WordFreqs::learn(posts.iter().map(|p| p.text.as_str()))))
            }
            None => None,
        },
    };
    let texts: Vec<String> = if args.text.len() == 1 && args.text[0] == "-" {
        let mut bytes = Vec::new();
        let stdin = Path::new("<stdin>");
        std::io::stdin().lock().read_to_end(&mut bytes).map_err(|e| Error::io(stdin, e))?;
        stdin_texts(&bytes).map_err(|(line, message)| Error::at_line(stdin, line, message))?
    } else {
        vec![args.text.join(" ")]
    };
    let analyzers =
        specs.iter().map(|spec| Analyzer::build(spec, &ctx)).collect::<Result<Vec<_>, _>>()?;
    // Text-major: each text with every chain in `--chain` order.
    let mut outputs = Vec::with_capacity(texts.len() * specs.len());
    for text in texts {
        for (spec, analyzer) in specs.iter().zip(&analyzers) {
            let (tokens, stages) = if args.trace {
                (None, Some(inspect::trace(spec, &ctx, &text, lang)?))
            } else {
                (Some(inspect::tokenize(analyzer, &text, lang)), None)
            };
            let detected = analyzer.detector().and_then(|d| d.detect(&text));
            let slot = analyzer.field_for_post(lang, detected.as_ref());
            let field = analyzer.fields().get(slot).map(|f| f.key.clone()).unwrap_or_default();
            let chain = spec.name.as_str().to_string();
            outputs.push(Output { text: text.clone(), chain, field, tokens, stages });
        }
    }
    let rendered = match args.format {
        Format::Json => serde_json::to_string_pretty(&outputs)? + "\n",
        Format::Text => render(&outputs, specs.len()),
    };
    std::io::stdout().lock().write_all(rendered.as_bytes())?;
    Ok(ExitCode::SUCCESS)
}

/// The texts of standard input, one per non-blank line (`\n` or `\r\n`
/// ends); a line that is not UTF-8 is `(line number, message)`.
fn stdin_texts(bytes: &[u8]) -> Result<Vec<String>, (u64, String)> {
    let mut texts = Vec::new();
    let body = bytes.strip_suffix(b"\n").unwrap_or(bytes);
    for (number, line) in (1u64..).zip(body.split(|&b| b == b'\n')) {
        let line = line.strip_suffix(b"\r").unwrap_or(line);
        let text =
            std::str::from_utf8(line).map_err(|e| (number, input::utf8_message(e, "the line")))?;
        if !text.trim().is_empty() {
            texts.push(text.to_string());
        }
    }
    Ok(texts)
}

const TOKEN_HEADER: &str = " pos  bytes         token";

fn token_line(t: &TokenView) -> String {
    format!("{:>4}  {:>5}..{:<5}  {}", t.position, t.offset_from, t.offset_to, t.text)
}

fn stage_line(st: &TraceStage) -> String {
    let words: Vec<String> =
        st.tokens.iter().map(|t| format!("{}@{}", t.text, t.position)).collect();
    format!("  [{}] {:<22} {}\n", st.field, st.stage, words.join(" "))
}

/// Text output: each text once, then each chain's tokens (side by side
/// when there are several chains) or trace (one chain after the other).
fn render(outputs: &[Output], chains: usize) -> String {
    let mut s = String::new();
    for (i, group) in outputs.chunks(chains.max(1)).enumerate() {
        if i > 0 {
            s.push('\n');
        }
        let (Some(first), true) = (group.first(), chains > 1) else {
            for o in group {
                s.push_str(&format!("\"{}\" → field {}\n", o.text, o.field));
                if let Some(tokens) = &o.tokens {
                    s.push_str(TOKEN_HEADER);
                    s.push('\n');
                    for t in tokens {
                        s.push_str(&token_line(t));
                        s.push('\n');
                    }
                }
                o.stages.iter().flatten().for_each(|st| s.push_str(&stage_line(st)));
            }
            continue;
        };
        s.push_str(&format!("\"{}\"\n", first.text));
        if group.iter().all(|o| o.tokens.is_some()) {
            let columns: Vec<Vec<String>> = group
                .iter()
                .map(|o| {
                    let mut cells = vec![format!("{} → field {}", o.chain, o.field)];
                    cells.push(TOKEN_HEADER.to_string());
                    cells.extend(o.tokens.iter().flatten().map(token_line));
                    cells
                })
                .collect();
            s.push_str(&side_by_side(&columns));
        } else {
            for o in group {
                s.push_str(&format!("{} → field {}\n", o.chain, o.field));
                o.stages.iter().flatten().for_each(|st| s.push_str(&stage_line(st)));
            }
        }
    }
    s
}

/// Columns of cells laid out side by side, each padded to its widest cell
/// and separated by ` │ `; shorter columns get empty cells.
fn side_by_side(columns: &[Vec<String>]) -> String {
    let widths: Vec<usize> =
        columns.iter().map(|c| c.iter().map(|x| display_width(x)).max().unwrap_or(0)).collect();
    let rows = columns.iter().map(Vec::len).max().unwrap_or(0);
    let mut s = String::new();
    for row in 0..rows {
        let mut line = String::new();
        for (c, (column, width)) in columns.iter().zip(&widths).enumerate() {
            let cell = column.get(row).map_or("", String::as_str);
            if c > 0 {
                line.push_str(" │ ");
            }
            line.push_str(cell);
            line.push_str(&" ".repeat(width.saturating_sub(display_width(cell))));
        }
        s.push_str(line.trim_end());
        s.push('\n');
    }
    s
}

/// Columns a terminal gives `text`, near enough for aligning tokens: marks,
/// joiners and variation selectors take none; East Asian wide letters and
/// emoji take two (the wide ranges of UAX #11, East Asian Width, from
/// memory); everything else one.
fn display_width(text: &str) -> usize {
    text.chars()
        .map(|c| match c as u32 {
            0x300..=0x36F | 0x200B..=0x200F | 0xFE00..=0xFE0F | 0x1F3FB..=0x1F3FF => 0,
            0x1100..=0x115F
            | 0x2E80..=0xA4CF
            | 0xAC00..=0xD7A3
            | 0xF900..=0xFAFF
            | 0xFE30..=0xFE4F
            | 0xFF00..=0xFF60
            | 0xFFE0..=0xFFE6
            | 0x1F300..=0x1F64F
            | 0x1F680..=0x1F6FF
            | 0x1F900..=0x1F9FF
            | 0x20000..=0x3FFFD => 2,
            _ => 1,
        })
        .sum()
}
