//! Side-by-side comparison of circuits under one noise model.
//!
//! In: named [`Pipeline`]s (files, or variants of a generated family) with their noise written
//! in. Out: one [`Row`] per circuit — size, duration under the model, fault-graph shape,
//! distances by class ([`crate::analysis::distances`]) and the bias verdict with the effective
//! bias at the data ([`crate::analysis::analyze_bias`]) — and, per [`Column`], which rows are best
//! ([`best`]).
//!
//! Logical error rates ([`RatePoint`], from [`rates`]) re-run the noise at several physical error
//! rates: the `p=` of a preset is replaced by each value, and a model file is scaled to each
//! physical error per operation ([`at_p`]). A rate is marked best
//! only when its interval lies wholly below every other row's interval: with Monte Carlo
//! estimates a lower point estimate alone is not evidence of a better circuit.

use crate::analysis::{
    analyze_bias, distances, BiasReport, Count, DistanceOptions, DistanceReport, Unproven,
};
use crate::base::Diagnostic;
use crate::decode::DecoderKind;
use crate::faults::{ExtractOptions, FaultGraph};
use crate::study::montecarlo::{Counts, RunOptions};
use crate::study::pipeline::{Pipeline, StudyError};
use crate::study::stats::{Estimate, Z95};

/// The bias columns of a row.
#[derive(Clone, Debug, PartialEq)]
pub struct BiasSummary {
    /// Whether no operation turns a high-rate fault into X or Y at the data.
    pub kept: bool,
    /// [`BiasReport::verdict`]: `bias kept` or `bias lost at LOCATION (GATE)`.
    pub verdict: String,
    /// Effective bias at the data over all rounds, `Σ pZ / Σ pX,Y` (infinite when nothing
    /// reaches the data with X or Y; `None` when nothing reaches it at all).
    pub data_eta: Option<f64>,
}

impl BiasSummary {
    /// Summarises a bias report.
    pub fn of(r: &BiasReport) -> BiasSummary {
        let z: f64 = r.rounds.iter().map(|b| b.z).sum();
        let xy: f64 = r.rounds.iter().map(|b| b.xy).sum();
        BiasSummary {
            kept: r.converters.is_empty(),
            verdict: r.verdict(),
            data_eta: (z + xy > 0.0).then(|| z / xy),
        }
    }
}

/// Logical error rate per round at one physical error rate, with its interval.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RatePoint {
    /// Physical error rate (the preset's `p`).
    pub p: f64,
    /// Shots run.
    pub shots: u64,
    /// Logical failures among them.
    pub failures: u64,
    /// Rounds of the circuit (for the per-round conversion).
    pub rounds: u32,
    /// Per-round rate.
    pub rate: f64,
    /// Lower end of the per-round interval.
    pub low: f64,
    /// Upper end of the per-round interval.
    pub high: f64,
}

/// One compared circuit.
#[derive(Clone, Debug)]
pub struct Row {
    /// Display name (file name or `key=value`).
    pub name: String,
    /// Number of qubits.
    pub qubits: usize,
    /// Number of layers.
    pub layers: usize,
    /// Number of detectors.
    pub detectors: usize,
    /// Number of edges.
    pub edges: usize,
    /// Share of edges with three or more detectors, before split.
    pub hyperedge_share: f64,
    /// Share of edges left as hyperedges after split.
    pub unsplit_share: f64,
    /// Distances by class.
    pub report: DistanceReport,
    /// Total duration under the model, if it gives durations.
    pub duration: Option<f64>,
    /// Bias verdict and effective data bias.
    pub bias: BiasSummary,
    /// Logical error rates, one per `p` in the same order for every row (empty when not asked).
    pub rates: Vec<RatePoint>,
}

/// Extracts the fault graph of the noisy circuit and measures it; `rates` is left empty.
pub fn evaluate(
    name: impl Into<String>,
    noisy: &Pipeline,
    extract: &ExtractOptions,
    opts: &DistanceOptions,
) -> Result<Row, String> {
    let circuit = noisy.noisy();
    let graph: FaultGraph = noisy.graph(extract);
    let report = distances(&graph, opts)?;
    let n = graph.edges.len().max(1) as f64;
    Ok(Row {
        name: name.into(),
        qubits: circuit.qubits.len(),
        layers: circuit.layers.len(),
        detectors: graph.detectors.len(),
        edges: graph.edges.len(),
        hyperedge_share: graph.hyperedges.hyperedges as f64 / n,
        unsplit_share: graph.hyperedges.unsplit.len() as f64 / n,
        report,
        duration: noisy.duration(),
        bias: BiasSummary::of(&analyze_bias(circuit, noisy.notes())),
        rates: Vec::new(),
    })
}

/// A comparable column of a [`Row`].
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Column {
    /// Circuit-level distance (larger is better).
    Distance,
    /// Share of hyperedges after split (smaller is better).
    Unsplit,
    /// High-rate-only distance (larger is better; none is best).
    HighRate,
    /// Layers (smaller is better).
    Layers,
    /// Low-rate edges in the best logical error (larger is better).
    LowRate,
    /// Qubits (smaller is better).
    Qubits,
    /// Weighted distance (larger is better).
    Weighted,
    /// Total duration (smaller is better).
    Duration,
    /// Bias verdict (kept is better than lost).
    Bias,
    /// Effective bias at the data (larger is better; compared at two significant figures).
    DataBias,
    /// Logical error rate at the `i`-th `p` (smaller is better; see [`best`]).
    Rate(usize),
}

impl Column {
    /// Every column without a rate, in table order.
    pub const FIXED: [Column; 10] = [
        Column::Qubits,
        Column::Layers,
        Column::Duration,
        Column::Unsplit,
        Column::Distance,
        Column::HighRate,
        Column::LowRate,
        Column::Weighted,
        Column::Bias,
        Column::DataBias,
    ];

    /// Every column of `rows`: [`Column::FIXED`] and one rate column per `p`.
    pub fn all(rows: &[Row]) -> Vec<Column> {
        let n = rows.first().map_or(0, |r| r.rates.len());
        Column::FIXED
            .into_iter()
            .chain((0..n).map(Column::Rate))
            .collect()
    }

    /// A key under which larger is better (`None` when the row has no value).
    fn key(self, r: &Row) -> Option<f64> {
        // A proven absence ("none") is the best value; an unproven one has no value to rank.
        let absent = |u: Option<Unproven>| u.is_none().then_some(f64::INFINITY);
        let count = |c: &Option<Count>, u| c.as_ref().map(|c| f64::from(c.value)).or(absent(u));
        let un = &r.report.unresolved;
        match self {
            Column::Distance => count(&r.report.distance, un.distance),
            Column::Unsplit => Some(-r.unsplit_share),
            Column::HighRate => count(&r.report.high_rate, un.high_rate),
            Column::Layers => Some(-(r.layers as f64)),
            Column::LowRate => r
                .report
                .lexicographic
                .as_ref()
                .map(|l| f64::from(l.low))
                .or(absent(un.lexicographic)),
            Column::Qubits => Some(-(r.qubits as f64)),
            Column::Weighted => r
                .report
                .weighted
                .as_ref()
                .map(|w| w.weight)
                .or(absent(un.weighted)),
            Column::Duration => r.duration.map(|d| -d),
            Column::Bias => Some(if r.bias.kept { 1.0 } else { 0.0 }),
            // Two significant figures, as printed: smaller differences say nothing about the
            // circuits (the depolarizing split alone gives 1/2 up to placement effects).
            Column::DataBias => r.bias.data_eta.map(|e| significant(e, 2)),
            Column::Rate(i) => r.rates.get(i).map(|x| -x.rate),
        }
    }
}

/// `x` rounded to `digits` significant figures (infinities and zero unchanged).
pub fn significant(x: f64, digits: i32) -> f64 {
    if x == 0.0 || !x.is_finite() {
        return x;
    }
    let scale = 10f64.powi(digits - 1 - x.abs().log10().floor() as i32);
    (x * scale).round() / scale
}

/// For each row, whether it is best (ties included) in `column`. Nothing is marked when all rows
/// tie, so marks only appear where the variants differ. A rate is best when its interval's upper
/// end lies below the lower end of every other row's interval (at most one row).
pub fn best(rows: &[Row], column: Column) -> Vec<bool> {
    if let Column::Rate(i) = column {
        return (0..rows.len())
            .map(|j| {
                rows.len() > 1
                    && rows[j].rates.get(i).is_some_and(|a| {
                        rows.iter()
                            .enumerate()
                            .all(|(k, r)| k == j || r.rates.get(i).is_some_and(|b| a.high < b.low))
                    })
            })
            .collect();
    }
    let keys: Vec<Option<f64>> = rows.iter().map(|r| column.key(r)).collect();
    let top = keys
        .iter()
        .flatten()
        .copied()
        .fold(f64::NEG_INFINITY, f64::max);
    let marks: Vec<bool> = keys
        .iter()
        // Equal up to rounding; an infinite top ("none") ties only with itself, since a relative
        // tolerance of an infinite key would be infinite.
        .map(|k| {
            k.is_some_and(|k| {
                k == top || (top.is_finite() && (k - top).abs() <= 1e-9 * top.abs().max(1.0))
            })
        })
        .collect();
    if marks.iter().all(|&m| m) {
        vec![false; rows.len()]
    } else {
        marks
    }
}

/// The noise text with its `p=` replaced by `p` (added when a model file's text has none).
/// On a preset `p` is the preset's rate; on a model file it is the physical error per
/// operation, the model scaled by `p / p_ref` (see [`crate::noise::split_settings`] and the
/// reference). Refused for a preset text without `p=`.
pub fn at_p(text: &str, p: f64) -> Result<String, Diagnostic> {
    let mut found = false;
    let mut out: Vec<String> = text
        .split_whitespace()
        .map(|t| {
            if t.starts_with("p=") {
                found = true;
                format!("p={p}")
            } else {
                t.to_string()
            }
        })
        .collect();
    if !found {
        if crate::noise::is_model_text(text) {
            out.insert(1, format!("p={p}"));
            return Ok(out.join(" "));
        }
        return Err(Diagnostic::bare(format!(
            "`--p` replaces the `p=` of the noise preset, but `{text}` has none"
        )));
    }
    Ok(out.join(" "))
}

/// The noise text without its `p=` word, for titles of plots whose x axis is `p`.
pub fn without_p(text: &str) -> String {
    text.split_whitespace()
        .filter(|t| !t.starts_with("p="))
        .collect::<Vec<_>>()
        .join(" ")
}

/// Samples and decodes `circuit` under the noise `text` re-run at every `p` of `ps` (see
/// [`at_p`]), with the same decoder, shots, failure budget and seed at each. `progress` gets
/// the index of the `p` and the running counts after each batch.
pub fn rates(
    circuit: &Pipeline,
    text: &str,
    ps: &[f64],
    decoder: DecoderKind,
    opts: &RunOptions,
    mut progress: impl FnMut(usize, Counts),
) -> Result<Vec<RatePoint>, StudyError> {
    let mut out = Vec::new();
    for (i, &p) in ps.iter().enumerate() {
        let noisy = circuit.noised(Some(&at_p(text, p)?))?;
        let exp = noisy.experiment(decoder)?;
        let counts = exp.run(opts, |c| progress(i, c));
        let e = Estimate::wilson(counts.failures, counts.shots, Z95).per_round(exp.rounds);
        out.push(RatePoint {
            p,
            shots: counts.shots,
            failures: counts.failures,
            rounds: exp.rounds,
            rate: e.rate,
            low: e.low,
            high: e.high,
        });
    }
    Ok(out)
}
