//! Bit-packed Pauli-frame sampler.
//!
//! In: a [`Circuit`] with explicit noise (see [`crate::noise::apply`]). Out: a stream of
//! [`Batch`]es holding, per shot, the detection events, observable flips and (optionally) raw
//! measurement results.
//!
//! # Method
//!
//! A shot's state is the noiseless state times a Pauli *frame*. We track the frame's X and Z bits
//! per qubit for [`BATCH_SHOTS`] shots at once, 64 shots per `u64` word (shot `s` of a batch is bit
//! `s % 64` of word `s / 64`), and push it through the circuit with word-level loops: gates conjugate
//! the frame ([`crate::ir::clifford`] images), a measurement of a Pauli product `Q` records whether
//! the frame anticommutes with `Q` (a *flip* relative to the reference run), noise XORs Paulis into
//! the shots where it fires.
//!
//! Random noiseless outcomes are sampled, not only flips: every qubit starts with a random Z in its
//! frame (Z stabilises |0>), a Z reset or Z measurement adds a random Z, an X/Y reset the basis
//! Pauli, and a product measurement a random copy of the measured product. These *gauge* Paulis
//! leave the state unchanged, yet they flip exactly the later results that are random, each with
//! probability 1/2, so sampled outcomes (reference XOR flip) have the right distribution.
//!
//! Rare faults are sampled by geometric skipping: for a channel with total probability `p` applied
//! at `A` places, we walk the `A × shots` (place, shot) pairs drawing the gap to the next firing
//! pair from the geometric distribution (`⌊ln U / ln(1−p)⌋`), then pick the term of the channel in
//! proportion to its probability. The cost is proportional to the number of faults, not of shots.
//!
//! Determinism: batch `b` uses its own xoshiro256++ generator seeded from `(seed, b)`, and batches
//! always hold [`BATCH_SHOTS`] shots (the last one fewer), so the same seed gives the same bits
//! whatever the number of rayon threads.
//!
//! Outputs: detection event = XOR of the flips of the detector's records (its parity XOR its
//! noiseless value); observable flip likewise; measurement result = reference value XOR flip.

use rand::{Rng, RngCore, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;
use rayon::prelude::*;

use crate::ir::{Basis, Circuit, Gate, OpKind, Pauli};
use crate::sim::tableau::{reference_run, Reference};

/// Shots per batch: 64 words of 64 shots. Fixed, because the per-batch seeds depend on it.
pub const BATCH_SHOTS: usize = 4096;

/// Which per-shot outputs to produce.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Outputs {
    /// Detection events.
    pub detectors: bool,
    /// Observable flips.
    pub observables: bool,
    /// Raw measurement results.
    pub measurements: bool,
}

impl Outputs {
    /// Detection events and observable flips.
    pub fn syndromes() -> Outputs {
        Outputs {
            detectors: true,
            observables: true,
            measurements: false,
        }
    }
}

/// The results of one batch of shots, bit-packed item-major: bit `s % 64` of word
/// `item * words + s / 64` belongs to shot `s` of the batch. Bits past `shots` are zero.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Batch {
    /// Batch number.
    pub index: u64,
    /// Global number of the batch's first shot.
    pub first_shot: u64,
    /// Shots in this batch.
    pub shots: usize,
    /// Words per item (`shots.div_ceil(64)`).
    pub words: usize,
    /// Detection events (`detectors × words`), empty if not requested.
    pub detectors: Vec<u64>,
    /// Observable flips (`observables × words`), empty if not requested.
    pub observables: Vec<u64>,
    /// Measurement results (`records × words`), empty if not requested.
    pub measurements: Vec<u64>,
}

impl Batch {
    /// Whether item `item` of a table (e.g. [`Batch::detectors`]) is set in shot `shot`.
    pub fn get(&self, table: &[u64], item: usize, shot: usize) -> bool {
        table[item * self.words + shot / 64] >> (shot % 64) & 1 != 0
    }
}

/// A fault process sampled by geometric skipping.
#[derive(Clone, Debug)]
struct Rare {
    p: f64,
    /// `ln(1 − p)`.
    ln_keep: f64,
}

impl Rare {
    fn new(p: f64) -> Rare {
        Rare {
            p,
            ln_keep: (-p).ln_1p(),
        }
    }

    /// Number of non-firing places before the next firing one.
    #[inline]
    fn gap(&self, rng: &mut Xoshiro256PlusPlus) -> u64 {
        if self.p >= 1.0 {
            return 0;
        }
        // U in (0, 1], so ln U is finite.
        let u = 1.0 - rng.gen::<f64>();
        let g = u.ln() / self.ln_keep;
        if g >= 1.8e19 {
            u64::MAX
        } else {
            g as u64
        }
    }
}

/// One compiled instruction. Qubits and records are indices.
#[derive(Clone, Debug)]
enum Instr {
    /// Swap X and Z.
    H(u32),
    /// `z ^= x` (S, S†).
    S(u32),
    /// `x ^= z` (√X, √X†).
    Sx(u32),
    Cx(u32, u32),
    Cy(u32, u32),
    Cz(u32, u32),
    Swap(u32, u32),
    Measure {
        record: u32,
        factors: Vec<(u32, Pauli)>,
        flip: Option<Rare>,
    },
    Reset(u32, Basis),
    Noise {
        /// Application `k` acts on `targets[k*arity..(k+1)*arity]`.
        targets: Vec<u32>,
        arity: usize,
        rare: Rare,
        /// Cumulative term probabilities (last = total).
        cumulative: Vec<f64>,
        terms: Vec<Vec<Pauli>>,
    },
}

/// A circuit compiled for frame sampling, with its reference run.
#[derive(Clone, Debug)]
pub struct Sampler {
    qubits: usize,
    records: usize,
    detectors: Vec<Vec<u32>>,
    observables: Vec<Vec<u32>>,
    program: Vec<Instr>,
    reference: Reference,
    word_ops: u64,
}

impl Sampler {
    /// Compiles a circuit and runs its noiseless reference.
    pub fn new(circuit: &Circuit) -> Sampler {
        let mut program = Vec::new();
        let n = circuit.qubits.len() as u64;
        // Word operations per word of shots, for the benchmark: start randomisation.
        let mut word_ops = 2 * n;
        for (_, op) in circuit.ops() {
            match &op.kind {
                OpKind::Gate(g) => {
                    for t in op.targets.chunks(g.arity()) {
                        let (ins, cost) = match g {
                            Gate::I | Gate::X | Gate::Y | Gate::Z => continue,
                            Gate::H => (Instr::H(t[0]), 2),
                            Gate::S | Gate::Sdg => (Instr::S(t[0]), 1),
                            Gate::Sx | Gate::Sxdg => (Instr::Sx(t[0]), 1),
                            Gate::Cx => (Instr::Cx(t[0], t[1]), 2),
                            Gate::Cy => (Instr::Cy(t[0], t[1]), 3),
                            Gate::Cz => (Instr::Cz(t[0], t[1]), 2),
                            Gate::Swap => (Instr::Swap(t[0], t[1]), 4),
                        };
                        program.push(ins);
                        word_ops += cost;
                    }
                }
                OpKind::Measure { record, flip } => {
                    let factors: Vec<(u32, Pauli)> = op
                        .targets
                        .iter()
                        .copied()
                        .zip(op.paulis.iter().copied())
                        .filter(|f| f.1 != Pauli::I)
                        .collect();
                    word_ops += 1 + 2 * factors.len() as u64;
                    program.push(Instr::Measure {
                        record: *record,
                        factors,
                        flip: (*flip > 0.0).then(|| Rare::new(*flip)),
                    });
                }
                OpKind::Reset(basis) => {
                    for &q in &op.targets {
                        program.push(Instr::Reset(q, *basis));
                        word_ops += 2;
                    }
                }
                OpKind::Noise(ch) => {
                    let terms = ch.terms();
                    if terms.is_empty() || op.targets.is_empty() {
                        continue;
                    }
                    let mut acc = 0.0;
                    let cumulative = terms
                        .iter()
                        .map(|t| {
                            acc += t.0;
                            acc
                        })
                        .collect();
                    program.push(Instr::Noise {
                        arity: ch.arity().max(1),
                        targets: op.targets.clone(),
                        rare: Rare::new(acc.min(1.0)),
                        cumulative,
                        terms: terms.into_iter().map(|t| t.1).collect(),
                    });
                }
            }
        }
        let detectors: Vec<Vec<u32>> = circuit
            .detectors
            .iter()
            .map(|d| d.records.clone())
            .collect();
        let observables: Vec<Vec<u32>> = circuit
            .observables
            .iter()
            .map(|o| o.records.clone())
            .collect();
        word_ops += detectors
            .iter()
            .chain(&observables)
            .map(|r| r.len() as u64)
            .sum::<u64>();
        Sampler {
            qubits: circuit.qubits.len(),
            records: circuit.records.len(),
            detectors,
            observables,
            program,
            reference: reference_run(circuit),
            word_ops,
        }
    }

    /// The noiseless reference run.
    pub fn reference(&self) -> &Reference {
        &self.reference
    }

    /// Word operations (read-modify-writes of one `u64`) the sampler performs per 64 shots,
    /// excluding sparse fault insertion; used by the benchmark.
    pub fn word_ops_per_word(&self) -> u64 {
        self.word_ops
    }

    /// Words of frame and record memory one batch touches, for the benchmark's XOR baseline.
    pub fn batch_memory_words(&self) -> usize {
        (2 * self.qubits + self.records + self.detectors.len() + self.observables.len())
            * BATCH_SHOTS.div_ceil(64)
    }

    /// Samples `shots` shots, calling `sink` with the batches in order. Batches run in parallel on
    /// the rayon pool; at most a few per thread are held in memory at once.
    pub fn sample(&self, shots: u64, seed: u64, what: Outputs, mut sink: impl FnMut(Batch)) {
        let per = BATCH_SHOTS as u64;
        let batches = shots.div_ceil(per);
        let chunk = (rayon::current_num_threads() as u64 * 4).max(1);
        let mut next = 0;
        while next < batches {
            let end = (next + chunk).min(batches);
            let done: Vec<Batch> = (next..end)
                .into_par_iter()
                .map(|b| {
                    let n = (shots - b * per).min(per) as usize;
                    self.run_batch(b, n, seed, what)
                })
                .collect();
            done.into_iter().for_each(&mut sink);
            next = end;
        }
    }

    /// Runs one batch of `shots` (≤ [`BATCH_SHOTS`]) shots with the generator of batch `index`.
    pub fn run_batch(&self, index: u64, shots: usize, seed: u64, what: Outputs) -> Batch {
        let w = shots.div_ceil(64).max(1);
        let mut rng = batch_rng(seed, index);
        let mut x = vec![0u64; self.qubits * w];
        let mut z = vec![0u64; self.qubits * w];
        rng.fill(&mut z[..]);
        let mut rec = vec![0u64; self.records * w];
        for ins in &self.program {
            match ins {
                Instr::Measure {
                    record,
                    factors,
                    flip,
                } => {
                    let r = *record as usize * w;
                    let out = &mut rec[r..r + w];
                    out.fill(0);
                    for &(q, p) in factors {
                        let q = q as usize * w;
                        // X and Z anticommute: a frame X flips a Z result, a frame Z an X result.
                        if p.has_z() {
                            out.iter_mut().zip(&x[q..q + w]).for_each(|(o, v)| *o ^= v);
                        }
                        if p.has_x() {
                            out.iter_mut().zip(&z[q..q + w]).for_each(|(o, v)| *o ^= v);
                        }
                    }
                    if let Some(rare) = flip {
                        let mut s = rare.gap(&mut rng);
                        while s < shots as u64 {
                            out[s as usize / 64] ^= 1 << (s % 64);
                            s = s.saturating_add(1).saturating_add(rare.gap(&mut rng));
                        }
                    }
                    // Gauge: a random copy of the measured product.
                    for i in 0..w {
                        let g = rng.next_u64();
                        for &(q, p) in factors {
                            let q = q as usize * w + i;
                            if p.has_x() {
                                x[q] ^= g;
                            }
                            if p.has_z() {
                                z[q] ^= g;
                            }
                        }
                    }
                }
                Instr::Reset(q, basis) => {
                    let q = *q as usize * w;
                    let (xs, zs) = (&mut x[q..q + w], &mut z[q..q + w]);
                    xs.fill(0);
                    zs.fill(0);
                    // Gauge: a random copy of the basis Pauli.
                    match basis {
                        Basis::Z => rng.fill(zs),
                        Basis::X => rng.fill(xs),
                        Basis::Y => {
                            rng.fill(xs);
                            zs.copy_from_slice(xs);
                        }
                    }
                }
                Instr::Noise {
                    targets,
                    arity,
                    rare,
                    cumulative,
                    terms,
                } => {
                    let places = (targets.len() / arity) as u64 * shots as u64;
                    let mut at = rare.gap(&mut rng);
                    while at < places {
                        let (app, s) = ((at / shots as u64) as usize, (at % shots as u64) as usize);
                        let term = if terms.len() == 1 {
                            &terms[0]
                        } else {
                            let u = rng.gen::<f64>() * cumulative[cumulative.len() - 1];
                            let k = cumulative.partition_point(|&c| c <= u);
                            &terms[k.min(terms.len() - 1)]
                        };
                        let (word, bit) = (s / 64, 1u64 << (s % 64));
                        for (k, p) in term.iter().enumerate() {
                            let q = targets[app * arity + k] as usize * w + word;
                            if p.has_x() {
                                x[q] ^= bit;
                            }
                            if p.has_z() {
                                z[q] ^= bit;
                            }
                        }
                        at = at.saturating_add(1).saturating_add(rare.gap(&mut rng));
                    }
                }
                gate => apply_gate(gate, &mut x, &mut z, w),
            }
        }
        let mask = |v: &mut Vec<u64>| {
            if !shots.is_multiple_of(64) {
                let keep = (1u64 << (shots % 64)) - 1;
                for chunk in v.chunks_exact_mut(w) {
                    chunk[w - 1] &= keep;
                }
            }
        };
        let parities = |items: &[Vec<u32>]| {
            let mut out = vec![0u64; items.len() * w];
            for (k, recs) in items.iter().enumerate() {
                let dst = &mut out[k * w..(k + 1) * w];
                for &r in recs {
                    let src = &rec[r as usize * w..(r as usize + 1) * w];
                    dst.iter_mut().zip(src).for_each(|(d, s)| *d ^= s);
                }
            }
            out
        };
        let mut batch = Batch {
            index,
            first_shot: index * BATCH_SHOTS as u64,
            shots,
            words: w,
            detectors: Vec::new(),
            observables: Vec::new(),
            measurements: Vec::new(),
        };
        if what.detectors {
            batch.detectors = parities(&self.detectors);
            mask(&mut batch.detectors);
        }
        if what.observables {
            batch.observables = parities(&self.observables);
            mask(&mut batch.observables);
        }
        if what.measurements {
            for (r, &v) in self.reference.measurements.iter().enumerate() {
                if v {
                    rec[r * w..(r + 1) * w].iter_mut().for_each(|b| *b = !*b);
                }
            }
            mask(&mut rec);
            batch.measurements = rec;
        }
        batch
    }
}

/// Conjugates the frames by a gate instruction (`w` words per qubit); other instructions are
/// ignored.
#[inline]
fn apply_gate(ins: &Instr, x: &mut [u64], z: &mut [u64], w: usize) {
    match *ins {
        Instr::H(q) => {
            let q = q as usize * w;
            x[q..q + w].swap_with_slice(&mut z[q..q + w]);
        }
        Instr::S(q) => xor_into(z, x, q as usize * w, w),
        Instr::Sx(q) => xor_into(x, z, q as usize * w, w),
        Instr::Cx(a, b) => {
            let (a, b) = (a as usize * w, b as usize * w);
            xor_within(x, b, a, w);
            xor_within(z, a, b, w);
        }
        Instr::Cz(a, b) => {
            let (a, b) = (a as usize * w, b as usize * w);
            for i in 0..w {
                z[a + i] ^= x[b + i];
                z[b + i] ^= x[a + i];
            }
        }
        Instr::Cy(a, b) => {
            let (a, b) = (a as usize * w, b as usize * w);
            for i in 0..w {
                let xa = x[a + i];
                z[a + i] ^= x[b + i] ^ z[b + i];
                x[b + i] ^= xa;
                z[b + i] ^= xa;
            }
        }
        Instr::Swap(a, b) => {
            let (a, b) = (a as usize * w, b as usize * w);
            for i in 0..w {
                x.swap(a + i, b + i);
                z.swap(a + i, b + i);
            }
        }
        Instr::Measure { .. } | Instr::Reset(..) | Instr::Noise { .. } => {}
    }
}

/// Samples a circuit: compiles it, runs the reference and streams `shots` shots to `sink`.
pub fn sample(circuit: &Circuit, shots: u64, seed: u64, what: Outputs, sink: impl FnMut(Batch)) {
    Sampler::new(circuit).sample(shots, seed, what, sink);
}

/// The generator of batch `index`: a SplitMix64-style finaliser separates nearby `(seed, index)`
/// pairs before xoshiro's own seeding expands them.
fn batch_rng(seed: u64, index: u64) -> Xoshiro256PlusPlus {
    let mix = |mut v: u64| {
        v = (v ^ (v >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        v = (v ^ (v >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        v ^ (v >> 31)
    };
    Xoshiro256PlusPlus::seed_from_u64(mix(mix(seed.wrapping_add(0x9e37_79b9_7f4a_7c15)) ^ index))
}

#[inline]
fn xor_into(dst: &mut [u64], src: &[u64], at: usize, w: usize) {
    dst[at..at + w]
        .iter_mut()
        .zip(&src[at..at + w])
        .for_each(|(d, s)| *d ^= s);
}

/// `v[dst..dst+w] ^= v[src..src+w]` for distinct blocks of one vector.
#[inline]
fn xor_within(v: &mut [u64], dst: usize, src: usize, w: usize) {
    if dst < src {
        let (lo, hi) = v.split_at_mut(src);
        lo[dst..dst + w]
            .iter_mut()
            .zip(&hi[..w])
            .for_each(|(d, s)| *d ^= s);
    } else {
        let (lo, hi) = v.split_at_mut(dst);
        hi[..w]
            .iter_mut()
            .zip(&lo[src..src + w])
            .for_each(|(d, s)| *d ^= s);
    }
}

/// Runs a plain `a[i] ^= b[i]` loop over `words` words `reps` times and returns words per second:
/// the baseline the benchmark compares the sampler's word throughput with.
pub fn xor_baseline(words: usize, reps: usize) -> f64 {
    let mut a = vec![0x5555_5555_5555_5555u64; words];
    let b: Vec<u64> = (0..words as u64)
        .map(|i| i.wrapping_mul(0x9e37_79b9))
        .collect();
    let start = std::time::Instant::now();
    for r in 0..reps {
        a.iter_mut()
            .zip(&b)
            .for_each(|(x, y)| *x ^= y.rotate_left(r as u32 & 1));
        std::hint::black_box(&mut a);
    }
    (words * reps) as f64 / start.elapsed().as_secs_f64()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Frame rules must agree with `ir::clifford`: push each single-qubit Pauli on a target through
    /// one gate in one shot and compare with the table.
    #[test]
    fn gates_agree_with_clifford_table() {
        let all = [Pauli::I, Pauli::X, Pauli::Y, Pauli::Z];
        for g in Gate::ALL {
            let k = g.arity();
            for p0 in all {
                for p1 in all {
                    if k == 1 && p1 != Pauli::I {
                        continue;
                    }
                    let input = [p0, p1];
                    let want = g.conjugate(input);
                    let mut x = vec![0u64; 2];
                    let mut z = vec![0u64; 2];
                    for q in 0..2 {
                        x[q] = u64::from(input[q].has_x());
                        z[q] = u64::from(input[q].has_z());
                    }
                    let ins = match g {
                        Gate::I | Gate::X | Gate::Y | Gate::Z => None,
                        Gate::H => Some(Instr::H(0)),
                        Gate::S | Gate::Sdg => Some(Instr::S(0)),
                        Gate::Sx | Gate::Sxdg => Some(Instr::Sx(0)),
                        Gate::Cx => Some(Instr::Cx(0, 1)),
                        Gate::Cy => Some(Instr::Cy(0, 1)),
                        Gate::Cz => Some(Instr::Cz(0, 1)),
                        Gate::Swap => Some(Instr::Swap(0, 1)),
                    };
                    if let Some(ins) = ins {
                        apply_gate(&ins, &mut x, &mut z, 1);
                    }
                    for q in 0..2 {
                        let got = Pauli::from_bits(x[q] & 1 != 0, z[q] & 1 != 0);
                        assert_eq!(got, want[q], "{g:?} {input:?}");
                    }
                }
            }
        }
    }

    #[test]
    fn geometric_gaps_have_the_right_mean() {
        let rare = Rare::new(0.1);
        let mut rng = batch_rng(1, 2);
        let n = 200_000;
        let mean = (0..n).map(|_| rare.gap(&mut rng) as f64).sum::<f64>() / n as f64;
        // Geometric number of failures before a success: mean (1-p)/p = 9, sd ≈ 9.5.
        assert!((mean - 9.0).abs() < 5.0 * 9.5 / (n as f64).sqrt(), "{mean}");
    }
}
