//! Side-by-side comparison of circuits under one noise model.
//!
//! In: named noisy [`Circuit`]s (files, or variants of a generated family). Out: one [`Row`] per
//! circuit — size, fault-graph shape and distances by class ([`crate::analysis::distance`]) —
//! and, per column, which rows are best ([`best`]).
//!
//! Not yet here (see issue 7): duration from a hardware model, bias verdict and effective data
//! bias (need the bias analysis), logical error rates per round with intervals (need the
//! estimate command) and plots.

use crate::analysis::distance::{self, Count, DistanceOptions, DistanceReport};
use crate::faults::{ExtractOptions, FaultGraph};
use crate::ir::Circuit;

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
    /// Number of mechanisms.
    pub mechanisms: usize,
    /// Share of mechanisms with three or more detectors, before decomposition.
    pub hyperedge_share: f64,
    /// Share of mechanisms left as hyperedges after decomposition.
    pub undecomposed_share: f64,
    /// Distances by class.
    pub report: DistanceReport,
}

/// Extracts the fault graph of `circuit` and measures it.
pub fn evaluate(
    name: impl Into<String>,
    circuit: &Circuit,
    extract: &ExtractOptions,
    opts: &DistanceOptions,
) -> Result<Row, String> {
    let graph: FaultGraph = crate::faults::extract(circuit, extract);
    let report = distance::distances(&graph, opts)?;
    let n = graph.mechanisms.len().max(1) as f64;
    Ok(Row {
        name: name.into(),
        qubits: circuit.qubits.len(),
        layers: circuit.layers.len(),
        detectors: graph.detectors.len(),
        mechanisms: graph.mechanisms.len(),
        hyperedge_share: graph.hyperedges.hyperedges as f64 / n,
        undecomposed_share: graph.hyperedges.undecomposed.len() as f64 / n,
        report,
    })
}

/// A comparable column of a [`Row`].
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Column {
    /// Circuit-level distance (larger is better).
    Distance,
    /// Share of hyperedges after decomposition (smaller is better).
    Undecomposed,
    /// High-rate-only distance (larger is better; none is best).
    HighRate,
    /// Layers (smaller is better).
    Layers,
    /// Low-rate mechanisms in the best logical error (larger is better).
    LowRate,
    /// Qubits (smaller is better).
    Qubits,
    /// Weighted distance (larger is better).
    Weighted,
}

impl Column {
    /// Every column, in table order.
    pub const ALL: [Column; 7] = [
        Column::Qubits,
        Column::Layers,
        Column::Undecomposed,
        Column::Distance,
        Column::HighRate,
        Column::LowRate,
        Column::Weighted,
    ];

    /// A key under which larger is better (`None` when the row has no value).
    fn key(self, r: &Row) -> Option<f64> {
        let count = |c: &Option<Count>| c.as_ref().map(|c| f64::from(c.value));
        match self {
            Column::Distance => count(&r.report.distance).or(Some(f64::INFINITY)),
            Column::Undecomposed => Some(-r.undecomposed_share),
            Column::HighRate => count(&r.report.high_rate).or(Some(f64::INFINITY)),
            Column::Layers => Some(-(r.layers as f64)),
            Column::LowRate => r
                .report
                .lexicographic
                .as_ref()
                .map(|l| f64::from(l.low))
                .or(Some(f64::INFINITY)),
            Column::Qubits => Some(-(r.qubits as f64)),
            Column::Weighted => r
                .report
                .weighted
                .as_ref()
                .map(|w| w.weight)
                .or(Some(f64::INFINITY)),
        }
    }
}

/// For each row, whether it is best (ties included) in `column`. Nothing is marked when all rows
/// tie, so marks only appear where the variants differ.
pub fn best(rows: &[Row], column: Column) -> Vec<bool> {
    let keys: Vec<Option<f64>> = rows.iter().map(|r| column.key(r)).collect();
    let top = keys
        .iter()
        .flatten()
        .copied()
        .fold(f64::NEG_INFINITY, f64::max);
    let marks: Vec<bool> = keys
        .iter()
        .map(|k| k.is_some_and(|k| (k - top).abs() <= 1e-9 * top.abs().max(1.0) || k == top))
        .collect();
    if marks.iter().all(|&m| m) {
        vec![false; rows.len()]
    } else {
        marks
    }
}
