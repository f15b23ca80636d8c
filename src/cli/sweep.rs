//! `slant sweep`: run a threshold sweep from a TOML spec into a resumable results store.
//!
//! The spec format, task keys, chunk seeds, store format and resumption rules are documented in
//! [`crate::study::SweepSpec`] and [`crate::study::Store`]. This command picks the store path (`--store`, else the spec's
//! `store`, relative to the spec's directory, else the spec path with extension `.jsonl`), sizes
//! the thread pool (`--jobs`) and prints on stderr the tasks a resumed run skips, one line per
//! finished task, each distinct model warning once, and a live progress bar (shots, shots/s,
//! failures so far, ETA; in tasks, with the rung of the latest splitting task, when the run has
//! splitting tasks) when stderr is a terminal. A spec with splitting tasks ends with the table
//! of fitted slopes (`slant plot` prints the same) on stdout.

use std::collections::HashSet;
use std::path::PathBuf;
use std::sync::Mutex;

use crate::cli::common::print_warnings;
use crate::cli::common::read_source;
use crate::cli::progress::Progress;
use crate::cli::CliError;
use crate::study::{
    plan, run_sweep, Estimate, Event, Method, Shard, SplittingEvent, Store, SweepSpec, Task,
    TaskState, Z95,
};

const AFTER_HELP: &str = "\
Each finished chunk of a task is appended to the store (JSON Lines) with one write and an fsync.
Run the same command again after an interruption (even SIGKILL): chunks already recorded are
skipped, and the totals come out as in an uninterrupted run. `--shard k/n` runs the tasks whose
grid index is k-1 mod n; give each shard its own `--store` and combine them with `slant merge`.
A grid with `method = \"splitting\"` runs each point as one splitting task (see `slant estimate
--help`) and records one row for it when it ends; the run then prints the fitted slope of the
per-round rate against p per distance next to ceil(d_circ/2).";

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
    let spec = SweepSpec::parse_in(&source, args.spec.parent())?;
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
    let states = plan(&spec, args.shard, &recorded);
    let total = states.len();
    let skipped: Vec<_> = states
        .iter()
        .filter(|(_, _, s)| matches!(s, TaskState::Complete { .. } | TaskState::Estimated { .. }))
        .collect();
    let partial = states
        .iter()
        .filter(|(_, _, s)| matches!(s, TaskState::Partial { .. }))
        .count();
    if !skipped.is_empty() {
        eprintln!(
            "skipped {} of {total} tasks, complete in `{}`:",
            skipped.len(),
            store_path.display()
        );
        for (i, task, state) in &skipped {
            let result = match state {
                TaskState::Complete { shots, failures } => format!("{failures}/{shots}"),
                TaskState::Estimated { per_shot } => format!("splitting, {per_shot:.3e} per shot"),
                _ => continue,
            };
            eprintln!(
                "  skipped task {i}: {} d={} {} {} ({result})",
                task.label,
                task.distance,
                task.noise,
                task.decoder.name()
            );
        }
    }
    if partial > 0 {
        eprintln!("resuming {partial} tasks after their recorded chunks");
    }
    // The bar counts the shots still to run (an upper bound when `until_failures` stops a task),
    // or, when splitting tasks run (whose work is not a number of shots), the tasks.
    let splitting = states
        .iter()
        .any(|(_, t, s)| matches!(t.method, Method::Splitting(_)) && matches!(s, TaskState::Fresh));
    let to_run: u64 = states
        .iter()
        .map(|(_, t, s)| match s {
            TaskState::Fresh if splitting => 1,
            TaskState::Partial { .. } if splitting => 1,
            TaskState::Fresh => t.shots,
            TaskState::Partial { shots, .. } => t.shots.saturating_sub(*shots),
            TaskState::Complete { .. } | TaskState::Estimated { .. } => 0,
        })
        .sum();
    let unit = if splitting { "tasks" } else { "shots" };
    let progress = Mutex::new((Progress::new(to_run, unit), 0u64, 0u64));
    let finished = std::sync::atomic::AtomicUsize::new(skipped.len());
    // The same model warns the same way about every circuit of a grid: show each text once.
    let shown: Mutex<HashSet<String>> = Mutex::new(HashSet::new());
    let point = |task: &Task| format!("{} d={} {}", task.label, task.distance, task.noise);
    let task_done = |line: String| {
        let n = finished.fetch_add(1, std::sync::atomic::Ordering::Relaxed) + 1;
        if let Ok(mut p) = progress.lock() {
            if splitting {
                p.1 += 1;
                let done = p.1;
                p.0.set_position(done);
            }
            p.0.suspend(|| eprintln!("[{n}/{total}] {line}"));
        }
    };
    let on_event = |e: Event| match e {
        Event::Warnings(_, warnings) => {
            let fresh: Vec<_> = match shown.lock() {
                Ok(mut seen) => warnings
                    .iter()
                    .filter(|w| seen.insert(w.render()))
                    .cloned()
                    .collect(),
                Err(_) => warnings.to_vec(),
            };
            if let Ok(mut p) = progress.lock() {
                p.0.suspend(|| print_warnings(&fresh));
            }
        }
        Event::TaskDone(task, shots, failures) => {
            let est = Estimate::wilson(failures, shots, Z95);
            task_done(format!(
                "{} {}: {failures}/{shots} = {:.3e}",
                point(task),
                task.decoder.name(),
                est.rate
            ));
        }
        Event::Estimated(task, row) => {
            if let Some(s) = &row.splitting {
                let unc = s
                    .uncertainty
                    .map_or("?".into(), |u| format!("{:.1}%", 100.0 * u));
                task_done(format!(
                    "{} {} splitting: {:.3e} per shot ± {unc}, {:.3e} per round",
                    point(task),
                    task.decoder.name(),
                    s.per_shot.rate,
                    s.per_round.rate
                ));
            }
        }
        Event::Rung(task, e) => {
            let what = match e {
                SplittingEvent::Sampling {
                    scale, failures, ..
                } => format!("direct sampling at {scale}x, {failures} failures"),
                SplittingEvent::Rung { done, expected, .. } => {
                    format!("rung {done} of ~{expected}")
                }
            };
            if let Ok(mut p) = progress.lock() {
                p.0.set_message(format!("{}: {what}", point(task)));
            }
        }
        Event::Chunk(_, row) => {
            if let Ok(mut p) = progress.lock() {
                p.2 += row.failures;
                let failures = p.2;
                if !splitting {
                    p.1 += row.shots;
                    let done = p.1;
                    p.0.set_position(done);
                }
                p.0.set_message(format!("{failures} failures"));
            }
        }
    };
    let result = pool.install(|| run_sweep(&spec, args.shard, &store, &recorded, &on_event));
    if let Ok(mut p) = progress.lock() {
        p.0.finish();
    }
    result?;
    eprintln!("results in `{}`", store_path.display());
    if spec
        .tasks
        .iter()
        .any(|t| matches!(t.method, Method::Splitting(_)))
    {
        let rows = crate::study::read_store(&store_path)?;
        let keys: HashSet<&str> = spec.tasks.iter().map(|t| t.key.as_str()).collect();
        let rows: Vec<_> = rows
            .into_iter()
            .filter(|r| keys.contains(r.task.as_str()))
            .collect();
        out!("{}", crate::cli::plot::slope_report(&rows, true, None));
    }
    Ok(())
}
