//! Decoding detection events measured elsewhere: read them in the layouts `slant shots` writes,
//! decode every shot with a decoder of the circuit's matching graph, and count failures when the
//! observed flips are given.
//!
//! In: the path of the events (a directory holding `detectors.npy` and, optionally,
//! `observables.npy`; or a text file of `--format bits` lines), the circuit's detector and
//! observable counts, and a [`Decoder`]. [`MeasuredEvents::open`] checks everything it can
//! before the data (layout, dtype, shape, counts); [`MeasuredEvents::decode`] reads the data.
//! Out: [`Measured`]: the predicted observable flips of
//! every shot (one byte each, shot-major, ready for [`Measured::predictions_npy`]) and, when the
//! observed flips are known, the failure count as [`crate::study::run`] counts it.
//!
//! Layouts read (those of `slant shots`):
//! - `.npy`: dtype `uint8` (`|u1`; NumPy's `bool`, `|b1`, is the same bytes and is read too), C
//!   order, shape `(shots, count)` with one 0/1 byte per item, or `(shots, ceil(count / 8))`
//!   packed, item `k` at bit `k % 8` of byte `k / 8`. The layout is told apart by the column
//!   count; padding bits of a packed row must be zero. The rows are streamed, so memory holds
//!   one chunk of shots at a time (plus one byte per shot and observable for the predictions);
//! - bits text: one shot per line, the detector bits, a space, the observable bits (anything
//!   after a second space, such as measurement bits, is ignored). Lines without an observable
//!   field are allowed when no line has one. The file is read whole so that errors point at
//!   `file:line:column`.
//!
//! Every check runs before anything is returned: a wrong shape, dtype, count or bit value is an
//! error, and the caller writes nothing.

use std::fs::File;
use std::io::{BufReader, Read};
use std::path::{Path, PathBuf};
use std::sync::Arc;

use rayon::prelude::*;

use crate::base::{count, npy_header, read_npy_header, Diagnostic, Source, Span};
use crate::decode::Decoder;

/// Shots decoded together (read, decoded on the rayon pool, then the next chunk).
const CHUNK: usize = 4096;

/// How the events were stored.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Layout {
    /// `detectors.npy`, one byte per detector.
    Npy,
    /// `detectors.npy`, eight detectors per byte.
    NpyPacked,
    /// `--format bits` text lines.
    Bits,
}

impl Layout {
    /// A short name for reports: `npy`, `npy packed` or `bits`.
    pub fn name(self) -> &'static str {
        match self {
            Layout::Npy => "npy",
            Layout::NpyPacked => "npy packed",
            Layout::Bits => "bits",
        }
    }
}

/// The outcome of decoding measured events.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Measured {
    /// How the detection events were stored.
    pub layout: Layout,
    /// Number of shots.
    pub shots: u64,
    /// Number of observables (columns of the predictions).
    pub observables: usize,
    /// Predicted flips: byte `s * observables + o` is 1 when observable `o` of shot `s` is
    /// predicted flipped.
    pub predictions: Vec<u8>,
    /// Shots with a detection event the decoder could not pair.
    pub unmatched: u64,
    /// Shots whose prediction differs from the observed flips (or with an unmatched event);
    /// `None` when the observed flips were not given.
    pub failures: Option<u64>,
}

impl Measured {
    /// The predictions as a whole `.npy` file: dtype `uint8`, shape `(shots, observables)`.
    pub fn predictions_npy(&self) -> Vec<u8> {
        let mut out = npy_header("|u1", &[self.shots, self.observables as u64]);
        out.extend_from_slice(&self.predictions);
        out
    }
}

/// Detection events opened and checked up to their data: the layout, shape, dtype and counts
/// are known to fit the circuit.
pub struct MeasuredEvents {
    reader: Box<dyn ShotReader>,
}

impl MeasuredEvents {
    /// Opens the detection events at `path` (a directory written by `slant shots`, or a bits
    /// text file) for a circuit of `detectors` detectors and `observables` observables.
    pub fn open(
        path: &Path,
        detectors: usize,
        observables: usize,
    ) -> Result<MeasuredEvents, Diagnostic> {
        let meta = std::fs::metadata(path)
            .map_err(|e| Diagnostic::bare(format!("cannot read `{}`: {e}", path.display())))?;
        let reader: Box<dyn ShotReader> = if meta.is_dir() {
            Box::new(NpyShots::open(path, detectors, observables)?)
        } else {
            Box::new(BitsShots::open(path, detectors, observables)?)
        };
        if reader.shots() == 0 {
            return Err(Diagnostic::bare(format!(
                "`{}` holds no shots; there is nothing to decode",
                path.display()
            )));
        }
        Ok(MeasuredEvents { reader })
    }

    /// Number of shots.
    pub fn shots(&self) -> u64 {
        self.reader.shots()
    }

    /// How the events are stored.
    pub fn layout(&self) -> Layout {
        self.reader.layout()
    }

    /// Decodes every shot with `decoder`; `progress` receives the number of shots done after
    /// each chunk. A bad value anywhere in the data is an error (and no outcome is returned).
    pub fn decode(
        mut self,
        decoder: &dyn Decoder,
        mut progress: impl FnMut(u64),
    ) -> Result<Measured, Diagnostic> {
        let observables = self.reader.observables();
        let mut out = Measured {
            layout: self.reader.layout(),
            shots: 0,
            observables,
            predictions: Vec::new(),
            unmatched: 0,
            failures: self.reader.has_observables().then_some(0),
        };
        let mut chunk: Vec<Shot> = Vec::new();
        loop {
            chunk.clear();
            self.reader.next_chunk(CHUNK, &mut chunk)?;
            if chunk.is_empty() {
                break;
            }
            let decoded: Vec<_> = chunk
                .par_iter()
                .map(|s| decoder.decode(&s.events))
                .collect();
            for (shot, d) in chunk.iter().zip(&decoded) {
                let row = out.predictions.len();
                out.predictions.resize(row + observables, 0);
                for &o in &d.observables {
                    out.predictions[row + o as usize] = 1;
                }
                let unmatched = d.unmatched > 0;
                out.unmatched += u64::from(unmatched);
                if let (Some(f), Some(actual)) = (out.failures.as_mut(), &shot.observables) {
                    *f += u64::from(unmatched || d.observables != *actual);
                }
            }
            out.shots += chunk.len() as u64;
            progress(out.shots);
        }
        Ok(out)
    }
}

/// [`MeasuredEvents::open`] then [`MeasuredEvents::decode`].
pub fn decode_measured(
    path: &Path,
    detectors: usize,
    observables: usize,
    decoder: &dyn Decoder,
    progress: impl FnMut(u64),
) -> Result<Measured, Diagnostic> {
    MeasuredEvents::open(path, detectors, observables)?.decode(decoder, progress)
}

/// One shot: its detection events and, when known, its observed observable flips (both sorted
/// ids).
#[derive(Clone, Debug, Default)]
struct Shot {
    events: Vec<u32>,
    observables: Option<Vec<u32>>,
}

/// A source of shots, read in chunks.
trait ShotReader {
    fn layout(&self) -> Layout;
    /// Number of shots.
    fn shots(&self) -> u64;
    /// Observables per shot (columns of the predictions).
    fn observables(&self) -> usize;
    /// Whether the observed flips come with the events.
    fn has_observables(&self) -> bool;
    /// Appends up to `max` shots to `out`; none at the end.
    fn next_chunk(&mut self, max: usize, out: &mut Vec<Shot>) -> Result<(), Diagnostic>;
}

/// One `.npy` table of 0/1 items, read row by row.
struct NpyTable {
    path: PathBuf,
    reader: BufReader<File>,
    rows: u64,
    /// Items per row.
    items: usize,
    packed: bool,
    /// Rows read so far.
    done: u64,
    row: Vec<u8>,
}

impl NpyTable {
    /// Opens `path` and checks its header against `items` items per row (`what` names the items
    /// in messages: "detector", "observable").
    fn open(path: &Path, items: usize, what: &str) -> Result<NpyTable, Diagnostic> {
        let name = path.display();
        let file =
            File::open(path).map_err(|e| Diagnostic::bare(format!("cannot read `{name}`: {e}")))?;
        let size = file.metadata().map(|m| m.len()).unwrap_or(u64::MAX);
        let mut reader = BufReader::with_capacity(1 << 20, file);
        let header =
            read_npy_header(&mut reader).map_err(|e| Diagnostic::bare(format!("`{name}` {e}")))?;
        if !matches!(header.descr.as_str(), "|u1" | "<u1" | ">u1" | "u1" | "|b1") {
            return Err(Diagnostic::bare(format!(
                "`{name}` has dtype `{}`; expected `uint8` (`|u1`), as `slant shots` writes",
                header.descr
            ))
            .with_hint("convert it with `array.astype(numpy.uint8)` before saving"));
        }
        if header.fortran_order {
            return Err(Diagnostic::bare(format!(
                "`{name}` is stored in Fortran (column-major) order; expected C order, one row \
                 per shot"
            ))
            .with_hint("save `numpy.ascontiguousarray(array)` instead"));
        }
        let shape = |s: &[u64]| {
            let dims: Vec<String> = s.iter().map(u64::to_string).collect();
            if dims.len() == 1 {
                format!("({},)", dims[0])
            } else {
                format!("({})", dims.join(", "))
            }
        };
        let [rows, cols] = header.shape[..] else {
            return Err(Diagnostic::bare(format!(
                "`{name}` has shape {}; expected two dimensions (shots, {what}s)",
                shape(&header.shape)
            )));
        };
        let packed_width = items.div_ceil(8);
        let packed = if cols == items as u64 {
            false
        } else if cols == packed_width as u64 {
            true
        } else {
            return Err(Diagnostic::bare(format!(
                "`{name}` has shape {}: {}, but the circuit has {}; expected {items} columns, \
                 or {packed_width} when packed",
                shape(&header.shape),
                count(cols as usize, "column"),
                count(items, what),
            ))
            .with_hint(
                "decode with the circuit, `--set` values and noise that produced the events",
            ));
        };
        let width = cols as usize;
        let want = header.data_offset + rows * cols;
        if size != want {
            return Err(Diagnostic::bare(format!(
                "`{name}` holds {size} bytes, but its header announces {rows} rows of {cols} \
                 bytes ({want} bytes with the header): the file is truncated or has extra bytes"
            ))
            .with_hint("write the file again"));
        }
        Ok(NpyTable {
            path: path.to_path_buf(),
            reader,
            rows,
            items,
            packed,
            done: 0,
            row: vec![0; width],
        })
    }

    /// Reads the next row into a sorted list of the ids of the items that are 1.
    fn next_row(&mut self, ids: &mut Vec<u32>) -> Result<(), Diagnostic> {
        let name = self.path.display();
        self.reader
            .read_exact(&mut self.row)
            .map_err(|e| Diagnostic::bare(format!("cannot read `{name}`: {e}")))?;
        let shot = self.done;
        self.done += 1;
        ids.clear();
        if self.packed {
            for (b, &byte) in self.row.iter().enumerate() {
                let mut bits = byte;
                while bits != 0 {
                    let k = 8 * b + bits.trailing_zeros() as usize;
                    bits &= bits - 1;
                    if k >= self.items {
                        return Err(Diagnostic::bare(format!(
                            "`{name}`, shot {shot}: bit {k} is set, but a packed row of {} has \
                             only bits 0..{} (the padding bits must be 0)",
                            self.items, self.items
                        )));
                    }
                    ids.push(k as u32);
                }
            }
        } else {
            for (k, &v) in self.row.iter().enumerate() {
                match v {
                    0 => {}
                    1 => ids.push(k as u32),
                    v => {
                        return Err(Diagnostic::bare(format!(
                            "`{name}`, shot {shot}, column {k}: value {v}; expected 0 or 1"
                        )))
                    }
                }
            }
        }
        Ok(())
    }
}

/// `detectors.npy` and, if present, `observables.npy` of one directory.
struct NpyShots {
    detectors: NpyTable,
    observables: Option<NpyTable>,
    num_observables: usize,
}

impl NpyShots {
    fn open(dir: &Path, detectors: usize, observables: usize) -> Result<NpyShots, Diagnostic> {
        let det_path = dir.join("detectors.npy");
        if !det_path.is_file() {
            return Err(Diagnostic::bare(format!(
                "`{}` has no `detectors.npy`",
                dir.display()
            ))
            .with_hint(
                "give the directory `slant shots --out DIR` wrote, or a file of `--format bits` \
                 lines",
            ));
        }
        let det = NpyTable::open(&det_path, detectors, "detector")?;
        let obs_path = dir.join("observables.npy");
        let obs = if obs_path.exists() {
            let obs = NpyTable::open(&obs_path, observables, "observable")?;
            if obs.rows != det.rows {
                return Err(Diagnostic::bare(format!(
                    "`{}` has {} but `{}` has {}; both must hold the same shots",
                    det_path.display(),
                    count(det.rows as usize, "row"),
                    obs_path.display(),
                    count(obs.rows as usize, "row"),
                )));
            }
            Some(obs)
        } else {
            None
        };
        Ok(NpyShots {
            detectors: det,
            observables: obs,
            num_observables: observables,
        })
    }
}

impl ShotReader for NpyShots {
    fn shots(&self) -> u64 {
        self.detectors.rows
    }

    fn observables(&self) -> usize {
        self.num_observables
    }

    fn layout(&self) -> Layout {
        if self.detectors.packed {
            Layout::NpyPacked
        } else {
            Layout::Npy
        }
    }

    fn has_observables(&self) -> bool {
        self.observables.is_some()
    }

    fn next_chunk(&mut self, max: usize, out: &mut Vec<Shot>) -> Result<(), Diagnostic> {
        while out.len() < max && self.detectors.done < self.detectors.rows {
            let mut shot = Shot::default();
            self.detectors.next_row(&mut shot.events)?;
            if let Some(obs) = self.observables.as_mut() {
                let mut ids = Vec::new();
                obs.next_row(&mut ids)?;
                shot.observables = Some(ids);
            }
            out.push(shot);
        }
        Ok(())
    }
}

/// A bits text file, read whole and checked line by line.
struct BitsShots {
    source: Arc<Source>,
    /// Byte offset of the next line to read.
    at: usize,
    line: usize,
    detectors: usize,
    observables: usize,
    /// Whether the first line has an observable field (every line must agree).
    with_observables: bool,
}

impl BitsShots {
    fn open(path: &Path, detectors: usize, observables: usize) -> Result<BitsShots, Diagnostic> {
        let name = path.display().to_string();
        let bytes = std::fs::read(path)
            .map_err(|e| Diagnostic::bare(format!("cannot read `{name}`: {e}")))?;
        if bytes.starts_with(b"\x93NUMPY") {
            return Err(Diagnostic::bare(format!(
                "`{name}` is a .npy file; give the directory that holds `detectors.npy` (and \
                 `observables.npy`)"
            )));
        }
        let source = crate::base::source_from_bytes(name, bytes)?;
        let first = source.text.lines().next().unwrap_or("");
        let with_observables = first.trim_end_matches('\r').contains(' ');
        Ok(BitsShots {
            source,
            at: 0,
            line: 0,
            detectors,
            observables,
            with_observables,
        })
    }

    /// Checks that `field` (at byte `start`) is `len` characters of `0`/`1` and appends the
    /// positions of the ones to `ids`.
    fn field(
        &self,
        field: &str,
        start: usize,
        len: usize,
        what: &str,
        ids: &mut Vec<u32>,
    ) -> Result<(), Diagnostic> {
        if let Some(bad) = field.find(|c| c != '0' && c != '1') {
            let at = start + bad;
            let c = field[bad..].chars().next().unwrap_or('?');
            return Err(Diagnostic::error(
                &self.source,
                Span::new(at, at + c.len_utf8()),
                format!("`{c}` in the {what} bits; expected `0` or `1`"),
            ));
        }
        if field.len() != len {
            return Err(Diagnostic::error(
                &self.source,
                Span::new(start, start + field.len()),
                format!(
                    "{} bits, but the circuit has {}",
                    field.len(),
                    count(len, what)
                ),
            )
            .with_hint(
                "decode with the circuit, `--set` values and noise that produced the events",
            ));
        }
        ids.extend(
            field
                .bytes()
                .enumerate()
                .filter(|&(_, b)| b == b'1')
                .map(|(k, _)| k as u32),
        );
        Ok(())
    }
}

impl ShotReader for BitsShots {
    fn shots(&self) -> u64 {
        self.source.text.lines().count() as u64
    }

    fn observables(&self) -> usize {
        self.observables
    }

    fn layout(&self) -> Layout {
        Layout::Bits
    }

    fn has_observables(&self) -> bool {
        self.with_observables
    }

    fn next_chunk(&mut self, max: usize, out: &mut Vec<Shot>) -> Result<(), Diagnostic> {
        let text = &self.source.text;
        while out.len() < max && self.at < text.len() {
            let start = self.at;
            let end = text[start..].find('\n').map_or(text.len(), |k| start + k);
            self.at = end + 1;
            self.line += 1;
            let line = text[start..end].trim_end_matches('\r');
            let mut fields = line.splitn(3, ' ');
            let det = fields.next().unwrap_or("");
            let obs = fields.next();
            if obs.is_some() != self.with_observables {
                let what = if self.with_observables {
                    "has no observable field, but the first line has one"
                } else {
                    "has an observable field, but the first line has none"
                };
                return Err(Diagnostic::error(
                    &self.source,
                    Span::new(start, start + line.len()),
                    format!("line {} {what}", self.line),
                ));
            }
            let mut shot = Shot::default();
            self.field(det, start, self.detectors, "detector", &mut shot.events)?;
            if let Some(obs) = obs {
                let mut ids = Vec::new();
                let obs_start = start + det.len() + 1;
                self.field(obs, obs_start, self.observables, "observable", &mut ids)?;
                shot.observables = Some(ids);
            }
            out.push(shot);
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::decode::Decoded;

    /// Predicts observable 0 flipped exactly when detector 0 fired; unmatched when detector 2
    /// fired.
    struct FirstDetector;
    impl Decoder for FirstDetector {
        fn decode(&self, events: &[u32]) -> Decoded {
            Decoded {
                observables: if events.contains(&0) { vec![0] } else { vec![] },
                unmatched: u32::from(events.contains(&2)),
            }
        }
    }

    fn npy(rows: u64, cols: u64, data: &[u8]) -> Vec<u8> {
        let mut b = npy_header("|u1", &[rows, cols]);
        b.extend_from_slice(data);
        b
    }

    #[test]
    fn unpacked_packed_and_bits_give_the_same_predictions() {
        let dir = tempfile::tempdir().unwrap();
        // Three detectors, one observable, four shots.
        let det = [
            1, 0, 0, /**/ 0, 1, 0, /**/ 1, 1, 0, /**/ 0, 0, 1,
        ];
        let obs = [1, 1, 1, 0];
        let unpacked = dir.path().join("u");
        std::fs::create_dir(&unpacked).unwrap();
        std::fs::write(unpacked.join("detectors.npy"), npy(4, 3, &det)).unwrap();
        std::fs::write(unpacked.join("observables.npy"), npy(4, 1, &obs)).unwrap();
        let packed = dir.path().join("p");
        std::fs::create_dir(&packed).unwrap();
        std::fs::write(packed.join("detectors.npy"), npy(4, 1, &[1, 2, 3, 4])).unwrap();
        std::fs::write(packed.join("observables.npy"), npy(4, 1, &obs)).unwrap();
        let bits = dir.path().join("shots.txt");
        std::fs::write(&bits, "100 1\n010 1\n110 1\n001 0\n").unwrap();
        for (path, layout) in [
            (&unpacked, Layout::Npy),
            (&packed, Layout::NpyPacked),
            (&bits, Layout::Bits),
        ] {
            let m = decode_measured(path, 3, 1, &FirstDetector, |_| {}).unwrap();
            assert_eq!(m.layout, layout);
            assert_eq!(m.shots, 4);
            assert_eq!(m.predictions, vec![1, 0, 1, 0]);
            // Shot 1 is mispredicted, shot 3 unmatched.
            assert_eq!((m.failures, m.unmatched), (Some(2), 1), "{layout:?}");
        }
        // Without observables there is no failure count.
        std::fs::remove_file(unpacked.join("observables.npy")).unwrap();
        let m = decode_measured(&unpacked, 3, 1, &FirstDetector, |_| {}).unwrap();
        assert_eq!(m.failures, None);
        let file = m.predictions_npy();
        let h = read_npy_header(&mut &file[..]).unwrap();
        assert_eq!((h.descr.as_str(), h.shape), ("|u1", vec![4, 1]));
        assert_eq!(&file[h.data_offset as usize..], &[1, 0, 1, 0]);
    }

    #[test]
    fn bad_inputs_are_refused_with_a_reason() {
        let dir = tempfile::tempdir().unwrap();
        let err = |files: &[(&str, Vec<u8>)]| {
            let d = tempfile::tempdir_in(dir.path()).unwrap();
            for (name, bytes) in files {
                std::fs::write(d.path().join(name), bytes).unwrap();
            }
            decode_measured(d.path(), 3, 1, &FirstDetector, |_| {})
                .unwrap_err()
                .message
        };
        assert!(err(&[]).contains("has no `detectors.npy`"));
        let e = err(&[("detectors.npy", npy(2, 4, &[0; 8]))]);
        assert!(
            e.contains("4 columns, but the circuit has 3 detectors"),
            "{e}"
        );
        let mut f8 = npy_header("<f8", &[1, 3]);
        f8.extend_from_slice(&[0; 24]);
        assert!(err(&[("detectors.npy", f8)]).contains("dtype `<f8`"));
        let mut flat = npy_header("|u1", &[3]);
        flat.extend_from_slice(&[0; 3]);
        assert!(err(&[("detectors.npy", flat)]).contains("shape (3,)"));
        assert!(err(&[("detectors.npy", npy(2, 3, &[0; 5]))]).contains("truncated"));
        assert!(err(&[("detectors.npy", npy(1, 3, &[0, 2, 0]))]).contains("value 2"));
        assert!(err(&[("detectors.npy", npy(1, 1, &[8]))]).contains("padding bits"));
        let e = err(&[
            ("detectors.npy", npy(2, 3, &[0; 6])),
            ("observables.npy", npy(1, 1, &[0])),
        ]);
        assert!(e.contains("same shots"), "{e}");
        assert!(err(&[("detectors.npy", npy(0, 3, &[]))]).contains("no shots"));
        let bits = |text: &str| {
            let p = dir.path().join("bits.txt");
            std::fs::write(&p, text).unwrap();
            let d = decode_measured(&p, 3, 1, &FirstDetector, |_| {}).unwrap_err();
            (d.message.clone(), d.location().map(|l| (l.1, l.2)))
        };
        assert_eq!(
            bits("000 0\n0000 1\n"),
            (
                "4 bits, but the circuit has 3 detectors".to_string(),
                Some((2, 1))
            )
        );
        assert_eq!(bits("000 0\n010 x\n").1, Some((2, 5)));
        assert!(bits("000 0\n010\n").0.contains("no observable field"));
    }
}
