//! Logical error rates far below what direct sampling reaches, by the splitting method on the
//! fault graph ("Simulation of rare events in quantum error correction", Phys. Rev. A 88,
//! 062308 (2013)).
//!
//! In: a [`Pipeline`] with its noise (a preset, rebuilt at each noise scale, or a model file,
//! whose edge priors are scaled), a decoder kind and [`SplittingOptions`]. Out: a
//! [`Splitting`] with the failure probability per shot at the target noise and at every rung of
//! the ladder above it, each with a relative uncertainty and the walks' mixing diagnostics.
//!
//! # Method
//! The fault graph's edges fire independently with priors `p_m(t)` at noise scale `t`. A
//! configuration `E` (the set of fired edges) has weight `π_t(E) = Π_{m∈E} p_m Π_{m∉E} (1−p_m)`,
//! and the failure probability is `P_L(t) = Σ_{E∈F} π_t(E)` over the configurations `F` on which
//! the decoder fails. The decoder is built once, from the matching graph at the target noise,
//! and used at every scale: `F` is then the same set at every rung, which the ratio identity
//! needs, and the number at the target is exactly the failure rate of that decoder there.
//!
//! 1. **Top.** A scale `t_0 ≥ 1` (a multiple of the target noise) where failures are common:
//!    the first of `1, 2, 4, …` at which a pilot run fails at least 5% of the time, or
//!    [`SplittingOptions::top`]. There, direct sampling of the fault graph (edges drawn from
//!    their priors, decoded with the same decoder) gives `P_L(t_0)` from
//!    [`SplittingOptions::top_failures`] failures, and its first failing configurations start
//!    the walks — exact draws from `π_{t_0}` restricted to `F`.
//! 2. **Rungs.** [`SplittingOptions::chains`] independent Metropolis walks target `π_t`
//!    restricted to `F` (`walk.rs`); each walk carries its state from one rung to the next. The
//!    next scale is `t·2^{−1/√w}` with `w` the mean number of fired edges in the walks at `t`
//!    (the step rule of the paper, which keeps neighbouring distributions overlapping), the last
//!    one exactly the target.
//! 3. **Ratios.** `P_L(t_{j+1})/P_L(t_j)` comes from the acceptance-ratio identity (derived in
//!    `ratio.rs`) applied to the walks at both scales; `P_L(target)` is `P_L(t_0)` times the
//!    product of the ratios.
//!
//! # Walks from the shortest logical errors ([`Start::Shortest`])
//! Nothing in steps 2–3 needs the walks to *start* from draws of `π_{t_0}` restricted to `F`:
//! the ratio identity holds for the walks' stationary distributions, and a walk that starts
//! anywhere in `F` reaches its stationary distribution after a burn-in (the chain is
//! irreducible on the connected part of `F` it starts in). Only the anchor `P_L(t_0)` needs
//! direct sampling, and its contribution to the variance of `ln P_L(target)` is the binomial
//! `(1−P_0)/k` for `k` failures, whatever `P_0` is. So with starting points from elsewhere:
//!
//! - the walks start from the logical errors the distance search reports (fewest edges, fewest
//!   high-rate edges, fewest low-rate edges, most likely): an undetected logical error fails
//!   every decoder that predicts no flip without detection events. Each is thinned to a least
//!   failing subset (edges removed in a random order per walk while the rest still fails),
//!   which at low noise is what typical failures look like (about `⌈d/2⌉` edges), and the walks
//!   burn in for one extra rung's worth of proposals at the top;
//! - the top is the first of `1, 2, 4, …` at which a pilot run fails at least 0.5% of the time
//!   (instead of 5%), and is sampled until the same `k` failures: the anchor keeps its
//!   uncertainty `√((1−P_0)/k)` at `k/P_0` shots, and the lower top shortens the ladder (the
//!   number of rungs grows as `ln t_0 · √w`, and the failing weight `w` shrinks with `t_0`).
//!
//! Multi-seeded starts ("Fail fast: techniques to probe rare events in quantum error
//! correction", arXiv:2511.15177 (2025)) guard against walks trapped in one failure family: the
//! walks are spread over the distinct errors and their halves. When none of the errors fails
//! the chosen decoder (a decoder that predicts flips without events) or the search finds none,
//! the walks start from direct sampling as in step 1, and [`Splitting::warnings`] says why.
//!
//! # Uncertainty
//! Each walk `i` gives its own chain of ratios and so its own estimate `ln P_i(t_j)`. The
//! walks are independent, so the variance of the mean of `ln P_i(t_j)` over walks estimates the
//! variance of the ladder's `ln P_L(t_j)`; the binomial variance of `ln P_L(t_0)`, `(1−P)/k`
//! with `k` failures, is added. The square root is the stated relative uncertainty `σ`
//! (one standard deviation of `ln P_L`; the interval `P·e^{±1.96σ}` is the 95% one). It
//! captures walks that disagree; walks that all stay in one family of failures and miss
//! another are not caught by it — the top's exact starting draws and the number of walks are
//! what guard against that.
//!
//! # Mixing diagnostics
//! Per rung: the share of proposals accepted, the mean number of fired edges, the integrated
//! autocorrelation time of that number along the walks (in recorded samples; `None` when it
//! never changed), the effective number of samples (recorded samples over that time) and the
//! two averages of the ratio identity (both near 1 mean good overlap; near 0, poor).
//!
//! Results are estimates under the stated noise model (Pauli channels, independent edges).

mod family;
mod ladder;
mod ratio;
mod walk;

#[cfg(test)]
mod tests;

use crate::analysis::{DistanceOptions, DistanceReport};
use crate::decode::{Decoder, DecoderKind};
use crate::study::pipeline::{Pipeline, StudyError};

pub use ladder::{fit_exponent, ExponentFit};

/// What to run.
#[derive(Clone, Debug, PartialEq)]
pub struct SplittingOptions {
    /// Independent walks per rung (at least 2, for the uncertainty).
    pub chains: usize,
    /// Proposals per walk and rung, in units of the fault graph's edge count.
    pub sweeps: f64,
    /// The top of the ladder as a multiple of the target noise; `None` chooses it by pilot
    /// runs (see the module docs).
    pub top: Option<f64>,
    /// Failures direct sampling collects at the top.
    pub top_failures: u64,
    /// Most shots direct sampling may take at the top.
    pub max_shots: u64,
    /// Seed of every random choice; the same seed gives the same result on any number of
    /// threads.
    pub seed: u64,
    /// Where the walks start (see [`Start`]).
    pub start: Start,
}

/// Where the walks of a ladder start.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum Start {
    /// From the first failing configurations of direct sampling at the top: exact draws from
    /// `π_{t_0}` restricted to the failures, so no burn-in is needed; the top must be where
    /// failures are common (5% of shots).
    #[default]
    Sampling,
    /// From the shortest logical errors the distance search finds, each thinned to a least
    /// failing subset (see the module docs); the top may then sit where failures are rare
    /// (0.5% of shots) and only anchors the ladder.
    Shortest,
}

impl Start {
    /// The option value: `sampling` or `shortest`.
    pub fn name(self) -> &'static str {
        match self {
            Start::Sampling => "sampling",
            Start::Shortest => "shortest",
        }
    }
}

impl std::str::FromStr for Start {
    type Err = String;
    fn from_str(s: &str) -> Result<Start, String> {
        match s {
            "sampling" => Ok(Start::Sampling),
            "shortest" => Ok(Start::Shortest),
            _ => Err(format!("unknown start `{s}`: use `sampling` or `shortest`")),
        }
    }
}

impl Default for SplittingOptions {
    fn default() -> SplittingOptions {
        SplittingOptions {
            chains: 8,
            sweeps: 100.0,
            top: None,
            top_failures: 1000,
            max_shots: 100_000_000,
            seed: 0,
            start: Start::Sampling,
        }
    }
}

/// Mixing diagnostics of the walks at one rung.
#[derive(Clone, Debug, PartialEq, serde::Serialize)]
pub struct Mixing {
    /// Proposals made at this rung, all walks together (burn-in included).
    pub proposals: u64,
    /// Share of proposals accepted.
    pub acceptance: f64,
    /// Mean number of fired edges in the recorded samples.
    pub mean_fired: f64,
    /// Samples recorded, all walks together.
    pub samples: u64,
    /// Proposals between recorded samples.
    pub stride: u64,
    /// Integrated autocorrelation time of the number of fired edges, in recorded samples
    /// (`None`: it never changed).
    pub autocorrelation: Option<f64>,
    /// Recorded samples over the autocorrelation time.
    pub effective_samples: f64,
}

/// One rung of the ladder: the failure probability per shot at one noise scale.
#[derive(Clone, Debug, PartialEq, serde::Serialize)]
pub struct LadderPoint {
    /// The noise as a multiple of the target noise.
    pub scale: f64,
    /// The preset's `p` at this scale (`None` for a model file).
    pub p: Option<f64>,
    /// Failure probability per shot.
    pub rate: f64,
    /// Relative uncertainty: one standard deviation of `ln rate`.
    pub uncertainty: f64,
    /// `rate·e^{−1.96σ}`.
    pub low: f64,
    /// `rate·e^{1.96σ}`.
    pub high: f64,
    /// `ln(rate / rate above) / ln(scale / scale above)`: the local exponent of `P_L ∝ t^k`
    /// between this rung and the one above (`None` at the top).
    pub slope: Option<f64>,
    /// The two averages of the ratio identity with the rung above (`None` at the top).
    pub overlap: Option<[f64; 2]>,
    /// The walks at this rung (`None` when the ladder has only its top).
    pub mixing: Option<Mixing>,
    /// Each walk's own estimate of `ln rate` (empty when the ladder has only its top).
    #[serde(skip)]
    pub walks: Vec<f64>,
}

/// What direct sampling found at the top of the ladder.
#[derive(Clone, Copy, Debug, PartialEq, serde::Serialize)]
pub struct TopSampling {
    /// Shots drawn from the fault graph.
    pub shots: u64,
    /// Failures among them.
    pub failures: u64,
}

/// The result of a splitting run.
#[derive(Clone, Debug, PartialEq)]
pub struct Splitting {
    /// Rungs from the top (direct sampling) down to the target (last).
    pub points: Vec<LadderPoint>,
    /// Direct sampling at the top.
    pub top: TopSampling,
    /// Edges of the fault graph the walks move over.
    pub edges: usize,
    /// Walks per rung.
    pub chains: usize,
    /// Proposals per walk and rung (burn-in excluded).
    pub proposals: u64,
    /// Where the walks started (a `shortest` request that fell back to sampling says
    /// `Sampling`, with a warning).
    pub start: Start,
    /// Things the caller should tell the user (e.g. why a `shortest` start fell back).
    pub warnings: Vec<String>,
    /// The configurations the walks recorded at the target (`None` when the target is the top,
    /// sampled directly).
    pub samples: Option<TargetSamples>,
    /// The distance search on the target's fault graph, which the exponent is compared with
    /// and `Start::Shortest` starts from (`None` from [`splitting_on_edges`], which has no
    /// circuit behind its edges).
    pub distance: Option<DistanceReport>,
}

/// The configurations the walks recorded at the target noise, after their burn-in: draws from
/// `π_1` restricted to the decoder's failures, dependent along each walk (the error budget
/// reweights them).
#[derive(Clone, Debug, Default, PartialEq)]
pub struct TargetSamples {
    /// Fired edges of every sample (each sample sorted), concatenated.
    pub edges: Vec<u32>,
    /// Where each sample starts in `edges` (one more entry than samples).
    pub starts: Vec<usize>,
    /// Where each walk's samples start among the samples, in the order the walk recorded them
    /// (one more entry than walks).
    pub walks: Vec<usize>,
}

impl Splitting {
    /// The point at the target noise.
    pub fn target(&self) -> &LadderPoint {
        // A run always has at least its top point.
        &self.points[self.points.len() - 1]
    }
}

/// Progress of a splitting run, for the caller to show.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum SplittingEvent {
    /// Direct sampling (a pilot while the top is chosen, or the top itself) has run so many
    /// shots.
    Sampling {
        /// Scale sampled.
        scale: f64,
        /// Shots so far.
        shots: u64,
        /// Failures so far.
        failures: u64,
    },
    /// A rung is finished.
    Rung {
        /// Rungs finished, the top included.
        done: usize,
        /// Expected rungs in all (changes as the walks measure the failing weight).
        expected: usize,
        /// Its scale.
        scale: f64,
    },
}

/// Runs the splitting method on independent edges given directly: edge `m` flips
/// `detectors[m]` and `observables[m]` and fires with `priors[m]` at the target; the ladder
/// scales every prior by the same factor (as for a model file), and `decoder` is used at every
/// rung. The error budget runs it on the priors of its own fault graph.
pub fn splitting_on_edges(
    detectors: &[Vec<u32>],
    observables: &[Vec<u32>],
    priors: &[f64],
    decoder: &dyn Decoder,
    opts: &SplittingOptions,
    progress: impl FnMut(SplittingEvent),
) -> Result<Splitting, StudyError> {
    let count = |lists: &[Vec<u32>]| lists.iter().flatten().max().map_or(0, |&m| m as usize + 1);
    let lists: Vec<(Vec<u32>, Vec<u32>)> = detectors
        .iter()
        .cloned()
        .zip(observables.iter().cloned())
        .collect();
    let sym = walk::Symptoms::from_lists(count(detectors), count(observables), &lists);
    let max = priors.iter().copied().fold(0.0, f64::max);
    let scaled = |s: f64| Ok(priors.iter().map(|&p| (p * s).min(0.5)).collect());
    ladder::run(
        &ladder::Problem {
            sym: &sym,
            decoder,
            priors: &scaled,
            valid: &|s| max * s < 0.5,
            preset_p: None,
            // Edges given by the caller have no distance search behind them.
            shortest: &[],
        },
        opts,
        progress,
    )
}

/// Runs the splitting method on `pipeline`'s fault graph with a decoder of `kind` (see the
/// module docs).
pub fn splitting(
    pipeline: &Pipeline,
    kind: DecoderKind,
    opts: &SplittingOptions,
    progress: impl FnMut(SplittingEvent),
) -> Result<Splitting, StudyError> {
    let family = family::Family::new(pipeline)?;
    let (matching, _) = family.graph.matching_graph();
    let decoder = kind.build(&matching)?;
    let sym = walk::Symptoms::of(&family.graph);
    let preset_p = family.preset_p();
    let report = crate::analysis::distances(&family.graph, &DistanceOptions::default())
        .map_err(|e| StudyError::from(crate::base::Diagnostic::bare(e)))?;
    let shortest = match opts.start {
        Start::Sampling => Vec::new(),
        Start::Shortest => shortest_errors(&report),
    };
    let mut result = ladder::run(
        &ladder::Problem {
            sym: &sym,
            decoder: decoder.as_ref(),
            priors: &|s| family.priors(s),
            valid: &|s| family.valid(s),
            preset_p,
            shortest: &shortest,
        },
        opts,
        progress,
    )?;
    result.distance = Some(report);
    Ok(result)
}

/// The distinct logical errors the distance search reports (fewest edges, fewest high-rate
/// edges, fewest low-rate edges, most likely), as edge lists of `graph`.
fn shortest_errors(report: &DistanceReport) -> Vec<Vec<u32>> {
    let mut out: Vec<Vec<u32>> = Vec::new();
    let errors = [
        report.distance.as_ref().map(|c| &c.error),
        report.high_rate.as_ref().map(|c| &c.error),
        report.lexicographic.as_ref().map(|c| &c.error),
        report.weighted.as_ref().map(|c| &c.error),
    ];
    for e in errors.into_iter().flatten() {
        if !out.contains(&e.edges) {
            out.push(e.edges.clone());
        }
    }
    out
}
