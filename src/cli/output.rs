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
///
/// An existing path that is neither a regular file nor a directory (`-o /dev/null`, a named
/// pipe) is written in place: a rename cannot make a device or pipe atomic, and run as root it
/// would replace `/dev/null` itself with a plain file.
pub fn write_atomic_with(
    path: &Path,
    fill: impl FnOnce(&mut std::io::BufWriter<fs::File>) -> std::io::Result<()>,
) -> Result<(), Diagnostic> {
    let cannot =
        |e: std::io::Error| Diagnostic::bare(format!("cannot write `{}`: {e}", path.display()));
    if fs::metadata(path).is_ok_and(|m| !m.is_file() && !m.is_dir()) {
        let file = fs::OpenOptions::new()
            .write(true)
            .open(path)
            .map_err(cannot)?;
        let mut w = std::io::BufWriter::new(file);
        return fill(&mut w).and_then(|()| w.flush()).map_err(cannot);
    }
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
        cannot(e)
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A named pipe stays a pipe and receives the bytes (the same path `-o /dev/null` takes).
    #[cfg(unix)]
    #[test]
    fn devices_and_pipes_are_written_in_place() {
        use std::os::unix::fs::FileTypeExt;
        let dir = tempfile::tempdir().unwrap();
        let fifo = dir.path().join("pipe");
        let c = std::ffi::CString::new(fifo.to_str().unwrap()).unwrap();
        // SAFETY: a valid NUL-terminated path and a plain mode.
        assert_eq!(unsafe { libc::mkfifo(c.as_ptr(), 0o600) }, 0);
        // Open the reading end first, without blocking, so a regression (the pipe replaced by a
        // renamed file) fails the assertion instead of hanging the test.
        use std::io::Read;
        use std::os::unix::fs::OpenOptionsExt;
        let mut reader = fs::OpenOptions::new()
            .read(true)
            .custom_flags(libc::O_NONBLOCK)
            .open(&fifo)
            .unwrap();
        write_atomic(&fifo, b"hello").unwrap();
        let mut got = Vec::new();
        reader.read_to_end(&mut got).unwrap();
        assert_eq!(got, b"hello");
        assert!(fs::metadata(&fifo).unwrap().file_type().is_fifo());
        // A regular file is still replaced whole.
        let file = dir.path().join("f.txt");
        fs::write(&file, b"old contents").unwrap();
        write_atomic(&file, b"new").unwrap();
        assert_eq!(fs::read(&file).unwrap(), b"new");
    }
}
