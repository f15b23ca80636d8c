//! Error budgets: which noise sources the logical error rate comes from, and what improving each
//! one gains.
//!
//! In: a [`Pipeline`] with noise (a preset or a hardware model), [`BudgetOptions`] and a
//! [`FailureEstimator`]. Out: a [`Budget`]: the logical error rate and, for every source (faults
//! grouped by model section, class, and on request qubit or role: [`Grouping`]), the sensitivity
//! `d log p_L / d log s` of the rate to scaling that source, its share of the total, the rate
//! after a 10% improvement of the source and the rate with the source removed, each with a 95%
//! interval.
//!
//! Method (details in `weigh.rs` and `sample.rs`): the fault graph's edges are independent
//! events; each edge is an `⊕` of elementary faults whose sources `sources.rs` records. One set
//! of failing configurations (which edges fired, for shots the decoder got wrong) is drawn from
//! the graph with the decoder built for the unscaled noise, and every source's numbers come from
//! reweighting those same configurations by the change of the edges' priors. Removing a source
//! is a large change whose likelihood ratios can have a huge variance: when the effective
//! number of configurations behind it is small ([`BudgetOptions::min_effective`]), or when asked
//! ([`Removal::Direct`]), the rate without the source is re-estimated directly, by sampling the
//! graph with the source's faults removed (with the same decoder, or one re-tuned to the new
//! priors: [`BudgetOptions::retune`]). Each source says which it reports.
//!
//! Shares: with the default grouping every fault belongs to exactly one source, so the
//! sensitivities add up to the sensitivity to scaling all the noise at once, and the share is a
//! source's part of that sum. Grouping by qubit or role puts a fault on two qubits into both
//! qubits' sources; shares are then not reported.
//!
//! Estimators ([`FailureEstimator`]): direct sampling of the graph ([`DirectSampling`]), or, at
//! rates far below what sampling reaches, the splitting method ([`SplittingSampling`],
//! `split.rs`), whose walks at the target rung sample the same distribution (dependent along
//! each walk: intervals are batch means). With the splitting method a removal that reweighting
//! cannot carry is reported as not estimable ([`RemovalMethod::NotEstimable`]) under
//! [`Removal::Auto`], and re-estimated by a ladder of its own under [`Removal::Direct`].
//!
//! At low rates the sensitivity of a source tends to the mean number of its faults in the
//! failing configurations that dominate (for a distance-d repetition code under code-capacity
//! noise, `⌈d/2⌉`). Everything holds under the noise model's own assumptions (Pauli channels,
//! independent faults).

mod chart;
mod sample;
mod sources;
mod split;
mod weigh;

pub use chart::{render_budget, CHART_SIZE, MAX_BARS};
pub use sample::{
    batch_rng, fails, DirectSampling, EdgeSampler, EstimatorEvent, FailureEstimator, Failures,
    Symptoms, SHOTS_PER_BATCH,
};
pub use sources::{Grouping, Part, Source, Sources, CIRCUIT_SECTION};
pub use split::SplittingSampling;
pub use weigh::{weigh, Interval, Ratio, Weighed};

use crate::decode::DecoderKind;
use crate::faults::{ExtractOptions, FaultGraph};
use crate::noise::{NoiseSpec, Selector};
use crate::study::pipeline::{Pipeline, StudyError};
use crate::study::stats::Estimate;

/// How the rate with a source removed is estimated.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Removal {
    /// Reweighting, unless too few configurations carry it; then direct re-estimation.
    Auto,
    /// Always direct re-estimation.
    Direct,
    /// Always reweighting.
    Reweight,
}

impl Removal {
    /// The command-line words.
    pub const WORDS: [&'static str; 3] = ["auto", "direct", "reweight"];
}

impl std::str::FromStr for Removal {
    type Err = String;

    fn from_str(s: &str) -> Result<Removal, String> {
        match s {
            "auto" => Ok(Removal::Auto),
            "direct" => Ok(Removal::Direct),
            "reweight" => Ok(Removal::Reweight),
            _ => Err(format!(
                "unknown removal method `{s}` (expected `auto`, `direct` or `reweight`)"
            )),
        }
    }
}

/// What to compute.
#[derive(Clone, Copy, Debug)]
pub struct BudgetOptions {
    /// How faults are grouped into sources.
    pub by: Grouping,
    /// How the rate without a source is estimated.
    pub removal: Removal,
    /// The improved scale of a source for the one-line answer (0.9: 10% less).
    pub improve: f64,
    /// With [`Removal::Auto`], re-estimate directly when fewer configurations than this carry
    /// the reweighted removal.
    pub min_effective: f64,
    /// Direct re-estimates decode with a decoder built for the scaled priors rather than the
    /// unscaled one.
    pub retune: bool,
    /// The decoder.
    pub decoder: DecoderKind,
    /// Shots of each direct re-estimate, and its seed.
    pub direct: DirectSampling,
}

/// How a removal was estimated.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum RemovalMethod {
    /// Reweighting the failing configurations.
    Reweighted,
    /// Estimating the rate again without the source (direct sampling, or a ladder of its own
    /// for the splitting method).
    Direct,
    /// Neither: reweighting rests on too few configurations and no re-estimate was asked for
    /// (the splitting method with [`Removal::Auto`]); the ratio is NaN.
    NotEstimable,
}

impl RemovalMethod {
    /// Lower-case name.
    pub fn name(self) -> &'static str {
        match self {
            RemovalMethod::Reweighted => "reweighted",
            RemovalMethod::Direct => "direct",
            RemovalMethod::NotEstimable => "not estimable",
        }
    }
}

/// The rate with a source removed.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Removed {
    /// `p_L` without the source over `p_L`, with its interval.
    pub ratio: Interval,
    /// How it was estimated.
    pub method: RemovalMethod,
    /// Effective number of configurations behind the reweighted estimate.
    pub effective: f64,
    /// The reweighted estimate, also when the direct one is reported.
    pub reweighted: Interval,
    /// Shots and failures of the direct re-estimate, when one ran by direct sampling (for the
    /// splitting method: shots and failures at the top of its ladder).
    pub direct: Option<(u64, u64)>,
}

/// One source's line of the budget.
#[derive(Clone, Debug, PartialEq)]
pub struct SourceBudget {
    /// The source.
    pub source: Source,
    /// A readable name, e.g. `idle on role ancilla, high-rate`.
    pub label: String,
    /// `d log p_L / d log s` at `s = 1`.
    pub sensitivity: Interval,
    /// Its share of the summed sensitivities (`None` when sources overlap).
    pub share: Option<Interval>,
    /// `p_L` with the source scaled by [`BudgetOptions::improve`], over `p_L` (reweighted).
    pub improved: Ratio,
    /// The rate with the source removed.
    pub removed: Removed,
}

/// An error budget.
#[derive(Clone, Debug)]
pub struct Budget {
    /// What produced the failing configurations.
    pub method: String,
    /// Logical error rate per shot (with the splitting method, its interval is `rate·e^{±1.96σ}`).
    pub rate: Estimate,
    /// Shots sampled (with the splitting method: at the top of the ladder).
    pub shots: u64,
    /// Failing configurations behind every number (failed shots for direct sampling, samples
    /// of the walks at the target for the splitting method).
    pub failures: u64,
    /// Batches behind the intervals (`None`: independent configurations).
    pub batches: Option<usize>,
    /// The ladder, with the splitting method.
    pub splitting: Option<crate::study::rare::Splitting>,
    /// Of those, shots with detection events the decoder could not pair.
    pub unmatched: u64,
    /// `d log p_L / d log s` with every source scaled at once.
    pub total: Interval,
    /// Sum of the sources' sensitivities (equal to `total` up to rounding when sources do not
    /// overlap).
    pub sum: f64,
    /// Sources, largest sensitivity first.
    pub sources: Vec<SourceBudget>,
    /// Whether a fault can belong to several sources.
    pub overlapping: bool,
    /// The scale of [`SourceBudget::improved`].
    pub improve: f64,
    /// Edges of the fault graph.
    pub edges: usize,
    /// Number of `round` blocks.
    pub rounds: u32,
}

impl Budget {
    /// The one-line answer: which source to improve first and what a 10% improvement gains,
    /// e.g. `improve idle on role ancilla, high-rate first: −38% p_L for −10% of its rate`.
    pub fn answer(&self) -> String {
        let Some(top) = self.sources.first() else {
            return "no failure was sampled: run more shots to find what limits the rate".into();
        };
        if self.failures == 0 {
            return "no failure was sampled: run more shots to find what limits the rate".into();
        }
        let gain = (top.improved.ratio.value - 1.0) * 100.0;
        let cut = (1.0 - self.improve) * 100.0;
        format!(
            "improve {} first: {}{:.0}% p_L for \u{2212}{:.0}% of its rate",
            top.label,
            if gain < 0.0 { "\u{2212}" } else { "+" },
            gain.abs(),
            cut
        )
    }
}

/// What a budget run reports while it goes: the main estimate, then one direct re-estimate per
/// source that needs one.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum BudgetStage {
    /// The main estimate's progress.
    Main(EstimatorEvent),
    /// Direct re-estimate of source `index` (of `of` needing one).
    Direct {
        /// Which of the re-estimates.
        index: usize,
        /// How many there are.
        of: usize,
        /// Its progress.
        event: EstimatorEvent,
    },
}

/// A readable name for a model section: `gates.cx` → `cx gates`, `override.0.idle` → `idle on
/// role ancilla` (the override's selector read from the model), `circuit` → the circuit's own
/// noise.
pub fn section_label(section: &str, selectors: &[Selector]) -> String {
    if let Some(rest) = section.strip_prefix("override.") {
        if let Some((k, inner)) = rest.split_once('.') {
            let on = match k.parse::<usize>().ok().and_then(|k| selectors.get(k)) {
                Some(Selector::Role(r)) => format!("role {r}"),
                Some(Selector::Qubit(q)) => format!("qubit {q}"),
                None => format!("override {k}"),
            };
            return format!("{} on {on}", section_label(inner, selectors));
        }
    }
    match section {
        "idle" => "idle".into(),
        "reset" => "reset".into(),
        "measure" => "measurement".into(),
        "round-start" => "data noise at round start".into(),
        CIRCUIT_SECTION => "noise written in the circuit".into(),
        s => match s.strip_prefix("gates.") {
            Some(g) => format!("{g} gates"),
            None => s.to_string(),
        },
    }
}

fn label(s: &Source, selectors: &[Selector]) -> String {
    let mut parts = Vec::new();
    if let Some(sec) = &s.section {
        parts.push(section_label(sec, selectors));
    }
    if let Some(q) = &s.qubit {
        parts.push(format!("qubit {q}"));
    }
    if let Some(r) = &s.role {
        parts.push(format!("role {r}"));
    }
    if let Some(c) = s.class {
        parts.push(format!("{}-rate", c.name()));
    }
    parts.join(", ")
}

/// The overrides' selectors of the pipeline's model, for labels (empty for presets).
fn selectors(pipeline: &Pipeline) -> Vec<Selector> {
    match pipeline.noise().map(NoiseSpec::parse) {
        Some(Ok(NoiseSpec::Model(m))) => m.overrides.iter().map(|o| o.selector.clone()).collect(),
        _ => Vec::new(),
    }
}

/// The ratio of two independent binomial estimates with a conservative interval (the ends of
/// the two Wilson intervals combined).
fn ratio_of(num: Estimate, den: Estimate) -> Interval {
    Interval {
        value: num.rate / den.rate,
        low: num.low / den.high,
        high: if den.low > 0.0 {
            num.high / den.low
        } else {
            f64::INFINITY
        },
    }
}

/// The symptoms the sampler toggles, one entry per edge of `graph`.
pub fn symptoms_of(graph: &FaultGraph) -> Symptoms {
    Symptoms {
        detectors: graph.edges.iter().map(|m| m.detectors.clone()).collect(),
        observables: graph.edges.iter().map(|m| m.observables.clone()).collect(),
    }
}

/// Computes the error budget of `pipeline` (see the module docs).
pub fn budget(
    pipeline: &Pipeline,
    estimator: &dyn FailureEstimator,
    opts: &BudgetOptions,
    progress: &mut dyn FnMut(BudgetStage),
) -> Result<Budget, StudyError> {
    let graph = pipeline.graph(&ExtractOptions::default());
    let sources = Sources::group(&graph, pipeline.noisy(), pipeline.notes(), &opts.by);
    let priors: Vec<f64> = graph.edges.iter().map(|m| m.probability).collect();
    let symptoms = symptoms_of(&graph);
    let (matching, _) = graph.matching_graph();
    let decoder = opts.decoder.build(&matching)?;
    let failures = estimator.failures(&priors, &symptoms, decoder.as_ref(), &mut |e| {
        progress(BudgetStage::Main(e))
    })?;
    let chained = !failures.batches.is_empty();
    let total = weigh(&sources, &priors, &failures, None, &[]).sensitivity;
    let selectors = selectors(pipeline);
    let mut lines: Vec<SourceBudget> = Vec::new();
    for (i, source) in sources.list.iter().enumerate() {
        let w = weigh(
            &sources,
            &priors,
            &failures,
            Some(i as u32),
            &[opts.improve, 0.0],
        );
        let reweighted = w.ratios[1];
        lines.push(SourceBudget {
            source: source.clone(),
            label: label(source, &selectors),
            sensitivity: w.sensitivity,
            share: None,
            improved: w.ratios[0],
            removed: Removed {
                ratio: reweighted.ratio,
                method: RemovalMethod::Reweighted,
                effective: reweighted.effective,
                reweighted: reweighted.ratio,
                direct: None,
            },
        });
    }
    // Direct re-estimates of the removals that need one.
    let short: Vec<bool> = lines
        .iter()
        .map(|l| l.removed.effective < opts.min_effective)
        .collect();
    let need: Vec<usize> = (0..lines.len())
        .filter(|&i| match opts.removal {
            Removal::Direct => true,
            Removal::Reweight => false,
            Removal::Auto => short[i] && !chained,
        })
        .collect();
    if opts.removal == Removal::Auto && chained {
        for i in (0..lines.len()).filter(|&i| short[i]) {
            let r = &mut lines[i].removed;
            r.ratio = Interval::exact(f64::NAN);
            r.method = RemovalMethod::NotEstimable;
        }
    }
    if !need.is_empty() && failures.failures > 0 {
        for (n, &i) in need.iter().enumerate() {
            let scaled: Vec<f64> = (0..priors.len())
                .map(|k| sources.scaled_prior(k, Some(i as u32), 0.0))
                .collect();
            let retuned;
            let dec = if opts.retune {
                let mut g = graph.clone();
                for (m, &p) in g.edges.iter_mut().zip(&scaled) {
                    m.probability = p;
                }
                retuned = opts.decoder.build(&g.matching_graph().0)?;
                retuned.as_ref()
            } else {
                decoder.as_ref()
            };
            let run = estimator.again(i as u64).unwrap_or_else(|| {
                Box::new(DirectSampling {
                    seed: opts.direct.seed.wrapping_add(1 + i as u64),
                    ..opts.direct
                })
            });
            let f = run.failures(&scaled, &symptoms, dec, &mut |e| {
                progress(BudgetStage::Direct {
                    index: n,
                    of: need.len(),
                    event: e,
                })
            });
            let r = &mut lines[i].removed;
            match f {
                Ok(f) => {
                    r.ratio = ratio_of(f.rate, failures.rate);
                    r.method = RemovalMethod::Direct;
                    r.direct = Some(match &f.splitting {
                        Some(s) => (s.top.shots, s.top.failures),
                        None => (f.shots, f.failures),
                    });
                }
                // A ladder that cannot start (no failure even at the highest valid noise)
                // leaves the removal unknown rather than failing the whole budget.
                Err(_) => {
                    r.ratio = Interval::exact(f64::NAN);
                    r.method = RemovalMethod::NotEstimable;
                }
            }
        }
    }
    let sum: f64 = lines.iter().map(|l| l.sensitivity.value).sum();
    if !sources.overlapping {
        for l in &mut lines {
            l.share = Some(Interval {
                value: l.sensitivity.value / sum,
                low: l.sensitivity.low / sum,
                high: l.sensitivity.high / sum,
            });
        }
    }
    lines.sort_by(|a, b| {
        b.sensitivity
            .value
            .partial_cmp(&a.sensitivity.value)
            .unwrap_or(std::cmp::Ordering::Equal)
    });
    Ok(Budget {
        method: failures.method.clone(),
        rate: failures.rate,
        shots: failures.shots,
        failures: failures.failures,
        batches: chained.then(|| failures.batches.len() - 1),
        splitting: failures.splitting.clone(),
        unmatched: failures.unmatched,
        total,
        sum,
        sources: lines,
        overlapping: sources.overlapping,
        improve: opts.improve,
        edges: graph.edges.len(),
        rounds: pipeline.noisy().rounds.max(1),
    })
}

/// A direct estimate of `p_L` with every part of `source` scaled by `scale` (`None`: all the
/// noise), decoding with the decoder of the unscaled graph (`retune` false) or of the scaled one:
/// the check that reweighting is measured against.
pub fn direct_scaled(
    pipeline: &Pipeline,
    by: &Grouping,
    source: Option<u32>,
    scale: f64,
    decoder: DecoderKind,
    retune: bool,
    run: &DirectSampling,
) -> Result<Failures, StudyError> {
    let graph = pipeline.graph(&ExtractOptions::default());
    let sources = Sources::group(&graph, pipeline.noisy(), pipeline.notes(), by);
    let scaled: Vec<f64> = (0..graph.edges.len())
        .map(|k| sources.scaled_prior(k, source, scale))
        .collect();
    let mut g = graph.clone();
    if retune {
        for (m, &p) in g.edges.iter_mut().zip(&scaled) {
            m.probability = p;
        }
    }
    let dec = decoder.build(&g.matching_graph().0)?;
    run.failures(&scaled, &symptoms_of(&graph), dec.as_ref(), &mut |_| {})
}

#[cfg(test)]
mod tests;
