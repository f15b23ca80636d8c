//! Threshold sweeps: a TOML spec, the task grid it expands to, and a resumable results store.
//!
//! In: a sweep spec ([`SweepSpec::parse`]), optionally a shard `k/n`, and a store path. Out: rows
//! appended to the store, one per finished *chunk* of a task; [`aggregate`] sums them per task
//! into [`Point`]s for plots and threshold fits.
//!
//! # Spec
//! ```toml
//! seed = 1            # optional, default 0
//! shots = 100000      # per task (grids may override shots, max_errors, chunk, decoders)
//! max_errors = 500    # optional early stop per task
//! chunk = 20000       # shots per chunk (the unit of resumption), default 16384
//! decoders = ["mwpm"] # default ["mwpm"]
//!
//! [[grid]]
//! label = "surface, capacity"   # optional; default "FAMILY NOISE"
//! family = "surface"            # repetition | surface | xzzx
//! distances = [3, 5, 7]
//! rounds = "d"                  # "d" (default) or a number
//! style = "product"             # optional generator options: style, basis, entangler, flip,
//!                               # order, periodic (as in `slant new`)
//! noise = "capacity"            # preset name, extra keys allowed: "phenomenological q=0.01"
//! p = [0.08, 0.09, 0.10, 0.11]
//! bias = [inf]                  # optional list; each value becomes `bias=…`
//! ```
//!
//! # Tasks and chunks
//! The grid expands in a fixed order (grid, decoder, bias, distance, p) into [`Task`]s. A task's
//! *key* spells out everything that determines its samples: label, the full `slant new` command
//! line, the noise text, decoder, chunk size and seed. Chunk `c` of a task samples
//! `min(chunk, shots − c·chunk)` shots with seed `chunk_seed(key, c)`, so it gives the same counts
//! on any machine, thread count or run. Chunks run in order; the task stops after the first
//! chunk at which its failure total reaches `max_errors`.
//!
//! # Store (JSON Lines)
//! One [`Row`] per finished chunk, appended with a single `write` followed by `fsync`. A killed
//! run therefore loses at most the chunks in flight. On restart the store is read, a torn last
//! line (no newline) is cut off, and chunks already recorded are skipped; since every task's
//! recorded chunks form a prefix and chunk results depend only on the key and index, a resumed
//! run ends with the same totals as an uninterrupted one. [`merge_rows`] drops duplicate
//! `(task, chunk)` rows, so stores of shards (or of overlapping runs) combine safely.
//!
//! # Shards
//! `--shard k/n` (1 ≤ k ≤ n) runs the tasks whose index in the expanded grid is `k − 1` mod `n`.

use std::collections::{BTreeMap, HashMap, HashSet};
use std::fs::{File, OpenOptions};
use std::io::{Seek, Write};
use std::path::Path;
use std::sync::{Arc, Mutex};

use rayon::prelude::*;

use crate::base::{Diagnostic, Source, Span};
use crate::decode::run::{Experiment, RunOptions};
use crate::decode::DecoderKind;
use crate::gen::{Entangler, Family, Flip, GenSpec, LogicalBasis, Order, Style};

/// Default shots per chunk.
pub const DEFAULT_CHUNK: u64 = 16_384;

/// `rounds` in a grid: a number, or `"d"` for the distance.
#[derive(Clone, Debug, serde::Deserialize)]
#[serde(untagged)]
enum Rounds {
    Fixed(u32),
    Name(String),
}

#[derive(Clone, Debug, serde::Deserialize)]
#[serde(deny_unknown_fields)]
struct GridToml {
    basis: Option<String>,
    bias: Option<Vec<f64>>,
    chunk: Option<u64>,
    decoders: Option<Vec<String>>,
    distances: Vec<u32>,
    entangler: Option<String>,
    family: String,
    flip: Option<String>,
    label: Option<String>,
    max_errors: Option<u64>,
    noise: String,
    order: Option<String>,
    p: Vec<f64>,
    #[serde(default)]
    periodic: bool,
    rounds: Option<Rounds>,
    shots: Option<u64>,
    style: Option<String>,
}

#[derive(Clone, Debug, serde::Deserialize)]
#[serde(deny_unknown_fields)]
struct SpecToml {
    chunk: Option<u64>,
    decoders: Option<Vec<String>>,
    /// Spanned so that a mistake inside one grid points at that grid.
    grid: Vec<toml::Spanned<GridToml>>,
    max_errors: Option<u64>,
    seed: Option<u64>,
    shots: Option<u64>,
    store: Option<String>,
}

/// One point of the grid: a circuit, a noise model and a decoder, sampled in chunks.
#[derive(Clone, Debug, PartialEq)]
pub struct Task {
    /// Canonical key (see module docs); chunk seeds derive from it.
    pub key: String,
    /// Curve label (plots group by label, decoder and bias).
    pub label: String,
    /// The generator spec.
    pub gen: GenSpec,
    /// Distance (`dz` of the generator spec; the repetition code's length).
    pub distance: u32,
    /// Physical error rate `p` of the noise preset.
    pub p: f64,
    /// Bias, as written in the noise text (`None`: the preset's default).
    pub bias: Option<String>,
    /// Full `--noise` text.
    pub noise: String,
    /// Decoder.
    pub decoder: DecoderKind,
    /// Shots to run at most.
    pub shots: u64,
    /// Early stop after this many failures.
    pub max_errors: Option<u64>,
    /// Shots per chunk.
    pub chunk: u64,
    /// Seed of the sweep.
    pub seed: u64,
}

impl Task {
    /// Number of chunks needed for all shots.
    pub fn chunks(&self) -> u64 {
        self.shots.div_ceil(self.chunk)
    }

    /// Seed of chunk `c`.
    pub fn chunk_seed(&self, c: u64) -> u64 {
        chunk_seed(&self.key, c)
    }
}

/// A parsed sweep spec.
#[derive(Clone, Debug, PartialEq)]
pub struct SweepSpec {
    /// Store path as written in the spec (relative to the spec's directory), if any.
    pub store: Option<String>,
    /// The expanded task list, in grid order.
    pub tasks: Vec<Task>,
}

fn text_option<T>(
    value: &Option<String>,
    what: &str,
    parse: impl Fn(&str) -> Option<T>,
) -> Result<Option<T>, String> {
    value
        .as_deref()
        .map(|s| parse(s).ok_or_else(|| format!("unknown {what} `{s}`")))
        .transpose()
}

fn fmt_f64(x: f64) -> String {
    if x.is_infinite() {
        "inf".to_string()
    } else {
        format!("{x}")
    }
}

impl SweepSpec {
    /// Parses and expands a spec. Errors point into the TOML text.
    pub fn parse(source: &Arc<Source>) -> Result<SweepSpec, Diagnostic> {
        let whole = Span::new(0, source.text.as_str().len().min(1));
        let raw: SpecToml = toml::from_str(source.text.as_str()).map_err(|e| {
            let span = e
                .span()
                .map_or(whole, |r| Span::new(r.start, r.end.max(r.start)));
            Diagnostic::error(source, span, e.message().to_string())
        })?;
        let err = |msg: String| Diagnostic::error(source, whole, msg);
        let seed = raw.seed.unwrap_or(0);
        let mut tasks = Vec::new();
        for (gi, spanned) in raw.grid.iter().enumerate() {
            let g = spanned.get_ref();
            let grid_span = Span::new(spanned.span().start, spanned.span().end);
            let at =
                |m: String| Diagnostic::error(source, grid_span, format!("grid {}: {m}", gi + 1));
            let family: Family = g.family.parse().map_err(at)?;
            let shots = g
                .shots
                .or(raw.shots)
                .ok_or_else(|| at("no `shots` (set it at the top or in the grid)".into()))?;
            if shots == 0 {
                return Err(at("`shots` must be at least 1".into()));
            }
            let chunk = g.chunk.or(raw.chunk).unwrap_or(DEFAULT_CHUNK);
            if chunk == 0 {
                return Err(at("`chunk` must be at least 1".into()));
            }
            let max_errors = g.max_errors.or(raw.max_errors);
            let decoders = g
                .decoders
                .clone()
                .or(raw.decoders.clone())
                .unwrap_or_else(|| vec!["mwpm".into()]);
            let decoders: Vec<DecoderKind> = decoders
                .iter()
                .map(|d| d.parse())
                .collect::<Result<_, String>>()
                .map_err(at)?;
            let style = text_option(&g.style, "style", |s| match s {
                "ancilla" => Some(Style::Ancilla),
                "product" => Some(Style::Product),
                _ => None,
            })
            .map_err(at)?;
            let basis = text_option(&g.basis, "basis", |s| match s {
                "x" => Some(LogicalBasis::X),
                "z" => Some(LogicalBasis::Z),
                _ => None,
            })
            .map_err(at)?;
            let entangler = text_option(&g.entangler, "entangler", |s| match s {
                "cx" => Some(Entangler::Cx),
                "native" => Some(Entangler::Native),
                _ => None,
            })
            .map_err(at)?;
            let flip = text_option(&g.flip, "flip", |s| match s {
                "x" => Some(Flip::X),
                "z" => Some(Flip::Z),
                _ => None,
            })
            .map_err(at)?;
            let order = match &g.order {
                None => None,
                Some(o) => Some(o.parse::<Order>().map_err(at)?),
            };
            let biases: Vec<Option<f64>> = match &g.bias {
                None => vec![None],
                Some(b) => b.iter().map(|&x| Some(x)).collect(),
            };
            if g.distances.is_empty() || g.p.is_empty() {
                return Err(at("`distances` and `p` must not be empty".into()));
            }
            let label = g.label.clone().unwrap_or_else(|| {
                let preset = g.noise.split_whitespace().next().unwrap_or("");
                format!("{} {preset}", family.name())
            });
            for &decoder in &decoders {
                for bias in &biases {
                    for &d in &g.distances {
                        let mut gen = GenSpec::new(family, d);
                        if g.periodic {
                            gen.dx = d + 1;
                        }
                        gen.rounds = match &g.rounds {
                            None => d,
                            Some(Rounds::Fixed(r)) => *r,
                            Some(Rounds::Name(n)) if n == "d" => d,
                            Some(Rounds::Name(n)) => {
                                return Err(at(format!(
                                    "`rounds` must be a number or \"d\", found `{n}`"
                                )))
                            }
                        };
                        gen.style = style;
                        gen.basis = basis;
                        gen.entangler = entangler;
                        gen.flip = flip;
                        gen.order = order.clone();
                        gen.periodic = g.periodic;
                        let command = gen
                            .command_line()
                            .map_err(|e| at(format!("distance {d}: {e}")))?;
                        for &p in &g.p {
                            let mut noise = format!("{} p={}", g.noise.trim(), fmt_f64(p));
                            if let Some(b) = bias {
                                noise += &format!(" bias={}", fmt_f64(*b));
                            }
                            crate::noise::NoiseSpec::parse(&noise)
                                .map_err(|e| at(format!("noise `{noise}`: {}", e.message)))?;
                            let key = format!(
                                "{label}|{command}|noise={noise}|decoder={}|chunk={chunk}|seed={seed}",
                                decoder.name()
                            );
                            tasks.push(Task {
                                key,
                                label: label.clone(),
                                gen: gen.clone(),
                                distance: d,
                                p,
                                bias: bias.map(fmt_f64),
                                noise,
                                decoder,
                                shots,
                                max_errors,
                                chunk,
                                seed,
                            });
                        }
                    }
                }
            }
        }
        let mut seen = HashSet::new();
        for t in &tasks {
            if !seen.insert(&t.key) {
                return Err(err(format!("the grid lists task `{}` twice", t.key)));
            }
        }
        Ok(SweepSpec {
            store: raw.store,
            tasks,
        })
    }
}

/// A `k/n` shard (1 ≤ k ≤ n).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Shard {
    /// This shard, from 1.
    pub k: u64,
    /// Number of shards.
    pub n: u64,
}

impl Shard {
    /// Whether task `index` belongs to this shard.
    pub fn has(self, index: usize) -> bool {
        index as u64 % self.n == self.k - 1
    }
}

impl std::str::FromStr for Shard {
    type Err = String;
    fn from_str(s: &str) -> Result<Shard, String> {
        let bad = || format!("expected `k/n` with 1 <= k <= n, found `{s}`");
        let (k, n) = s.split_once('/').ok_or_else(bad)?;
        let (k, n): (u64, u64) = (
            k.trim().parse().map_err(|_| bad())?,
            n.trim().parse().map_err(|_| bad())?,
        );
        if k == 0 || k > n {
            return Err(bad());
        }
        Ok(Shard { k, n })
    }
}

/// One finished chunk of a task: a line of the store.
#[derive(Clone, Debug, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Row {
    /// Task key.
    pub task: String,
    /// Chunk index within the task.
    pub chunk: u64,
    /// Shots sampled in this chunk.
    pub shots: u64,
    /// Logical failures among them.
    pub errors: u64,
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
    /// Full noise text.
    pub noise: String,
    /// Decoder name.
    pub decoder: String,
}

/// The seed of chunk `c` of the task with key `key`: FNV-1a of the key, mixed with the index by
/// a SplitMix64 finaliser (stable across platforms and Rust versions, unlike `std`'s hasher).
pub fn chunk_seed(key: &str, c: u64) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for b in key.bytes() {
        h ^= b as u64;
        h = h.wrapping_mul(0x0100_0000_01b3);
    }
    let mut v = h ^ c.wrapping_mul(0x9e37_79b9_7f4a_7c15);
    v = (v ^ (v >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
    v = (v ^ (v >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
    v ^ (v >> 31)
}

/// Parses the rows of a store. A last line without a newline is a torn write and is ignored
/// (its byte offset is returned so an appender can cut it off); any other bad line is an error
/// pointing at it.
pub fn parse_rows(source: &Arc<Source>) -> Result<(Vec<Row>, usize), Diagnostic> {
    let text = source.text.as_str();
    let complete = text.rfind('\n').map_or(0, |i| i + 1);
    let mut rows = Vec::new();
    let mut offset = 0;
    for line in text[..complete].split_inclusive('\n') {
        let body = line.trim_end();
        if !body.is_empty() {
            let span = Span::new(offset, offset + body.len());
            let row: Row = serde_json::from_str(body)
                .map_err(|e| Diagnostic::error(source, span, format!("not a results row: {e}")))?;
            if row.errors > row.shots {
                return Err(Diagnostic::error(
                    source,
                    span,
                    format!(
                        "damaged results row: {} errors in {} shots",
                        row.errors, row.shots
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
pub fn read_store(path: &Path) -> Result<Vec<Row>, Diagnostic> {
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
    pub fn open(path: &Path) -> Result<(Store, Vec<Row>), Diagnostic> {
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
    pub fn append(&self, row: &Row) -> Result<(), Diagnostic> {
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

/// Progress of a sweep, reported to the caller's callback.
#[derive(Clone, Debug)]
pub enum Event<'a> {
    /// A chunk finished and was recorded.
    Chunk(&'a Task, &'a Row),
    /// A task is complete (all shots, or enough errors): its totals.
    TaskDone(&'a Task, u64, u64),
}

/// Runs the tasks of `spec` in `shard` (all when `None`), appending to `store`; `recorded` are
/// the rows already in the store. Tasks run in parallel on the current rayon pool, the chunks of
/// one task in order. `on_event` is called from worker threads.
pub fn run_sweep(
    spec: &SweepSpec,
    shard: Option<Shard>,
    store: &Store,
    recorded: &[Row],
    on_event: &(dyn Fn(Event) + Sync),
) -> Result<(), Diagnostic> {
    let mut done: HashMap<&str, BTreeMap<u64, &Row>> = HashMap::new();
    for r in recorded {
        done.entry(r.task.as_str())
            .or_default()
            .entry(r.chunk)
            .or_insert(r);
    }
    let mine: Vec<&Task> = spec
        .tasks
        .iter()
        .enumerate()
        .filter(|(i, _)| shard.is_none_or(|s| s.has(*i)))
        .map(|(_, t)| t)
        .collect();
    mine.par_iter().try_for_each(|task| {
        let empty = BTreeMap::new();
        let prior = done.get(task.key.as_str()).unwrap_or(&empty);
        run_task(task, prior, store, on_event)
    })
}

fn run_task(
    task: &Task,
    prior: &BTreeMap<u64, &Row>,
    store: &Store,
    on_event: &(dyn Fn(Event) + Sync),
) -> Result<(), Diagnostic> {
    let mut exp: Option<Experiment> = None;
    let (mut shots, mut errors) = (0u64, 0u64);
    for c in 0..task.chunks() {
        if task.max_errors.is_some_and(|k| errors >= k) {
            break;
        }
        if let Some(r) = prior.get(&c) {
            shots += r.shots;
            errors += r.errors;
            continue;
        }
        if exp.is_none() {
            exp = Some(build(task)?);
        }
        let Some(e) = &exp else { continue };
        let n = task.chunk.min(task.shots - c * task.chunk);
        let seed = task.chunk_seed(c);
        let counts = e.run(
            &RunOptions {
                shots: n,
                max_errors: None,
                seed,
            },
            |_| {},
        );
        let row = Row {
            task: task.key.clone(),
            chunk: c,
            shots: counts.shots,
            errors: counts.errors,
            seed,
            label: task.label.clone(),
            family: task.gen.family.name().to_string(),
            distance: task.distance,
            rounds: e.rounds,
            p: task.p,
            bias: task.bias.clone(),
            noise: task.noise.clone(),
            decoder: task.decoder.name().to_string(),
        };
        store.append(&row)?;
        on_event(Event::Chunk(task, &row));
        shots += counts.shots;
        errors += counts.errors;
    }
    on_event(Event::TaskDone(task, shots, errors));
    Ok(())
}

/// Generates, loads and noises the task's circuit and prepares sampler and decoder.
fn build(task: &Task) -> Result<Experiment, Diagnostic> {
    let text = crate::gen::generate(&task.gen)
        .map_err(|e| Diagnostic::bare(format!("task `{}`: {e}", task.key)))?;
    let source = Source::new(format!("{}.slant", task.gen.family.name()), text);
    let first = |d: Vec<Diagnostic>| {
        d.into_iter()
            .next()
            .unwrap_or_else(|| Diagnostic::bare("unknown error"))
    };
    let circuit = crate::ir::load_source(&source, &[]).map_err(first)?;
    let spec = crate::noise::NoiseSpec::parse(&task.noise)?;
    let circuit = crate::noise::apply(&circuit, &spec).map_err(first)?;
    Experiment::new(&circuit, task.decoder)
        .map_err(|e| Diagnostic::bare(format!("task `{}`: cannot decode: {e}", task.key)))
}

/// Combines row lists, keeping the first row of each `(task, chunk)`. Returns the rows and the
/// number of duplicates whose counts disagreed with the kept row (a sign of mixed-up stores).
pub fn merge_rows(lists: impl IntoIterator<Item = Vec<Row>>) -> (Vec<Row>, usize) {
    let mut seen: HashMap<(String, u64), (u64, u64)> = HashMap::new();
    let mut out = Vec::new();
    let mut conflicts = 0;
    for list in lists {
        for r in list {
            match seen.get(&(r.task.clone(), r.chunk)) {
                Some(&(s, e)) => {
                    if (s, e) != (r.shots, r.errors) {
                        conflicts += 1;
                    }
                }
                None => {
                    seen.insert((r.task.clone(), r.chunk), (r.shots, r.errors));
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
    /// Distance.
    pub distance: u32,
    /// Rounds.
    pub rounds: u32,
    /// Physical error rate.
    pub p: f64,
    /// Total shots.
    pub shots: u64,
    /// Total logical failures.
    pub errors: u64,
}

impl Point {
    /// The curve family this point belongs to: label, decoder and bias.
    pub fn group(&self) -> String {
        let mut g = format!("{} ({})", self.label, self.decoder);
        if let Some(b) = &self.bias {
            g = format!("{} ({}, bias {b})", self.label, self.decoder);
        }
        g
    }
}

/// Sums rows per task (duplicate chunks counted once), sorted by group, distance and `p`.
pub fn aggregate(rows: &[Row]) -> Vec<Point> {
    let (rows, _) = merge_rows([rows.to_vec()]);
    let mut by_task: BTreeMap<&str, Point> = BTreeMap::new();
    for r in &rows {
        let p = by_task.entry(r.task.as_str()).or_insert_with(|| Point {
            task: r.task.clone(),
            label: r.label.clone(),
            decoder: r.decoder.clone(),
            bias: r.bias.clone(),
            distance: r.distance,
            rounds: r.rounds,
            p: r.p,
            shots: 0,
            errors: 0,
        });
        p.shots += r.shots;
        p.errors += r.errors;
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

    const SPEC: &str = r#"
shots = 1000
chunk = 300
[[grid]]
family = "repetition"
distances = [3, 5]
noise = "phenomenological"
p = [0.01, 0.02]
bias = [inf]
flip = "z"
"#;

    #[test]
    fn spec_expands_in_grid_order_with_distinct_keys() {
        let spec = SweepSpec::parse(&Source::new("s.toml", SPEC)).unwrap();
        assert_eq!(spec.tasks.len(), 4);
        let t = &spec.tasks[1];
        assert_eq!((t.distance, t.p), (3, 0.02));
        assert_eq!(t.noise, "phenomenological p=0.02 bias=inf");
        assert_eq!(t.chunks(), 4);
        assert_eq!(t.gen.rounds, 3);
        assert!(t.key.contains("--flip z"), "{}", t.key);
        assert_ne!(t.chunk_seed(0), t.chunk_seed(1));
        assert_ne!(t.chunk_seed(0), spec.tasks[0].chunk_seed(0));
    }

    #[test]
    fn spec_errors_point_into_the_toml() {
        let bad = Source::new(
            "s.toml",
            "shots = 10\n[[grid]]\nfamily = \"surface\"\ndistance = [3]\n",
        );
        let d = SweepSpec::parse(&bad).unwrap_err();
        assert!(d.render().contains("s.toml:4:1"), "{}", d.render());
        let bad = Source::new(
            "s.toml",
            "shots = 10\n[[grid]]\nfamily = \"torus\"\ndistances = [3]\nnoise = \"capacity\"\np = [0.1]\n",
        );
        let text = SweepSpec::parse(&bad).unwrap_err().render();
        assert!(text.contains("unknown family"), "{text}");
        // Mistakes inside a grid point at that grid, not at the top of the file.
        assert!(text.contains("s.toml:2:1"), "{text}");
        let zero = Source::new(
            "s.toml",
            "shots = 10\n[[grid]]\nfamily = \"surface\"\ndistances = [3]\nnoise = \"capacity\"\n\
             p = [0.1]\n\n[[grid]]\nfamily = \"surface\"\ndistances = [3]\nnoise = \"capacity\"\n\
             p = [0.1]\nchunk = 0\n",
        );
        let text = SweepSpec::parse(&zero).unwrap_err().render();
        assert!(
            text.contains("grid 2: `chunk` must be at least 1"),
            "{text}"
        );
        assert!(text.contains("s.toml:8:1"), "{text}");
    }

    #[test]
    fn shards_partition_the_tasks() {
        let s: Shard = "2/3".parse().unwrap();
        assert!(s.has(1) && s.has(4) && !s.has(0) && !s.has(2));
        assert!("0/3".parse::<Shard>().is_err() && "4/3".parse::<Shard>().is_err());
    }

    #[test]
    fn torn_last_line_is_ignored_and_duplicates_merge() {
        let row = |c: u64, e: u64| Row {
            task: "t".into(),
            chunk: c,
            shots: 10,
            errors: e,
            seed: 1,
            label: "l".into(),
            family: "surface".into(),
            distance: 3,
            rounds: 3,
            p: 0.1,
            bias: None,
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
        assert!(text.contains("11 errors in 10 shots"), "{text}");
        assert!(text.contains("r.jsonl:2:1"), "{text}");
        let pts = aggregate(&merged);
        assert_eq!((pts[0].shots, pts[0].errors), (20, 5));
    }
}
