//! Sensitivity sets: sorted vectors (what `ir::sensitivity` uses) against fixed-width bitsets.
//!
//! Run with `bench/sensitivity.sh` (release build, one thread). Both representations run the
//! same backward sweep over a rotated surface code memory (`slant new surface`, d rounds) under
//! the `circuit p=0.001` preset, and at every noise location form the symptom of X, Y and Z on
//! each target qubit as a sorted list of ids (what the fault merger consumes). The two must
//! produce the same checksum over all symptoms, so the comparison is of equal work.
//!
//! Bitsets are `D + O` bits wide per qubit and Pauli: a gate costs `O(D)` word operations,
//! turning a symptom into a list costs a scan of `D / 64` words. Sorted vectors cost the size of
//! the sets, which in a code with local checks is a handful of ids whatever the distance.
//!
//! Options: `--distances 5,9,15` (default `5,9,15,25`), `--reps N` (default 3, best of N).

use std::time::{Duration, Instant};

use slant::base::{xor_into, Pauli, Source};
use slant::gen::{generate, Family, GenSpec};
use slant::ir::{sensitivity_sweep, SweepPoint};
use slant::ir::{Circuit, OpKind};
use slant::noise::NoiseSpec;

/// Folds one symptom (sorted ids) into a checksum that depends on order and content.
fn fold(sum: u64, ids: &[u32]) -> u64 {
    let mut h = sum.rotate_left(7) ^ ids.len() as u64;
    for &x in ids {
        h = h.wrapping_mul(0x100_0000_01b3) ^ u64::from(x);
    }
    h
}

/// The Paulis whose symptoms are formed at each target of a noise location.
const TERMS: [Pauli; 3] = [Pauli::X, Pauli::Y, Pauli::Z];

/// Sweep with the library's sorted-vector sensitivities; returns (checksum, symptoms formed).
fn sorted_vectors(circuit: &Circuit) -> (u64, u64) {
    let (mut sum, mut count) = (0u64, 0u64);
    let (mut acc, mut tmp) = (Vec::new(), Vec::new());
    sensitivity_sweep(circuit, |point, s| {
        let SweepPoint::After { op, .. } = point else {
            return;
        };
        if !matches!(op.kind, OpKind::Noise(_)) {
            return;
        }
        for &q in &op.targets {
            let q = q as usize;
            for p in TERMS {
                acc.clear();
                if p.has_x() {
                    xor_into(&acc, &s.x[q], &mut tmp);
                    std::mem::swap(&mut acc, &mut tmp);
                }
                if p.has_z() {
                    xor_into(&acc, &s.z[q], &mut tmp);
                    std::mem::swap(&mut acc, &mut tmp);
                }
                sum = fold(sum, &acc);
                count += 1;
            }
        }
    });
    (sum, count)
}

/// Per-qubit X and Z sensitivities as rows of `words` 64-bit words.
struct Bitsets {
    x: Vec<u64>,
    z: Vec<u64>,
}

impl Bitsets {
    fn row(v: &[u64], words: usize, q: u32) -> &[u64] {
        &v[q as usize * words..(q as usize + 1) * words]
    }

    fn row_mut(v: &mut [u64], words: usize, q: u32) -> &mut [u64] {
        &mut v[q as usize * words..(q as usize + 1) * words]
    }
}

fn xor_row(acc: &mut [u64], row: &[u64]) {
    for (a, b) in acc.iter_mut().zip(row) {
        *a ^= b;
    }
}

fn flip_ids(row: &mut [u64], ids: &[u32]) {
    for &i in ids {
        row[i as usize / 64] ^= 1 << (i % 64);
    }
}

/// The same sweep with fixed-width bitsets; returns (checksum, symptoms formed).
fn bitsets(circuit: &Circuit) -> (u64, u64) {
    let words = (circuit.detectors.len() + circuit.observables.len()).div_ceil(64);
    let n = circuit.qubits.len();
    let record_symptoms = slant::ir::record_symptoms(circuit);
    let mut s = Bitsets {
        x: vec![0; n * words],
        z: vec![0; n * words],
    };
    let mut acc = vec![0u64; words];
    let mut ids = Vec::new();
    let mut images = vec![0u64; 4 * words];
    let (mut sum, mut count) = (0u64, 0u64);
    for layer in circuit.layers.iter().rev() {
        for op in layer.ops.iter().rev() {
            match &op.kind {
                OpKind::Noise(_) => {
                    for &q in &op.targets {
                        for p in TERMS {
                            acc.fill(0);
                            if p.has_x() {
                                xor_row(&mut acc, Bitsets::row(&s.x, words, q));
                            }
                            if p.has_z() {
                                xor_row(&mut acc, Bitsets::row(&s.z, words, q));
                            }
                            ids.clear();
                            for (w, &bits) in acc.iter().enumerate() {
                                let mut b = bits;
                                while b != 0 {
                                    ids.push((w * 64) as u32 + b.trailing_zeros());
                                    b &= b - 1;
                                }
                            }
                            sum = fold(sum, &ids);
                            count += 1;
                        }
                    }
                }
                OpKind::Reset(_) => {
                    for &q in &op.targets {
                        Bitsets::row_mut(&mut s.x, words, q).fill(0);
                        Bitsets::row_mut(&mut s.z, words, q).fill(0);
                    }
                }
                OpKind::Measure { record, .. } => {
                    let flips = &record_symptoms[*record as usize];
                    for (&q, &p) in op.targets.iter().zip(&op.paulis) {
                        if p.has_z() {
                            flip_ids(Bitsets::row_mut(&mut s.x, words, q), flips);
                        }
                        if p.has_x() {
                            flip_ids(Bitsets::row_mut(&mut s.z, words, q), flips);
                        }
                    }
                }
                OpKind::Gate(g) => {
                    let h = g.heisenberg();
                    for chunk in op.targets.chunks(g.arity()) {
                        // Sensitivity before the gate of X_i (Z_i): XOR over the factors of its
                        // Heisenberg image of the sensitivities after the gate.
                        for k in 0..2 * chunk.len() {
                            let out = &mut images[k * words..(k + 1) * words];
                            out.fill(0);
                            for (&q, p) in chunk.iter().zip(h[k]) {
                                if p.has_x() {
                                    xor_row(out, Bitsets::row(&s.x, words, q));
                                }
                                if p.has_z() {
                                    xor_row(out, Bitsets::row(&s.z, words, q));
                                }
                            }
                        }
                        for (i, &q) in chunk.iter().enumerate() {
                            Bitsets::row_mut(&mut s.x, words, q)
                                .copy_from_slice(&images[2 * i * words..(2 * i + 1) * words]);
                            Bitsets::row_mut(&mut s.z, words, q)
                                .copy_from_slice(&images[(2 * i + 1) * words..(2 * i + 2) * words]);
                        }
                    }
                }
            }
        }
    }
    (sum, count)
}

fn best_of<T>(reps: usize, mut f: impl FnMut() -> T) -> (T, Duration) {
    let mut best = Duration::MAX;
    let mut out = None;
    for _ in 0..reps {
        let t = Instant::now();
        let v = f();
        best = best.min(t.elapsed());
        out = Some(v);
    }
    (out.expect("at least one repetition"), best)
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let value = |flag: &str| {
        args.iter()
            .position(|a| a == flag)
            .and_then(|i| args.get(i + 1))
            .cloned()
    };
    let distances: Vec<u32> = value("--distances")
        .unwrap_or_else(|| "5,9,15,25".into())
        .split(',')
        .map(|d| d.parse().expect("--distances takes numbers"))
        .collect();
    let reps: usize = value("--reps").map_or(3, |r| r.parse().expect("--reps takes a number"));
    let noise = NoiseSpec::parse("circuit p=0.001").expect("valid preset");
    println!("d  ids(D+O)  symptoms  sorted_vec_s  bitset_s  bitset/sorted");
    for d in distances {
        let mut spec = GenSpec::new(Family::Surface, d);
        spec.rounds = d;
        let text = generate(&spec).expect("generator accepts the spec");
        let circuit =
            slant::ir::load_source(&Source::new("bench.slant", &text), &[]).expect("valid");
        let noisy = slant::noise::apply(&circuit, &noise).expect("noise applies");
        let ((sum_v, count), t_v) = best_of(reps, || sorted_vectors(&noisy));
        let ((sum_b, count_b), t_b) = best_of(reps, || bitsets(&noisy));
        assert_eq!(
            (sum_v, count),
            (sum_b, count_b),
            "the two representations disagree at d = {d}"
        );
        println!(
            "{d}  {}  {count}  {:.6}  {:.6}  {:.1}",
            noisy.detectors.len() + noisy.observables.len(),
            t_v.as_secs_f64(),
            t_b.as_secs_f64(),
            t_b.as_secs_f64() / t_v.as_secs_f64()
        );
    }
}
