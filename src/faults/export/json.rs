//! JSON export.
//!
//! Schema of the full graph (`format = "slant-fault-graph"`, `version = 2`; version 1 used earlier
//! names for the edges and the splits):
//!
//! ```text
//! { "format", "version", "source": file name,
//!   "detectors":   [{ "index", "name", "coords": [f64] }],
//!   "observables": [{ "index", "name" }],
//!   "edges":       [{ "index", "probability", "weight", "detectors": [u32],
//!                     "observables": [u32], "class": "high"|"low"|"mixed",
//!                     "provenance": [start, end] }],          // half-open range into "provenance"
//!   "operations":  [{ "layer", "index", "location": "file:line:col", "text" }],
//!   "provenance":  [{ "operation": index into "operations", "term": "ZY" | "flip",
//!                     "qubits": [u32], "result": u32 | null, "term_probability",
//!                     "probability", "class": "high"|"low" }],
//!   "silent": { "count", "probability" },
//!   "hyperedges": { "count", "split", "unsplit": [edge index] },
//!   "splits": [{ "edge", "parts": [{ "detectors", "observables" }] }],
//!   "inexact_channels" }
//! ```
//!
//! An edge with more than two detectors is a hyperedge.
//!
//! The matchable view (`format = "slant-matching-graph"`, `version = 2`) has `source`,
//! `detectors`, `observables` (the arrays above; their lengths are the counts), `edges: [{ "a",
//! "b": u32 | null, "p", "weight", "observables" }]` and `stats: { "split", "unsplit",
//! "silent_logical", "observable_conflicts" }`. Probabilities are of independent edges;
//! `weight = ln((1−p)/p)`. `docs/reference.md` documents both for users.

use std::io::{self, Write};

use serde::Serialize;

use crate::faults::export::View;
use crate::faults::graph::{Contributor, FaultGraph};
use crate::faults::intern::FxMap;

/// Schema version written in every file.
pub const VERSION: u32 = 2;

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
struct EdgeItem<'a> {
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

/// The Pauli term of a contributor as a JSON string, without a heap allocation for short terms.
struct TermText<'a>(&'a Contributor);

impl Serialize for TermText<'_> {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        let c = self.0;
        if c.result.is_some() || c.term.len() > 32 {
            return s.serialize_str(&c.term_text());
        }
        let mut buf = [0u8; 32];
        for (b, p) in buf.iter_mut().zip(c.term.iter()) {
            *b = p.letter() as u8;
        }
        s.serialize_str(std::str::from_utf8(&buf[..c.term.len()]).unwrap_or(""))
    }
}

#[derive(Serialize)]
struct Prov<'a> {
    operation: u32,
    term: TermText<'a>,
    qubits: &'a [u32],
    result: Option<u32>,
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
struct SplitItem<'a> {
    edge: u32,
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
    split: usize,
    unsplit: &'a [u32],
}

#[derive(Serialize)]
struct MatchingItem<'a> {
    a: u32,
    b: Option<u32>,
    p: f64,
    weight: f64,
    observables: &'a [u32],
}

#[derive(Serialize)]
struct Stats<'a> {
    split: usize,
    unsplit: &'a [u32],
    silent_logical: &'a [u32],
    observable_conflicts: usize,
}

#[derive(Serialize)]
struct Matching<'a> {
    format: &'static str,
    version: u32,
    source: &'a str,
    detectors: Vec<Det<'a>>,
    observables: Vec<Obs<'a>>,
    edges: Vec<MatchingItem<'a>>,
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
    let mut out = Vec::new();
    // Writing into a Vec cannot fail.
    let _ = write(view, &mut out);
    out
}

/// Writes `items` as a JSON array, one element at a time.
fn seq<W: Write, T: Serialize>(w: &mut W, items: impl Iterator<Item = T>) -> io::Result<()> {
    w.write_all(b"[")?;
    for (i, item) in items.enumerate() {
        if i > 0 {
            w.write_all(b",")?;
        }
        serde_json::to_writer(&mut *w, &item)?;
    }
    w.write_all(b"]")
}

/// Writes `,"key":` then the value.
fn field<W: Write, T: Serialize + ?Sized>(w: &mut W, key: &str, value: &T) -> io::Result<()> {
    write!(w, ",\"{key}\":")?;
    serde_json::to_writer(&mut *w, value)?;
    Ok(())
}

/// Streams a view as JSON (compact, one trailing newline) into `w`: nothing the size of the
/// document is held in memory, so a graph of a million faults is written in one pass.
pub fn write<W: Write>(view: &View<'_>, w: &mut W) -> io::Result<()> {
    match view {
        View::Full(g) => write_full(g, w)?,
        View::Matching(g, mg, stats) => {
            let doc = Matching {
                format: "slant-matching-graph",
                version: VERSION,
                source: &g.source.name,
                detectors: dets(g),
                observables: obs(g),
                edges: mg
                    .edges
                    .iter()
                    .map(|e| MatchingItem {
                        a: e.a,
                        b: e.b,
                        p: e.p,
                        weight: e.weight(),
                        observables: &e.observables,
                    })
                    .collect(),
                stats: Stats {
                    split: stats.split,
                    unsplit: &stats.unsplit,
                    silent_logical: &stats.silent_logical,
                    observable_conflicts: stats.observable_conflicts,
                },
            };
            serde_json::to_writer(&mut *w, &doc)?;
        }
    }
    w.write_all(b"\n")
}

fn write_full<W: Write>(g: &FaultGraph, w: &mut W) -> io::Result<()> {
    // Operations are numbered in order of first appearance among the contributors.
    let mut op_index: FxMap<(u32, u32), u32> = FxMap::default();
    let mut operations = Vec::new();
    let op_of: Vec<u32> = g
        .provenance
        .iter()
        .map(|c| {
            *op_index.entry((c.layer, c.op)).or_insert_with(|| {
                operations.push(Operation {
                    layer: c.layer,
                    index: c.op,
                    location: g.location(c),
                    text: g.op_text(c),
                });
                operations.len() as u32 - 1
            })
        })
        .collect();
    write!(
        w,
        "{{\"format\":\"slant-fault-graph\",\"version\":{VERSION}"
    )?;
    field(w, "source", &g.source.name)?;
    w.write_all(b",\"detectors\":")?;
    seq(w, dets(g).into_iter())?;
    w.write_all(b",\"observables\":")?;
    seq(w, obs(g).into_iter())?;
    w.write_all(b",\"edges\":")?;
    seq(
        w,
        g.edges.iter().enumerate().map(|(index, m)| EdgeItem {
            index,
            probability: m.probability,
            weight: m.weight(),
            detectors: &m.detectors,
            observables: &m.observables,
            class: m.classes.name(),
            provenance: [m.provenance.start, m.provenance.end],
        }),
    )?;
    field(w, "operations", &operations)?;
    w.write_all(b",\"provenance\":")?;
    seq(
        w,
        g.provenance.iter().zip(&op_of).map(|(c, &operation)| Prov {
            operation,
            term: TermText(c),
            qubits: &c.qubits,
            result: c.result,
            term_probability: c.term_probability,
            probability: c.probability,
            class: c.class.name(),
        }),
    )?;
    field(
        w,
        "silent",
        &Silent {
            count: g.silent.count,
            probability: g.silent.probability,
        },
    )?;
    field(
        w,
        "hyperedges",
        &Hyper {
            count: g.hyperedges.hyperedges,
            split: g.hyperedges.split,
            unsplit: &g.hyperedges.unsplit,
        },
    )?;
    w.write_all(b",\"splits\":")?;
    seq(
        w,
        g.splits.iter().map(|d| SplitItem {
            edge: d.edge,
            parts: g
                .parts(d)
                .map(|(detectors, observables)| Part {
                    detectors,
                    observables,
                })
                .collect(),
        }),
    )?;
    field(w, "inexact_channels", &g.inexact_channels)?;
    w.write_all(b"}")
}
