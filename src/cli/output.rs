//! Output helpers: atomic file writes, so a failure never leaves half a file behind.

use std::fs;
use std::io::Write;
use std::path::{Path, PathBuf};

use crate::lang::Diagnostic;

/// A temporary sibling path for `path`, unique per process.
fn temp_path(path: &Path) -> PathBuf {
    let name = path
        .file_name()
        .map_or_else(|| "out".into(), |n| n.to_string_lossy().into_owned());
    path.with_file_name(format!(".{name}.tmp{}", std::process::id()))
}

/// Writes `bytes` to `path` through a temporary file and a rename.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), Diagnostic> {
    write_atomic_with(path, |f| f.write_all(bytes))
}

/// Writes to `path` through a temporary file filled by `fill`, then renames it into place. On any
/// error the temporary file is removed and `path` is untouched.
pub fn write_atomic_with(
    path: &Path,
    fill: impl FnOnce(&mut std::io::BufWriter<fs::File>) -> std::io::Result<()>,
) -> Result<(), Diagnostic> {
    let tmp = temp_path(path);
    let result = (|| {
        let file = fs::File::create(&tmp)?;
        let mut w = std::io::BufWriter::new(file);
        fill(&mut w)?;
        w.flush()?;
        w.get_ref().sync_all()?;
        drop(w);
        fs::rename(&tmp, path)
    })();
    result.map_err(|e| {
        let _ = fs::remove_file(&tmp);
        Diagnostic::bare(format!("cannot write `{}`: {e}", path.display()))
    })
}
