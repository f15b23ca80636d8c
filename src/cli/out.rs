//! Standard output that never panics and never loses an error.
//!
//! `print!` panics when standard output fails (`> /dev/full`), and a streaming writer that
//! discards its error to cope with closed pipes silently loses the output on a full disk. Every
//! subcommand writes its standard output through [`out!`](crate::cli) / `outln!` or through
//! [`Stdout`]; the first failure is remembered here, later writes are skipped, and
//! [`finish`] (called once by `cli::main` after the subcommand) turns it into the exit code.
//!
//! A closed pipe (`slant new … | head`) ends the process quietly: `main` restores the default
//! `SIGPIPE` disposition, and should the signal be ignored by the parent, a `BrokenPipe` error
//! is not reported either.

use std::fmt;
use std::io::{self, Write};
use std::sync::Mutex;

/// The first error standard output gave, if any.
static FAILED: Mutex<Option<io::Error>> = Mutex::new(None);

fn failed() -> bool {
    FAILED.lock().map_or(true, |f| f.is_some())
}

fn record(e: io::Error) {
    if let Ok(mut f) = FAILED.lock() {
        if f.is_none() {
            *f = Some(e);
        }
    }
}

/// Writes formatted text to standard output; the backend of `out!` and `outln!`.
pub fn print(args: fmt::Arguments) {
    if failed() {
        return;
    }
    if let Err(e) = io::stdout().lock().write_fmt(args) {
        record(e);
    }
}

/// A buffered writer on standard output for streamed outputs (graphs, shots). Its errors are
/// returned to the caller, so a stream stops at the first failure, and remembered for
/// [`finish`], so the caller may drop them.
pub struct Stdout {
    inner: io::BufWriter<io::StdoutLock<'static>>,
}

impl Stdout {
    /// Locks standard output for a stream.
    pub fn lock() -> Stdout {
        Stdout {
            inner: io::BufWriter::with_capacity(1 << 16, io::stdout().lock()),
        }
    }
}

impl Write for Stdout {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        if failed() {
            return Err(io::Error::other("standard output failed earlier"));
        }
        self.inner.write(buf).inspect_err(|e| record(copy(e)))
    }

    fn flush(&mut self) -> io::Result<()> {
        self.inner.flush().inspect_err(|e| record(copy(e)))
    }
}

impl Drop for Stdout {
    fn drop(&mut self) {
        let _ = self.flush();
    }
}

fn copy(e: &io::Error) -> io::Error {
    io::Error::new(e.kind(), e.to_string())
}

/// Flushes standard output and returns the first error it gave, unless that error is a closed
/// pipe (the reader stopped reading: not a failure of slant's).
pub fn finish() -> Option<io::Error> {
    if let Err(e) = io::stdout().lock().flush() {
        record(e);
    }
    let e = FAILED.lock().ok()?.take()?;
    (e.kind() != io::ErrorKind::BrokenPipe).then_some(e)
}
