//! Studies: the one pipeline "circuit + noise → fault graph / samples → decoder → estimates",
//! and what is built on it — Monte Carlo runs with Wilson intervals, comparisons of circuits,
//! threshold sweeps with their resumable store, threshold fits, error budgets and plots, and
//! pictures of the patch ([`draw`]).
//!
//! In: circuit sources, noise texts (presets or model files), sweep specs, results stores. Out:
//! report values, rows, points, fits and plot bytes; rendering text and writing files belongs to
//! `cli`. Nothing here prints: the noise model's warnings come back as data
//! ([`Pipeline::warnings`], [`Event::Warnings`]) and progress through callbacks.
//!
//! Every subcommand that studies a noisy circuit builds a [`Pipeline`]: it loads the circuit,
//! writes the noise in, and hands out the fault graph, the matching graph, the sampler and the
//! sampler paired with a decoder ([`Experiment`]). `decode` below knows only graphs and detection
//! events.

mod budget;
mod compare;
pub mod draw;
mod measured;
mod montecarlo;
mod pipeline;
mod plot;
mod rare;
mod slope;
mod stats;
mod sweep;
mod threshold;

pub use budget::{
    batch_rng, budget, direct_scaled, fails, render_budget, section_label, symptoms_of, weigh,
    Budget, BudgetOptions, BudgetStage, DirectSampling, EdgeSampler, EstimatorEvent,
    FailureEstimator, Failures, Grouping, Interval, Part, Ratio, Removal, RemovalMethod, Removed,
    Source, SourceBudget, Sources, SplittingSampling, Symptoms, Weighed, CHART_SIZE,
    CIRCUIT_SECTION, MAX_BARS, SHOTS_PER_BATCH,
};
pub use compare::{
    at_p, best, evaluate, rates, significant, without_p, BiasSummary, Column, RatePoint, Row,
};
pub use measured::{decode_measured, Layout, Measured, MeasuredEvents};
pub use montecarlo::{decode_batch, run, Counts, Experiment, RunOptions};
pub use pipeline::{Pipeline, StudyError};
pub use plot::{render_for, Curve, CurveStyle, LegendEntry, Marker, Panel, Shape, PANEL_SIZE};
pub use rare::{
    fit_exponent, splitting, splitting_on_edges, ExponentFit, LadderPoint, Mixing, Splitting,
    SplittingEvent, SplittingOptions, Start, TargetSamples, TopSampling,
};
pub use slope::{slopes, SlopeFit};
pub use stats::{per_round, student_t95, wilson, Estimate, Z95};
pub use sweep::{
    aggregate, chunk_seed, load_store, merge_rows, parse_rows, plan, read_store, run_sweep,
    ChunkRow, Conflict, DistanceRow, Event, ExponentRow, Method, Point, RungRow, Shard,
    SplittingKnobs, SplittingRow, Store, StoreContents, SweepSpec, Task, TaskState, DEFAULT_CHAINS,
    DEFAULT_CHUNK, DEFAULT_SWEEPS, DEFAULT_TOP_FAILURES, DEFAULT_TOP_SHOTS, STORE_HEADER,
    STORE_VERSION,
};
pub use threshold::{
    bootstrap, crossings, pairs, scaling_fit, threshold, Bootstrap, Crossing, NoCrossing, Pair,
    ScalingFit,
};
