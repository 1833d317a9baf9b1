//! The `postassay` binary: parse arguments, run the command, map the outcome
//! to an exit code (0 success, 1 regression found by a gate, 2 bad input or
//! usage). Nothing else happens here.

mod cli;

use std::process::ExitCode;

use clap::Parser;

fn main() -> ExitCode {
    let parsed = cli::Cli::parse();
    match cli::execute(parsed) {
        Ok(code) => code,
        Err(err) => {
            if is_broken_pipe(&err) {
                return ExitCode::from(cli::EXIT_OK);
            }
            eprintln!("postassay: {err:#}");
            ExitCode::from(cli::EXIT_BAD_INPUT)
        }
    }
}

/// A closed stdout (e.g. piped into `head`) is not an error.
fn is_broken_pipe(err: &anyhow::Error) -> bool {
    err.chain().any(|e| {
        e.downcast_ref::<std::io::Error>()
            .is_some_and(|io| io.kind() == std::io::ErrorKind::BrokenPipe)
    })
}
