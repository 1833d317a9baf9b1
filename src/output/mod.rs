//! File writing, for every command that writes: [`write_atomic`] writes a
//! single file (`gate --junit`, `pool --out`) and [`out_dir`] swaps in a
//! whole output directory (`run`, `score`, `vet`), so that a reader never
//! sees a file half-written. Renderers only make bytes; they write nothing.
//!
//! Place in the data flow: beside `error`, at the bottom; it knows nothing
//! of what the bytes say.

pub mod out_dir;

use std::io::Write;
use std::path::Path;

use crate::error::{Error, Result};

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
