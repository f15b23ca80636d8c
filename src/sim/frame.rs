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
//! the frame ([`crate::base::Gate::heisenberg`] images), a measurement of a Pauli product `Q` records whether
//! the frame anticommutes with `Q` (a *flip* relative to the reference run), noise XORs Paulis into
//! the shots where it fires.
//!
//! Random noiseless outcomes are sampled, not only flips: every qubit starts with a random Z in its
//! frame (Z stabilises |0>), a Z reset or Z measurement adds a random Z, an X/Y reset the basis
//! Pauli, and a product measurement a random copy of the measured product. These *gauge* Paulis
//! leave the state unchanged, yet they flip exactly the later results that are random, each with
//! probability 1/2, so sampled outcomes (reference XOR flip) have the right distribution.
//!
//! Rare faults are sampled by geometric skipping. All noise locations (channel applications and
//! measurement flips) with the same total probability `p` share one *stream*: their (location,
//! shot) pairs, in program order, form one index space `location · BATCH_SHOTS + shot`, and we draw
//! the gap to the next firing pair from the geometric distribution (`⌊E / −ln(1−p)⌋` with `E` a
//! standard exponential, drawn by the ziggurat method), then pick the channel's term in proportion
//! to its probability. Since locations are numbered in program order, each noise instruction just
//! consumes the stream's firing positions below its end. The cost is one draw per fault plus one
//! per stream and batch, not one per location.
//!
//! Layout: a batch is always simulated [`BATCH_SHOTS`] wide (a short last batch is cut at the end),
//! so every per-qubit row is a fixed `[u64; 64]` and the dense loops have constant length.
//!
//! Determinism: batch `b` uses its own xoshiro256++ generator seeded from `(seed, b)`, and batches
//! always hold [`BATCH_SHOTS`] shots (the last one fewer), so the same seed gives the same bits
//! whatever the number of rayon threads.
//!
//! Outputs: detection event = XOR of the flips of the detector's records (its parity XOR its
//! noiseless value); observable flip likewise; measurement result = reference value XOR flip.

use bitvec::prelude::{BitVec, Lsb0};
use rand::{Rng, RngCore, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;
use rayon::prelude::*;

use crate::base::{Basis, Gate, Pauli};
use crate::ir::{Circuit, OpKind};
use crate::sim::tableau::{reference_run, Reference, Tableau};

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

/// An item-major bit table: bit `item * words * 64 + s` (bit `s % 64` of word
/// `item * words + s / 64`, least significant first) is shot `s` of the item. Word-level loops
/// read it through `as_raw_slice`.
pub type BitTable = BitVec<u64, Lsb0>;

/// The results of one batch of shots as [`BitTable`]s with `words` words per item. Bits past
/// `shots` are zero.
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
    /// Detection events (`detectors × words` words), empty if not requested.
    pub detectors: BitTable,
    /// Observable flips (`observables × words` words), empty if not requested.
    pub observables: BitTable,
    /// Measurement results (`records × words` words), empty if not requested.
    pub measurements: BitTable,
}

impl Batch {
    /// Whether item `item` of a table (e.g. [`Batch::detectors`]) is set in shot `shot`.
    pub fn get(&self, table: &BitTable, item: usize, shot: usize) -> bool {
        table[item * self.words * 64 + shot]
    }

    /// Number of items in a table of this batch.
    pub fn items(&self, table: &BitTable) -> usize {
        table.as_raw_slice().len() / self.words.max(1)
    }
}

/// Words per frame row: every batch is simulated [`BATCH_SHOTS`] shots wide (the unused shots of a
/// short last batch are simulated and dropped), so rows are fixed-size arrays and the dense loops
/// have constant trip counts and no bounds checks.
const W: usize = BATCH_SHOTS / 64;
/// `log2(BATCH_SHOTS)`: a position in a fault stream is `location << SHIFT | shot`.
const SHIFT: u32 = BATCH_SHOTS.trailing_zeros();

/// One row of 4096 shot bits.
type Row = [u64; W];

/// A geometric-skipping stream shared by every noise location with the same total firing
/// probability `p`: the (location, shot) pairs of all of them, in program order, form one index
/// space, so a batch costs one draw per actual fault plus one per stream, not one per location.
#[derive(Clone, Debug)]
struct Stream {
    /// `1 / −ln(1 − p)`: a gap is `⌊E · inv_rate⌋` for a standard exponential `E`, because
    /// `P(⌊E/λ⌋ ≥ k) = e^{−kλ} = (1 − p)^k` when `λ = −ln(1 − p)` (geometric distribution).
    inv_rate: f64,
    /// The exponential sampler's tables, looked up once here rather than once per draw.
    zig: &'static Ziggurat,
}

impl Stream {
    fn new(p: f64) -> Stream {
        let rate = -(-p.min(1.0)).ln_1p();
        // p = 1: rate = ∞, gap 0 always. p = 0: rate = 0, gap ∞ (never fires).
        Stream {
            inv_rate: 1.0 / rate,
            zig: ziggurat(),
        }
    }

    /// Number of non-firing places before the next firing one.
    #[inline]
    fn gap(&self, rng: &mut Xoshiro256PlusPlus) -> u64 {
        let g = exp1(self.zig, rng) * self.inv_rate;
        // Through i64: one conversion instruction on x86-64, where f64 → u64 takes a branch and
        // several fix-ups. A gap past 2^62 ends every batch anyway.
        if g < 4.6e18 {
            g as i64 as u64
        } else {
            u64::MAX
        }
    }
}

/// Ziggurat tables for the standard exponential distribution, 256 layers (Marsaglia & Tsang,
/// "The Ziggurat Method for Generating Random Variables", J. Stat. Softw. 5(8), 2000).
#[derive(Debug)]
struct Ziggurat {
    /// Layer right edges, decreasing: `x[0] = v/f(r)`, `x[1] = r`, …, `x[256] = 0`.
    x: [f64; 257],
    /// `f(x[i]) = e^{−x[i]}`.
    f: [f64; 257],
}

/// Rightmost layer edge `r` and common layer area `v` for 256 layers of `e^{−x}` (Marsaglia & Tsang
/// 2000, exponential case; recalled from memory, checked by `ziggurat_tables_close` below).
const ZIG_R: f64 = 7.697_117_470_131_05;
const ZIG_V: f64 = 3.949_659_822_581_572e-3;

fn ziggurat() -> &'static Ziggurat {
    static TABLES: std::sync::OnceLock<Ziggurat> = std::sync::OnceLock::new();
    TABLES.get_or_init(|| {
        let mut x = [0.0; 257];
        x[0] = ZIG_V / (-ZIG_R).exp();
        x[1] = ZIG_R;
        // Each layer has area v: x[i+1] = f⁻¹(v / x[i] + f(x[i])).
        for i in 1..256 {
            x[i + 1] = -(ZIG_V / x[i] + (-x[i]).exp()).ln();
        }
        x[256] = 0.0;
        let mut f = [0.0; 257];
        for i in 0..257 {
            f[i] = (-x[i]).exp();
        }
        Ziggurat { x, f }
    })
}

/// A standard exponential variate by the ziggurat method: one `u64` and two multiplications in
/// ~99% of the calls, exact (up to double rounding) in all of them.
///
/// Not `rand_distr`'s `Exp1`, which uses the same method: its draws consume the generator
/// differently, so every seed would give other shots than the ones slant has always given (and
/// that tests, stores and published numbers were made with).
#[inline]
fn exp1(zig: &Ziggurat, rng: &mut Xoshiro256PlusPlus) -> f64 {
    loop {
        let bits = rng.next_u64();
        let i = (bits & 0xff) as usize;
        // 53 high bits: uniform in [0, 1), independent of the 8 low bits used for the layer.
        let u = (bits >> 11) as f64 * (1.0 / (1u64 << 53) as f64);
        let x = u * zig.x[i];
        if x < zig.x[i + 1] {
            return x;
        }
        if i == 0 {
            // Tail beyond r: memoryless, so r + a fresh exponential.
            let u = 1.0 - rng.gen::<f64>();
            return ZIG_R - u.ln();
        }
        let y = zig.f[i + 1] + (zig.f[i] - zig.f[i + 1]) * rng.gen::<f64>();
        if y < (-x).exp() {
            return x;
        }
    }
}

/// How a fault picks one of its channel's Pauli terms.
#[derive(Clone, Debug)]
enum Pick {
    /// All terms equally likely (depolarizing, single-term channels): one multiply-high.
    Uniform,
    /// Cumulative term probabilities (last = total).
    Weighted(Vec<f64>),
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
        /// Classical flip: stream and its location.
        flip: Option<(u32, u64)>,
    },
    Reset(u32, Basis),
    Noise {
        /// Application `k` acts on `targets[k*arity..(k+1)*arity]`.
        targets: Vec<u32>,
        arity: usize,
        /// The stream and the stream location of application 0 (applications are consecutive).
        stream: u32,
        first: u64,
        pick: Pick,
        /// Per term, the (slot, has X, has Z) of its non-identity factors.
        terms: Vec<Vec<(u8, bool, bool)>>,
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
    streams: Vec<Stream>,
    reference: Reference,
    word_ops: u64,
    faults_per_shot: f64,
}

/// Assigns stream locations: one stream per distinct total probability.
#[derive(Default)]
struct Streams {
    index: std::collections::HashMap<u64, u32>,
    streams: Vec<Stream>,
    next: Vec<u64>,
    /// Expected faults per shot: the sum of `p` over all locations.
    faults: f64,
}

impl Streams {
    /// Reserves `count` consecutive locations in the stream of probability `p`.
    fn reserve(&mut self, p: f64, count: u64) -> (u32, u64) {
        let k = *self.index.entry(p.to_bits()).or_insert_with(|| {
            self.streams.push(Stream::new(p));
            self.next.push(0);
            (self.streams.len() - 1) as u32
        });
        let first = self.next[k as usize];
        self.next[k as usize] += count;
        self.faults += p.min(1.0) * count as f64;
        (k, first)
    }
}

/// Bytes a [`Sampler`] of `circuit` needs before its first batch: the reference run's tableau
/// and result tables, and one batch of frames and results per thread of the pool (a few at
/// once). The fault streams are left out: they grow with the operations, which the expansion
/// budget already counts.
pub fn sampler_bytes(circuit: &Circuit) -> u64 {
    let tableau = Tableau::bytes(circuit.qubits.len());
    let records = circuit.records.len() as u64;
    let outputs = (circuit.detectors.len() + circuit.observables.len()) as u64;
    let batch = (2 * circuit.qubits.len() as u64 + records + outputs) * W as u64 * 8;
    let threads = rayon::current_num_threads() as u64;
    tableau + 2 * records + outputs + 4 * threads * batch
}

impl Sampler {
    /// Compiles a circuit and runs its noiseless reference.
    pub fn new(circuit: &Circuit) -> Sampler {
        let mut program = Vec::new();
        let mut streams = Streams::default();
        let n = circuit.qubits.len() as u64;
        // Word operations per word of shots, for the benchmark (see `word_ops_per_word`): start
        // (clear X, random Z).
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
                    // Clear the record, XOR in each anticommuting frame component, XOR the gauge
                    // word into each component of the product.
                    let comps: u64 = factors
                        .iter()
                        .map(|f| u64::from(f.1.has_x()) + u64::from(f.1.has_z()))
                        .sum();
                    word_ops += 1 + 2 * comps;
                    program.push(Instr::Measure {
                        record: *record,
                        factors,
                        flip: (*flip > 0.0).then(|| streams.reserve(*flip, 1)),
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
                    let arity = ch.arity().max(1);
                    let total: f64 = terms.iter().map(|t| t.0).sum();
                    if terms.is_empty() || op.targets.is_empty() || total <= 0.0 {
                        continue;
                    }
                    let pick = if terms.iter().all(|t| t.0 == terms[0].0) {
                        Pick::Uniform
                    } else {
                        let mut acc = 0.0;
                        Pick::Weighted(
                            terms
                                .iter()
                                .map(|t| {
                                    acc += t.0;
                                    acc
                                })
                                .collect(),
                        )
                    };
                    let apps = (op.targets.len() / arity) as u64;
                    let (stream, first) = streams.reserve(total.min(1.0), apps);
                    program.push(Instr::Noise {
                        arity,
                        targets: op.targets.clone(),
                        stream,
                        first,
                        pick,
                        terms: terms
                            .iter()
                            .map(|t| {
                                t.1.iter()
                                    .enumerate()
                                    .filter(|(_, p)| **p != Pauli::I)
                                    .map(|(k, p)| (k as u8, p.has_x(), p.has_z()))
                                    .collect()
                            })
                            .collect(),
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
            faults_per_shot: streams.faults,
            streams: streams.streams,
            reference: reference_run(circuit),
            word_ops,
        }
    }

    /// The noiseless reference run.
    pub fn reference(&self) -> &Reference {
        &self.reference
    }

    /// Dense word operations the sampler performs per 64 shots, for the benchmark. One word
    /// operation is one `u64` of frame, record or output memory written by a dense loop: an XOR of
    /// another word into it (the XOR baseline's unit: load, load, XOR, store), a clear, a random
    /// fill, or a copy; a swap counts two. Sparse fault insertion (a few single-bit XORs per fault)
    /// is not counted, so the fraction is conservative.
    pub fn word_ops_per_word(&self) -> u64 {
        self.word_ops
    }

    /// Expected number of sparse fault insertions per shot (sum of the firing probabilities of all
    /// noise locations), for the benchmark: the work `word_ops_per_word` leaves out.
    pub fn faults_per_shot(&self) -> f64 {
        self.faults_per_shot
    }

    /// Words of frame and record memory one batch touches, for the benchmark's XOR baseline.
    pub fn batch_memory_words(&self) -> usize {
        (2 * self.qubits + self.records + self.detectors.len() + self.observables.len()) * W
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
    ///
    /// The batch is always simulated [`BATCH_SHOTS`] wide and cut to `shots` at the end, so a
    /// shot's bits depend only on `(seed, index)` and its place in the batch.
    pub fn run_batch(&self, index: u64, shots: usize, seed: u64, what: Outputs) -> Batch {
        assert!(
            shots <= BATCH_SHOTS,
            "at most {BATCH_SHOTS} shots per batch"
        );
        let mut rng = batch_rng(seed, index);
        let mut x = vec![[0u64; W]; self.qubits];
        let mut z = vec![[0u64; W]; self.qubits];
        for row in &mut z {
            fill_random(row, &mut rng);
        }
        let mut rec = vec![[0u64; W]; self.records];
        // Next firing position (`location << SHIFT | shot`) of each stream.
        let mut cursor: Vec<u64> = self.streams.iter().map(|s| s.gap(&mut rng)).collect();
        for ins in &self.program {
            match ins {
                Instr::Measure {
                    record,
                    factors,
                    flip,
                } => {
                    let out = &mut rec[*record as usize];
                    *out = [0; W];
                    for &(q, p) in factors {
                        // X and Z anticommute: a frame X flips a Z result, a frame Z an X result.
                        if p.has_z() {
                            xor_row(out, &x[q as usize]);
                        }
                        if p.has_x() {
                            xor_row(out, &z[q as usize]);
                        }
                    }
                    if let Some((k, loc)) = *flip {
                        let (k, end) = (k as usize, (loc + 1) << SHIFT);
                        while cursor[k] < end {
                            let s = (cursor[k] & (BATCH_SHOTS as u64 - 1)) as usize;
                            out[s / 64] ^= 1 << (s % 64);
                            cursor[k] = advance(cursor[k], &self.streams[k], &mut rng);
                        }
                    }
                    // Gauge: a random copy of the measured product.
                    let mut g = [0u64; W];
                    fill_random(&mut g, &mut rng);
                    for &(q, p) in factors {
                        if p.has_x() {
                            xor_row(&mut x[q as usize], &g);
                        }
                        if p.has_z() {
                            xor_row(&mut z[q as usize], &g);
                        }
                    }
                }
                Instr::Reset(q, basis) => {
                    let (xs, zs) = (&mut x[*q as usize], &mut z[*q as usize]);
                    // Gauge: a random copy of the basis Pauli.
                    match basis {
                        Basis::Z => {
                            *xs = [0; W];
                            fill_random(zs, &mut rng);
                        }
                        Basis::X => {
                            *zs = [0; W];
                            fill_random(xs, &mut rng);
                        }
                        Basis::Y => {
                            fill_random(xs, &mut rng);
                            *zs = *xs;
                        }
                    }
                }
                Instr::Noise {
                    targets,
                    arity,
                    stream,
                    first,
                    pick,
                    terms,
                } => {
                    let k = *stream as usize;
                    let apps = (targets.len() / arity) as u64;
                    let (start, end) = (first << SHIFT, (first + apps) << SHIFT);
                    while cursor[k] < end {
                        let off = cursor[k] - start;
                        let app = (off >> SHIFT) as usize;
                        let s = (off & (BATCH_SHOTS as u64 - 1)) as usize;
                        let term = match pick {
                            Pick::Uniform => {
                                let r = u128::from(rng.next_u64()) * terms.len() as u128;
                                &terms[(r >> 64) as usize]
                            }
                            Pick::Weighted(cumulative) => {
                                let u = rng.gen::<f64>() * cumulative[cumulative.len() - 1];
                                let t = cumulative.partition_point(|&c| c <= u);
                                &terms[t.min(terms.len() - 1)]
                            }
                        };
                        let (word, bit) = (s / 64, 1u64 << (s % 64));
                        let on = &targets[app * arity..(app + 1) * arity];
                        for &(slot, hx, hz) in term {
                            let q = on[slot as usize] as usize;
                            x[q][word] ^= u64::from(hx) * bit;
                            z[q][word] ^= u64::from(hz) * bit;
                        }
                        cursor[k] = advance(cursor[k], &self.streams[k], &mut rng);
                    }
                }
                gate => apply_gate(gate, &mut x, &mut z),
            }
        }
        let w = shots.div_ceil(64).max(1);
        // Cut rows to `w` words and clear the bits past `shots`.
        let cut = |rows: &[Row]| -> BitTable {
            let keep = if shots.is_multiple_of(64) {
                u64::MAX
            } else {
                (1u64 << (shots % 64)) - 1
            };
            let mut out = Vec::with_capacity(rows.len() * w);
            for row in rows {
                out.extend_from_slice(&row[..w]);
                *out.last_mut().expect("w >= 1") &= keep;
            }
            BitTable::from_vec(out)
        };
        let parities = |items: &[Vec<u32>]| {
            let mut rows = vec![[0u64; W]; items.len()];
            for (dst, recs) in rows.iter_mut().zip(items) {
                for &r in recs {
                    xor_row(dst, &rec[r as usize]);
                }
            }
            cut(&rows)
        };
        let mut batch = Batch {
            index,
            first_shot: index * BATCH_SHOTS as u64,
            shots,
            words: w,
            detectors: BitTable::new(),
            observables: BitTable::new(),
            measurements: BitTable::new(),
        };
        if what.detectors {
            batch.detectors = parities(&self.detectors);
        }
        if what.observables {
            batch.observables = parities(&self.observables);
        }
        if what.measurements {
            for (row, &v) in rec.iter_mut().zip(&self.reference.measurements) {
                if v {
                    row.iter_mut().for_each(|b| *b = !*b);
                }
            }
            batch.measurements = cut(&rec);
        }
        batch
    }
}

/// The position after `at` plus a fresh gap, saturating (a stream that ran past the end of the
/// batch stays there).
#[inline]
fn advance(at: u64, stream: &Stream, rng: &mut Xoshiro256PlusPlus) -> u64 {
    at.saturating_add(1).saturating_add(stream.gap(rng))
}

#[inline]
fn fill_random(row: &mut Row, rng: &mut Xoshiro256PlusPlus) {
    row.iter_mut().for_each(|v| *v = rng.next_u64());
}

#[inline]
fn xor_row(dst: &mut Row, src: &Row) {
    dst.iter_mut().zip(src).for_each(|(d, s)| *d ^= s);
}

/// Two distinct rows of one table, mutably.
#[inline]
fn two(v: &mut [Row], a: usize, b: usize) -> (&mut Row, &mut Row) {
    assert_ne!(a, b, "two-qubit gate on one qubit");
    if a < b {
        let (lo, hi) = v.split_at_mut(b);
        (&mut lo[a], &mut hi[0])
    } else {
        let (lo, hi) = v.split_at_mut(a);
        (&mut hi[0], &mut lo[b])
    }
}

/// Conjugates the frames by a gate instruction; other instructions are ignored.
#[inline]
fn apply_gate(ins: &Instr, x: &mut [Row], z: &mut [Row]) {
    match *ins {
        Instr::H(q) => std::mem::swap(&mut x[q as usize], &mut z[q as usize]),
        Instr::S(q) => xor_row(&mut z[q as usize], &x[q as usize]),
        Instr::Sx(q) => xor_row(&mut x[q as usize], &z[q as usize]),
        Instr::Cx(a, b) => {
            let (xa, xb) = two(x, a as usize, b as usize);
            xor_row(xb, xa);
            let (za, zb) = two(z, a as usize, b as usize);
            xor_row(za, zb);
        }
        Instr::Cz(a, b) => {
            let (a, b) = (a as usize, b as usize);
            let (za, zb) = two(z, a, b);
            xor_row(za, &x[b]);
            xor_row(zb, &x[a]);
        }
        Instr::Cy(a, b) => {
            let (xa, xb) = two(x, a as usize, b as usize);
            let (za, zb) = two(z, a as usize, b as usize);
            for i in 0..W {
                let v = xa[i];
                za[i] ^= xb[i] ^ zb[i];
                xb[i] ^= v;
                zb[i] ^= v;
            }
        }
        Instr::Swap(a, b) => {
            x.swap(a as usize, b as usize);
            z.swap(a as usize, b as usize);
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
                    let mut x = vec![[0u64; W]; 2];
                    let mut z = vec![[0u64; W]; 2];
                    for q in 0..2 {
                        x[q][0] = u64::from(input[q].has_x());
                        z[q][0] = u64::from(input[q].has_z());
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
                        apply_gate(&ins, &mut x, &mut z);
                    }
                    for q in 0..2 {
                        let got = Pauli::from_bits(x[q][0] & 1 != 0, z[q][0] & 1 != 0);
                        assert_eq!(got, want[q], "{g:?} {input:?}");
                    }
                }
            }
        }
    }

    #[test]
    fn geometric_gaps_have_the_right_mean() {
        let stream = Stream::new(0.1);
        let mut rng = batch_rng(1, 2);
        let n = 200_000;
        let mean = (0..n).map(|_| stream.gap(&mut rng) as f64).sum::<f64>() / n as f64;
        // Geometric number of failures before a success: mean (1-p)/p = 9, sd ≈ 9.5.
        assert!((mean - 9.0).abs() < 5.0 * 9.5 / (n as f64).sqrt(), "{mean}");
    }

    #[test]
    fn geometric_gap_probabilities() {
        // P(gap = k) = (1-p)^k p for the first few k, each within 5 binomial sigma.
        let p = 0.3;
        let stream = Stream::new(p);
        let mut rng = batch_rng(5, 0);
        let n = 400_000;
        let mut counts = [0u64; 6];
        for _ in 0..n {
            let g = stream.gap(&mut rng) as usize;
            if g < counts.len() {
                counts[g] += 1;
            }
        }
        for (k, &c) in counts.iter().enumerate() {
            let want = (1.0f64 - p).powi(k as i32) * p;
            let sd = (want * (1.0 - want) / n as f64).sqrt();
            let got = c as f64 / n as f64;
            assert!((got - want).abs() < 5.0 * sd, "k={k}: {got} vs {want}");
        }
        // p = 1 always fires; p = 0 never does.
        assert_eq!(Stream::new(1.0).gap(&mut rng), 0);
        assert_eq!(Stream::new(0.0).gap(&mut rng), u64::MAX);
    }

    #[test]
    fn ziggurat_tables_close() {
        // The recursion from (r, v) must come down to the peak: the last layer's upper edge
        // v / x[255] + f(x[255]) is 1 = f(0).
        let zig = ziggurat();
        let top = ZIG_V / zig.x[255] + (-zig.x[255]).exp();
        assert!((top - 1.0).abs() < 1e-9, "{top}");
        assert!(zig.x.windows(2).all(|p| p[0] > p[1]));
    }

    #[test]
    fn exponential_tail_probabilities() {
        // P(E > t) = e^{-t}, including the tail beyond the ziggurat's r = 7.7.
        let mut rng = batch_rng(9, 9);
        let n = 2_000_000;
        let draws: Vec<f64> = (0..n).map(|_| exp1(ziggurat(), &mut rng)).collect();
        for t in [0.01f64, 0.1, 0.5, 1.0, 2.0, 4.0, 7.0, 8.0, 10.0] {
            let want = (-t).exp();
            let got = draws.iter().filter(|&&e| e > t).count() as f64 / n as f64;
            let sd = (want * (1.0 - want) / n as f64).sqrt();
            assert!(
                (got - want).abs() < 5.0 * sd + 1e-12,
                "t={t}: {got} vs {want}"
            );
        }
        let mean = draws.iter().sum::<f64>() / n as f64;
        assert!((mean - 1.0).abs() < 5.0 / (n as f64).sqrt(), "{mean}");
    }
}
