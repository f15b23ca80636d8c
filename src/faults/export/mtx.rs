//! Matrix Market export: `H.mtx` (detectors × columns), `L.mtx` (observables × columns) and
//! `priors.npy` (the probability of each column).
//!
//! Format: "The Matrix Market Exchange Formats: Initial Design", NIST IR 5935 (1996) —
//! `%%MatrixMarket matrix coordinate integer general`, then `rows cols entries`, then one
//! one-based `row col 1` line per non-zero, column-major. Columns are edges in
//! [`crate::faults::FaultGraph::edges`] order, or edges of the matching graph in order.

use std::fmt::Write;

use crate::base::npy_f64_vector;
use crate::faults::export::{Files, View};

/// A column: detectors, observables, probability.
type Column<'a> = (Vec<u32>, &'a [u32], f64);

/// Rows of H, rows of L, and the columns.
type Columns<'a> = (usize, usize, Vec<Column<'a>>);

/// Renders the three files.
pub fn render(view: &View<'_>) -> Files {
    let (rows_h, rows_l, cols): Columns<'_> = match view {
        View::Full(g) => (
            g.detectors.len(),
            g.observables.len(),
            g.edges
                .iter()
                .map(|m| (m.detectors.clone(), m.observables.as_slice(), m.probability))
                .collect(),
        ),
        View::Matching(_, mg, _) => (
            mg.num_detectors,
            mg.num_observables,
            mg.edges
                .iter()
                .map(|e| {
                    let dets = match e.b {
                        Some(b) => vec![e.a, b],
                        None => vec![e.a],
                    };
                    (dets, e.observables.as_slice(), e.p)
                })
                .collect(),
        ),
    };
    let matrix = |rows: usize, col: &dyn Fn(usize) -> Vec<u32>, what: &str| {
        let entries: usize = (0..cols.len()).map(|j| col(j).len()).sum();
        let mut s = String::with_capacity(entries * 12 + 200);
        s.push_str("%%MatrixMarket matrix coordinate integer general\n");
        let _ = writeln!(s, "% slant fault graph: {what} x columns");
        let _ = writeln!(s, "{rows} {} {entries}", cols.len());
        for j in 0..cols.len() {
            for i in col(j) {
                let _ = writeln!(s, "{} {} 1", i + 1, j + 1);
            }
        }
        s.into_bytes()
    };
    let h = matrix(rows_h, &|j| cols[j].0.clone(), "detectors");
    let l = matrix(rows_l, &|j| cols[j].1.to_vec(), "observables");
    let priors: Vec<f64> = cols.iter().map(|c| c.2).collect();
    vec![
        ("H.mtx".into(), h),
        ("L.mtx".into(), l),
        ("priors.npy".into(), npy_f64_vector(&priors)),
    ]
}
