//! Command-line surface (formats.md's "Commands that scripts rely on"). Each
//! subcommand has its own file with its clap arguments and a function that
//! turns them into a typed plan and hands it to the library. No evaluation
//! logic lives here.

mod cache;
mod common;
mod explain;
mod fetch;
mod gate;
mod judge;
mod pool;
mod run;
mod score;
mod tokens;
mod vet;

use std::process::ExitCode;

use clap::{Parser, Subcommand};

/// Exit code for success (and a passing gate).
pub const EXIT_OK: u8 = 0;
/// Exit code for bad input, bad usage or an I/O failure.
pub const EXIT_BAD_INPUT: u8 = 2;

/// Compare text-analysis chains for short multilingual posts with IR metrics
/// and paired significance tests.
#[derive(Debug, Parser)]
#[command(name = "postassay", version, about, long_about = None)]
pub struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Debug, Subcommand)]
enum Command {
    /// Index a corpus once per analysis chain, run the queries with BM25 and
    /// compare the chains (no input flags: the bundled demo bench).
    Run(run::RunArgs),
    /// Score existing ranked runs against judgments and compare them.
    Score(score::ScoreArgs),
    /// Send every query to live search endpoints (one request template per
    /// candidate) and write one run file per candidate for `score`.
    Fetch(fetch::FetchArgs),
    /// Show the tokens a chain makes of a text (`--trace`: after each step).
    Tokens(tokens::TokensArgs),
    /// Show, for one query and one post, each chain's analysed terms, the
    /// terms they share and the post's rank and BM25 score.
    Explain(explain::ExplainArgs),
    /// Compare a current report with a baseline report and exit 1 when a
    /// metric dropped more than allowed (for CI).
    Gate(gate::GateArgs),
    /// Gather the unjudged (query, post) pairs of every system's top K into a
    /// CSV to judge.
    Pool(pool::PoolArgs),
    /// Grade pooled pairs in the terminal, appending to a judgments file.
    Judge(judge::JudgeArgs),
    /// Diagnose chains on open linguistic data: conflation against lemma
    /// classes, routing accuracy by length, hashtag segmentation accuracy.
    Vet(vet::VetArgs),
    /// List the cached chain indexes with their size and age, or remove
    /// them (`cache drop`).
    Cache(cache::CacheArgs),
}

/// Run the parsed command line.
pub fn execute(cli: Cli) -> anyhow::Result<ExitCode> {
    match cli.command {
        Command::Run(args) => run::execute(args),
        Command::Score(args) => score::execute(args),
        Command::Fetch(args) => fetch::execute(args),
        Command::Tokens(args) => tokens::execute(args),
        Command::Explain(args) => explain::execute(args),
        Command::Gate(args) => gate::execute(args),
        Command::Pool(args) => pool::execute(args),
        Command::Judge(args) => judge::execute(args),
        Command::Vet(args) => vet::execute(args),
        Command::Cache(args) => cache::execute(args),
    }
}
