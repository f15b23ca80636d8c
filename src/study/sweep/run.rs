//! Running a sweep: the tasks of a shard in parallel, the chunks of a task in order, each finished
//! chunk appended to the store before the next one starts. A splitting task is one unit: its
//! ladder runs whole and its one row is appended when it ends.

use std::collections::{BTreeMap, HashMap};

use rayon::prelude::*;

use crate::base::{Diagnostic, Source};
use crate::ir::Limits;
use crate::study::montecarlo::{Experiment, RunOptions};
use crate::study::pipeline::Pipeline;
use crate::study::rare::{fit_exponent, splitting, SplittingEvent, SplittingOptions};
use crate::study::stats::Estimate;
use crate::study::sweep::spec::{Method, SplittingKnobs, SweepSpec, Task, DEFAULT_TOP_FAILURES};
use crate::study::sweep::store::{
    finite, ChunkRow, DistanceRow, ExponentRow, RungRow, SplittingRow, Store, STORE_VERSION,
};

/// A splitting row's exponent is fitted over the rungs within this factor of the task's noise
/// (as `slant estimate --method splitting` does).
const FIT_RANGE: f64 = 4.0;

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

/// Progress of a sweep, reported to the caller's callback.
#[derive(Clone, Debug)]
pub enum Event<'a> {
    /// A chunk finished and was recorded.
    Chunk(&'a Task, &'a ChunkRow),
    /// The noise model has warnings about the task's circuit (once per task run).
    Warnings(&'a Task, &'a [Diagnostic]),
    /// A task this run worked on is complete (all shots, or enough failures): its totals.
    TaskDone(&'a Task, u64, u64),
    /// A splitting task made progress (direct sampling at the top, or a finished rung).
    Rung(&'a Task, SplittingEvent),
    /// A splitting task finished and its row was recorded.
    Estimated(&'a Task, &'a ChunkRow),
}

/// What a run will do with one task, given the rows already in the store.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum TaskState {
    /// Nothing recorded: the task runs from its first chunk.
    Fresh,
    /// Some chunks recorded: the task runs on from chunk `next`, with the recorded totals.
    Partial {
        /// The first chunk not recorded.
        next: u64,
        /// Shots already recorded.
        shots: u64,
    },
    /// Every chunk recorded, or enough failures: the task is skipped.
    Complete {
        /// Shots recorded.
        shots: u64,
        /// Failures recorded.
        failures: u64,
    },
    /// A splitting task whose row is recorded: it is skipped.
    Estimated {
        /// The recorded failure probability per shot.
        per_shot: f64,
    },
}

/// The state of every task of `spec` in `shard` against the rows `recorded`: `(index in the
/// grid, task, state)`, so a caller can say what a resumed run skips.
pub fn plan<'a>(
    spec: &'a SweepSpec,
    shard: Option<Shard>,
    recorded: &[ChunkRow],
) -> Vec<(usize, &'a Task, TaskState)> {
    let mut done: HashMap<&str, BTreeMap<u64, &ChunkRow>> = HashMap::new();
    for r in recorded {
        done.entry(r.task.as_str())
            .or_default()
            .entry(r.chunk)
            .or_insert(r);
    }
    spec.tasks
        .iter()
        .enumerate()
        .filter(|(i, _)| shard.is_none_or(|s| s.has(*i)))
        .map(|(i, t)| {
            let rows = done.get(t.key.as_str());
            if let Method::Splitting(_) = t.method {
                let row = rows.and_then(|m| m.get(&0));
                let state = match row.and_then(|r| r.splitting.as_ref()) {
                    Some(s) => TaskState::Estimated {
                        per_shot: s.per_shot.rate,
                    },
                    None => TaskState::Fresh,
                };
                return (i, t, state);
            }
            let (mut shots, mut failures, mut next) = (0, 0, 0);
            while let Some(r) = rows.and_then(|m| m.get(&next)) {
                if t.until_failures.is_some_and(|k| failures >= k) {
                    break;
                }
                shots += r.shots;
                failures += r.failures;
                next += 1;
            }
            let stopped = t.until_failures.is_some_and(|k| failures >= k);
            let state = if next >= t.chunks() || (stopped && next > 0) {
                TaskState::Complete { shots, failures }
            } else if next > 0 {
                TaskState::Partial { next, shots }
            } else {
                TaskState::Fresh
            };
            (i, t, state)
        })
        .collect()
}

/// Runs the tasks of `spec` in `shard` (all when `None`), appending to `store`; `recorded` are
/// the rows already in the store. Tasks run in parallel on the current rayon pool, the chunks of
/// one task in order. `on_event` is called from worker threads.
pub fn run_sweep(
    spec: &SweepSpec,
    shard: Option<Shard>,
    store: &Store,
    recorded: &[ChunkRow],
    on_event: &(dyn Fn(Event) + Sync),
) -> Result<(), Diagnostic> {
    let mut done: HashMap<&str, BTreeMap<u64, &ChunkRow>> = HashMap::new();
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
        match task.method {
            Method::Sampling => run_task(task, prior, store, on_event),
            Method::Splitting(knobs) if prior.is_empty() => {
                run_splitting(task, knobs, store, on_event)
            }
            Method::Splitting(_) => Ok(()),
        }
    })
}

fn run_task(
    task: &Task,
    prior: &BTreeMap<u64, &ChunkRow>,
    store: &Store,
    on_event: &(dyn Fn(Event) + Sync),
) -> Result<(), Diagnostic> {
    let mut exp: Option<Experiment> = None;
    let (mut shots, mut failures) = (0u64, 0u64);
    for c in 0..task.chunks() {
        if task.until_failures.is_some_and(|k| failures >= k) {
            break;
        }
        if let Some(r) = prior.get(&c) {
            shots += r.shots;
            failures += r.failures;
            continue;
        }
        if exp.is_none() {
            exp = Some(build(task, on_event)?);
        }
        let Some(e) = &exp else { continue };
        let n = task.chunk.min(task.shots - c * task.chunk);
        let seed = task.chunk_seed(c);
        let counts = e.run(
            &RunOptions {
                shots: n,
                until_failures: None,
                seed,
            },
            |_| {},
        );
        let row = ChunkRow {
            version: STORE_VERSION,
            task: task.key.clone(),
            chunk: c,
            shots: counts.shots,
            failures: counts.failures,
            seed,
            label: task.label.clone(),
            family: task.gen.family.name().to_string(),
            distance: task.distance,
            rounds: e.rounds,
            p: task.p,
            bias: task.bias.clone(),
            vary: task.vary.iter().cloned().collect(),
            noise: task.noise.clone(),
            decoder: task.decoder.name().to_string(),
            method: task.method.name().to_string(),
            splitting: None,
        };
        store.append(&row)?;
        on_event(Event::Chunk(task, &row));
        shots += counts.shots;
        failures += counts.failures;
    }
    // A task found complete in the store is not reported as done again.
    if exp.is_some() {
        on_event(Event::TaskDone(task, shots, failures));
    }
    Ok(())
}

/// Runs a splitting task whole (the ladder, then the circuit distance its exponent is compared
/// with) and appends its one row.
fn run_splitting(
    task: &Task,
    knobs: SplittingKnobs,
    store: &Store,
    on_event: &(dyn Fn(Event) + Sync),
) -> Result<(), Diagnostic> {
    let pipeline = pipeline(task, on_event)?;
    let opts = SplittingOptions {
        chains: knobs.chains as usize,
        sweeps: knobs.sweeps,
        top: knobs.top,
        top_failures: task.until_failures.unwrap_or(DEFAULT_TOP_FAILURES),
        max_shots: task.shots,
        seed: crate::study::sweep::spec::chunk_seed(&task.key, 0),
        ..SplittingOptions::default()
    };
    let result = splitting(&pipeline, task.decoder, &opts, |e| {
        on_event(Event::Rung(task, e))
    })
    .map_err(|e| study_error(task, e))?;
    let rounds = pipeline.noisy().rounds.max(1);
    // `splitting` ran the distance search on the graph it walked.
    let circuit_distance = result.distance.as_ref().and_then(|report| {
        report.distance.as_ref().map(|d| DistanceRow {
            value: d.value,
            lower: d.lower,
            high_rate: report.high_rate.as_ref().map(|h| h.value),
        })
    });
    let expected_exponent = circuit_distance
        .filter(|d| d.value == d.lower)
        .map(|d| d.value.div_ceil(2));
    let target = result.target();
    let per_shot = Estimate {
        rate: target.rate,
        low: target.low,
        high: target.high,
    };
    let row = ChunkRow {
        version: STORE_VERSION,
        task: task.key.clone(),
        chunk: 0,
        shots: result.top.shots,
        failures: result.top.failures,
        seed: opts.seed,
        label: task.label.clone(),
        family: task.gen.family.name().to_string(),
        distance: task.distance,
        rounds,
        p: task.p,
        bias: task.bias.clone(),
        vary: task.vary.iter().cloned().collect(),
        noise: task.noise.clone(),
        decoder: task.decoder.name().to_string(),
        method: task.method.name().to_string(),
        splitting: Some(SplittingRow {
            per_shot,
            per_round: per_shot.per_round(rounds),
            uncertainty: finite(target.uncertainty),
            chains: result.chains as u64,
            sweeps: knobs.sweeps,
            proposals: result.proposals,
            top_scale: result.points[0].scale,
            ladder: result
                .points
                .iter()
                .map(|p| RungRow {
                    scale: p.scale,
                    p: p.p,
                    rate: p.rate,
                    uncertainty: finite(p.uncertainty),
                    low: p.low,
                    high: p.high,
                })
                .collect(),
            exponent: fit_exponent(&result.points, FIT_RANGE).map(|f| ExponentRow {
                exponent: f.exponent,
                error: finite(f.error),
                points: f.points,
                scales: f.scales,
            }),
            circuit_distance,
            expected_exponent,
        }),
    };
    store.append(&row)?;
    on_event(Event::Estimated(task, &row));
    Ok(())
}

fn study_error(task: &Task, e: crate::study::StudyError) -> Diagnostic {
    match e {
        crate::study::StudyError::Rejected(d) => d
            .into_iter()
            .next()
            .unwrap_or_else(|| Diagnostic::bare("unknown error")),
        crate::study::StudyError::Undecodable(e) => {
            Diagnostic::bare(format!("task `{}`: cannot decode: {e}", task.key))
        }
    }
}

/// Generates, loads and noises the task's circuit; the noise model's warnings go to
/// `on_event`.
fn pipeline(task: &Task, on_event: &(dyn Fn(Event) + Sync)) -> Result<Pipeline, Diagnostic> {
    let text = crate::gen::generate(&task.gen)
        .map_err(|e| Diagnostic::bare(format!("task `{}`: {e}", task.key)))?;
    let source = Source::new(format!("{}.slant", task.gen.family.name()), text);
    let first = |d: Vec<Diagnostic>| {
        d.into_iter()
            .next()
            .unwrap_or_else(|| Diagnostic::bare("unknown error"))
    };
    let pipeline = Pipeline::load(&source, &[], &Limits::default())
        .and_then(|p| p.noised(Some(&task.load_noise)))
        .map_err(first)?;
    if !pipeline.warnings().is_empty() {
        on_event(Event::Warnings(task, pipeline.warnings()));
    }
    Ok(pipeline)
}

/// Generates, loads and noises the task's circuit and prepares sampler and decoder; the noise
/// model's warnings go to `on_event`.
fn build(task: &Task, on_event: &(dyn Fn(Event) + Sync)) -> Result<Experiment, Diagnostic> {
    pipeline(task, on_event)?
        .experiment(task.decoder)
        .map_err(|e| study_error(task, e))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shards_partition_the_tasks() {
        let s: Shard = "2/3".parse().unwrap();
        assert!(s.has(1) && s.has(4) && !s.has(0) && !s.has(2));
        assert!("0/3".parse::<Shard>().is_err() && "4/3".parse::<Shard>().is_err());
    }
}
