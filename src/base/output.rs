//! The one way slant writes an output file: into a temporary sibling that is renamed over the
//! destination only once everything is written, so a failure or a kill never leaves half a file.
//!
//! An existing destination that is neither a regular file nor a directory (`-o /dev/null`, a
//! named pipe) is written in place: a rename cannot make a device or pipe atomic, and run as
//! root it would replace `/dev/null` itself with a plain file.
//!
//! Not `tempfile`'s `NamedTempFile::persist`: it creates files with mode 0600, and an output file
//! should get the mode any other tool gives it (0666 less the umask).
//!
//! A destination that is a symbolic link is written through the link (the link stays a link).
//! Temporary siblings left by a killed run (`.NAME.tmpPID` of a process that no longer runs) are
//! removed the next time the same destination is written.
//!
//! Outputs of several files that only make sense together (`shots` arrays, `graph --format mtx`)
//! are written as an [`OutputSet`]: every file is written and synced first, the old manifest is
//! removed, the files are renamed into place, and a manifest naming each file's size and hash
//! is written last. A set whose manifest is missing or disagrees with its files was cut short
//! ([`check_output_set`] says which file).

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
        let dest = &follow_links(dest);
        remove_stale_temporaries(dest);
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

    /// Flushes and syncs what was written, without renaming it into place yet.
    pub fn sync(&mut self) -> Result<(), Diagnostic> {
        let result = match self.writer.as_mut() {
            Some(w) => w.flush().and_then(|()| match &self.tmp {
                Some(_) => w.get_ref().sync_all(),
                None => Ok(()),
            }),
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
    path.with_file_name(format!("{}{}", temp_prefix(path), std::process::id()))
}

/// `.NAME.tmp`: the temporary siblings of `path` are this followed by a process id.
fn temp_prefix(path: &Path) -> String {
    let name = path
        .file_name()
        .map_or_else(|| "out".into(), |n| n.to_string_lossy().into_owned());
    format!(".{name}.tmp")
}

/// The file a destination names: a symbolic link is followed (to its target, even one that does
/// not exist yet), so writing replaces the target and keeps the link.
fn follow_links(dest: &Path) -> PathBuf {
    match fs::symlink_metadata(dest) {
        Ok(m) if m.file_type().is_symlink() => {}
        _ => return dest.to_path_buf(),
    }
    match fs::metadata(dest) {
        // A link to a device or pipe (`/dev/stdout`) is written in place, through the link.
        Ok(m) if !m.is_file() => return dest.to_path_buf(),
        Ok(_) => {
            if let Ok(real) = fs::canonicalize(dest) {
                return real;
            }
        }
        Err(_) => {}
    }
    // A dangling link: follow it by hand to the file it will name.
    let mut path = dest.to_path_buf();
    // A bound on the chain, as the kernel has one: a loop of links is then written as is and
    // fails with the kernel's own message.
    for _ in 0..40 {
        match fs::symlink_metadata(&path) {
            Ok(m) if m.file_type().is_symlink() => match fs::read_link(&path) {
                Ok(target) => {
                    path = match path.parent() {
                        Some(parent) if target.is_relative() => parent.join(target),
                        _ => target,
                    }
                }
                Err(_) => break,
            },
            _ => break,
        }
    }
    path
}

/// Removes `.NAME.tmpPID` siblings of `dest` left by processes that no longer run (a killed
/// run's half-written output, possibly hundreds of megabytes). Best effort: a sibling that
/// cannot be removed is left alone.
fn remove_stale_temporaries(dest: &Path) {
    let prefix = temp_prefix(dest);
    let dir = match dest.parent() {
        Some(p) if !p.as_os_str().is_empty() => p,
        _ => Path::new("."),
    };
    let Ok(entries) = fs::read_dir(dir) else {
        return;
    };
    for entry in entries.flatten() {
        let name = entry.file_name();
        let Some(pid) = name
            .to_str()
            .and_then(|n| n.strip_prefix(&prefix))
            .and_then(|p| p.parse::<u32>().ok())
        else {
            continue;
        };
        if pid != std::process::id() && !process_runs(pid) {
            let _ = fs::remove_file(entry.path());
        }
    }
}

/// Whether process `pid` exists (a process of another user counts as running).
#[cfg(unix)]
fn process_runs(pid: u32) -> bool {
    let Ok(pid) = libc::pid_t::try_from(pid) else {
        return false;
    };
    // SAFETY: signal 0 only checks that the process exists and may be signalled.
    let rc = unsafe { libc::kill(pid, 0) };
    rc == 0 || std::io::Error::last_os_error().raw_os_error() == Some(libc::EPERM)
}

#[cfg(not(unix))]
fn process_runs(_pid: u32) -> bool {
    true
}

/// Name of the manifest of an [`OutputSet`] in its directory.
pub const SET_MANIFEST: &str = "slant-set.json";

/// Several output files in one directory written as a set (see the module docs).
pub struct OutputSet {
    dir: PathBuf,
    about: serde_json::Value,
    files: Vec<(String, AtomicFile, Hasher)>,
}

impl OutputSet {
    /// Starts writing the files `names` in `dir` (created if needed). `about` describes the run
    /// (subcommand, inputs, noise, seed) and is kept in the manifest.
    pub fn create(
        dir: &Path,
        names: &[&str],
        about: serde_json::Value,
    ) -> Result<OutputSet, Diagnostic> {
        fs::create_dir_all(dir)
            .map_err(|e| Diagnostic::bare(format!("cannot create `{}`: {e}", dir.display())))?;
        let mut files = Vec::new();
        for name in names {
            files.push((
                name.to_string(),
                AtomicFile::create(&dir.join(name))?,
                Hasher::default(),
            ));
        }
        Ok(OutputSet {
            dir: dir.to_path_buf(),
            about,
            files,
        })
    }

    /// Appends bytes to file `k` (in the order of the names given to [`OutputSet::create`]).
    pub fn write(&mut self, k: usize, bytes: &[u8]) -> Result<(), Diagnostic> {
        let (_, file, hash) = &mut self.files[k];
        hash.update(bytes);
        file.write(bytes)
    }

    /// Syncs every file, then renames them into place and writes the manifest.
    pub fn commit(self) -> Result<(), Diagnostic> {
        let mut entries = Vec::new();
        let mut ready = Vec::new();
        for (name, mut file, hash) in self.files {
            file.sync()?;
            entries.push(serde_json::json!({
                "name": name,
                "bytes": hash.bytes,
                "hash": hash.hex(),
            }));
            ready.push(file);
        }
        // No manifest while the files change: a kill between two renames leaves a set that
        // says it is incomplete instead of one that vouches for a mixture.
        let manifest = self.dir.join(SET_MANIFEST);
        match fs::remove_file(&manifest) {
            Err(e) if e.kind() != std::io::ErrorKind::NotFound => {
                return Err(Diagnostic::bare(format!(
                    "cannot replace `{}`: {e}",
                    manifest.display()
                )))
            }
            _ => {}
        }
        for file in ready {
            file.commit()?;
        }
        let text = serde_json::to_string_pretty(&serde_json::json!({
            "set": 1,
            "run": run_id(),
            "about": self.about,
            "files": entries,
        }))
        .map_err(|e| Diagnostic::bare(format!("cannot encode the manifest: {e}")))?;
        write_atomic(&manifest, format!("{text}\n").as_bytes())
    }
}

/// A run id: the time in nanoseconds and the process id, unique enough to tell two runs apart.
fn run_id() -> String {
    let nanos = std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map_or(0, |d| d.as_nanos());
    format!("{nanos:x}-{}", std::process::id())
}

/// Checks the set in `dir`: its manifest exists and every file it names has the recorded size
/// and hash. Returns the manifest.
pub fn check_output_set(dir: &Path) -> Result<serde_json::Value, Diagnostic> {
    let manifest = dir.join(SET_MANIFEST);
    let incomplete = |why: String| {
        Diagnostic::bare(format!(
            "`{}` is not a complete output set: {why}",
            dir.display()
        ))
        .with_hint("the run that wrote it was cut short; run it again")
    };
    let text = fs::read_to_string(&manifest)
        .map_err(|e| incomplete(format!("cannot read `{SET_MANIFEST}`: {e}")))?;
    let value: serde_json::Value = serde_json::from_str(&text)
        .map_err(|e| incomplete(format!("`{SET_MANIFEST}` is damaged: {e}")))?;
    let files = value["files"]
        .as_array()
        .ok_or_else(|| incomplete(format!("`{SET_MANIFEST}` lists no files")))?;
    for f in files {
        let name = f["name"].as_str().unwrap_or_default();
        if name.is_empty() || name.contains(['/', '\\']) || name.starts_with('.') {
            return Err(incomplete(format!("`{SET_MANIFEST}` names a bad file")));
        }
        let mut hash = Hasher::default();
        let mut file = fs::File::open(dir.join(name))
            .map_err(|e| incomplete(format!("cannot read `{name}`: {e}")))?;
        let mut buf = vec![0u8; 1 << 20];
        loop {
            let n = std::io::Read::read(&mut file, &mut buf)
                .map_err(|e| incomplete(format!("cannot read `{name}`: {e}")))?;
            if n == 0 {
                break;
            }
            hash.update(&buf[..n]);
        }
        let same = f["bytes"].as_u64() == Some(hash.bytes)
            && f["hash"].as_str() == Some(hash.hex().as_str());
        if !same {
            return Err(incomplete(format!(
                "`{name}` is not the file the set was written with"
            )));
        }
    }
    Ok(value)
}

/// A 64-bit FNV-1a-style hash over little-endian 8-byte words (a word at a time keeps it near
/// memory speed on the sampler's outputs), streamed; stable across builds and platforms (unlike
/// the standard library's hasher), so a manifest written by one build is checked by another.
#[derive(Clone, Copy, Debug)]
struct Hasher {
    state: u64,
    bytes: u64,
    pending: [u8; 8],
    npending: usize,
}

impl Default for Hasher {
    fn default() -> Hasher {
        Hasher {
            state: 0xcbf2_9ce4_8422_2325,
            bytes: 0,
            pending: [0; 8],
            npending: 0,
        }
    }
}

impl Hasher {
    fn mix(&mut self, word: u64) {
        self.state = (self.state ^ word).wrapping_mul(0x0100_0000_01b3);
        self.state ^= self.state >> 29;
    }

    fn update(&mut self, mut bytes: &[u8]) {
        self.bytes += bytes.len() as u64;
        if self.npending > 0 {
            let take = (8 - self.npending).min(bytes.len());
            self.pending[self.npending..self.npending + take].copy_from_slice(&bytes[..take]);
            self.npending += take;
            bytes = &bytes[take..];
            if self.npending < 8 {
                return;
            }
            self.mix(u64::from_le_bytes(self.pending));
            self.npending = 0;
        }
        let mut words = bytes.chunks_exact(8);
        for w in &mut words {
            self.mix(u64::from_le_bytes(w.try_into().unwrap_or_default()));
        }
        let rest = words.remainder();
        self.pending[..rest.len()].copy_from_slice(rest);
        self.npending = rest.len();
    }

    /// The hash of everything so far, as 16 hex digits.
    fn hex(&self) -> String {
        let mut h = *self;
        if h.npending > 0 {
            let mut last = [0u8; 8];
            last[..h.npending].copy_from_slice(&h.pending[..h.npending]);
            h.mix(u64::from_le_bytes(last));
        }
        h.mix(h.bytes);
        format!("{:016x}", h.state)
    }
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

    /// A symbolic link stays a link: its target is replaced (`fmt --write` on a link replaced
    /// the link with a file), also when the target does not exist yet.
    #[cfg(unix)]
    #[test]
    fn links_are_written_through() {
        let dir = tempfile::tempdir().unwrap();
        let target = dir.path().join("real.txt");
        let link = dir.path().join("link.txt");
        fs::write(&target, b"old").unwrap();
        std::os::unix::fs::symlink("real.txt", &link).unwrap();
        write_atomic(&link, b"new").unwrap();
        assert!(fs::symlink_metadata(&link)
            .unwrap()
            .file_type()
            .is_symlink());
        assert_eq!(fs::read(&target).unwrap(), b"new");
        let dangling = dir.path().join("dangling.txt");
        std::os::unix::fs::symlink("later.txt", &dangling).unwrap();
        write_atomic(&dangling, b"made").unwrap();
        assert!(fs::symlink_metadata(&dangling)
            .unwrap()
            .file_type()
            .is_symlink());
        assert_eq!(fs::read(dir.path().join("later.txt")).unwrap(), b"made");
    }

    /// The hidden temporary of a killed run (its process gone) is removed by the next write of
    /// the same output; a live process's temporary is left alone.
    #[cfg(unix)]
    #[test]
    fn stale_temporaries_are_removed() {
        let dir = tempfile::tempdir().unwrap();
        let dest = dir.path().join("out.npy");
        let mut child = std::process::Command::new("true").spawn().unwrap();
        let dead = child.id();
        child.wait().unwrap();
        let stale = dir.path().join(format!(".out.npy.tmp{dead}"));
        fs::write(&stale, vec![0u8; 1000]).unwrap();
        // PID 1 always runs.
        let live = dir.path().join(".out.npy.tmp1");
        fs::write(&live, b"busy").unwrap();
        write_atomic(&dest, b"x").unwrap();
        assert!(!stale.exists());
        assert!(live.exists());
    }

    /// A set is vouched for by its manifest; a file of another run, a missing manifest or a
    /// missing file is caught.
    #[test]
    fn output_sets_check_their_files() {
        let dir = tempfile::tempdir().unwrap();
        let write = |a: &[u8], b: &[u8]| {
            let mut set =
                OutputSet::create(dir.path(), &["a.bin", "b.bin"], serde_json::json!({})).unwrap();
            set.write(0, a).unwrap();
            set.write(1, &b[..1]).unwrap();
            set.write(1, &b[1..]).unwrap();
            set.commit().unwrap();
        };
        write(b"first a", b"first b, longer than a word");
        check_output_set(dir.path()).unwrap();
        let old_b = fs::read(dir.path().join("b.bin")).unwrap();
        write(b"second a", b"second b, longer than a word");
        check_output_set(dir.path()).unwrap();
        // A kill between the renames: the old `b` beside the new `a`.
        fs::write(dir.path().join("b.bin"), &old_b).unwrap();
        let e = check_output_set(dir.path()).unwrap_err().render();
        assert!(e.contains("`b.bin` is not the file"), "{e}");
        fs::remove_file(dir.path().join(SET_MANIFEST)).unwrap();
        let e = check_output_set(dir.path()).unwrap_err().render();
        assert!(e.contains("not a complete output set"), "{e}");
        // The hash does not depend on how the bytes were split into writes.
        let mut one = Hasher::default();
        one.update(b"0123456789abcdefXYZ");
        let mut parts = Hasher::default();
        for chunk in [&b"012"[..], b"3456789a", b"bcdefX", b"YZ"] {
            parts.update(chunk);
        }
        assert_eq!(one.hex(), parts.hex());
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
