//! Threshold sweeps: a TOML spec, the task grid it expands to, and a resumable results store.
//!
//! In: a sweep spec ([`SweepSpec::parse`]), optionally a shard `k/n`, and a store path. Out: rows
//! appended to the store, one per finished *chunk* of a task; [`aggregate`] sums them per task
//! into [`Point`]s for plots and threshold fits.
//!
//! # Spec
//! ```toml
//! seed = 1            # optional, default 0
//! shots = 100000      # per task (grids may override shots, until_failures, chunk, decoders)
//! until_failures = 500 # optional early stop per task
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
//! method = "splitting"          # optional: "sampling" (default) or "splitting"; with it
//! chains = 8                    # walks per rung (default 8), proposals per walk and rung per
//! sweeps = 100                  # fault-graph edge (default 100), the ladder's top (default:
//! top = 16                      # pilot runs); `shots`/`until_failures` bound direct sampling at
//!                               # the top (defaults 1e8 / 1000). Also allowed at the top level.
//! ```
//!
//! # Splitting tasks
//! A point of a grid with `method = "splitting"` is one task that is not cut into chunks: the
//! ladder of [`crate::study::splitting`] runs whole (seeded by `chunk_seed(key, 0)`), then the
//! circuit distance of its fault graph is computed, and one row (chunk 0) carries the estimate,
//! the ladder and `⌈d/2⌉` ([`SplittingRow`]). Its key names the method and every knob instead of
//! the chunk size; a task with a row in the store is skipped.
//!
//! # Tasks and chunks
//! The grid expands in a fixed order (grid, decoder, bias, distance, p) into [`Task`]s. A task's
//! *key* spells out everything that determines its samples: label, the full `slant new` command
//! line, the noise text, decoder, chunk size and seed. Chunk `c` of a task samples
//! `min(chunk, shots − c·chunk)` shots with seed `chunk_seed(key, c)`, so it gives the same counts
//! on any machine, thread count or run. Chunks run in order; the task stops after the first
//! chunk at which its failure total reaches `until_failures`.
//!
//! # Store (JSON Lines)
//! A header line ([`STORE_HEADER`]) marks the file as a store; `--store` refuses any other
//! non-empty file. Then one [`ChunkRow`] per finished chunk, appended with a single `write` followed by `fsync`. A killed
//! run therefore loses at most the chunks in flight. On restart the store is read, a torn last
//! line (no newline) is cut off, and chunks already recorded are skipped; since every task's
//! recorded chunks form a prefix and chunk results depend only on the key and index, a resumed
//! run ends with the same totals as an uninterrupted one. [`merge_rows`] drops duplicate
//! `(task, chunk)` rows, so stores of shards (or of overlapping runs) combine safely.
//!
//! # Shards
//! `--shard k/n` (1 ≤ k ≤ n) runs the tasks whose index in the expanded grid is `k − 1` mod `n`.
//!
//! Every row carries `"version": 4` and its `method`; rows of older stores are upgraded as they
//! are read (`legacy.rs`), so old stores still merge and plot. `docs/reference.md` documents the row.
//!
//! Files: `spec.rs` (spec and tasks), `store.rs` (rows, reading, merging, totals), `legacy.rs`
//! (version 1 rows), `run.rs` (shards and the run).

mod legacy;
mod run;
mod spec;
mod store;

pub use run::{plan, run_sweep, Event, Shard, TaskState};
pub use spec::{
    chunk_seed, Method, SplittingKnobs, SweepSpec, Task, DEFAULT_CHAINS, DEFAULT_CHUNK,
    DEFAULT_SWEEPS, DEFAULT_TOP_FAILURES, DEFAULT_TOP_SHOTS,
};
pub use store::{
    aggregate, load_store, merge_rows, parse_rows, read_store, ChunkRow, Conflict, DistanceRow,
    ExponentRow, Point, RungRow, SplittingRow, Store, StoreContents, STORE_HEADER, STORE_VERSION,
};
