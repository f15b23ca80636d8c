//! Extraction: one backward sensitivity sweep turns every noise term and measurement flip into an
//! elementary fault, and faults with equal symptoms merge into mechanisms.
//!
//! In: a [`Circuit`] and [`ExtractOptions`]. Out: a [`FaultGraph`] (before decomposition, which
//! [`crate::faults::decompose`] adds). The symptom of a Pauli fault is the XOR of the
//! sensitivities ([`crate::ir::sensitivity`]) of its X and Z parts on each qubit at the point of
//! injection; the symptom of a measurement flip is the set of detectors and observables that
//! contain the record. Nothing is simulated per fault: the cost is one sweep plus a few short
//! sorted-set XORs and one hash lookup per fault.

use std::collections::HashMap;
use std::hash::{BuildHasherDefault, Hasher};

use crate::faults::graph::{
    ClassSet, Contributor, DetectorInfo, FaultClass, FaultGraph, HyperedgeStats, Mechanism, Silent,
};
use crate::ir::sensitivity::{self, Point, Sensitivity};
use crate::ir::{Channel, Circuit, OpKind, Pauli};

/// Options of [`crate::faults::extract`].
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
    /// Probability of the independent mechanism.
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
        // One term (or a correlated product): already a single independent event.
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

/// XOR of two sorted sets into `out` (cleared first).
fn xor_into(a: &[u32], b: &[u32], out: &mut Vec<u32>) {
    out.clear();
    let (mut i, mut j) = (0, 0);
    while i < a.len() && j < b.len() {
        let (x, y) = (a[i], b[j]);
        if x < y {
            out.push(x);
            i += 1;
        } else if y < x {
            out.push(y);
            j += 1;
        } else {
            i += 1;
            j += 1;
        }
    }
    out.extend_from_slice(&a[i..]);
    out.extend_from_slice(&b[j..]);
}

/// FxHash (the rustc hasher): symptoms are short lists of small integers, where SipHash's
/// DoS resistance buys nothing and costs most of the lookup time.
#[derive(Default)]
pub(crate) struct FxHasher(u64);

impl Hasher for FxHasher {
    fn write(&mut self, bytes: &[u8]) {
        let mut chunks = bytes.chunks_exact(8);
        for c in &mut chunks {
            self.write_u64(u64::from_le_bytes(c.try_into().expect("8 bytes")));
        }
        for &b in chunks.remainder() {
            self.write_u64(u64::from(b));
        }
    }
    fn write_u32(&mut self, v: u32) {
        self.write_u64(u64::from(v));
    }
    fn write_usize(&mut self, v: usize) {
        self.write_u64(v as u64);
    }
    fn write_u64(&mut self, v: u64) {
        self.0 = (self.0.rotate_left(5) ^ v).wrapping_mul(0x51_7c_c1_b7_27_22_0a_95);
    }
    fn finish(&self) -> u64 {
        // The multiply leaves the low bits poorly mixed, and hashbrown picks buckets by the low
        // bits: finish with the murmur3 64-bit mixer so structured keys do not collide.
        let mut x = self.0;
        x ^= x >> 33;
        x = x.wrapping_mul(0xff51_afd7_ed55_8ccd);
        x ^= x >> 33;
        x = x.wrapping_mul(0xc4ce_b9fe_1a85_ec53);
        x ^ (x >> 33)
    }
}

pub(crate) type FxMap<K, V> = HashMap<K, V, BuildHasherDefault<FxHasher>>;

/// Per-mechanism state while sweeping.
struct Building {
    symptom: Vec<u32>,
    probability: f64,
    classes: ClassSet,
}

/// Candidate split of a hyperedge: the symptoms of the X and Z parts of each factor of one of
/// its contributors (empty parts dropped). XOR of the atoms is the whole symptom.
pub(crate) type Atoms = Vec<Vec<u32>>;

/// What the sweep produces before decomposition.
pub(crate) struct Extracted {
    pub graph: FaultGraph,
    /// For mechanisms with more than two detectors: atoms of up to a few contributors.
    pub atoms: Vec<(u32, Atoms)>,
}

/// How many contributors of one hyperedge keep their atoms for decomposition.
const ATOM_CANDIDATES: usize = 3;

struct Builder<'c> {
    circuit: &'c Circuit,
    opts: &'c ExtractOptions,
    detectors: u32,
    index: FxMap<Vec<u32>, u32>,
    mechs: Vec<Building>,
    faults: Vec<(u32, Contributor)>,
    atoms: FxMap<u32, Vec<Atoms>>,
    silent: Silent,
    inexact: usize,
    buf: Vec<u32>,
    tmp: Vec<u32>,
}

impl Builder<'_> {
    fn add(&mut self, symptom: &[u32], c: Contributor, atoms: impl FnOnce() -> Atoms) {
        if symptom.is_empty() {
            self.silent.count += 1;
            self.silent.probability =
                super::graph::xor_prob(self.silent.probability, c.probability);
            return;
        }
        let k = match self.index.get(symptom) {
            Some(&k) => {
                let m = &mut self.mechs[k as usize];
                m.probability = super::graph::xor_prob(m.probability, c.probability);
                m.classes = m.classes.with(c.class);
                k
            }
            None => {
                let k = self.mechs.len() as u32;
                self.index.insert(symptom.to_vec(), k);
                self.mechs.push(Building {
                    symptom: symptom.to_vec(),
                    probability: c.probability,
                    classes: ClassSet::of(c.class),
                });
                k
            }
        };
        let dets = symptom.iter().take_while(|&&s| s < self.detectors).count();
        if dets > 2 {
            let list = self.atoms.entry(k).or_default();
            if list.len() < ATOM_CANDIDATES {
                list.push(atoms());
            }
        }
        self.faults.push((k, c));
    }

    fn noise(&mut self, layer: usize, index: usize, channel: &Channel, s: &Sensitivity) {
        let op = &self.circuit.layers[layer].ops[index];
        let (terms, exact) = independent_terms(channel);
        if terms.is_empty() {
            return;
        }
        let arity = channel.arity();
        for app in op.targets.chunks(arity) {
            if !exact {
                self.inexact += 1;
            }
            for t in &terms {
                // Symptom of the product: XOR of the X and Z sensitivities of its factors.
                let mut acc = std::mem::take(&mut self.buf);
                acc.clear();
                for (&q, &p) in app.iter().zip(&t.paulis) {
                    if p.has_x() {
                        xor_into(&acc, &s.x[q as usize], &mut self.tmp);
                        std::mem::swap(&mut acc, &mut self.tmp);
                    }
                    if p.has_z() {
                        xor_into(&acc, &s.z[q as usize], &mut self.tmp);
                        std::mem::swap(&mut acc, &mut self.tmp);
                    }
                }
                let class = if t.paulis.iter().all(|p| !p.has_x()) {
                    FaultClass::High
                } else {
                    FaultClass::Low
                };
                let c = Contributor {
                    layer: layer as u32,
                    op: index as u32,
                    span: op.span,
                    term: t.paulis.clone(),
                    qubits: app.to_vec(),
                    record: None,
                    term_probability: t.term_probability,
                    probability: t.probability,
                    class,
                };
                let atoms = || {
                    let mut out = Vec::new();
                    for (&q, &p) in app.iter().zip(&t.paulis) {
                        if p.has_x() && !s.x[q as usize].is_empty() {
                            out.push(s.x[q as usize].clone());
                        }
                        if p.has_z() && !s.z[q as usize].is_empty() {
                            out.push(s.z[q as usize].clone());
                        }
                    }
                    out
                };
                self.add(&acc, c, atoms);
                self.buf = acc;
            }
        }
    }
}

/// Runs the sweep and merges faults into mechanisms (sorted by symptom), without decomposition.
pub(crate) fn extract_mechanisms(circuit: &Circuit, opts: &ExtractOptions) -> Extracted {
    let mut b = Builder {
        circuit,
        opts,
        detectors: circuit.detectors.len() as u32,
        index: FxMap::default(),
        mechs: Vec::new(),
        faults: Vec::new(),
        atoms: FxMap::default(),
        silent: Silent::default(),
        inexact: 0,
        buf: Vec::new(),
        tmp: Vec::new(),
    };
    sensitivity::sweep(circuit, |point, s| {
        let Point::After { layer, index, op } = point else {
            return;
        };
        match &op.kind {
            OpKind::Noise(ch) => b.noise(layer, index, ch, s),
            OpKind::Measure { record, flip } if *flip > 0.0 => {
                let class = if b.opts.high_rate_flips {
                    FaultClass::High
                } else {
                    FaultClass::Low
                };
                let c = Contributor {
                    layer: layer as u32,
                    op: index as u32,
                    span: op.span,
                    term: Vec::new(),
                    qubits: op.targets.clone(),
                    record: Some(*record),
                    term_probability: *flip,
                    probability: *flip,
                    class,
                };
                let symptom = s.record_symptoms[*record as usize].clone();
                let atoms = || vec![symptom.clone()];
                b.add(&symptom, c, atoms);
            }
            _ => {}
        }
    });
    finish(circuit, b)
}

fn finish(circuit: &Circuit, b: Builder<'_>) -> Extracted {
    let d = b.detectors;
    // Sort mechanisms by (detectors, observables) so output does not depend on sweep order.
    let mut order: Vec<u32> = (0..b.mechs.len() as u32).collect();
    let split = |s: &[u32]| {
        let k = s.iter().take_while(|&&x| x < d).count();
        (
            s[..k].to_vec(),
            s[k..].iter().map(|&x| x - d).collect::<Vec<u32>>(),
        )
    };
    let keys: Vec<(Vec<u32>, Vec<u32>)> = b.mechs.iter().map(|m| split(&m.symptom)).collect();
    order.sort_by(|&x, &y| keys[x as usize].cmp(&keys[y as usize]));
    let mut rank = vec![0u32; order.len()];
    for (new, &old) in order.iter().enumerate() {
        rank[old as usize] = new as u32;
    }
    // Group contributors by mechanism (counting sort), in circuit order within each group: the
    // sweep saw them backwards.
    let mut counts = vec![0u32; order.len() + 1];
    for (k, _) in &b.faults {
        counts[rank[*k as usize] as usize + 1] += 1;
    }
    for i in 1..counts.len() {
        counts[i] += counts[i - 1];
    }
    let starts = counts.clone();
    let mut slots: Vec<Option<Contributor>> = vec![None; b.faults.len()];
    let mut next = counts;
    for (k, c) in b.faults.into_iter().rev() {
        let r = rank[k as usize] as usize;
        slots[next[r] as usize] = Some(c);
        next[r] += 1;
    }
    let provenance: Vec<Contributor> = slots.into_iter().map(|c| c.expect("filled")).collect();
    let mut keys: Vec<Option<(Vec<u32>, Vec<u32>)>> = keys.into_iter().map(Some).collect();
    let mechanisms: Vec<Mechanism> = order
        .iter()
        .enumerate()
        .map(|(new, &old)| {
            let m = &b.mechs[old as usize];
            let (detectors, observables) = keys[old as usize].take().expect("each once");
            Mechanism {
                probability: m.probability,
                detectors,
                observables,
                classes: m.classes,
                provenance: starts[new]..starts[new + 1],
            }
        })
        .collect();
    let hyper = mechanisms.iter().filter(|m| m.detectors.len() > 2).count();
    let mut atoms: Vec<(u32, Atoms)> = Vec::new();
    let mut raw: Vec<(u32, Vec<Atoms>)> = b.atoms.into_iter().collect();
    raw.sort_by_key(|e| rank[e.0 as usize]);
    for (k, list) in raw {
        for a in list {
            atoms.push((rank[k as usize], a));
        }
    }
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
        mechanisms,
        provenance,
        silent: b.silent,
        decompositions: Vec::new(),
        hyperedges: HyperedgeStats {
            hyperedges: hyper,
            ..HyperedgeStats::default()
        },
        inexact_channels: b.inexact,
    };
    Extracted { graph, atoms }
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
            Channel::Depolarizing1(0.03),
            Channel::Depolarizing2(0.05),
            Channel::Pauli1 {
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
        let (terms, _) = independent_terms(&Channel::Depolarizing1(p));
        assert_eq!(terms.len(), 3);
        let q = (1.0 - (1.0 - 4.0 * p / 3.0).sqrt()) / 2.0;
        for t in terms {
            assert!((t.probability - q).abs() < 1e-15);
        }
    }

    #[test]
    fn x_and_z_without_y_falls_back() {
        // X and Z exclusive with no Y needs anti-correlated events: no exact independent form.
        let (terms, exact) = independent_terms(&Channel::Pauli1 {
            px: 0.1,
            py: 0.0,
            pz: 0.1,
        });
        assert!(!exact);
        assert_eq!(terms.len(), 2);
        assert!((terms[0].probability - 0.1 / 0.9).abs() < 1e-15);
    }
}
