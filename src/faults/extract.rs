//! Extraction: one backward sensitivity sweep turns every noise term and measurement flip into an
//! elementary fault, and faults with equal symptoms merge into edges.
//!
//! In: a [`Circuit`] and [`ExtractOptions`]. Out: a [`FaultGraph`] (hyperedges not yet split; the
//! `split` step does that). The symptom of a Pauli fault is the XOR of the
//! sensitivities ([`crate::ir::sensitivity_sweep`]) of its X and Z parts on each qubit at the point of
//! injection; the symptom of a measurement flip is the set of detectors and observables that
//! contain the record. Nothing is simulated per fault: the cost is one sweep plus a few short
//! sorted-set XORs and one table lookup per fault.
//!
//! Layout (for speed at a million faults): each distinct channel is converted to independent
//! terms once (`Table`); symptoms are interned in one flat arena, found through a table placed
//! by first detector so that the sweep's lookups stay cache-local (`Interner`); a fault is a fixed-size record of indices
//! (edge, layer, op, application, term), turned into a [`Contributor`] only once, in final
//! order; the atoms that split needs live in one flat arena too. The interner is in
//! `intern.rs`. Nothing is allocated
//! per fault during the sweep.

use crate::base::{xor_into, xor_prob, Pauli};
use crate::faults::graph::{
    ClassSet, Contributor, DetectorInfo, FaultClass, FaultEdge, FaultGraph, HyperedgeStats, Silent,
    Small,
};
use crate::faults::intern::Interner;
use crate::ir::{sensitivity_sweep, Sensitivity, SweepPoint};
use crate::ir::{Channel, Circuit, OpKind};

/// Options of [`crate::faults::extract()`].
#[derive(Clone, Debug, Default)]
pub struct ExtractOptions {
    /// Tag measurement flips as high-rate faults (for models where readout errors come from the
    /// dominant error process). Default: low-rate.
    pub high_rate_flips: bool,
}

/// One term of a channel as an independent event.
#[derive(Clone, Debug, PartialEq)]
pub struct IndependentTerm {
    /// The Pauli on each qubit of the application.
    pub paulis: Vec<Pauli>,
    /// Probability of the term in the channel as written (0 for terms the exact conversion adds).
    pub term_probability: f64,
    /// Probability of the independent edge.
    pub probability: f64,
}

/// Converts one application of a channel (mutually exclusive terms) into independent Pauli
/// events whose combined effect has the same distribution, and says whether the conversion is
/// exact.
///
/// Method (exact): a Pauli channel `Σ_Q p_Q Q·Q` is diagonal in the Pauli basis with eigenvalues
/// `λ_P = Σ_Q p_Q (−1)^⟨P,Q⟩` (⟨·,·⟩ the symplectic form), and the composition of independent
/// channels "apply R with probability q_R" has `λ_P = Π_{R: ⟨P,R⟩=1} (1 − 2q_R)`. Taking logs
/// and inverting with the characters of (Z₂)^{2n} gives, for `N = 4^n` and `R ≠ I`,
/// `ln(1 − 2q_R) = −(2/N) Σ_P (−1)^⟨P,R⟩ ln λ_P`. For single-qubit depolarizing with total `p`
/// this is `q = (1 − sqrt(1 − 4p/3))/2` for each of X, Y, Z (derived here; the same formula is
/// used e.g. for Pauli channels as products of independent Pauli flips in the decoding
/// literature — recalled from memory, checked by exhaustive enumeration in the unit tests).
///
/// Fallback (first order): when some `λ_P ≤ 0` or some `q_R` comes out negative (e.g. a channel
/// with X and Z but no Y, where X and Z are anti-correlated), each term `k` becomes an
/// independent event with `q_k = p_k / (p_I + p_k)`, which keeps the ratio of "only k fires" to
/// "nothing fires" exact and errs at second order in the probabilities.
pub fn independent_terms(channel: &Channel) -> (Vec<IndependentTerm>, bool) {
    let terms = channel.terms();
    let n = channel.arity();
    if n > 2 || terms.len() <= 1 {
        // One term (or a joint product): already a single independent event.
        let out = terms
            .into_iter()
            .map(|(p, paulis)| IndependentTerm {
                paulis,
                term_probability: p,
                probability: p,
            })
            .collect();
        return (out, true);
    }
    let size = 1usize << (2 * n);
    let code = |ps: &[Pauli]| -> usize {
        ps.iter()
            .enumerate()
            .map(|(i, &p)| (p as usize) << (2 * i))
            .sum()
    };
    let decode = |c: usize| -> Vec<Pauli> {
        (0..n)
            .map(|i| Pauli::from_bits(c >> (2 * i) & 1 != 0, c >> (2 * i + 1) & 1 != 0))
            .collect()
    };
    // Symplectic product of two codes: x bits are the even bits, z bits the odd ones.
    let anti = |a: usize, b: usize| -> bool {
        let (ax, az) = (a & 0x5555, (a >> 1) & 0x5555);
        let (bx, bz) = (b & 0x5555, (b >> 1) & 0x5555);
        ((ax & bz) ^ (az & bx)).count_ones() % 2 == 1
    };
    let mut p = vec![0.0; size];
    for (prob, ps) in &terms {
        p[code(ps)] += prob;
    }
    p[0] = 1.0 - terms.iter().map(|t| t.0).sum::<f64>();
    let chi = |a: usize, b: usize| if anti(a, b) { -1.0 } else { 1.0 };
    let lambda: Vec<f64> = (0..size)
        .map(|a| (0..size).map(|b| p[b] * chi(a, b)).sum())
        .collect();
    let mut exact = lambda.iter().all(|&l| l > 0.0);
    let mut q = vec![0.0; size];
    if exact {
        for (r, qr) in q.iter_mut().enumerate().skip(1) {
            let ell: f64 =
                -2.0 / size as f64 * (0..size).map(|a| chi(a, r) * lambda[a].ln()).sum::<f64>();
            // -expm1 keeps precision for tiny probabilities.
            let v = -ell.exp_m1() / 2.0;
            // Round-off leaves |v| ~ 1e-17 where the true value is 0.
            if v < -1e-14 {
                exact = false;
            }
            *qr = if v.abs() < 1e-15 { 0.0 } else { v };
        }
    }
    let out = if exact {
        (1..size)
            .filter(|&r| q[r] > 0.0)
            .map(|r| IndependentTerm {
                paulis: decode(r),
                term_probability: p[r],
                probability: q[r],
            })
            .collect()
    } else {
        terms
            .into_iter()
            .map(|(prob, paulis)| IndependentTerm {
                paulis,
                term_probability: prob,
                probability: prob / (p[0] + prob),
            })
            .collect()
    };
    (out, exact)
}

/// The independent terms of one distinct channel, converted once per extraction.
struct Table {
    channel: Channel,
    terms: Vec<IndependentTerm>,
    classes: Vec<FaultClass>,
    exact: bool,
}

/// Marks a measurement flip in [`Fault::term`].
const FLIP: u32 = u32::MAX;

/// An elementary fault while sweeping: fixed size, no heap data; its [`Contributor`] is built
/// once, in final order, by [`finish`].
#[derive(Clone, Copy)]
struct Fault {
    mech: u32,
    layer: u32,
    op: u32,
    /// Which application (chunk of `arity` targets) of the op.
    app: u32,
    /// Index into the table's terms, or [`FLIP`].
    term: u32,
    table: u32,
}

/// Candidate split of a hyperedge: the symptoms of the X and Z parts of each factor of one
/// contributor (empty parts dropped), stored in [`Atoms`]; XOR of the atoms is the whole symptom.
#[derive(Clone, Copy)]
pub(crate) struct Candidate {
    /// Range of [`Atoms::sets`].
    pub first: u32,
    /// Number of atoms.
    pub len: u32,
    /// Next candidate of the same edge, or `u32::MAX`.
    next: u32,
}

/// Flat storage of the atoms of every candidate.
#[derive(Default)]
pub(crate) struct Atoms {
    ids: Vec<u32>,
    /// Atom `a` is `ids[sets[a]..sets[a + 1]]`.
    sets: Vec<u32>,
    pub(crate) candidates: Vec<Candidate>,
}

impl Atoms {
    /// Atom `a`.
    pub(crate) fn atom(&self, a: u32) -> &[u32] {
        &self.ids[self.sets[a as usize] as usize..self.sets[a as usize + 1] as usize]
    }
}

/// What the sweep produces before split.
pub(crate) struct Extracted {
    pub graph: FaultGraph,
    /// Every symptom of the graph, by sweep-order edge id.
    pub symptoms: Interner,
    /// `rank[k]`: index in [`FaultGraph::edges`] of sweep-order edge `k`.
    pub rank: Vec<u32>,
    /// Atoms of up to [`ATOM_CANDIDATES`] contributors of each hyperedge.
    pub atoms: Atoms,
    /// First candidate of each sweep-order edge (`u32::MAX` for none).
    pub first_candidate: Vec<u32>,
}

impl Extracted {
    /// Candidates of final edge with sweep-order id `k`, in sweep order.
    pub(crate) fn candidates(&self, k: u32) -> impl Iterator<Item = Candidate> + '_ {
        let mut c = self.first_candidate[k as usize];
        std::iter::from_fn(move || {
            let cand = *self.atoms.candidates.get(c as usize)?;
            c = cand.next;
            Some(cand)
        })
    }
}

/// How many contributors of one hyperedge keep their atoms for split.
const ATOM_CANDIDATES: u8 = 3;

struct Builder<'c> {
    circuit: &'c Circuit,
    opts: &'c ExtractOptions,
    detectors: u32,
    symptoms: Interner,
    probability: Vec<f64>,
    classes: Vec<ClassSet>,
    /// Candidates kept per edge, and the last one (to append in order).
    n_candidates: Vec<u8>,
    first_candidate: Vec<u32>,
    last_candidate: Vec<u32>,
    faults: Vec<Fault>,
    atoms: Atoms,
    tables: Vec<Table>,
    silent: Silent,
    inexact: usize,
    buf: Vec<u32>,
    tmp: Vec<u32>,
}

impl Builder<'_> {
    /// Merges one fault; `atoms` lists its parts (read only when it is a hyperedge).
    fn add<'s>(
        &mut self,
        symptom: &[u32],
        probability: f64,
        class: FaultClass,
        fault: Fault,
        atoms: impl Iterator<Item = &'s [u32]>,
    ) {
        if symptom.is_empty() {
            self.silent.count += 1;
            self.silent.probability = xor_prob(self.silent.probability, probability);
            return;
        }
        let (k, new) = self.symptoms.intern(symptom);
        if new {
            self.probability.push(probability);
            self.classes.push(ClassSet::of(class));
            self.n_candidates.push(0);
            self.first_candidate.push(u32::MAX);
            self.last_candidate.push(u32::MAX);
        } else {
            let p = &mut self.probability[k as usize];
            *p = xor_prob(*p, probability);
            let c = &mut self.classes[k as usize];
            *c = c.with(class);
        }
        let dets = symptom.partition_point(|&s| s < self.detectors);
        if dets > 2 && self.n_candidates[k as usize] < ATOM_CANDIDATES {
            self.n_candidates[k as usize] += 1;
            let a = &mut self.atoms;
            if a.sets.is_empty() {
                a.sets.push(0);
            }
            let first = a.sets.len() as u32 - 1;
            for set in atoms {
                a.ids.extend_from_slice(set);
                a.sets.push(a.ids.len() as u32);
            }
            let len = a.sets.len() as u32 - 1 - first;
            let id = a.candidates.len() as u32;
            a.candidates.push(Candidate {
                first,
                len,
                next: u32::MAX,
            });
            let last = self.last_candidate[k as usize];
            if last == u32::MAX {
                self.first_candidate[k as usize] = id;
            } else {
                a.candidates[last as usize].next = id;
            }
            self.last_candidate[k as usize] = id;
        }
        self.faults.push(Fault { mech: k, ..fault });
    }

    /// Index of the table of `channel`, converting it on first sight.
    fn table(&mut self, channel: &Channel) -> usize {
        if let Some(i) = self.tables.iter().rposition(|t| t.channel == *channel) {
            return i;
        }
        let (terms, exact) = independent_terms(channel);
        let classes = terms
            .iter()
            .map(|t| {
                if t.paulis.iter().all(|p| !p.has_x()) {
                    FaultClass::High
                } else {
                    FaultClass::Low
                }
            })
            .collect();
        self.tables.push(Table {
            channel: channel.clone(),
            terms,
            classes,
            exact,
        });
        self.tables.len() - 1
    }

    fn noise(&mut self, layer: usize, index: usize, channel: &Channel, s: &Sensitivity) {
        let op = &self.circuit.layers[layer].ops[index];
        let ti = self.table(channel);
        // Borrow the table outside `self` while `self.add` runs.
        let tables = std::mem::take(&mut self.tables);
        let table = &tables[ti];
        let arity = channel.arity();
        let mut acc = std::mem::take(&mut self.buf);
        let mut tmp = std::mem::take(&mut self.tmp);
        for (ai, app) in op.targets.chunks(arity).enumerate() {
            if table.terms.is_empty() {
                break;
            }
            if !table.exact {
                self.inexact += 1;
            }
            for (term, t) in table.terms.iter().enumerate() {
                // The X and Z parts this term touches, in factor order.
                let parts = || {
                    app.iter().zip(&t.paulis).flat_map(|(&q, &p)| {
                        let x = p.has_x().then(|| s.x[q as usize].as_slice());
                        let z = p.has_z().then(|| s.z[q as usize].as_slice());
                        [x, z].into_iter().flatten().filter(|set| !set.is_empty())
                    })
                };
                // Symptom: XOR of the parts; a single part is borrowed, not copied.
                let mut single: &[u32] = &[];
                let mut n = 0;
                for set in parts() {
                    n += 1;
                    if n == 1 {
                        single = set;
                    } else {
                        if n == 2 {
                            acc.clear();
                            acc.extend_from_slice(single);
                        }
                        xor_into(&acc, set, &mut tmp);
                        std::mem::swap(&mut acc, &mut tmp);
                    }
                }
                let symptom: &[u32] = if n <= 1 { single } else { &acc };
                let fault = Fault {
                    mech: 0,
                    layer: layer as u32,
                    op: index as u32,
                    app: ai as u32,
                    term: term as u32,
                    table: ti as u32,
                };
                self.add(symptom, t.probability, table.classes[term], fault, parts());
            }
        }
        self.tables = tables;
        self.buf = acc;
        self.tmp = tmp;
    }
}

/// Runs the sweep and merges faults into edges (sorted by symptom), without split.
pub(crate) fn extract_edges(circuit: &Circuit, opts: &ExtractOptions) -> Extracted {
    let mut b = Builder {
        circuit,
        opts,
        detectors: circuit.detectors.len() as u32,
        symptoms: Interner::new(0, 0),
        probability: Vec::new(),
        classes: Vec::new(),
        n_candidates: Vec::new(),
        first_candidate: Vec::new(),
        last_candidate: Vec::new(),
        faults: Vec::new(),
        atoms: Atoms::default(),
        tables: Vec::new(),
        silent: Silent::default(),
        inexact: 0,
        buf: Vec::new(),
        tmp: Vec::new(),
    };
    // Count the faults first (cheap: one pass over the ops, channels converted once) so the
    // big arrays are allocated once instead of growing by copies.
    let mut expected = 0usize;
    for op in circuit.layers.iter().flat_map(|l| &l.ops) {
        match &op.kind {
            OpKind::Noise(ch) => {
                let t = b.table(ch);
                expected += op.targets.len() / ch.arity().max(1) * b.tables[t].terms.len();
            }
            OpKind::Measure { flip, .. } if *flip > 0.0 => expected += 1,
            _ => {}
        }
    }
    b.faults.reserve(expected);
    // Roughly a third of the faults open a new edge in circuit-level noise.
    let universe = (circuit.detectors.len() + circuit.observables.len()) as u32;
    b.symptoms = Interner::new(universe, expected / 3 + 16);
    let flip_class = if opts.high_rate_flips {
        FaultClass::High
    } else {
        FaultClass::Low
    };
    sensitivity_sweep(circuit, |point, s| {
        let SweepPoint::After { layer, index, op } = point else {
            return;
        };
        match &op.kind {
            OpKind::Noise(ch) => b.noise(layer, index, ch, s),
            OpKind::Measure { record, flip } if *flip > 0.0 => {
                let symptom = &s.record_symptoms[*record as usize];
                let fault = Fault {
                    mech: 0,
                    layer: layer as u32,
                    op: index as u32,
                    app: 0,
                    term: FLIP,
                    table: 0,
                };
                b.add(
                    symptom,
                    *flip,
                    flip_class,
                    fault,
                    std::iter::once(symptom.as_slice()),
                );
            }
            _ => {}
        }
    });
    finish(circuit, b)
}

/// The [`Contributor`] of a fault, built from the circuit and the channel tables.
fn contributor(
    circuit: &Circuit,
    tables: &[Table],
    flip_class: FaultClass,
    f: &Fault,
) -> Contributor {
    let op = &circuit.layers[f.layer as usize].ops[f.op as usize];
    if f.term == FLIP {
        let (record, flip) = match &op.kind {
            OpKind::Measure { record, flip } => (*record, *flip),
            _ => unreachable!("flips come from measurements"),
        };
        return Contributor {
            layer: f.layer,
            op: f.op,
            span: op.span,
            term: Small::new(),
            qubits: Small::from_slice(&op.targets),
            result: Some(record),
            term_probability: flip,
            probability: flip,
            class: flip_class,
        };
    }
    let table = &tables[f.table as usize];
    let t = &table.terms[f.term as usize];
    let arity = t.paulis.len();
    let start = f.app as usize * arity;
    Contributor {
        layer: f.layer,
        op: f.op,
        span: op.span,
        term: Small::from_slice(&t.paulis),
        qubits: Small::from_slice(&op.targets[start..start + arity]),
        result: None,
        term_probability: t.term_probability,
        probability: t.probability,
        class: table.classes[f.term as usize],
    }
}

fn finish(circuit: &Circuit, b: Builder<'_>) -> Extracted {
    let d = b.detectors;
    let n = b.symptoms.len();
    // Where each symptom's observables start, found once rather than per comparison.
    let cut: Vec<u32> = (0..n as u32)
        .map(|k| b.symptoms.get(k).partition_point(|&x| x < d) as u32)
        .collect();
    let split = |k: u32| b.symptoms.get(k).split_at(cut[k as usize] as usize);
    // Sort edges by (detectors, observables) so output does not depend on sweep order.
    // A counting sort on the first detector comes first: buckets hold a few dozen edges, so
    // the comparison sort inside them costs O(n) instead of O(n log n) cache-missing compares.
    let bucket = |k: u32| split(k).0.first().map_or(0, |&v| v as usize + 1);
    let mut bucket_start = vec![0usize; d as usize + 2];
    for k in 0..n as u32 {
        bucket_start[bucket(k) + 1] += 1;
    }
    for i in 1..bucket_start.len() {
        bucket_start[i] += bucket_start[i - 1];
    }
    let mut order = vec![0u32; n];
    let mut fill = bucket_start.clone();
    for k in 0..n as u32 {
        let b = bucket(k);
        order[fill[b]] = k;
        fill[b] += 1;
    }
    for w in bucket_start.windows(2) {
        order[w[0]..w[1]].sort_unstable_by(|&x, &y| split(x).cmp(&split(y)));
    }
    let mut rank = vec![0u32; n];
    for (new, &old) in order.iter().enumerate() {
        rank[old as usize] = new as u32;
    }
    // Group contributors by edge (counting sort), in circuit order within each group: the
    // sweep saw them backwards.
    let mut starts = vec![0u32; n + 1];
    for f in &b.faults {
        starts[rank[f.mech as usize] as usize + 1] += 1;
    }
    for i in 1..starts.len() {
        starts[i] += starts[i - 1];
    }
    let mut next = starts.clone();
    let mut slot_of = vec![0u32; b.faults.len()];
    for (i, f) in b.faults.iter().enumerate().rev() {
        let r = rank[f.mech as usize] as usize;
        slot_of[next[r] as usize] = i as u32;
        next[r] += 1;
    }
    drop(next);
    let flip_class = if b.opts.high_rate_flips {
        FaultClass::High
    } else {
        FaultClass::Low
    };
    let provenance: Vec<Contributor> = slot_of
        .iter()
        .map(|&i| contributor(circuit, &b.tables, flip_class, &b.faults[i as usize]))
        .collect();
    drop(slot_of);
    let edges: Vec<FaultEdge> = order
        .iter()
        .enumerate()
        .map(|(new, &old)| {
            let (dets, obs) = split(old);
            FaultEdge {
                probability: b.probability[old as usize],
                detectors: dets.to_vec(),
                observables: obs.iter().map(|&x| x - d).collect(),
                classes: b.classes[old as usize],
                provenance: starts[new]..starts[new + 1],
            }
        })
        .collect();
    let hyper = edges.iter().filter(|m| m.detectors.len() > 2).count();
    let graph = FaultGraph {
        source: circuit.source.clone(),
        detectors: circuit
            .detectors
            .iter()
            .map(|det| DetectorInfo {
                name: det.name.clone(),
                coords: det.coords.clone(),
            })
            .collect(),
        observables: circuit.observables.iter().map(|o| o.name.clone()).collect(),
        edges,
        provenance,
        silent: b.silent,
        splits: Vec::new(),
        hyperedges: HyperedgeStats {
            hyperedges: hyper,
            ..HyperedgeStats::default()
        },
        inexact_channels: b.inexact,
    };
    Extracted {
        graph,
        symptoms: b.symptoms,
        rank,
        atoms: b.atoms,
        first_candidate: b.first_candidate,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Distribution over Paulis (as codes) of independent events, by exhaustive enumeration.
    fn compose(terms: &[IndependentTerm], n: usize) -> Vec<f64> {
        let mut dist = vec![0.0; 1 << (2 * n)];
        dist[0] = 1.0;
        for t in terms {
            let c: usize = t
                .paulis
                .iter()
                .enumerate()
                .map(|(i, &p)| (p as usize) << (2 * i))
                .sum();
            let mut next = vec![0.0; dist.len()];
            for (k, &v) in dist.iter().enumerate() {
                next[k] += v * (1.0 - t.probability);
                next[k ^ c] += v * t.probability;
            }
            dist = next;
        }
        dist
    }

    fn channel_dist(ch: &Channel) -> Vec<f64> {
        let n = ch.arity();
        let mut dist = vec![0.0; 1 << (2 * n)];
        dist[0] = 1.0 - ch.total();
        for (p, ps) in ch.terms() {
            let c: usize = ps
                .iter()
                .enumerate()
                .map(|(i, &p)| (p as usize) << (2 * i))
                .sum();
            dist[c] += p;
        }
        dist
    }

    #[test]
    fn exact_conversions_reproduce_the_channel() {
        let channels = [
            Channel::Depolarizing(0.03),
            Channel::PairDepolarizing(0.05),
            Channel::Pauli {
                px: 0.01,
                py: 0.02,
                pz: 0.05,
            },
            Channel::Dephasing(0.1),
        ];
        for ch in channels {
            let (terms, exact) = independent_terms(&ch);
            assert!(exact, "{ch:?}");
            let a = compose(&terms, ch.arity());
            let b = channel_dist(&ch);
            for (x, y) in a.iter().zip(&b) {
                assert!((x - y).abs() < 1e-14, "{ch:?}: {a:?} vs {b:?}");
            }
        }
    }

    #[test]
    fn depolarizing_closed_form() {
        // q = (1 - sqrt(1 - 4p/3)) / 2 for each of X, Y, Z (derivation in `independent_terms`).
        let p: f64 = 0.03;
        let (terms, _) = independent_terms(&Channel::Depolarizing(p));
        assert_eq!(terms.len(), 3);
        let q = (1.0 - (1.0 - 4.0 * p / 3.0).sqrt()) / 2.0;
        for t in terms {
            assert!((t.probability - q).abs() < 1e-15);
        }
    }

    #[test]
    fn x_and_z_without_y_falls_back() {
        // X and Z exclusive with no Y needs anti-correlated events: no exact independent form.
        let (terms, exact) = independent_terms(&Channel::Pauli {
            px: 0.1,
            py: 0.0,
            pz: 0.1,
        });
        assert!(!exact);
        assert_eq!(terms.len(), 2);
        assert!((terms[0].probability - 0.1 / 0.9).abs() < 1e-15);
    }
}
