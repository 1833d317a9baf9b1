//! Reports: the model computed by the bench and its renderings (CSV, JSON,
//! Markdown, HTML). Last stage of the data flow; nothing here computes a number.
//!
//! [`write_outputs`] writes every file of formats.md's output table into the
//! `--out` directory, which afterwards holds exactly these outputs: they are
//! written into a new directory that is swapped in ([`out_dir`], shared by
//! every command that writes a directory), so a reader never sees a
//! half-written file or a stale one of an earlier run. [`write_atomic`]
//! writes a single file (`gate --junit`, `pool --out`) the same way.

pub mod csv;
pub mod html;
pub mod markdown;
pub mod model;
pub mod out_dir;
pub mod svg;
pub mod text;

use std::io::Write;
use std::path::{Path, PathBuf};

use crate::error::{Error, Result};
use crate::ids::ChainName;
use crate::input::{write_run, Run};
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

/// Write `bytes` to `path` atomically: a temporary sibling file, flushed and
/// synced, then renamed over the target. The file gets the permissions an
/// ordinary new file would (0666 less the umask).
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<()> {
    let dir = path.parent().filter(|p| !p.as_os_str().is_empty()).unwrap_or(Path::new("."));
    let mut builder = tempfile::Builder::new();
    builder.prefix(".postassay-").suffix(".tmp");
    // Temporary files are private (0600) by default; an output file is an
    // ordinary file, readable as the user's umask allows.
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        builder.permissions(std::fs::Permissions::from_mode(0o666));
    }
    let mut tmp = builder.tempfile_in(dir).map_err(|e| Error::io(dir, e))?;
    tmp.write_all(bytes).map_err(|e| Error::io(path, e))?;
    tmp.as_file().sync_all().map_err(|e| Error::io(path, e))?;
    tmp.persist(path).map_err(|e| Error::io(path, e.error))?;
    Ok(())
}

/// Make `out` hold exactly the output files (created when missing): the
/// CSVs, `report.json`, `report.md`, `report.html` and, for `run`,
/// `runs/NAME.csv`. Files postassay wrote there before are replaced (a chain
/// no longer run leaves no `runs/NAME.csv`); a directory holding files
/// postassay did not write is refused ([`out_dir::replace_out_dir`]).
pub fn write_outputs(out: &Path, report: &Report, runs: &[(ChainName, &Run)]) -> Result<()> {
    // Render everything first so a rendering error writes nothing.
    let mut files: Vec<out_dir::OutputFile> = vec![
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
    out_dir::replace_out_dir(out, &files)
}
