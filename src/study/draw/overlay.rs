//! Faults on the patch: the circuit faults behind a logical error or one fault-graph edge,
//! placed on their qubits at their step, with where gates spread them by the end of the round.
//!
//! An edge is produced by every circuit fault with its symptom, often a dozen. For a logical
//! error one is shown per edge, the *representative*: the most likely (of the high-rate ones,
//! for a logical error of high-rate faults), then the one on fewest qubits, then the earliest
//! (so a hook shows on the ancilla where it starts); the hover text
//! counts the others, which `slant trace` lists. For a single edge (`edge:K`) every circuit fault
//! is shown, those on the same qubits at the same time merged into one mark.
//!
//! The spread is the fault's Pauli carried forward (`G P G†`, [`crate::base::Gate::conjugate`])
//! through the rest of its round, a reset clearing its qubit: a fault on an ancilla halfway
//! through its check becomes a Pauli on the data qubits the ancilla meets later, the hook. It is
//! listed only when it differs from the fault's own data-qubit Paulis.

use std::collections::HashMap;

use crate::analysis::LogicalError;
use crate::base::Pauli;
use crate::faults::{Contributor, FaultClass, FaultGraph};
use crate::ir::{Circuit, OpKind};

use super::model::{DetectorMark, FaultMark, FaultOverlay, Layout, Point, Timeline};

/// What the overlays read: the noisy circuit, its time labels, the layout and the graph.
pub(super) struct Context<'a> {
    pub circuit: &'a Circuit,
    pub timeline: &'a Timeline,
    pub layout: &'a Layout,
    pub graph: &'a FaultGraph,
}

/// The representative circuit fault of edge `k` (see the module docs); with `high`, among its
/// high-rate faults when it has any.
fn representative(g: &FaultGraph, k: usize, high: bool) -> &Contributor {
    let weight = |c: &Contributor| c.term.iter().filter(|&&p| p != Pauli::I).count();
    let all = g.contributors(k);
    let pool: Vec<&Contributor> = if high && all.iter().any(|c| c.class == FaultClass::High) {
        all.iter().filter(|c| c.class == FaultClass::High).collect()
    } else {
        all.iter().collect()
    };
    let mut best = pool[0];
    for &c in &pool[1..] {
        let better = c.probability > best.probability
            || (c.probability == best.probability
                && (weight(c), c.layer) < (weight(best), best.layer));
        if better {
            best = c;
        }
    }
    best
}

/// The fault's data-qubit Paulis at the end of its round, when they differ from its own.
fn spread(c: &Circuit, k: &Contributor) -> Vec<(u32, Pauli)> {
    if k.result.is_some() {
        return Vec::new();
    }
    let is_data = |q: u32| c.qubits[q as usize].has_role("data");
    let layer = k.layer as usize;
    let round = c.layers[layer].round;
    let mut end = layer;
    while end + 1 < c.layers.len() && c.layers[end + 1].round == round {
        end += 1;
    }
    let own: Vec<(u32, Pauli)> = {
        let mut v: Vec<(u32, Pauli)> = k
            .qubits
            .iter()
            .copied()
            .zip(k.term.iter().copied())
            .filter(|&(q, p)| p != Pauli::I && is_data(q))
            .collect();
        v.sort_unstable();
        v
    };
    let mut frame: HashMap<u32, Pauli> = k
        .qubits
        .iter()
        .copied()
        .zip(k.term.iter().copied())
        .filter(|&(_, p)| p != Pauli::I)
        .collect();
    for l in layer..=end {
        let ops = &c.layers[l].ops;
        let from = if l == layer { k.op as usize + 1 } else { 0 };
        for op in ops.iter().skip(from) {
            match &op.kind {
                OpKind::Gate(g) => {
                    for pair in op.targets.chunks(g.arity()) {
                        if !pair.iter().any(|q| frame.contains_key(q)) {
                            continue;
                        }
                        let get = |x: Option<&u32>| {
                            x.and_then(|x| frame.get(x).copied()).unwrap_or(Pauli::I)
                        };
                        let out = g.conjugate([get(pair.first()), get(pair.get(1))]);
                        for (j, &q) in pair.iter().enumerate() {
                            frame.insert(q, out[j]);
                        }
                    }
                }
                OpKind::Reset(_) => {
                    for q in &op.targets {
                        frame.remove(q);
                    }
                }
                OpKind::Measure { .. } | OpKind::Noise(_) => {}
            }
        }
    }
    let mut at_end: Vec<(u32, Pauli)> = frame
        .into_iter()
        .filter(|&(q, p)| p != Pauli::I && is_data(q))
        .collect();
    at_end.sort_unstable();
    if at_end == own {
        Vec::new()
    } else {
        at_end
    }
}

impl Context<'_> {
    fn place(&self, q: u32) -> Point {
        self.layout.qubits[q as usize].at
    }

    /// The panel (structure) of a layer: the one holding its round; layers outside rounds go to
    /// the first panel when they come before the rounds, else to the last.
    fn structure_of(&self, layer: usize) -> usize {
        let st = &self.layout.structures;
        match self.timeline.layers[layer].round {
            Some(r) => st.iter().position(|s| s.rounds.contains(&r)).unwrap_or(0),
            None => {
                let before = self.timeline.layers[..layer]
                    .iter()
                    .all(|l| l.round.is_none());
                if before {
                    0
                } else {
                    st.len().saturating_sub(1)
                }
            }
        }
    }

    /// Where a measurement flip is drawn: on the measured qubit, or at the check of a product.
    fn flip_place(&self, k: &Contributor) -> Vec<Point> {
        if k.qubits.len() == 1 {
            return vec![self.place(k.qubits[0])];
        }
        let mut qs: Vec<u32> = k.qubits.to_vec();
        qs.sort_unstable();
        let found = self
            .layout
            .structures
            .iter()
            .flat_map(|s| s.checks.iter())
            .find(|c| {
                c.ancilla.is_none() && {
                    let mut cq: Vec<u32> = c.support.iter().map(|s| s.qubit).collect();
                    cq.sort_unstable();
                    cq == qs
                }
            });
        match found {
            Some(c) => vec![c.at],
            None => {
                let n = qs.len() as f64;
                vec![qs.iter().fold((0.0, 0.0), |a, &q| {
                    let p = self.place(q);
                    (a.0 + p.0 / n, a.1 + p.1 / n)
                })]
            }
        }
    }

    /// Whether a two-qubit fault sits on a gate of its layer (the noise after that gate).
    fn on_gate(&self, k: &Contributor) -> bool {
        if k.qubits.len() != 2 || k.result.is_some() {
            return false;
        }
        self.circuit.layers[k.layer as usize].ops.iter().any(|op| {
            matches!(op.kind, OpKind::Gate(g) if g.arity() == 2)
                && op.targets.chunks(2).any(|p| {
                    (p[0] == k.qubits[0] && p[1] == k.qubits[1])
                        || (p[0] == k.qubits[1] && p[1] == k.qubits[0])
                })
        })
    }

    fn mark(&self, edge: usize, k: &Contributor, number: usize) -> FaultMark {
        let t = &self.timeline.layers[k.layer as usize];
        let at = if k.result.is_some() {
            self.flip_place(k)
        } else {
            k.qubits
                .iter()
                .zip(k.term.iter())
                .filter(|(_, &p)| p != Pauli::I)
                .map(|(&q, _)| self.place(q))
                .collect()
        };
        FaultMark {
            number,
            edge: edge as u32,
            class: k.class,
            term: k.term_text(),
            qubits: k.qubits.to_vec(),
            at,
            on_gate: self.on_gate(k),
            layer: k.layer,
            structure: self.structure_of(k.layer as usize),
            when: t.short.clone(),
            when_long: t.long.clone(),
            spread: spread(self.circuit, k),
            location: self.graph.location(k),
            op: self.graph.op_text(k),
            probability: k.probability,
            others: self.graph.contributors(edge).len() - 1,
        }
    }

    /// A logical error's faults, one per edge, numbered in edge order; with `high`, each edge
    /// shown by a high-rate fault (a high-rate logical error's edges all have one).
    pub fn logical(&self, title: String, e: &LogicalError, high: bool) -> FaultOverlay {
        let marks = e
            .edges
            .iter()
            .enumerate()
            .map(|(n, &m)| {
                let k = representative(self.graph, m as usize, high);
                self.mark(m as usize, k, n + 1)
            })
            .collect();
        FaultOverlay {
            title,
            marks,
            detectors: Vec::new(),
        }
    }

    /// Every circuit fault of edge `k`, those on the same qubits in the same layer and class
    /// merged, and the detectors it flips.
    pub fn edge(&self, k: usize) -> FaultOverlay {
        let g = self.graph;
        let m = &g.edges[k];
        let mut marks: Vec<FaultMark> = Vec::new();
        for c in g.contributors(k) {
            let mark = self.mark(k, c, 0);
            match marks
                .iter_mut()
                .find(|x| x.layer == mark.layer && x.qubits == mark.qubits && x.class == mark.class)
            {
                Some(x) => {
                    if !x.term.split('/').any(|t| t == mark.term) {
                        x.term = format!("{}/{}", x.term, mark.term);
                    }
                    // Different terms spread differently; one spread would misstate the others.
                    if x.spread != mark.spread {
                        x.spread.clear();
                    }
                    x.probability = crate::base::xor_prob(x.probability, mark.probability);
                }
                None => marks.push(mark),
            }
        }
        for x in &mut marks {
            x.others = 0;
        }
        let names = |v: &[u32], f: &dyn Fn(u32) -> String| {
            v.iter().map(|&d| f(d)).collect::<Vec<_>>().join(", ")
        };
        let dets = names(&m.detectors, &|d| {
            format!("`{}`", g.detectors[d as usize].name)
        });
        let obs = names(&m.observables, &|o| {
            format!("`{}`", g.observables[o as usize])
        });
        let title = format!(
            "edge {k}: p = {:.2e}, {} rate; flips {}{}; {} circuit faults",
            m.probability,
            m.classes.name(),
            if dets.is_empty() {
                "no detector".to_string()
            } else {
                dets
            },
            if obs.is_empty() {
                String::new()
            } else {
                format!(" and {obs}")
            },
            m.provenance.len()
        );
        FaultOverlay {
            title,
            marks,
            detectors: m
                .detectors
                .iter()
                .map(|&d| detector_mark(self.circuit, self.timeline, self.layout, d))
                .collect(),
        }
    }
}

/// A detector's place (its first two coordinates, else the place of the qubit measured for its
/// last result) and time (its third coordinate, else the round of its last result).
pub(super) fn detector_mark(c: &Circuit, tl: &Timeline, layout: &Layout, d: u32) -> DetectorMark {
    let det = &c.detectors[d as usize];
    let last = det.records.last().map(|&r| &c.records[r as usize]);
    let at = if det.coords.len() >= 2 {
        (det.coords[0], det.coords[1])
    } else {
        last.and_then(|r| {
            c.layers[r.layer as usize]
                .ops
                .iter()
                .find_map(|op| match op.kind {
                    OpKind::Measure { record, .. } if c.records[record as usize].name == r.name => {
                        let n = op.targets.len() as f64;
                        Some(op.targets.iter().fold((0.0, 0.0), |a, &q| {
                            let p = layout.qubits[q as usize].at;
                            (a.0 + p.0 / n, a.1 + p.1 / n)
                        }))
                    }
                    _ => None,
                })
        })
        .unwrap_or((0.0, 0.0))
    };
    let time = match det.coords.get(2) {
        Some(&t) => t,
        None => last
            .and_then(|r| tl.layers[r.layer as usize].round)
            .map_or(0.0, f64::from),
    };
    DetectorMark {
        index: d,
        name: det.name.clone(),
        at,
        time,
    }
}

/// A detector's place from its coordinates in the fault graph, if it has two.
pub(super) fn detector_place(g: &FaultGraph, d: u32) -> Option<Point> {
    let c = &g.detectors.get(d as usize)?.coords;
    (c.len() >= 2).then(|| (c[0], c[1]))
}
