//! Output directories (`--out DIR` of `run`, `score` and `vet`): after a
//! command, its directory holds exactly that command's outputs, never a
//! stale file of an earlier run (a `runs/hashtag.csv` of a chain that is no
//! longer run), and postassay never deletes a file it did not write.
//!
//! How: every file is rendered first (by the caller), then written into a
//! new directory beside `DIR` (`.postassay-new-…`, same file system), which
//! is swapped in with two renames: the old `DIR` aside, the new one in its
//! place. Between the two renames `DIR` is briefly absent; a reader never
//! sees old and new files mixed. The old directory's files are then
//! removed one by one, each known to be postassay's.
//!
//! Faults: when the new directory cannot be written (a full disk, a
//! read-only place) it is removed again and the command fails naming `DIR`
//! and the system's reason; the previous `DIR` is untouched. A process
//! killed mid-swap leaves its temporary directories beside `DIR`, named
//! with its process id; the next command writing `DIR` finishes the job
//! once that process is gone (a half-written new directory is removed; the
//! previous directory, when `DIR` is missing, is put back).
//!
//! Which files are postassay's: those listed in the directory's manifest
//! ([`MANIFEST`], written with every output directory), or, in a directory
//! without one (written by an older version), the names postassay writes
//! ([`is_known_output`]). An output directory of another postassay command
//! inside `DIR` (`reports/score/` under `reports/`) is carried over
//! unchanged. Anything else is foreign: the command refuses it before any
//! work ([`check_out_dir`], exit 2), naming the entries.
//!
//! Place in the data flow: at the bottom, beside `error`; the renderers of
//! `report` make the bytes, this module only writes them.

use std::collections::BTreeSet;
use std::io::Write;
use std::path::{Path, PathBuf};

use crate::error::{Error, Result};

/// The file that lists, one relative path a line, what postassay wrote into
/// an output directory; it is replaced with the directory.
pub const MANIFEST: &str = ".postassay-outputs";

/// The prefix of postassay's temporary files and directories.
const TEMP_PREFIX: &str = ".postassay-";

/// The files `run` and `score` write at the top of their directory.
const REPORT_FILES: [&str; 6] =
    ["summary.csv", "per-query.csv", "comparisons.csv", "report.json", "report.md", "report.html"];

/// The subdirectory of `run`'s rankings.
const RUNS_DIR: &str = "runs";

/// The names of the files `vet` writes into its directory (rendered by
/// [`crate::report`]).
pub mod diagnostics {
    /// File names written into `--out`.
    pub const MARKDOWN_FILE: &str = "diagnostics.md";
    /// The JSON model.
    pub const JSON_FILE: &str = "diagnostics.json";
    /// Conflation table.
    pub const CONFLATION_CSV: &str = "diagnostics-conflation.csv";
    /// Routing accuracy table (overall and per length bucket).
    pub const ROUTING_CSV: &str = "diagnostics-routing.csv";
    /// Routing confusion counts.
    pub const CONFUSION_CSV: &str = "diagnostics-confusion.csv";
    /// Segmentation table.
    pub const SEGMENTATION_CSV: &str = "diagnostics-segmentation.csv";
    /// Word segmentation of scripts written without spaces.
    pub const UNSPACED_CSV: &str = "diagnostics-unspaced.csv";

    /// Every file written into `--out`.
    pub const FILES: [&str; 6] =
        [MARKDOWN_FILE, JSON_FILE, CONFLATION_CSV, ROUTING_CSV, CONFUSION_CSV, SEGMENTATION_CSV];
}

/// Entries named in a refusal before the rest are counted.
const NAMED: usize = 10;

/// One output file: its path relative to the output directory
/// (`runs/standard.csv`) and its bytes.
pub type OutputFile = (PathBuf, Vec<u8>);

/// Whether a path relative to an output directory is one postassay writes
/// (for directories without a manifest, written by versions before it):
/// the reports, `runs/NAME.csv`, the diagnostics of `vet`, or a temporary
/// file of an interrupted write.
pub fn is_known_output(rel: &Path) -> bool {
    let parts: Vec<&str> = rel.iter().filter_map(|p| p.to_str()).collect();
    match parts.as_slice() {
        [name] => {
            REPORT_FILES.contains(name)
                || diagnostics::FILES.contains(name)
                || is_temp_file(name)
                || *name == MANIFEST
        }
        [dir, name] => *dir == RUNS_DIR && name.ends_with(".csv"),
        _ => false,
    }
}

fn is_temp_file(name: &str) -> bool {
    name.starts_with(TEMP_PREFIX) && name.ends_with(".tmp")
}

/// What an existing output directory holds.
#[derive(Debug, Default)]
struct Inventory {
    /// Files postassay wrote (relative paths), removed once replaced.
    ours: Vec<PathBuf>,
    /// Subdirectories that held only such files (deepest last).
    dirs: Vec<PathBuf>,
    /// Output directories of other postassay commands, carried over.
    nested: Vec<PathBuf>,
    /// Entries postassay did not write.
    foreign: Vec<PathBuf>,
}

/// The manifest's paths, if the directory has one.
fn read_manifest(dir: &Path) -> Result<Option<BTreeSet<PathBuf>>> {
    let path = dir.join(MANIFEST);
    match std::fs::read_to_string(&path) {
        Ok(text) => Ok(Some(
            text.lines()
                .map(str::trim)
                .filter(|l| !l.is_empty() && !l.starts_with('#'))
                .map(PathBuf::from)
                .collect(),
        )),
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => Ok(None),
        Err(e) => Err(Error::io(&path, e)),
    }
}

/// Sorted entries of a directory.
fn entries(dir: &Path) -> Result<Vec<std::fs::DirEntry>> {
    let mut list: Vec<std::fs::DirEntry> = std::fs::read_dir(dir)
        .map_err(|e| Error::io(dir, e))?
        .collect::<std::io::Result<_>>()
        .map_err(|e| Error::io(dir, e))?;
    list.sort_by_key(std::fs::DirEntry::file_name);
    Ok(list)
}

/// Sort the entries of `root` into postassay's, nested output directories
/// and foreign ones. `new_top` holds the top-level names the new outputs
/// use (a directory of that name is replaced, not carried over).
fn inventory(root: &Path, new_top: &BTreeSet<String>) -> Result<Inventory> {
    let manifest = read_manifest(root)?;
    let mut inv = Inventory::default();
    walk(root, Path::new(""), manifest.as_ref(), new_top, &mut inv)?;
    Ok(inv)
}

fn walk(
    root: &Path,
    rel: &Path,
    manifest: Option<&BTreeSet<PathBuf>>,
    new_top: &BTreeSet<String>,
    inv: &mut Inventory,
) -> Result<()> {
    let ours = |path: &Path| match manifest {
        Some(listed) => {
            listed.contains(path)
                || path == Path::new(MANIFEST)
                || path.to_str().is_some_and(is_temp_file)
        }
        None => is_known_output(path),
    };
    // A subdirectory may hold postassay's files: one the manifest lists
    // files under, or `runs/` of an older version's directory.
    let may_hold_ours = |path: &Path| match manifest {
        Some(listed) => listed.iter().any(|l| l.starts_with(path)),
        None => path == Path::new(RUNS_DIR),
    };
    for entry in entries(&root.join(rel))? {
        let name = entry.file_name();
        let path = rel.join(&name);
        let kind = entry.file_type().map_err(|e| Error::io(&root.join(&path), e))?;
        if kind.is_file() && ours(&path) {
            inv.ours.push(path);
        } else if kind.is_dir() && rel.as_os_str().is_empty() && may_hold_ours(&path) {
            walk(root, &path, manifest, new_top, inv)?;
            inv.dirs.push(path);
        } else if kind.is_dir()
            && rel.as_os_str().is_empty()
            && !name.to_str().is_some_and(|n| new_top.contains(n))
            && is_output_dir(&root.join(&path))?
        {
            inv.nested.push(path);
        } else {
            inv.foreign.push(path);
        }
    }
    Ok(())
}

/// Whether `dir` is an output directory of a postassay command: it has a
/// manifest, or everything in it is a name postassay writes.
fn is_output_dir(dir: &Path) -> Result<bool> {
    if dir.join(MANIFEST).is_file() {
        return Ok(true);
    }
    let inv = inventory(dir, &BTreeSet::new())?;
    Ok(inv.foreign.is_empty() && inv.nested.is_empty() && !inv.ours.is_empty())
}

/// The refusal of a directory holding entries postassay did not write.
fn foreign_error(out: &Path, foreign: &[PathBuf]) -> Error {
    let mut named: Vec<String> =
        foreign.iter().take(NAMED).map(|p| p.display().to_string()).collect();
    if foreign.len() > NAMED {
        named.push(format!("… ({} more)", foreign.len() - NAMED));
    }
    Error::usage(format!(
        "--out {}: the directory holds files postassay did not write ({}); postassay replaces \
         its output directory with the new outputs and never deletes files it did not write, \
         so give a new or empty directory, or move those files elsewhere",
        out.display(),
        named.join(", ")
    ))
}

/// Refuse an output directory before any work: a path that is not a
/// directory, or a directory holding entries postassay did not write.
/// A missing directory is fine (it will be created).
pub fn check_out_dir(out: &Path) -> Result<()> {
    if !out.exists() {
        return Ok(());
    }
    if !out.is_dir() {
        return Err(Error::usage(format!(
            "--out {}: expected a directory, found a file",
            out.display()
        )));
    }
    let inv = inventory(out, &BTreeSet::new())?;
    if inv.foreign.is_empty() {
        Ok(())
    } else {
        Err(foreign_error(out, &inv.foreign))
    }
}

/// Make `out` hold exactly `files` (and the manifest), replacing whatever
/// postassay wrote there before; output directories of other commands
/// inside it are carried over. Refuses (nothing written) when `out` holds
/// entries postassay did not write.
pub fn replace_out_dir(out: &Path, files: &[OutputFile]) -> Result<()> {
    // Work on the directory a symbolic link points to, not on the link.
    let out = match std::fs::symlink_metadata(out) {
        Ok(m) if m.file_type().is_symlink() => {
            std::fs::canonicalize(out).map_err(|e| Error::io(out, e))?
        }
        _ => out.to_path_buf(),
    };
    let name = out
        .file_name()
        .and_then(|n| n.to_str())
        .ok_or_else(|| Error::usage(format!("--out {}: expected a directory name", out.display())))?
        .to_string();
    let parent = match out.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    if parent.is_dir() {
        recover_interrupted(&parent, &name, &out);
    }
    let new_top: BTreeSet<String> = files
        .iter()
        .filter_map(|(p, _)| p.iter().next().and_then(|c| c.to_str()).map(str::to_string))
        .collect();
    let old = if out.exists() {
        if !out.is_dir() {
            return Err(Error::usage(format!(
                "--out {}: expected a directory, found a file",
                out.display()
            )));
        }
        let inv = inventory(&out, &new_top)?;
        if !inv.foreign.is_empty() {
            return Err(foreign_error(&out, &inv.foreign));
        }
        Some(inv)
    } else {
        None
    };
    std::fs::create_dir_all(&parent).map_err(|e| not_written(&out, Error::io(&parent, e)))?;
    let staging = fresh_dir(&parent, &format!("{TEMP_PREFIX}new-{name}"))
        .map_err(|e| not_written(&out, e))?;
    if let Err(e) = fill(&staging, files) {
        // Best effort: the staging directory holds only what was just written.
        let _ = std::fs::remove_dir_all(&staging);
        return Err(not_written(&out, e));
    }
    let Some(inv) = old else {
        return std::fs::rename(&staging, &out).map_err(|e| {
            let _ = std::fs::remove_dir_all(&staging);
            not_written(&out, Error::io(&out, e))
        });
    };
    #[cfg(unix)]
    if let Ok(meta) = std::fs::metadata(&out) {
        let _ = std::fs::set_permissions(&staging, meta.permissions());
    }
    let aside = unique_name(&parent, &format!("{TEMP_PREFIX}old-{name}"));
    if let Err(e) = std::fs::rename(&out, &aside) {
        let _ = std::fs::remove_dir_all(&staging);
        return Err(not_written(&out, Error::io(&out, e)));
    }
    crate::pause::point("swapping");
    if let Err(e) = std::fs::rename(&staging, &out) {
        // Put the old directory back.
        let _ = std::fs::rename(&aside, &out);
        let _ = std::fs::remove_dir_all(&staging);
        return Err(not_written(&out, Error::io(&out, e)));
    }
    crate::pause::point("clearing");
    clear_aside(&aside, &out, &inv)
}

/// The last step of a swap: carry the nested output directories of the
/// previous directory (now at `aside`) over into `out` (unless `out` has one
/// of that name), then remove only what is known to be postassay's and the
/// emptied directories: a file that appeared meanwhile stays, and so does
/// the directory that holds it.
fn clear_aside(aside: &Path, out: &Path, inv: &Inventory) -> Result<()> {
    for nested in &inv.nested {
        if std::fs::symlink_metadata(out.join(nested)).is_ok() {
            continue;
        }
        std::fs::rename(aside.join(nested), out.join(nested))
            .map_err(|e| Error::io(&aside.join(nested), e))?;
    }
    for file in &inv.ours {
        let path = aside.join(file);
        std::fs::remove_file(&path).map_err(|e| Error::io(&path, e))?;
    }
    for dir in inv.dirs.iter().rev().map(|d| aside.join(d)).chain([aside.to_path_buf()]) {
        std::fs::remove_dir(&dir).map_err(|e| Error::io(&dir, e))?;
    }
    Ok(())
}

/// Finish what a postassay process that was killed while replacing `out`
/// (named `name`, in `parent`) left beside it, when that process is gone
/// (its id is in the names, see [`unique_name`]): a new directory it was
/// filling is removed (everything in it is postassay's); the previous
/// directory it had moved aside is put back when `out` is missing (killed
/// between the two renames, the previous outputs return whole), or cleared
/// like the last step of a swap when `out` is in place. Best effort: what
/// cannot be done is left as it is, and the command goes on.
fn recover_interrupted(parent: &Path, name: &str, out: &Path) {
    let Ok(list) = entries(parent) else { return };
    let new_stem = format!("{TEMP_PREFIX}new-{name}-");
    let old_stem = format!("{TEMP_PREFIX}old-{name}-");
    for entry in list {
        let Some(file) = entry.file_name().to_str().map(str::to_string) else { continue };
        let path = entry.path();
        if file.strip_prefix(&new_stem).is_some_and(owner_gone) {
            let _ = std::fs::remove_dir_all(&path);
        } else if file.strip_prefix(&old_stem).is_some_and(owner_gone) {
            if std::fs::symlink_metadata(out).is_err() {
                let _ = std::fs::rename(&path, out);
            } else if let Ok(inv) = inventory(&path, &BTreeSet::new()) {
                let _ = clear_aside(&path, out, &inv);
            }
        }
    }
}

/// Whether the process of a temporary name's `PID-N` ending is gone. Known
/// only where `/proc` lists processes (Linux); elsewhere, and for this
/// process, the answer is no, and nothing is touched.
fn owner_gone(suffix: &str) -> bool {
    let Some((pid, n)) = suffix.split_once('-') else { return false };
    let numeric = |s: &str| !s.is_empty() && s.bytes().all(|b| b.is_ascii_digit());
    if !numeric(pid) || !numeric(n) || pid == std::process::id().to_string() {
        return false;
    }
    let proc = Path::new("/proc");
    proc.join("self").exists() && !proc.join(pid).exists()
}

/// The error of an output directory that could not be written: names
/// `--out` and says the previous outputs are kept, then the cause (the path
/// and the system's reason).
fn not_written(out: &Path, cause: Error) -> Error {
    Error::usage(format!(
        "--out {}: the outputs could not be written (any previous outputs there are kept \
         unchanged): {cause}",
        out.display()
    ))
}

/// Write `files` and the manifest into the (new, empty) directory `dir`.
fn fill(dir: &Path, files: &[OutputFile]) -> Result<()> {
    let mut manifest = String::from(
        "# Files postassay wrote into this directory. It replaces them, and only them, when it \
         writes here again.\n",
    );
    for (rel, bytes) in files {
        let path = dir.join(rel);
        if let Some(sub) = path.parent() {
            std::fs::create_dir_all(sub).map_err(|e| Error::io(sub, e))?;
        }
        write_synced(&path, bytes)?;
        crate::pause::point("writing");
        manifest.push_str(&rel.to_string_lossy().replace('\\', "/"));
        manifest.push('\n');
    }
    write_synced(&dir.join(MANIFEST), manifest.as_bytes())
}

/// Create a file, write it and flush it to disk.
fn write_synced(path: &Path, bytes: &[u8]) -> Result<()> {
    let mut file = std::fs::File::create(path).map_err(|e| Error::io(path, e))?;
    file.write_all(bytes).map_err(|e| Error::io(path, e))?;
    file.sync_all().map_err(|e| Error::io(path, e))
}

/// A path in `parent` named `stem-PID-N` that does not exist yet.
fn unique_name(parent: &Path, stem: &str) -> PathBuf {
    let pid = std::process::id();
    (0u32..)
        .map(|n| parent.join(format!("{stem}-{pid}-{n}")))
        .find(|p| std::fs::symlink_metadata(p).is_err())
        .unwrap_or_else(|| parent.join(format!("{stem}-{pid}")))
}

/// Create a new directory in `parent` (ordinary permissions: 0777 less the
/// umask on Unix), named after `stem`.
fn fresh_dir(parent: &Path, stem: &str) -> Result<PathBuf> {
    loop {
        let dir = unique_name(parent, stem);
        match std::fs::create_dir(&dir) {
            Ok(()) => return Ok(dir),
            // Taken between the look and the creation: try the next name.
            Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => continue,
            Err(e) => return Err(Error::io(&dir, e)),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn files(names: &[&str]) -> Vec<OutputFile> {
        names.iter().map(|n| (PathBuf::from(n), n.as_bytes().to_vec())).collect()
    }

    fn listing(dir: &Path) -> Vec<String> {
        let mut out = Vec::new();
        for entry in walk_all(dir) {
            out.push(entry.strip_prefix(dir).unwrap().display().to_string());
        }
        out.sort();
        out
    }

    fn walk_all(dir: &Path) -> Vec<PathBuf> {
        let mut out = Vec::new();
        for e in std::fs::read_dir(dir).unwrap() {
            let p = e.unwrap().path();
            if p.is_dir() {
                out.extend(walk_all(&p));
            } else {
                out.push(p);
            }
        }
        out
    }

    #[test]
    fn a_second_write_leaves_no_stale_file_and_keeps_nested_outputs() {
        let tmp = tempfile::tempdir().unwrap();
        let out = tmp.path().join("reports");
        replace_out_dir(&out, &files(&["report.md", "runs/a.csv", "runs/b.csv"])).unwrap();
        // Another command's output directory inside it.
        replace_out_dir(&out.join("score"), &files(&["report.md"])).unwrap();
        replace_out_dir(&out, &files(&["report.md", "runs/a.csv"])).unwrap();
        assert_eq!(
            listing(&out),
            [
                ".postassay-outputs",
                "report.md",
                "runs/a.csv",
                "score/.postassay-outputs",
                "score/report.md"
            ]
        );
        let manifest = std::fs::read_to_string(out.join(MANIFEST)).unwrap();
        assert!(manifest.ends_with("\nreport.md\nruns/a.csv\n"), "{manifest}");
        // Nothing left beside it.
        let siblings: Vec<_> = std::fs::read_dir(tmp.path()).unwrap().collect();
        assert_eq!(siblings.len(), 1);
    }

    #[test]
    fn foreign_entries_are_refused_and_kept() {
        let tmp = tempfile::tempdir().unwrap();
        let out = tmp.path().join("out");
        replace_out_dir(&out, &files(&["report.md", "runs/a.csv"])).unwrap();
        std::fs::write(out.join("notes.txt"), "mine").unwrap();
        std::fs::write(out.join("runs/mine.csv"), "mine").unwrap();
        std::fs::create_dir(out.join("data")).unwrap();
        let e = replace_out_dir(&out, &files(&["report.md"])).unwrap_err().to_string();
        assert!(e.contains("did not write (data, notes.txt, runs/mine.csv)"), "{e}");
        assert!(check_out_dir(&out).is_err());
        assert_eq!(std::fs::read_to_string(out.join("notes.txt")).unwrap(), "mine");
        assert_eq!(std::fs::read_to_string(out.join("runs/a.csv")).unwrap(), "runs/a.csv");
    }

    #[test]
    fn a_directory_of_an_older_version_is_recognised_by_its_names() {
        let tmp = tempfile::tempdir().unwrap();
        let out = tmp.path().join("reports");
        std::fs::create_dir_all(out.join("runs")).unwrap();
        for f in ["report.json", "summary.csv", "runs/hashtag.csv", ".postassay-x1.tmp"] {
            std::fs::write(out.join(f), "old").unwrap();
        }
        // vet's outputs of an older version, in a subdirectory.
        std::fs::create_dir(out.join("diagnostics")).unwrap();
        std::fs::write(out.join("diagnostics/diagnostics.md"), "old").unwrap();
        check_out_dir(&out).unwrap();
        replace_out_dir(&out, &files(&["report.json", "runs/standard.csv"])).unwrap();
        assert_eq!(
            listing(&out),
            [
                ".postassay-outputs",
                "diagnostics/diagnostics.md",
                "report.json",
                "runs/standard.csv"
            ]
        );
        // Without a manifest a name postassay does not write is foreign.
        std::fs::write(out.join("diagnostics/notes.txt"), "x").unwrap();
        let e = check_out_dir(&out).unwrap_err().to_string();
        assert!(e.contains("(diagnostics)"), "{e}");
    }

    #[test]
    fn a_file_is_not_a_directory() {
        let tmp = tempfile::tempdir().unwrap();
        let f = tmp.path().join("f");
        std::fs::write(&f, "x").unwrap();
        assert!(check_out_dir(&f).unwrap_err().to_string().contains("found a file"));
        assert!(check_out_dir(&tmp.path().join("absent")).is_ok());
    }
}
