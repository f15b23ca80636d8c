//! The one way slant writes an output file: into a temporary sibling that is renamed over the
//! destination only once everything is written, so a failure or a kill never leaves half a file.
//!
//! An existing destination that is neither a regular file nor a directory (`-o /dev/null`, a
//! named pipe) is written in place: a rename cannot make a device or pipe atomic, and run as
//! root it would replace `/dev/null` itself with a plain file.
//!
//! Not `tempfile`'s `NamedTempFile::persist`: it creates files with mode 0600, and an output file
//! should get the mode any other tool gives it (0666 less the umask).

use std::fs;
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};

use crate::base::Diagnostic;

/// Writes `bytes` to `path` atomically.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), Diagnostic> {
    write_atomic_with(path, |f| f.write_all(bytes))
}

/// Writes to `path` atomically, the content coming from `fill`. On any error the temporary file
/// is removed and `path` is untouched.
pub fn write_atomic_with(
    path: &Path,
    fill: impl FnOnce(&mut BufWriter<fs::File>) -> std::io::Result<()>,
) -> Result<(), Diagnostic> {
    let mut file = AtomicFile::create(path)?;
    let result = match file.writer.as_mut() {
        Some(w) => fill(w),
        None => Ok(()),
    };
    result.map_err(|e| file.error(e))?;
    file.commit()
}

/// An output file being written: bytes go to a temporary sibling (or, for a device or pipe, to
/// the destination itself), which [`AtomicFile::commit`] renames into place. Dropped without a
/// commit, the temporary file is removed.
pub struct AtomicFile {
    /// The temporary sibling; `None` when writing in place.
    tmp: Option<PathBuf>,
    dest: PathBuf,
    writer: Option<BufWriter<fs::File>>,
}

impl AtomicFile {
    /// Starts writing `dest`.
    pub fn create(dest: &Path) -> Result<AtomicFile, Diagnostic> {
        let cannot =
            |e: std::io::Error| Diagnostic::bare(format!("cannot write `{}`: {e}", dest.display()));
        let in_place = fs::metadata(dest).is_ok_and(|m| !m.is_file() && !m.is_dir());
        let (tmp, file) = if in_place {
            let file = fs::OpenOptions::new()
                .write(true)
                .open(dest)
                .map_err(cannot)?;
            (None, file)
        } else {
            let tmp = temp_path(dest);
            (Some(tmp.clone()), fs::File::create(&tmp).map_err(cannot)?)
        };
        Ok(AtomicFile {
            tmp,
            dest: dest.to_path_buf(),
            writer: Some(BufWriter::with_capacity(1 << 20, file)),
        })
    }

    fn error(&self, e: std::io::Error) -> Diagnostic {
        Diagnostic::bare(format!("cannot write `{}`: {e}", self.dest.display()))
    }

    /// Appends bytes.
    pub fn write(&mut self, bytes: &[u8]) -> Result<(), Diagnostic> {
        let result = match self.writer.as_mut() {
            Some(w) => w.write_all(bytes),
            None => Ok(()),
        };
        result.map_err(|e| self.error(e))
    }

    /// Flushes, syncs and renames the file into place.
    pub fn commit(mut self) -> Result<(), Diagnostic> {
        let Some(w) = self.writer.take() else {
            return Ok(());
        };
        let file = w.into_inner().map_err(|e| e.into_error());
        let result = match &self.tmp {
            Some(tmp) => file
                .and_then(|f| f.sync_all())
                .and_then(|()| fs::rename(tmp, &self.dest)),
            None => file.map(drop),
        };
        result.map_err(|e| {
            if let Some(tmp) = &self.tmp {
                let _ = fs::remove_file(tmp);
            }
            self.error(e)
        })
    }
}

impl Drop for AtomicFile {
    fn drop(&mut self) {
        if self.writer.take().is_some() {
            if let Some(tmp) = &self.tmp {
                let _ = fs::remove_file(tmp);
            }
        }
    }
}

/// A temporary sibling path for `path`, unique per process.
fn temp_path(path: &Path) -> PathBuf {
    let name = path
        .file_name()
        .map_or_else(|| "out".into(), |n| n.to_string_lossy().into_owned());
    path.with_file_name(format!(".{name}.tmp{}", std::process::id()))
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

    #[test]
    fn an_uncommitted_file_leaves_nothing_behind() {
        let dir = tempfile::tempdir().unwrap();
        let dest = dir.path().join("out.npy");
        fs::write(&dest, b"old").unwrap();
        let mut f = AtomicFile::create(&dest).unwrap();
        f.write(b"half of it").unwrap();
        drop(f);
        assert_eq!(fs::read(&dest).unwrap(), b"old");
        assert_eq!(fs::read_dir(dir.path()).unwrap().count(), 1);
        // A failing fill leaves the old file too.
        let err = write_atomic_with(&dest, |_| Err(std::io::Error::other("disk full")));
        assert!(err.unwrap_err().message.contains("disk full"));
        assert_eq!(fs::read(&dest).unwrap(), b"old");
        assert_eq!(fs::read_dir(dir.path()).unwrap().count(), 1);
    }
}
