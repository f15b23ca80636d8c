//! The bias report: where do the high-rate (Z-type) faults of a noisy circuit end up?
//!
//! In: a circuit with explicit noise and, when it came from a hardware model, the compiler's
//! [`Note`]s (which say what each channel was before mid-gate faults were transformed). Out: a
//! [`BiasReport`]; rendering belongs to `cli`.
//!
//! Method. Every Pauli term of every noise operation is an *elementary fault*; it is high-rate
//! when the term as the model wrote it has only Z and I factors (for a gate implemented as a
//! rotation or bias-preserving gate, the term before the mid-gate transformation, so a Z that
//! the gate itself turns into Y counts as a converted high-rate fault). Each fault is pushed
//! forward with a Pauli frame ([`Gate::conjugate`]) to the end of its round (faults outside any
//! round: to the first layer of the next round or the end), dropping a qubit from the frame at
//! its next measurement or reset. What is left on the data qubits (role `data`; every qubit if
//! none has it) is classified as nothing, pure Z, or containing X/Y. The first operation that
//! put an X or Y into the frame is the *converter*; converters are ranked by the probability of
//! the faults they turned into X/Y at the data.
//!
//! Also reported: input bias `pZ-type / pother` per operation class (the gate a channel follows,
//! `reset`, `idle`, `round-start` for the per-round data channel of the `capacity` and
//! `phenomenological` presets, or `noise` for channels written in the circuit and not
//! following a gate or reset; classes come from the [`Note`]s, which presets and model files
//! write alike), before and after the gate
//! implementations; the effective bias at the data per round; the share of fault-graph
//! probability in edges made only of high-rate faults (classes as tagged by
//! [`crate::faults`]); and the structure of the graph of edges with a high-rate contributor:
//! connected components of detectors (each boundary edge ends at its own boundary node) and
//! whether each is a chain (every detector of degree ≤ 2, no cycle, no hyperedge), the structure
//! that makes the XZZX code decode as repetition codes under pure Z noise ("The XZZX surface
//! code", Nat. Commun. 12, 2172 (2021)).

use std::collections::{BTreeMap, HashMap};

use serde::Serialize;

use crate::base::{Gate, Pauli};
use crate::faults::{ClassSet, ExtractOptions};
use crate::ir::{Circuit, OpKind};
use crate::noise::Note;
use crate::noise::{mid_gate_fault_with, Implementation};

/// Bias of one operation class.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ClassBias {
    /// `cx`, `h`, `reset`, `idle`, `noise`, ...
    pub class: String,
    /// Summed probability of Z-type terms as the model writes them.
    pub input_high: f64,
    /// Summed probability of the other terms as written.
    pub input_low: f64,
    /// Summed probability of Z-type terms after the gate implementation.
    pub output_high: f64,
    /// Summed probability of the other terms after the implementation.
    pub output_low: f64,
}

impl ClassBias {
    /// `input_high / input_low` (infinite when no low-rate term).
    pub fn input_eta(&self) -> f64 {
        self.input_high / self.input_low
    }

    /// Share of Z-type probability after the implementation: `output_high / (high + low)`.
    pub fn output_z_share(&self) -> f64 {
        self.output_high / (self.output_high + self.output_low)
    }
}

/// What the faults of one round leave on the data.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct RoundBias {
    /// Round index.
    pub round: u32,
    /// Probability (summed over faults) of a pure-Z effect on the data.
    pub z: f64,
    /// Probability of an effect containing X or Y.
    pub xy: f64,
    /// Of `xy`, the part coming from high-rate faults.
    pub xy_from_high: f64,
}

impl RoundBias {
    /// Effective bias at the data, `z / xy`.
    pub fn eta(&self) -> f64 {
        self.z / self.xy
    }
}

/// An operation that turns Z-type faults into X/Y at the data.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Converter {
    /// `file:line:col` of the operation.
    pub location: String,
    /// File of the operation.
    pub file: String,
    /// Line of the operation (1-based).
    pub line: usize,
    /// Column of the operation (1-based).
    pub column: usize,
    /// The gate (or `mid-gate cx (rotation)` for conversions inside a gate).
    pub what: String,
    /// Expected number of high-rate faults it converts per shot (their summed probability).
    pub probability: f64,
    /// Number of elementary faults converted.
    pub faults: usize,
}

/// One connected component of the high-rate fault graph.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Component {
    /// Detectors in it.
    pub detectors: usize,
    /// Distinct edges (detector pairs and boundary edges).
    pub edges: usize,
    /// Whether it is a chain.
    pub chain: bool,
}

/// The whole report.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct BiasReport {
    /// Input and output bias per operation class, sorted by class.
    pub classes: Vec<ClassBias>,
    /// Per round.
    pub rounds: Vec<RoundBias>,
    /// Converters, most probability first.
    pub converters: Vec<Converter>,
    /// Number of high-rate elementary faults followed.
    pub high_faults: usize,
    /// Summed probability of high-rate faults.
    pub high_probability: f64,
    /// Summed probability of high-rate faults reaching the data with X or Y.
    pub converted_probability: f64,
    /// Share of fault-graph probability in high-rate-only edges.
    pub high_only_share: f64,
    /// Components of the graph of edges with a high-rate contributor.
    pub components: Vec<Component>,
    /// Hyperedges (more than two detectors) among those edges.
    pub hyperedges: usize,
    /// Number of `round` blocks the circuit executes; without any, `rounds` is empty because
    /// there is nothing to report per round, not because no fault reached the data.
    pub circuit_rounds: u32,
    /// The circuit declares no `data` role, so every qubit was counted as data.
    pub all_qubits_data: bool,
}

impl BiasReport {
    /// Whether every component of the high-rate graph is a chain.
    pub fn all_chains(&self) -> bool {
        self.components.iter().all(|c| c.chain) && self.hyperedges == 0
    }

    /// Whether no high-rate fault reaches the data as X or Y (no converter).
    pub fn kept(&self) -> bool {
        self.converters.is_empty()
    }

    /// One line: `bias kept`, or `bias lost at FILE:LINE:COL (GATE)` naming the top converter.
    pub fn verdict(&self) -> String {
        match self.converters.first() {
            None => "bias kept".to_string(),
            Some(c) => format!("bias lost at {} ({})", c.location, c.what),
        }
    }
}

fn z_type(ps: &[Pauli]) -> bool {
    ps.iter().all(|p| !p.has_x())
}

/// Builds the report for `noisy` (explicit noise), with the compiler's `notes` if it has them.
pub fn analyze(noisy: &Circuit, notes: &[Note]) -> BiasReport {
    let n = noisy.qubits.len();
    let mut data: Vec<bool> = noisy.qubits.iter().map(|q| q.has_role("data")).collect();
    let all_qubits_data = !data.iter().any(|&d| d);
    if all_qubits_data {
        data.fill(true);
    }
    let note_at: HashMap<(usize, usize), &Note> =
        notes.iter().map(|x| ((x.layer, x.op), x)).collect();
    let mut classes: BTreeMap<String, ClassBias> = BTreeMap::new();
    let mut rounds: BTreeMap<u32, RoundBias> = BTreeMap::new();
    let mut converters: HashMap<(u32, String), Converter> = HashMap::new();
    let (mut high_faults, mut high_p, mut converted_p) = (0usize, 0.0, 0.0);
    let loc = |span: crate::base::Span| {
        let (l, c) = noisy.source.line_col(span.start);
        format!("{}:{}:{}", noisy.source.name, l, c)
    };
    let mut frame = vec![Pauli::I; n];
    for (li, layer) in noisy.layers.iter().enumerate() {
        for (oi, op) in layer.ops.iter().enumerate() {
            let OpKind::Noise(ch) = &op.kind else {
                continue;
            };
            // The operation the channel belongs to: the last gate or reset before it on its qubits.
            let owner = layer.ops[..oi].iter().rev().find(|o| {
                !matches!(o.kind, OpKind::Noise(_))
                    && o.targets.iter().any(|t| op.targets.contains(t))
            });
            let note = note_at.get(&(li, oi)).copied();
            let (gate, implementation, generator) = match note {
                Some(x) => (x.gate, x.implementation, x.generator.as_ref()),
                None => (None, Implementation::Ideal, None),
            };
            let class = match (note, owner.map(|o| &o.kind)) {
                (Some(x), _) => x.class.clone(),
                (None, Some(OpKind::Gate(g))) => g.name().to_string(),
                (None, Some(OpKind::Reset(_))) => "reset".into(),
                (None, _) => "noise".into(),
            };
            // The terms as the model wrote them (before mid-gate transformation).
            let input = note.map_or_else(|| ch.clone(), |x| x.input.clone());
            let apps = op.targets.len() / ch.arity().max(1);
            let entry = classes.entry(class.clone()).or_insert_with(|| ClassBias {
                class: class.clone(),
                input_high: 0.0,
                input_low: 0.0,
                output_high: 0.0,
                output_low: 0.0,
            });
            for (p, t) in input.terms() {
                if z_type(&t) {
                    entry.input_high += p * apps as f64;
                } else {
                    entry.input_low += p * apps as f64;
                }
            }
            for (p, t) in ch.terms() {
                if z_type(&t) {
                    entry.output_high += p * apps as f64;
                } else {
                    entry.output_low += p * apps as f64;
                }
            }
            let round = layer.round;
            for app in op.targets.chunks(ch.arity().max(1)) {
                for (p, term) in input.terms() {
                    let high = z_type(&term);
                    // Distribution of what leaves the gate.
                    let outs: Vec<(f64, Vec<Pauli>)> = match gate {
                        Some(g) if implementation != Implementation::Ideal => {
                            let fault = [term[0], term.get(1).copied().unwrap_or(Pauli::I)];
                            mid_gate_fault_with(g, implementation, generator, fault)
                                .iter()
                                .enumerate()
                                .filter(|(_, &w)| w > 1e-15)
                                .map(|(k, &w)| (w, Pauli::pair_from_index(k)[..app.len()].to_vec()))
                                .collect()
                        }
                        _ => vec![(1.0, term.clone())],
                    };
                    if high {
                        high_faults += 1;
                        high_p += p;
                    }
                    for (w, out) in outs {
                        let weight = p * w;
                        frame.fill(Pauli::I);
                        for (&q, &pa) in app.iter().zip(&out) {
                            frame[q as usize] = pa;
                        }
                        let mut converter: Option<(u32, String)> = None;
                        if high && !z_type(&out) {
                            let (span, name) = owner.map_or((op.span, "noise".to_string()), |o| {
                                (o.span, kind_name(&o.kind))
                            });
                            converter = Some((
                                span.start,
                                format!("mid-gate {} ({})", name, implementation.name()),
                            ));
                        }
                        let mut on_data = Vec::new();
                        let watch = high && converter.is_none();
                        propagate(
                            noisy,
                            &mut frame,
                            (li, oi + 1),
                            round,
                            &data,
                            &mut on_data,
                            watch,
                            &mut converter,
                        );
                        on_data.extend(
                            (0..n)
                                .filter(|&q| data[q] && frame[q] != Pauli::I)
                                .map(|q| frame[q]),
                        );
                        if on_data.is_empty() {
                            continue;
                        }
                        let xy = !z_type(&on_data);
                        if let Some(r) = round {
                            let e = rounds.entry(r).or_insert(RoundBias {
                                round: r,
                                z: 0.0,
                                xy: 0.0,
                                xy_from_high: 0.0,
                            });
                            if xy {
                                e.xy += weight;
                                if high {
                                    e.xy_from_high += weight;
                                }
                            } else {
                                e.z += weight;
                            }
                        }
                        if high && xy {
                            converted_p += weight;
                            if let Some((start, what)) = converter {
                                let c =
                                    converters.entry((start, what.clone())).or_insert_with(|| {
                                        let (line, column) = noisy.source.line_col(start);
                                        Converter {
                                            location: loc(crate::base::Span { start, end: start }),
                                            file: noisy.source.name.clone(),
                                            line,
                                            column,
                                            what,
                                            probability: 0.0,
                                            faults: 0,
                                        }
                                    });
                                c.probability += weight;
                                c.faults += 1;
                            }
                        }
                    }
                }
            }
        }
    }
    let mut converters: Vec<Converter> = converters.into_values().collect();
    converters.sort_by(|a, b| {
        b.probability
            .total_cmp(&a.probability)
            .then(a.location.cmp(&b.location))
    });
    let (high_only_share, components, hyperedges) = graph_structure(noisy);
    BiasReport {
        classes: classes.into_values().collect(),
        rounds: rounds.into_values().collect(),
        converters,
        high_faults,
        high_probability: high_p,
        converted_probability: converted_p,
        high_only_share,
        components,
        hyperedges,
        circuit_rounds: noisy.rounds,
        all_qubits_data,
    }
}

fn kind_name(kind: &OpKind) -> String {
    match kind {
        OpKind::Gate(g) => g.name().to_string(),
        OpKind::Reset(b) => format!("reset {}", b.name()),
        OpKind::Measure { .. } => "measure".into(),
        OpKind::Noise(c) => c.keyword().to_string(),
    }
}

/// Pushes `frame` forward from `(layer, op)` to the end of `round`. A data qubit's Pauli at its
/// measurement or reset has reached the data and goes to `reached`. When `watch` is set, the
/// first gate that puts an X or Y into a Z-type frame is stored in `converter`.
#[allow(clippy::too_many_arguments)]
fn propagate(
    c: &Circuit,
    frame: &mut [Pauli],
    (layer, op): (usize, usize),
    round: Option<u32>,
    data: &[bool],
    reached: &mut Vec<Pauli>,
    watch: bool,
    converter: &mut Option<(u32, String)>,
) {
    let mut li = layer;
    let mut start = op;
    let mut clean = watch;
    while li < c.layers.len() {
        let l = &c.layers[li];
        if li > layer && l.round != round && !(round.is_none() && l.round.is_none()) {
            break;
        }
        for o in &l.ops[start.min(l.ops.len())..] {
            match &o.kind {
                OpKind::Gate(g) => {
                    let g: Gate = *g;
                    let mut changed = false;
                    for app in o.targets.chunks(g.arity()) {
                        let a = frame[app[0] as usize];
                        let b = app.get(1).map_or(Pauli::I, |&q| frame[q as usize]);
                        if a == Pauli::I && b == Pauli::I {
                            continue;
                        }
                        let out = g.conjugate([a, b]);
                        frame[app[0] as usize] = out[0];
                        if let Some(&q) = app.get(1) {
                            frame[q as usize] = out[1];
                        }
                        changed = true;
                    }
                    if clean && changed && frame.iter().any(|p| p.has_x()) {
                        *converter = Some((o.span.start, g.name().to_string()));
                        clean = false;
                    }
                }
                OpKind::Measure { .. } | OpKind::Reset(_) => {
                    for &q in &o.targets {
                        let q = q as usize;
                        if data[q] && frame[q] != Pauli::I {
                            reached.push(frame[q]);
                        }
                        frame[q] = Pauli::I;
                    }
                }
                OpKind::Noise(_) => {}
            }
        }
        start = 0;
        li += 1;
    }
}

/// High-only share and component structure of the graph of high-rate edges.
fn graph_structure(noisy: &Circuit) -> (f64, Vec<Component>, usize) {
    let graph = crate::faults::extract(noisy, &ExtractOptions::default());
    let total: f64 = graph.edges.iter().map(|m| m.probability).sum();
    let high: f64 = graph
        .edges
        .iter()
        .filter(|m| m.classes == ClassSet::High)
        // A fold from +0.0: `Sum` for floats starts at −0.0, so with no high-only edge the
        // share would be −0.0 and print as `-0.0000`.
        .fold(0.0, |a, m| a + m.probability);
    let nd = graph.detectors.len();
    let mut parent: Vec<usize> = (0..nd).collect();
    fn find(p: &mut [usize], mut x: usize) -> usize {
        while p[x] != x {
            p[x] = p[p[x]];
            x = p[x];
        }
        x
    }
    let mut pairs: std::collections::BTreeSet<(u32, u32)> = Default::default();
    let mut boundary: std::collections::BTreeSet<u32> = Default::default();
    let mut hyper_nodes: Vec<u32> = Vec::new();
    let mut hyperedges = 0;
    let mut used = vec![false; nd];
    for m in graph.edges.iter().filter(|m| m.classes.has_high()) {
        for &d in &m.detectors {
            used[d as usize] = true;
        }
        match m.detectors.as_slice() {
            [] => {}
            [a] => {
                boundary.insert(*a);
            }
            [a, b] => {
                pairs.insert((*a, *b));
            }
            ds => {
                hyperedges += 1;
                hyper_nodes.extend_from_slice(ds);
                for w in ds.windows(2) {
                    let (x, y) = (
                        find(&mut parent, w[0] as usize),
                        find(&mut parent, w[1] as usize),
                    );
                    parent[x] = y;
                }
            }
        }
    }
    let mut degree = vec![0usize; nd];
    for &(a, b) in &pairs {
        degree[a as usize] += 1;
        degree[b as usize] += 1;
        let (x, y) = (find(&mut parent, a as usize), find(&mut parent, b as usize));
        parent[x] = y;
    }
    for &a in &boundary {
        degree[a as usize] += 1;
    }
    // Per root: (detectors, internal edges, boundary edges, max degree, has hyperedge).
    let mut comp: BTreeMap<usize, (usize, usize, usize, usize, bool)> = BTreeMap::new();
    for d in 0..nd {
        if used[d] {
            let r = find(&mut parent, d);
            let e = comp.entry(r).or_default();
            e.0 += 1;
            e.3 = e.3.max(degree[d]);
        }
    }
    for &(a, _) in &pairs {
        let r = find(&mut parent, a as usize);
        comp.entry(r).or_default().1 += 1;
    }
    for &a in &boundary {
        let r = find(&mut parent, a as usize);
        comp.entry(r).or_default().2 += 1;
    }
    for &h in &hyper_nodes {
        let r = find(&mut parent, h as usize);
        comp.entry(r).or_default().4 = true;
    }
    let components = comp
        .into_values()
        .map(|(v, e, b, maxdeg, hyper)| Component {
            detectors: v,
            edges: e + b,
            // Boundary edges end at distinct boundary nodes, so acyclic iff e = v − 1.
            chain: !hyper && maxdeg <= 2 && e + 1 == v,
        })
        .collect();
    (
        if total > 0.0 { high / total } else { 0.0 },
        components,
        hyperedges,
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::base::Source;

    fn report(text: &str) -> BiasReport {
        let c = crate::ir::load_source(&Source::new("t.slant", text), &[])
            .unwrap_or_else(|d| panic!("{}", d[0].render()));
        analyze(&c, &[])
    }

    #[test]
    fn a_hadamard_on_the_data_turns_dephasing_into_bit_flips() {
        // Z H = H X: a phase flip before a Hadamard reaches the data as a bit flip.
        let lost = report("qubit q role data\nround {\n    noise dephasing p=0.01 q\n    h q\n}\n");
        assert_eq!(lost.converters.len(), 1);
        assert_eq!(lost.converters[0].location, "t.slant:4:5");
        assert_eq!(lost.verdict(), "bias lost at t.slant:4:5 (h)");
        assert_eq!(lost.high_faults, 1);
        assert!((lost.converted_probability - 0.01).abs() < 1e-15);
        // A CZ commutes with Z on both qubits: the bias is kept.
        let kept = report(
            "qubit q role data\nqubit r role data\nround {\n    noise dephasing p=0.01 q\n    \
             cz q r\n}\n",
        );
        assert!(kept.converters.is_empty());
        assert_eq!(kept.verdict(), "bias kept");
        assert_eq!(kept.converted_probability, 0.0);
    }

    #[test]
    fn channel_classes_and_bias_are_summed() {
        let r = report("qubit q role data\nround {\n    noise pauli x=0.001 y=0.001 z=0.02 q\n}\n");
        let c = r.classes.iter().find(|c| c.class == "noise").unwrap();
        assert!((c.input_high - 0.02).abs() < 1e-15);
        assert!((c.input_low - 0.002).abs() < 1e-15);
        assert!((c.input_eta() - 10.0).abs() < 1e-9);
    }
}
