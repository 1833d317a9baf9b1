//! Reports: the report model ([`model`]: the report, the diagnostics and the
//! gate's outcome, filled by `bench`, `diagnose` and `gate`) and its
//! renderings (CSV, JSON, Markdown, HTML, SVG, JUnit). Report renders what
//! it is handed: nothing here computes a number, and nothing here imports
//! `bench`, `index`, `search`, `diagnose`, `gate`, `pool` or `judge`.
//!
//! [`write_outputs`] writes every file of formats.md's output table into the
//! `--out` directory, which afterwards holds exactly these outputs: they are
//! written into a new directory that is swapped in
//! ([`crate::output::out_dir`], shared by
//! every command that writes a directory), so a reader never sees a
//! half-written file or a stale one of an earlier run. A single file
//! (`gate --junit`, `pool --out`) is written the same way, by
//! [`crate::output::write_atomic`].

pub mod csv;
pub mod diagnostics;
pub mod gate_junit;
pub mod gate_markdown;
pub mod html;
pub mod markdown;
pub mod model;
pub mod svg;
pub mod text;

use std::path::{Path, PathBuf};

use crate::error::{Error, Result};
use crate::ids::ChainName;
use crate::input::{write_run, Run};
use crate::output::out_dir::{replace_out_dir, OutputFile};
use model::diagnostics::Diagnostics;
pub use model::Report;

/// Serialise the report model as `report.json` text.
pub fn to_json(report: &Report) -> Result<String> {
    serde_json::to_string_pretty(report)
        .map(|mut s| {
            s.push('\n');
            s
        })
        .map_err(|e| Error::usage(format!("serialising report.json: {e}")))
}

/// Make `out` hold exactly the output files (created when missing): the
/// CSVs, `report.json`, `report.md`, `report.html` and, for `run`,
/// `runs/NAME.csv`. Files postassay wrote there before are replaced (a chain
/// no longer run leaves no `runs/NAME.csv`); a directory holding files
/// postassay did not write is refused ([`replace_out_dir`]).
pub fn write_outputs(out: &Path, report: &Report, runs: &[(ChainName, &Run)]) -> Result<()> {
    // Render everything first so a rendering error writes nothing.
    let mut files: Vec<OutputFile> = vec![
        (PathBuf::from("summary.csv"), csv::summary_csv(report)?.into_bytes()),
        (PathBuf::from("per-query.csv"), csv::per_query_csv(report)?.into_bytes()),
        (PathBuf::from("comparisons.csv"), csv::comparisons_csv(report)?.into_bytes()),
        (PathBuf::from("report.json"), to_json(report)?.into_bytes()),
        (PathBuf::from("report.md"), markdown::render(report).into_bytes()),
        (PathBuf::from("report.html"), html::render(report).into_bytes()),
    ];
    for (name, run) in runs {
        let mut bytes = Vec::new();
        write_run(run, &mut bytes)?;
        files.push((Path::new("runs").join(format!("{name}.csv")), bytes));
    }
    replace_out_dir(out, &files)
}

/// Make `out` hold exactly the output files of `vet` (created when missing; the
/// files of an earlier `vet` there are replaced, see
/// [`replace_out_dir`]); returns the paths written.
pub fn write_diagnostics(out: &Path, d: &Diagnostics) -> Result<Vec<PathBuf>> {
    let files: Vec<OutputFile> = diagnostics::render_all(d)?
        .into_iter()
        .map(|(name, bytes)| (PathBuf::from(name), bytes))
        .collect();
    replace_out_dir(out, &files)?;
    Ok(files.iter().map(|(name, _)| out.join(name)).collect())
}
