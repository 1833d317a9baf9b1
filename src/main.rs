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

/// A closed stdout (e.g. piped into `head`) is not an error. The I/O error
/// is either in the chain itself or inside the library's error (which
/// reports no source, so that its message is printed once).
fn is_broken_pipe(err: &anyhow::Error) -> bool {
    err.chain().any(|e| {
        e.downcast_ref::<std::io::Error>()
            .or_else(|| e.downcast_ref::<postassay::error::Error>().and_then(|p| p.io_error()))
            .is_some_and(|io| io.kind() == std::io::ErrorKind::BrokenPipe)
    })
}
