//! The results store of a sweep (JSON Lines): rows of finished chunks, read back, merged and
//! summed per task.

use std::collections::{BTreeMap, HashMap};
use std::fs::{File, OpenOptions};
use std::io::{Seek, Write};
use std::path::Path;
use std::sync::{Arc, Mutex};

use crate::base::{Diagnostic, Source, Span};
use crate::study::stats::Estimate;

/// Version of the store format written in every row. Version 4 added `method` and the rows of
/// splitting tasks ([`SplittingRow`]); version 3 added `vary` (model keys a grid varies);
/// version 2 rows are version 3 rows without it, and version 1 rows (no `version` key, the
/// failure count named differently) are upgraded as they are read: see `legacy.rs`.
pub const STORE_VERSION: u32 = 4;

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
    /// `sampling` (a chunk of shots) or `splitting` (the one row of a splitting task; `shots`
    /// and `failures` are then those of direct sampling at the top of its ladder).
    pub method: String,
    /// The result of a splitting task (present exactly when `method` is `splitting`).
    #[serde(default, flatten, skip_serializing_if = "Option::is_none")]
    pub splitting: Option<SplittingRow>,
}

/// What a splitting task records: its estimate at the target, the ladder above it, the local
/// exponent and the circuit distance the exponent is compared with. Uncertainties are relative
/// (one standard deviation of `ln rate`); `None` (JSON `null`) means unknown.
#[derive(Clone, Debug, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct SplittingRow {
    /// Failure probability per shot at the task's noise, with its 95% interval.
    pub per_shot: Estimate,
    /// The same per round.
    pub per_round: Estimate,
    /// Relative uncertainty of `per_shot.rate`.
    pub uncertainty: Option<f64>,
    /// Walks per rung.
    pub chains: u64,
    /// Proposals per walk and rung, per fault-graph edge.
    pub sweeps: f64,
    /// Proposals per walk and rung.
    pub proposals: u64,
    /// The top of the ladder as a multiple of the task's noise.
    pub top_scale: f64,
    /// The rungs from the top down to the task's noise (scale 1, last).
    pub ladder: Vec<RungRow>,
    /// The exponent of the rate against the scale over the rungs within 4x of the target.
    pub exponent: Option<ExponentRow>,
    /// The circuit distance (fewest fault-graph edges in an undetected logical error).
    pub circuit_distance: Option<DistanceRow>,
    /// `⌈d/2⌉` of the circuit distance when it is exact: the exponent expected below threshold.
    pub expected_exponent: Option<u32>,
}

/// One rung of a splitting task's ladder.
#[derive(Clone, Copy, Debug, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct RungRow {
    /// The noise as a multiple of the task's noise.
    pub scale: f64,
    /// The preset's `p` there (`None` for a model file).
    pub p: Option<f64>,
    /// Failure probability per shot.
    pub rate: f64,
    /// Its relative uncertainty.
    pub uncertainty: Option<f64>,
    /// Lower end of the 95% interval.
    pub low: f64,
    /// Upper end.
    pub high: f64,
}

/// The fitted exponent of a splitting task's own ladder.
#[derive(Clone, Copy, Debug, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct ExponentRow {
    /// `k` of `rate ∝ scale^k`.
    pub exponent: f64,
    /// Its standard error (`None`: unknown).
    pub error: Option<f64>,
    /// Rungs fitted.
    pub points: usize,
    /// Smallest and largest scale fitted.
    pub scales: [f64; 2],
}

/// The circuit distance of a task's fault graph.
#[derive(Clone, Copy, Debug, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct DistanceRow {
    /// The distance found (an upper bound unless it equals `lower`).
    pub value: u32,
    /// Its proven lower bound.
    pub lower: u32,
    /// The same with high-rate edges only (`None`: none found).
    pub high_rate: Option<u32>,
}

/// A finite number, or `None`: JSON has no infinity.
pub fn finite(x: f64) -> Option<f64> {
    x.is_finite().then_some(x)
}

/// The first line of every store written now: it tells a store from any other file, so
/// `--store` never takes someone's notes for a store with a torn row. Stores written before it
/// existed start with a row and are still read.
pub const STORE_HEADER: &str = "{\"slant_results_store\":2}";

/// Parses the rows of a store. A last line without a newline is a torn write and is ignored
/// (its byte offset is returned so an appender can cut it off); any other bad line is an error
/// pointing at it. A file that is neither empty nor starts with [`STORE_HEADER`] or a row is
/// refused whole: it is not a store.
pub fn parse_rows(source: &Arc<Source>) -> Result<(Vec<ChunkRow>, usize), Diagnostic> {
    let text = source.text.as_str();
    let complete = text.rfind('\n').map_or(0, |i| i + 1);
    let torn = &text[complete..];
    // A torn row is the start of a row: `{` and nothing but what a row may hold.
    if !torn.trim().is_empty() && (!torn.trim_start().starts_with('{') || torn.contains('\r')) {
        let span = Span::new(complete, text.len());
        return Err(not_a_store(
            source,
            span,
            "its last line is not the start of a row",
        ));
    }
    if complete == 0 && !torn.trim().is_empty() && !torn.trim_start().starts_with(STORE_HEADER) {
        // One line and no newline: nothing here was ever a complete row of a store.
        return Err(not_a_store(
            source,
            Span::new(0, text.len()),
            "it holds no complete row and no store header",
        ));
    }
    let mut rows = Vec::new();
    let mut offset = 0;
    for (n, line) in text[..complete].split_inclusive('\n').enumerate() {
        let body = line.trim_end();
        if n == 0 && body == STORE_HEADER {
            offset += line.len();
            continue;
        }
        if !body.is_empty() {
            let span = Span::new(offset, offset + body.len());
            let bad = |e: serde_json::Error| {
                if n == 0 {
                    not_a_store(source, span, &format!("its first line is not a row ({e})"))
                } else {
                    Diagnostic::error(source, span, format!("not a results row: {e}"))
                }
            };
            let mut value: serde_json::Value = serde_json::from_str(body).map_err(bad)?;
            super::legacy::upgrade(&mut value, STORE_VERSION);
            let row: ChunkRow = serde_json::from_value(value).map_err(bad)?;
            let damage = match (row.method.as_str(), row.splitting.is_some()) {
                ("sampling", false) | ("splitting", true) => None,
                ("sampling", true) => Some("a sampling row carries a splitting estimate".into()),
                ("splitting", false) => {
                    Some("a splitting row without its estimate (`per_shot`, `ladder`, ...)".into())
                }
                (other, _) => Some(format!(
                    "unknown method `{other}` (expected `sampling` or `splitting`)"
                )),
            };
            if let Some(why) = damage {
                return Err(Diagnostic::error(
                    source,
                    span,
                    format!("damaged results row: {why}"),
                ));
            }
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

fn not_a_store(source: &Arc<Source>, span: Span, why: &str) -> Diagnostic {
    Diagnostic::error(
        source,
        span,
        format!("`{}` is not a slant results store: {why}", source.name),
    )
    .with_hint("give a new file name, or a store written by `slant sweep` or `slant merge`")
}

/// Reads the rows of the store at `path` (none if it does not exist).
pub fn read_store(path: &Path) -> Result<Vec<ChunkRow>, Diagnostic> {
    Ok(load_store(path)?.rows)
}

/// A store read whole, with what was dropped on the way.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct StoreContents {
    /// The complete rows.
    pub rows: Vec<ChunkRow>,
    /// Bytes of a torn last row (a run killed while appending) that were not read.
    pub torn_bytes: usize,
}

/// Reads the store at `path` (empty if it does not exist), reporting a torn last row.
pub fn load_store(path: &Path) -> Result<StoreContents, Diagnostic> {
    match std::fs::read(path) {
        Ok(bytes) => {
            let len = bytes.len();
            let source = crate::base::source_from_bytes(path.display().to_string(), bytes)?;
            let (rows, complete) = parse_rows(&source)?;
            Ok(StoreContents {
                rows,
                torn_bytes: len - complete,
            })
        }
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => Ok(StoreContents::default()),
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
        if complete == 0 {
            // A new (or empty) store starts with its header.
            file.write_all(format!("{STORE_HEADER}\n").as_bytes())
                .and_then(|()| file.sync_data())
                .map_err(io)?;
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

/// Two rows of one `(task, chunk)` that disagree (different counts; for a splitting task, any
/// difference): the stores were made from different specs or one of them is damaged.
#[derive(Clone, Debug, PartialEq)]
pub struct Conflict {
    /// The task key.
    pub task: String,
    /// The chunk.
    pub chunk: u64,
    /// Index of the list (store) of the kept row, and its `(shots, failures)`.
    pub kept: (usize, u64, u64),
    /// Index of the list of the dropped row, and its `(shots, failures)`.
    pub dropped: (usize, u64, u64),
    /// For a splitting task: the per-shot rates of the kept and the dropped row.
    pub rates: Option<(f64, f64)>,
}

/// Combines row lists, keeping the first row of each `(task, chunk)`. Returns the rows and the
/// duplicates that disagree with the kept row (a sign of mixed-up stores): for a sampling chunk
/// different counts, for a splitting task any difference (the same task and seed give the same
/// row on any machine).
pub fn merge_rows(
    lists: impl IntoIterator<Item = Vec<ChunkRow>>,
) -> (Vec<ChunkRow>, Vec<Conflict>) {
    let mut seen: HashMap<(String, u64), (usize, usize)> = HashMap::new();
    let mut out: Vec<ChunkRow> = Vec::new();
    let mut conflicts = Vec::new();
    for (k, list) in lists.into_iter().enumerate() {
        for r in list {
            match seen.get(&(r.task.clone(), r.chunk)) {
                Some(&(from, at)) => {
                    let kept = &out[at];
                    let differ = (kept.shots, kept.failures) != (r.shots, r.failures)
                        || kept.splitting != r.splitting;
                    if differ {
                        let rate = |x: &ChunkRow| x.splitting.as_ref().map(|s| s.per_shot.rate);
                        conflicts.push(Conflict {
                            task: r.task.clone(),
                            chunk: r.chunk,
                            kept: (from, kept.shots, kept.failures),
                            dropped: (k, r.shots, r.failures),
                            rates: rate(kept).zip(rate(&r)),
                        });
                    }
                }
                None => {
                    seen.insert((r.task.clone(), r.chunk), (k, out.len()));
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
    /// The splitting estimate, for a splitting task (`shots` and `failures` are then those of
    /// direct sampling at the top of its ladder, not of the task's noise).
    pub splitting: Option<SplittingRow>,
}

impl Point {
    /// The logical error rate per shot (or per round) with its 95% interval: Wilson's for a
    /// sampled point, the ladder's for a splitting point.
    pub fn estimate(&self, per_round: bool) -> Estimate {
        match &self.splitting {
            Some(s) if per_round => s.per_round,
            Some(s) => s.per_shot,
            None => {
                let e = Estimate::wilson(self.failures, self.shots, crate::study::stats::Z95);
                if per_round {
                    e.per_round(self.rounds)
                } else {
                    e
                }
            }
        }
    }

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
            splitting: r.splitting.clone(),
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
            method: "sampling".into(),
            splitting: None,
        };
        let line = serde_json::to_string(&row(0, 2)).unwrap();
        let text = format!("{line}\n{{\"task\": \"t\", \"chu");
        let (rows, complete) = parse_rows(&Source::new("s.jsonl", text)).unwrap();
        assert_eq!(rows, vec![row(0, 2)]);
        assert_eq!(complete, line.len() + 1);
        let (merged, conflicts) =
            merge_rows([vec![row(0, 2), row(1, 3)], vec![row(1, 3), row(0, 5)]]);
        assert_eq!(merged, vec![row(0, 2), row(1, 3)]);
        assert_eq!(conflicts.len(), 1);
        assert_eq!(
            (conflicts[0].kept, conflicts[0].dropped, conflicts[0].rates),
            ((0, 10, 2), (1, 10, 5), None)
        );
        // A damaged row (more failures than shots) is refused, pointing at its line.
        let bad = serde_json::to_string(&row(1, 11)).unwrap();
        let text = parse_rows(&Source::new("r.jsonl", format!("{line}\n{bad}\n")))
            .unwrap_err()
            .render();
        assert!(text.contains("11 failures in 10 shots"), "{text}");
        assert!(text.contains("r.jsonl:2:1"), "{text}");
        let pts = aggregate(&merged);
        assert_eq!((pts[0].shots, pts[0].failures), (20, 5));
        // The header line is not a row.
        let text = format!("{STORE_HEADER}\n{line}\n");
        let (rows, _) = parse_rows(&Source::new("h.jsonl", text)).unwrap();
        assert_eq!(rows, vec![row(0, 2)]);
    }

    fn splitting_row(rate: f64) -> ChunkRow {
        let e = |r: f64| Estimate {
            rate: r,
            low: r * 0.8,
            high: r * 1.25,
        };
        ChunkRow {
            version: STORE_VERSION,
            task: "t|method=splitting".into(),
            chunk: 0,
            shots: 4096,
            failures: 1000,
            seed: 7,
            label: "l".into(),
            family: "repetition".into(),
            distance: 5,
            rounds: 5,
            p: 0.001,
            bias: Some("inf".into()),
            vary: BTreeMap::new(),
            noise: "capacity p=0.001 bias=inf".into(),
            decoder: "mwpm".into(),
            method: "splitting".into(),
            splitting: Some(SplittingRow {
                per_shot: e(rate),
                per_round: e(rate / 5.0),
                uncertainty: Some(0.11),
                chains: 8,
                sweeps: 100.0,
                proposals: 2000,
                top_scale: 64.0,
                ladder: vec![
                    RungRow {
                        scale: 64.0,
                        p: Some(0.064),
                        rate: 0.24,
                        uncertainty: Some(0.03),
                        low: 0.22,
                        high: 0.26,
                    },
                    RungRow {
                        scale: 1.0,
                        p: Some(0.001),
                        rate,
                        uncertainty: None,
                        low: rate * 0.8,
                        high: rate * 1.25,
                    },
                ],
                exponent: Some(ExponentRow {
                    exponent: 2.9,
                    error: None,
                    points: 3,
                    scales: [1.0, 3.5],
                }),
                circuit_distance: Some(DistanceRow {
                    value: 5,
                    lower: 5,
                    high_rate: None,
                }),
                expected_exponent: Some(3),
            }),
        }
    }

    #[test]
    fn splitting_rows_round_trip_and_older_rows_still_read() {
        let row = splitting_row(1e-8);
        let line = serde_json::to_string(&row).unwrap();
        // The estimate sits at the top level of the row, unknown uncertainties as `null`.
        assert!(line.contains("\"per_round\":{\"rate\":2e-9"), "{line}");
        assert!(line.contains("\"uncertainty\":null"), "{line}");
        let text = format!("{STORE_HEADER}\n{line}\n");
        let (rows, _) = parse_rows(&Source::new("s.jsonl", text)).unwrap();
        assert_eq!(rows, vec![row.clone()]);
        // A version 3 row (written before `method` existed) reads as a sampling row of today.
        let v3 = r#"{"version":3,"task":"t","chunk":0,"shots":10,"failures":1,"seed":1,"label":"l","family":"surface","distance":3,"rounds":3,"p":0.1,"noise":"capacity p=0.1","decoder":"mwpm"}"#;
        let (rows, _) = parse_rows(&Source::new("s.jsonl", format!("{v3}\n{line}\n"))).unwrap();
        assert_eq!((rows[0].version, rows[0].method.as_str()), (4, "sampling"));
        assert_eq!(rows[0].splitting, None);
        assert_eq!(rows[1], row);
        let pts = aggregate(&rows);
        let split = pts.iter().find(|p| p.splitting.is_some()).unwrap();
        assert_eq!(split.estimate(true).rate, 2e-9);
        assert_eq!(split.estimate(false).rate, 1e-8);
        // A splitting row without its estimate, or a sampling row with one, is damaged.
        let cut = line.replace("\"method\":\"splitting\"", "\"method\":\"sampling\"");
        let r = parse_rows(&Source::new("s.jsonl", format!("{cut}\n")))
            .unwrap_err()
            .render();
        assert!(
            r.contains("a sampling row carries a splitting estimate"),
            "{r}"
        );
        let mut bare = serde_json::to_value(&row).unwrap();
        bare.as_object_mut().unwrap().remove("ladder");
        let r = parse_rows(&Source::new("s.jsonl", format!("{bare}\n")))
            .unwrap_err()
            .render();
        assert!(r.contains("a splitting row without its estimate"), "{r}");
    }

    #[test]
    fn splitting_rows_merge_once_and_differing_ones_conflict() {
        let (rows, conflicts) = merge_rows([vec![splitting_row(1e-8)], vec![splitting_row(1e-8)]]);
        assert_eq!((rows.len(), conflicts.len()), (1, 0));
        // Same counts at the top, another estimate: a conflict naming both rates.
        let (rows, conflicts) = merge_rows([vec![splitting_row(1e-8)], vec![splitting_row(2e-8)]]);
        assert_eq!(rows, vec![splitting_row(1e-8)]);
        assert_eq!(conflicts.len(), 1);
        assert_eq!(conflicts[0].rates, Some((1e-8, 2e-8)));
        assert_eq!((conflicts[0].kept.0, conflicts[0].dropped.0), (0, 1));
    }

    /// `--store notes.txt` on a one-line text file without a newline took the line for a torn
    /// row and cut the file to nothing; such files are refused now, and left as they were.
    #[test]
    fn files_that_are_not_stores_are_refused_and_kept() {
        let dir = tempfile::tempdir().unwrap();
        for text in [
            "my notes, no newline",
            "{\"json\": \"but not a store\"}",
            "line one\nline two",
            "{\"slant_results_store\":2}\nhalf a line",
        ] {
            let path = dir.path().join("notes.txt");
            std::fs::write(&path, text).unwrap();
            let err = match Store::open(&path) {
                Ok(_) => panic!("{text:?} taken for a store"),
                Err(e) => e.render(),
            };
            assert!(
                err.contains("is not a slant results store") || err.contains("not a results row"),
                "{text:?}: {err}"
            );
            assert_eq!(std::fs::read_to_string(&path).unwrap(), text);
        }
        // A new store starts with the header; reopening it reads no rows and adds nothing.
        let path = dir.path().join("new.jsonl");
        let (_, rows) = Store::open(&path).unwrap();
        assert!(rows.is_empty());
        let (_, rows) = Store::open(&path).unwrap();
        assert!(rows.is_empty());
        assert_eq!(
            std::fs::read_to_string(&path).unwrap(),
            format!("{STORE_HEADER}\n")
        );
        // A torn row after the header is still cut off, and reported by `load_store`.
        std::fs::write(&path, format!("{STORE_HEADER}\n{{\"task\": \"t")).unwrap();
        assert_eq!(load_store(&path).unwrap().torn_bytes, 11);
        Store::open(&path).unwrap();
        assert_eq!(
            std::fs::read_to_string(&path).unwrap(),
            format!("{STORE_HEADER}\n")
        );
    }
}
