//! Helpers shared by postassay's fuzz targets: the readers take a path, so
//! each input is written to one file of a per-process temporary directory
//! and read back from there.

use std::path::PathBuf;
use std::sync::OnceLock;

/// The per-process temporary directory (removed at exit is not needed:
/// libFuzzer ends the process; the directory lives under the system's
/// temporary directory).
fn dir() -> &'static tempfile::TempDir {
    static DIR: OnceLock<tempfile::TempDir> = OnceLock::new();
    DIR.get_or_init(|| tempfile::tempdir().expect("a temporary directory for the fuzz inputs"))
}

/// Write `prefix` then `data` to the file `name` of the temporary
/// directory and return its path.
pub fn input_file(name: &str, prefix: &[u8], data: &[u8]) -> PathBuf {
    let path = dir().path().join(name);
    let mut bytes = Vec::with_capacity(prefix.len() + data.len());
    bytes.extend_from_slice(prefix);
    bytes.extend_from_slice(data);
    std::fs::write(&path, bytes).expect("writing the fuzz input");
    path
}

/// An error must carry a message (the CLI prints it and exits 2); reading
/// it also runs the `Display` code of every problem.
pub fn check_error<T>(result: &postassay::Result<T>) {
    if let Err(e) = result {
        assert!(!e.to_string().is_empty(), "an error without a message");
    }
}
