//! JSON export.
//!
//! Schema of the full graph (`format = "slant-fault-graph"`, `version = 1`):
//!
//! ```text
//! { "format", "version", "source": file name,
//!   "detectors":   [{ "index", "name", "coords": [f64] }],
//!   "observables": [{ "index", "name" }],
//!   "mechanisms":  [{ "index", "probability", "weight", "detectors": [u32],
//!                     "observables": [u32], "class": "high"|"low"|"mixed",
//!                     "provenance": [start, end] }],          // half-open range into "provenance"
//!   "operations":  [{ "layer", "index", "location": "file:line:col", "text" }],
//!   "provenance":  [{ "operation": index into "operations", "term": "ZY" | "flip",
//!                     "qubits": [u32], "record": u32 | null, "term_probability",
//!                     "probability", "class": "high"|"low" }],
//!   "silent": { "count", "probability" },
//!   "hyperedges": { "count", "decomposed", "undecomposed": [mechanism index] },
//!   "decompositions": [{ "mechanism", "parts": [{ "detectors", "observables" }] }],
//!   "inexact_channels" }
//! ```
//!
//! The graphlike view (`format = "slant-matching-graph"`, `version = 1`) has `detectors`,
//! `observables`, `num_detectors`, `num_observables`, `edges: [{ "a", "b": u32 | null, "p",
//! "weight", "observables" }]` and `stats: { "decomposed", "undecomposed",
//! "undetectable_logical", "observable_conflicts" }`. Probabilities are independent-mechanism
//! probabilities; `weight = ln((1−p)/p)`.

use std::collections::HashMap;

use serde::Serialize;

use crate::faults::export::View;
use crate::faults::graph::FaultGraph;

/// Schema version written in every file.
pub const VERSION: u32 = 1;

#[derive(Serialize)]
struct Det<'a> {
    index: usize,
    name: &'a str,
    coords: &'a [f64],
}

#[derive(Serialize)]
struct Obs<'a> {
    index: usize,
    name: &'a str,
}

#[derive(Serialize)]
struct Mech<'a> {
    index: usize,
    probability: f64,
    weight: f64,
    detectors: &'a [u32],
    observables: &'a [u32],
    class: &'static str,
    provenance: [u32; 2],
}

#[derive(Serialize)]
struct Operation {
    layer: u32,
    index: u32,
    location: String,
    text: String,
}

#[derive(Serialize)]
struct Prov<'a> {
    operation: usize,
    term: String,
    qubits: &'a [u32],
    record: Option<u32>,
    term_probability: f64,
    probability: f64,
    class: &'static str,
}

#[derive(Serialize)]
struct Part<'a> {
    detectors: &'a [u32],
    observables: &'a [u32],
}

#[derive(Serialize)]
struct Decomp<'a> {
    mechanism: u32,
    parts: Vec<Part<'a>>,
}

#[derive(Serialize)]
struct Silent {
    count: usize,
    probability: f64,
}

#[derive(Serialize)]
struct Hyper<'a> {
    count: usize,
    decomposed: usize,
    undecomposed: &'a [u32],
}

#[derive(Serialize)]
struct Full<'a> {
    format: &'static str,
    version: u32,
    source: &'a str,
    detectors: Vec<Det<'a>>,
    observables: Vec<Obs<'a>>,
    mechanisms: Vec<Mech<'a>>,
    operations: Vec<Operation>,
    provenance: Vec<Prov<'a>>,
    silent: Silent,
    hyperedges: Hyper<'a>,
    decompositions: Vec<Decomp<'a>>,
    inexact_channels: usize,
}

#[derive(Serialize)]
struct Edge<'a> {
    a: u32,
    b: Option<u32>,
    p: f64,
    weight: f64,
    observables: &'a [u32],
}

#[derive(Serialize)]
struct Stats<'a> {
    decomposed: usize,
    undecomposed: &'a [u32],
    undetectable_logical: &'a [u32],
    observable_conflicts: usize,
}

#[derive(Serialize)]
struct Matching<'a> {
    format: &'static str,
    version: u32,
    source: &'a str,
    num_detectors: usize,
    num_observables: usize,
    detectors: Vec<Det<'a>>,
    observables: Vec<Obs<'a>>,
    edges: Vec<Edge<'a>>,
    stats: Stats<'a>,
}

fn dets(g: &FaultGraph) -> Vec<Det<'_>> {
    g.detectors
        .iter()
        .enumerate()
        .map(|(index, d)| Det {
            index,
            name: &d.name,
            coords: &d.coords,
        })
        .collect()
}

fn obs(g: &FaultGraph) -> Vec<Obs<'_>> {
    g.observables
        .iter()
        .enumerate()
        .map(|(index, name)| Obs { index, name })
        .collect()
}

/// Renders a view as JSON (compact, one trailing newline).
pub fn render(view: &View<'_>) -> Vec<u8> {
    let mut out = match view {
        View::Full(g) => {
            let mut op_index: HashMap<(u32, u32), usize> = HashMap::new();
            let mut operations = Vec::new();
            let provenance = g
                .provenance
                .iter()
                .map(|c| {
                    let operation = *op_index.entry((c.layer, c.op)).or_insert_with(|| {
                        operations.push(Operation {
                            layer: c.layer,
                            index: c.op,
                            location: g.location(c),
                            text: g.op_text(c),
                        });
                        operations.len() - 1
                    });
                    Prov {
                        operation,
                        term: c.term_text(),
                        qubits: &c.qubits,
                        record: c.record,
                        term_probability: c.term_probability,
                        probability: c.probability,
                        class: c.class.name(),
                    }
                })
                .collect();
            let doc = Full {
                format: "slant-fault-graph",
                version: VERSION,
                source: &g.source.name,
                detectors: dets(g),
                observables: obs(g),
                mechanisms: g
                    .mechanisms
                    .iter()
                    .enumerate()
                    .map(|(index, m)| Mech {
                        index,
                        probability: m.probability,
                        weight: m.weight(),
                        detectors: &m.detectors,
                        observables: &m.observables,
                        class: m.classes.name(),
                        provenance: [m.provenance.start, m.provenance.end],
                    })
                    .collect(),
                operations,
                provenance,
                silent: Silent {
                    count: g.silent.count,
                    probability: g.silent.probability,
                },
                hyperedges: Hyper {
                    count: g.hyperedges.hyperedges,
                    decomposed: g.hyperedges.decomposed,
                    undecomposed: &g.hyperedges.undecomposed,
                },
                decompositions: g
                    .decompositions
                    .iter()
                    .map(|d| Decomp {
                        mechanism: d.mechanism,
                        parts: d
                            .parts
                            .iter()
                            .map(|(detectors, observables)| Part {
                                detectors,
                                observables,
                            })
                            .collect(),
                    })
                    .collect(),
                inexact_channels: g.inexact_channels,
            };
            serde_json::to_vec(&doc)
        }
        View::Graphlike(g, mg, stats) => {
            let doc = Matching {
                format: "slant-matching-graph",
                version: VERSION,
                source: &g.source.name,
                num_detectors: mg.num_detectors,
                num_observables: mg.num_observables,
                detectors: dets(g),
                observables: obs(g),
                edges: mg
                    .edges
                    .iter()
                    .map(|e| Edge {
                        a: e.a,
                        b: e.b,
                        p: e.p,
                        weight: e.weight(),
                        observables: &e.observables,
                    })
                    .collect(),
                stats: Stats {
                    decomposed: stats.decomposed,
                    undecomposed: &stats.undecomposed,
                    undetectable_logical: &stats.undetectable_logical,
                    observable_conflicts: stats.observable_conflicts,
                },
            };
            serde_json::to_vec(&doc)
        }
    }
    // Serialising plain structs of numbers and strings cannot fail; NaN/inf become null.
    .unwrap_or_default();
    out.push(b'\n');
    out
}
