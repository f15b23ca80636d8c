//! The checks of each round, read off the circuit itself (the language has no "check" item).
//!
//! Two shapes are recognised:
//! - an **ancilla check**: a qubit without the `data` role measured on its own. Its window runs
//!   from its last reset or measurement in the same block (else the block's start) to this
//!   measurement. The measured Pauli is carried back through the window's gates (Heisenberg
//!   picture, [`crate::base::Gate::conjugate`]; every gate of the language is its own inverse
//!   up to a phase, which the Paulis here ignore); components on qubits reset in the window, the
//!   ancilla's included, are dropped, since a freshly reset qubit contributes a known value. What
//!   is left is the check: the Pauli it measures on each other qubit. The ancilla's two-qubit
//!   gates in the window, with their steps, are the gate order. A window that leaves nothing
//!   (a flag qubit's, say) is not a check.
//! - a **product check**: one measurement of a Pauli product on several qubits.
//!
//! Rounds whose checks agree (ancillas, supports, gates and steps) share one [`Structure`].

use std::collections::HashMap;
use std::ops::Range;

use crate::base::{Gate, Pauli};
use crate::ir::{Circuit, OpKind};

use super::model::Timeline;
use super::model::{Check, CheckKind, Coupling, LayerKind, Point, Role, Structure, SupportQubit};
use super::place::Places;

/// The non-noise operation touching each qubit in each layer of a block, by qubit: within one
/// layer those touch disjoint qubits, so there is at most one.
struct Touch {
    start: usize,
    maps: Vec<HashMap<u32, u32>>,
}

impl Touch {
    fn new(c: &Circuit, layers: Range<usize>) -> Touch {
        let maps = layers
            .clone()
            .map(|l| {
                let mut m = HashMap::new();
                for (k, op) in c.layers[l].ops.iter().enumerate() {
                    if !matches!(op.kind, OpKind::Noise(_)) {
                        for &q in &op.targets {
                            m.insert(q, k as u32);
                        }
                    }
                }
                m
            })
            .collect();
        Touch {
            start: layers.start,
            maps,
        }
    }

    fn op(&self, layer: usize, q: u32) -> Option<usize> {
        self.maps[layer - self.start].get(&q).map(|&k| k as usize)
    }
}

/// Which detector to take a product check's place from: for each result, the detector with the
/// fewest results that reads it and has at least two coordinates.
fn detector_places(c: &Circuit) -> HashMap<u32, Point> {
    let mut best: HashMap<u32, (usize, Point)> = HashMap::new();
    for d in &c.detectors {
        if d.coords.len() < 2 {
            continue;
        }
        let at = (d.coords[0], d.coords[1]);
        for &r in &d.records {
            let e = best.entry(r).or_insert((usize::MAX, at));
            if d.records.len() < e.0 {
                *e = (d.records.len(), at);
            }
        }
    }
    best.into_iter().map(|(r, (_, at))| (r, at)).collect()
}

/// Carries the Pauli `p` on qubit `q`, measured in layer `end`, back to the start of its window
/// and returns the check's support and the ancilla's couplings.
fn ancilla_window(
    c: &Circuit,
    touch: &Touch,
    tl: &Timeline,
    q: u32,
    p: Pauli,
    end: usize,
) -> (Vec<(u32, Pauli)>, Vec<Coupling>) {
    // The window opens at the last reset or measurement of `q` before `end` in the block.
    let open = (touch.start..end).rev().find(|&l| {
        touch.op(l, q).is_some_and(|k| {
            matches!(
                c.layers[l].ops[k].kind,
                OpKind::Reset(_) | OpKind::Measure { .. }
            )
        })
    });
    let first = open.unwrap_or(touch.start);
    let mut frame: HashMap<u32, Pauli> = HashMap::from([(q, p)]);
    let mut couplings = Vec::new();
    for l in (first..end).rev() {
        let mut seen: Vec<usize> = Vec::new();
        let qubits: Vec<u32> = frame.keys().copied().collect();
        for t in qubits {
            let Some(k) = touch.op(l, t) else { continue };
            if seen.contains(&k) {
                continue;
            }
            seen.push(k);
            let op = &c.layers[l].ops[k];
            match &op.kind {
                OpKind::Gate(g) => {
                    for pair in op.targets.chunks(g.arity()) {
                        let get = |x: Option<&u32>| x.and_then(|x| frame.get(x).copied());
                        let input = [
                            get(pair.first()).unwrap_or(Pauli::I),
                            get(pair.get(1)).unwrap_or(Pauli::I),
                        ];
                        let out = g.conjugate(input);
                        for (j, &x) in pair.iter().enumerate() {
                            frame.insert(x, out[j]);
                        }
                    }
                }
                OpKind::Reset(_) => {
                    for x in &op.targets {
                        frame.remove(x);
                    }
                }
                OpKind::Measure { .. } | OpKind::Noise(_) => {}
            }
        }
        frame.retain(|_, p| *p != Pauli::I);
        // The ancilla's own gates, found from the ancilla (its Pauli may have moved off it).
        if l > first || open.is_none() {
            if let Some(k) = touch.op(l, q) {
                let op = &c.layers[l].ops[k];
                if let (OpKind::Gate(g), LayerKind::Step(step)) = (&op.kind, tl.layers[l].kind) {
                    if g.arity() == 2 {
                        for pair in op.targets.chunks(2).filter(|p| p.contains(&q)) {
                            let first_is_q = pair[0] == q;
                            couplings.push(Coupling {
                                qubit: if first_is_q { pair[1] } else { pair[0] },
                                gate: *g,
                                ancilla_first: first_is_q,
                                step,
                                layer: l as u32,
                            });
                        }
                    }
                }
            }
        }
    }
    // The ancilla's start value is known: at the block start (no reset in the block) we assume
    // what the previous block left, which the ancilla's own reset there made known.
    frame.remove(&q);
    let mut support: Vec<(u32, Pauli)> = frame.into_iter().collect();
    support.sort_unstable();
    couplings.reverse();
    (support, couplings)
}

/// The checks measured in one block of layers.
fn block_checks(
    c: &Circuit,
    layers: Range<usize>,
    tl: &Timeline,
    places: &Places,
    det_at: &HashMap<u32, Point>,
) -> Vec<Check> {
    let touch = Touch::new(c, layers.clone());
    let mut out = Vec::new();
    for l in layers {
        for op in &c.layers[l].ops {
            let OpKind::Measure { record, .. } = op.kind else {
                continue;
            };
            let check = if op.targets.len() == 1 {
                let q = op.targets[0];
                if Role::of(&c.qubits[q as usize].roles) == Role::Data {
                    continue;
                }
                let (support, couplings) = ancilla_window(c, &touch, tl, q, op.paulis[0], l);
                if support.is_empty() {
                    continue;
                }
                make(
                    places,
                    c.qubits[q as usize].name.clone(),
                    Some(q),
                    places.at[q as usize],
                    support,
                    couplings,
                    None,
                )
            } else {
                let support: Vec<(u32, Pauli)> = op
                    .targets
                    .iter()
                    .copied()
                    .zip(op.paulis.iter().copied())
                    .collect();
                let n = support.len() as f64;
                let centroid = support.iter().fold((0.0, 0.0), |a, &(q, _)| {
                    let p = places.at[q as usize];
                    (a.0 + p.0 / n, a.1 + p.1 / n)
                });
                let step = match tl.layers[l].kind {
                    LayerKind::Step(s) => Some(s),
                    _ => None,
                };
                make(
                    places,
                    c.records[record as usize].name.clone(),
                    None,
                    det_at.get(&record).copied().unwrap_or(centroid),
                    support,
                    Vec::new(),
                    step,
                )
            };
            out.push(check);
        }
    }
    out
}

fn make(
    places: &Places,
    name: String,
    ancilla: Option<u32>,
    at: Point,
    support: Vec<(u32, Pauli)>,
    couplings: Vec<Coupling>,
    step: Option<u32>,
) -> Check {
    let pts: Vec<Point> = support
        .iter()
        .map(|&(q, _)| places.at[q as usize])
        .collect();
    let images = places.unwrap(at, &pts);
    Check {
        name,
        ancilla,
        at,
        kind: CheckKind::of(support.iter().map(|s| s.1)),
        support: support
            .into_iter()
            .zip(images)
            .map(|((qubit, pauli), at)| SupportQubit { qubit, pauli, at })
            .collect(),
        couplings,
        step,
    }
}

/// What must agree for two rounds to share a structure, per check: ancilla, support, gates
/// (qubit, gate, step, ancilla first) and product step.
type Key = (
    Option<u32>,
    Vec<(u32, Pauli)>,
    Vec<(u32, Gate, u32, bool)>,
    Option<u32>,
);

/// The [`Key`] of each check of a round.
fn key(checks: &[Check]) -> Vec<Key> {
    checks
        .iter()
        .map(|k| {
            (
                k.ancilla,
                k.support.iter().map(|s| (s.qubit, s.pauli)).collect(),
                k.couplings
                    .iter()
                    .map(|g| (g.qubit, g.gate, g.step, g.ancilla_first))
                    .collect(),
                k.step,
            )
        })
        .collect()
}

/// The checks of every round, rounds with equal checks grouped; for a circuit without rounds,
/// one structure for the whole circuit.
pub(super) fn structures(c: &Circuit, tl: &Timeline, places: &Places) -> Vec<Structure> {
    let det_at = detector_places(c);
    let steps_in = |r: &Range<usize>| {
        r.clone()
            .filter(|&l| matches!(tl.layers[l].kind, LayerKind::Step(_)))
            .count() as u32
    };
    if !c.layers.iter().any(|l| l.round.is_some()) {
        let all = 0..c.layers.len();
        return vec![Structure {
            rounds: Vec::new(),
            steps: steps_in(&all),
            checks: block_checks(c, all, tl, places, &det_at),
        }];
    }
    // Blocks of consecutive layers of one round.
    let mut blocks: Vec<(u32, Range<usize>)> = Vec::new();
    for (i, l) in c.layers.iter().enumerate() {
        let Some(r) = l.round else { continue };
        match blocks.last_mut() {
            Some((last, range)) if *last == r && range.end == i => range.end = i + 1,
            _ => blocks.push((r, i..i + 1)),
        }
    }
    let mut out: Vec<(Structure, Vec<_>)> = Vec::new();
    for (r, range) in blocks {
        let checks = block_checks(c, range.clone(), tl, places, &det_at);
        let k = key(&checks);
        let steps = steps_in(&range);
        match out.iter_mut().find(|(s, sk)| *sk == k && s.steps == steps) {
            Some((s, _)) => s.rounds.push(r),
            None => out.push((
                Structure {
                    rounds: vec![r],
                    checks,
                    steps,
                },
                k,
            )),
        }
    }
    out.into_iter().map(|(s, _)| s).collect()
}
