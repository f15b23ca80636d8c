//! The results store of a sweep (JSON Lines): rows of finished chunks, read back, merged and
//! summed per task.

use std::collections::{BTreeMap, HashMap};
use std::fs::{File, OpenOptions};
use std::io::{Seek, Write};
use std::path::Path;
use std::sync::{Arc, Mutex};

use crate::base::{Diagnostic, Source, Span};

/// Version of the store format written in every row. Version 3 added `vary` (model keys a grid
/// varies); version 2 rows are version 3 rows without it, and version 1 rows (no `version` key,
/// the failure count named differently) are upgraded as they are read: see `legacy.rs`.
pub const STORE_VERSION: u32 = 3;

/// One finished chunk of a task: a line of the store.
#[derive(Clone, Debug, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct ChunkRow {
    /// Store format version ([`STORE_VERSION`] for rows written now).
    pub version: u32,
    /// Task key.
    pub task: String,
    /// Chunk index within the task.
    pub chunk: u64,
    /// Shots sampled in this chunk.
    pub shots: u64,
    /// Logical failures among them.
    pub failures: u64,
    /// Sampler seed of the chunk.
    pub seed: u64,
    /// Curve label.
    pub label: String,
    /// Code family.
    pub family: String,
    /// Distance.
    pub distance: u32,
    /// Rounds of syndrome extraction.
    pub rounds: u32,
    /// Physical error rate of the noise preset.
    pub p: f64,
    /// Bias as written (`"inf"`, `"100"`), absent for the preset default.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub bias: Option<String>,
    /// Model keys the grid varies, path → value as written (absent when none).
    #[serde(default, skip_serializing_if = "BTreeMap::is_empty")]
    pub vary: BTreeMap<String, String>,
    /// Full noise text.
    pub noise: String,
    /// Decoder name.
    pub decoder: String,
}

/// Parses the rows of a store. A last line without a newline is a torn write and is ignored
/// (its byte offset is returned so an appender can cut it off); any other bad line is an error
/// pointing at it.
pub fn parse_rows(source: &Arc<Source>) -> Result<(Vec<ChunkRow>, usize), Diagnostic> {
    let text = source.text.as_str();
    let complete = text.rfind('\n').map_or(0, |i| i + 1);
    let mut rows = Vec::new();
    let mut offset = 0;
    for line in text[..complete].split_inclusive('\n') {
        let body = line.trim_end();
        if !body.is_empty() {
            let span = Span::new(offset, offset + body.len());
            let bad = |e: serde_json::Error| {
                Diagnostic::error(source, span, format!("not a results row: {e}"))
            };
            let mut value: serde_json::Value = serde_json::from_str(body).map_err(bad)?;
            super::legacy::upgrade(&mut value, STORE_VERSION);
            let row: ChunkRow = serde_json::from_value(value).map_err(bad)?;
            if row.failures > row.shots {
                return Err(Diagnostic::error(
                    source,
                    span,
                    format!(
                        "damaged results row: {} failures in {} shots",
                        row.failures, row.shots
                    ),
                ));
            }
            rows.push(row);
        }
        offset += line.len();
    }
    Ok((rows, complete))
}

/// Reads the rows of the store at `path` (none if it does not exist).
pub fn read_store(path: &Path) -> Result<Vec<ChunkRow>, Diagnostic> {
    match std::fs::read(path) {
        Ok(bytes) => {
            let source = crate::base::source_from_bytes(path.display().to_string(), bytes)?;
            Ok(parse_rows(&source)?.0)
        }
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => Ok(Vec::new()),
        Err(e) => Err(Diagnostic::bare(format!(
            "cannot read `{}`: {e}",
            path.display()
        ))),
    }
}

/// A store opened for appending.
pub struct Store {
    file: Mutex<File>,
    path: String,
}

impl Store {
    /// Opens (creating if needed) the store at `path`, cuts off a torn last line, and returns it
    /// with the rows already recorded.
    pub fn open(path: &Path) -> Result<(Store, Vec<ChunkRow>), Diagnostic> {
        let name = path.display().to_string();
        let io = |e: std::io::Error| Diagnostic::bare(format!("cannot open `{name}`: {e}"));
        let mut file = OpenOptions::new()
            .read(true)
            .append(true)
            .create(true)
            .open(path)
            .map_err(io)?;
        let mut bytes = Vec::new();
        std::io::Read::read_to_end(&mut file, &mut bytes).map_err(io)?;
        let source = crate::base::source_from_bytes(name.clone(), bytes)?;
        let (rows, complete) = parse_rows(&source)?;
        if complete < source.text.as_str().len() {
            file.set_len(complete as u64).map_err(io)?;
            file.seek(std::io::SeekFrom::End(0)).map_err(io)?;
        }
        Ok((
            Store {
                file: Mutex::new(file),
                path: name,
            },
            rows,
        ))
    }

    /// Appends one row with a single write and syncs it to disk.
    pub fn append(&self, row: &ChunkRow) -> Result<(), Diagnostic> {
        let mut line = serde_json::to_string(row)
            .map_err(|e| Diagnostic::bare(format!("cannot encode a results row: {e}")))?;
        line.push('\n');
        let mut f = self
            .file
            .lock()
            .map_err(|_| Diagnostic::bare("the results store lock is poisoned"))?;
        f.write_all(line.as_bytes())
            .and_then(|()| f.sync_data())
            .map_err(|e| Diagnostic::bare(format!("cannot append to `{}`: {e}", self.path)))
    }
}

/// Combines row lists, keeping the first row of each `(task, chunk)`. Returns the rows and the
/// number of duplicates whose counts disagreed with the kept row (a sign of mixed-up stores).
pub fn merge_rows(lists: impl IntoIterator<Item = Vec<ChunkRow>>) -> (Vec<ChunkRow>, usize) {
    let mut seen: HashMap<(String, u64), (u64, u64)> = HashMap::new();
    let mut out = Vec::new();
    let mut conflicts = 0;
    for list in lists {
        for r in list {
            match seen.get(&(r.task.clone(), r.chunk)) {
                Some(&(s, e)) => {
                    if (s, e) != (r.shots, r.failures) {
                        conflicts += 1;
                    }
                }
                None => {
                    seen.insert((r.task.clone(), r.chunk), (r.shots, r.failures));
                    out.push(r);
                }
            }
        }
    }
    (out, conflicts)
}

/// The totals of one task, for plots and fits.
#[derive(Clone, Debug, PartialEq)]
pub struct Point {
    /// Task key.
    pub task: String,
    /// Curve label.
    pub label: String,
    /// Decoder name.
    pub decoder: String,
    /// Bias as written, if any.
    pub bias: Option<String>,
    /// Model keys varied by the grid, path → value.
    pub vary: BTreeMap<String, String>,
    /// The noise text of the task.
    pub noise: String,
    /// Code family.
    pub family: String,
    /// Distance.
    pub distance: u32,
    /// Rounds.
    pub rounds: u32,
    /// Physical error rate.
    pub p: f64,
    /// Total shots.
    pub shots: u64,
    /// Total logical failures.
    pub failures: u64,
}

impl Point {
    /// The curve family this point belongs to: label, decoder, bias and varied keys.
    pub fn group(&self) -> String {
        let mut parts = vec![self.decoder.clone()];
        if let Some(b) = &self.bias {
            parts.push(format!("bias {b}"));
        }
        parts.extend(self.vary.iter().map(|(k, v)| format!("{k} {v}")));
        format!("{} ({})", self.label, parts.join(", "))
    }

    /// The parameters that tell this point's group from others of its label: `bias` and the
    /// varied keys, as `(name, value)`.
    pub fn parameters(&self) -> Vec<(String, String)> {
        let mut out = Vec::new();
        if let Some(b) = &self.bias {
            out.push(("bias".to_string(), b.clone()));
        }
        out.extend(self.vary.iter().map(|(k, v)| (k.clone(), v.clone())));
        out
    }
}

/// Sums rows per task (duplicate chunks counted once), sorted by group, distance and `p`.
pub fn aggregate(rows: &[ChunkRow]) -> Vec<Point> {
    let (rows, _) = merge_rows([rows.to_vec()]);
    let mut by_task: BTreeMap<&str, Point> = BTreeMap::new();
    for r in &rows {
        let p = by_task.entry(r.task.as_str()).or_insert_with(|| Point {
            task: r.task.clone(),
            label: r.label.clone(),
            decoder: r.decoder.clone(),
            bias: r.bias.clone(),
            vary: r.vary.clone(),
            noise: r.noise.clone(),
            family: r.family.clone(),
            distance: r.distance,
            rounds: r.rounds,
            p: r.p,
            shots: 0,
            failures: 0,
        });
        p.shots += r.shots;
        p.failures += r.failures;
    }
    let mut points: Vec<Point> = by_task.into_values().collect();
    points.sort_by(|a, b| {
        (a.group(), a.distance)
            .cmp(&(b.group(), b.distance))
            .then(a.p.total_cmp(&b.p))
    });
    points
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn torn_last_line_is_ignored_and_duplicates_merge() {
        let row = |c: u64, e: u64| ChunkRow {
            version: STORE_VERSION,
            task: "t".into(),
            chunk: c,
            shots: 10,
            failures: e,
            seed: 1,
            label: "l".into(),
            family: "surface".into(),
            distance: 3,
            rounds: 3,
            p: 0.1,
            bias: None,
            vary: BTreeMap::new(),
            noise: "capacity p=0.1".into(),
            decoder: "mwpm".into(),
        };
        let line = serde_json::to_string(&row(0, 2)).unwrap();
        let text = format!("{line}\n{{\"task\": \"t\", \"chu");
        let (rows, complete) = parse_rows(&Source::new("s.jsonl", text)).unwrap();
        assert_eq!(rows, vec![row(0, 2)]);
        assert_eq!(complete, line.len() + 1);
        let (merged, conflicts) =
            merge_rows([vec![row(0, 2), row(1, 3)], vec![row(1, 3), row(0, 5)]]);
        assert_eq!(merged, vec![row(0, 2), row(1, 3)]);
        assert_eq!(conflicts, 1);
        // A damaged row (more failures than shots) is refused, pointing at its line.
        let bad = serde_json::to_string(&row(1, 11)).unwrap();
        let text = parse_rows(&Source::new("r.jsonl", format!("{line}\n{bad}\n")))
            .unwrap_err()
            .render();
        assert!(text.contains("11 failures in 10 shots"), "{text}");
        assert!(text.contains("r.jsonl:2:1"), "{text}");
        let pts = aggregate(&merged);
        assert_eq!((pts[0].shots, pts[0].failures), (20, 5));
    }
}
