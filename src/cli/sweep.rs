//! `slant sweep`: run a threshold sweep from a TOML spec into a resumable results store.
//!
//! The spec format, task keys, chunk seeds, store format and resumption rules are documented in
//! [`crate::study::SweepSpec`] and [`crate::study::Store`]. This command picks the store path (`--store`, else the spec's
//! `store`, relative to the spec's directory, else the spec path with extension `.jsonl`), sizes
//! the thread pool (`--jobs`) and prints one line per finished task on stderr.

use std::path::PathBuf;

use crate::cli::common::print_warnings;
use crate::cli::common::read_source;
use crate::cli::CliError;
use crate::study::{run_sweep, Estimate, Event, Shard, Store, SweepSpec, Z95};

const AFTER_HELP: &str = "\
Each finished chunk of a task is appended to the store (JSON Lines) with one write and an fsync.
Run the same command again after an interruption (even SIGKILL): chunks already recorded are
skipped, and the totals come out as in an uninterrupted run. `--shard k/n` runs the tasks whose
grid index is k-1 mod n; give each shard its own `--store` and combine them with `slant merge`.";

/// Arguments of `slant sweep`.
#[derive(Debug, clap::Args)]
#[command(after_help = AFTER_HELP)]
pub struct Args {
    /// The sweep spec (TOML).
    pub spec: PathBuf,
    /// Run only this share of the tasks: `k/n` with 1 <= k <= n.
    #[arg(long, value_name = "K/N", value_parser = |s: &str| s.parse::<Shard>())]
    pub shard: Option<Shard>,
    /// Worker threads (default: all cores).
    #[arg(long, value_name = "N")]
    pub jobs: Option<usize>,
    /// Results store (JSON Lines); overrides the spec's `store`.
    #[arg(long, value_name = "FILE")]
    pub store: Option<PathBuf>,
    /// Print the task list (index, key) and exit without running.
    #[arg(long)]
    pub list: bool,
}

/// Runs `slant sweep`.
pub fn run(args: Args) -> Result<(), CliError> {
    let source = read_source(&args.spec)?;
    let spec = SweepSpec::parse(&source)?;
    if args.list {
        for (i, t) in spec.tasks.iter().enumerate() {
            if args.shard.is_none_or(|s| s.has(i)) {
                outln!("{i}\t{}", t.key);
            }
        }
        return Ok(());
    }
    let store_path = match (&args.store, &spec.store) {
        (Some(p), _) => p.clone(),
        (None, Some(s)) => args
            .spec
            .parent()
            .map_or_else(|| PathBuf::from(s), |d| d.join(s)),
        (None, None) => args.spec.with_extension("jsonl"),
    };
    let (store, recorded) = Store::open(&store_path)?;
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(args.jobs.unwrap_or(0))
        .build()
        .map_err(|e| CliError::Internal(format!("cannot start worker threads: {e}")))?;
    let total = spec
        .tasks
        .iter()
        .enumerate()
        .filter(|(i, _)| args.shard.is_none_or(|s| s.has(*i)))
        .count();
    let finished = std::sync::atomic::AtomicUsize::new(0);
    let on_event = |e: Event| match e {
        Event::Warnings(_, warnings) => print_warnings(warnings),
        Event::TaskDone(task, shots, failures) => {
            let n = finished.fetch_add(1, std::sync::atomic::Ordering::Relaxed) + 1;
            let est = Estimate::wilson(failures, shots, Z95);
            eprintln!(
                "[{n}/{total}] {} d={} {} {}: {failures}/{shots} = {:.3e}",
                task.label,
                task.distance,
                task.noise,
                task.decoder.name(),
                est.rate
            );
        }
        Event::Chunk(..) => {}
    };
    pool.install(|| run_sweep(&spec, args.shard, &store, &recorded, &on_event))?;
    eprintln!("results in `{}`", store_path.display());
    Ok(())
}
