//! The tableau, the Pauli-frame sampler, the noise presets and `slant shots`.
//!
//! Sampled statistics are compared with exact values from the independent dense state-vector
//! enumeration in `support::statevector`, within 5 binomial standard deviations at a fixed seed.

use std::path::Path;

use rand::{Rng, SeedableRng};
use slant::base::{Basis, Gate, Pauli, Source, Span};
use slant::ir::{Circuit, Layer, Op, OpKind, Qubit, Record};
use slant::noise::{self, NoiseSpec};
use slant::sim::{reference_run, Outputs, Sampler};

use crate::support::statevector;
use crate::support::{load, slant, Runner};

fn with_noise(c: &Circuit, spec: &str) -> Circuit {
    let spec = NoiseSpec::parse(spec).unwrap_or_else(|d| panic!("{}", d.render()));
    noise::apply(c, &spec).unwrap_or_else(|d| panic!("{}", d[0].render()))
}

/// Sampled frequencies: detector marginals, detector pairs, observables, records.
struct Counts {
    shots: u64,
    det: Vec<u64>,
    pair: Vec<Vec<u64>>,
    obs: Vec<u64>,
    rec: Vec<u64>,
}

fn sample_counts(c: &Circuit, shots: u64, seed: u64) -> Counts {
    let (nd, no, nr) = (c.detectors.len(), c.observables.len(), c.records.len());
    let mut k = Counts {
        shots,
        det: vec![0; nd],
        pair: vec![vec![0; nd]; nd],
        obs: vec![0; no],
        rec: vec![0; nr],
    };
    let what = Outputs {
        detectors: true,
        observables: true,
        measurements: true,
    };
    let mut fired = Vec::new();
    Sampler::new(c).sample(shots, seed, what, |b| {
        for s in 0..b.shots {
            fired.clear();
            fired.extend((0..nd).filter(|&d| b.get(&b.detectors, d, s)));
            for &i in &fired {
                k.det[i] += 1;
                for &j in &fired {
                    k.pair[i][j] += 1;
                }
            }
            for o in 0..no {
                k.obs[o] += u64::from(b.get(&b.observables, o, s));
            }
            for r in 0..nr {
                k.rec[r] += u64::from(b.get(&b.measurements, r, s));
            }
        }
    });
    k
}

/// |count/n − p| ≤ 5σ with σ the binomial standard deviation (exact 0 or 1 must match exactly).
fn within_5_sigma(count: u64, n: u64, p: f64, what: &str) {
    let f = count as f64 / n as f64;
    let sigma = (p * (1.0 - p) / n as f64).sqrt();
    assert!(
        (f - p).abs() <= 5.0 * sigma + 1e-12,
        "{what}: sampled {f} vs exact {p} (5σ = {})",
        5.0 * sigma
    );
}

fn compare_with_exact(c: &Circuit, shots: u64, seed: u64) {
    let ex = statevector::exact(c);
    assert!(
        (ex.total - 1.0).abs() < 1e-9,
        "enumeration lost probability: {}",
        ex.total
    );
    let k = sample_counts(c, shots, seed);
    for i in 0..ex.detectors.len() {
        within_5_sigma(k.det[i], k.shots, ex.detectors[i], &format!("detector {i}"));
        for j in 0..i {
            within_5_sigma(
                k.pair[i][j],
                k.shots,
                ex.pairs[i][j],
                &format!("pair {i},{j}"),
            );
        }
    }
    for (o, &p) in ex.observables.iter().enumerate() {
        within_5_sigma(k.obs[o], k.shots, p, &format!("observable {o}"));
    }
    for (r, &p) in ex.records.iter().enumerate() {
        within_5_sigma(k.rec[r], k.shots, p, &format!("record {r}"));
    }
}

/// Repetition code, two rounds: bit flips, depolarizing and measurement flips.
const REPETITION_NOISY: &str = "\
qubit q[0..3] role data
qubit a[0..2] role ancilla
reset z q[0..3], a[0..2]
for r in 0..2 {
  round {
    noise bitflip p=0.05 q[0]
    noise depolarizing p=0.04 q[1]
    layer { cx q[0..2] a[0..2] }
    layer { cx q[1..3] a[0..2] }
    layer { measure z a[0..2] -> m[r, 0..2] flip 0.03 }
    layer { reset z a[0..2] }
    for k in 0..2 {
      if r == 0 { detector = m[r, k] } else { detector = m[r, k] ^ m[r - 1, k] }
    }
  }
}
measure z q[0..3] -> f[0..3]
detector = f[0] ^ f[1] ^ m[1, 0]
detector = f[1] ^ f[2] ^ m[1, 1]
observable logical = f[0]
";

/// Every gate, every remaining channel type, product and x/y measurements, x/y resets: random
/// product measurements are repeated after a gate sequence and its inverse with noise between.
const ALL_CHANNELS: &str = "\
qubit a
qubit b
qubit c
qubit e
qubit g
qubit k
reset x a
reset y b
reset z c, e
reset y g
reset x k
h c
measure x a * z b * y c -> m1
measure z b * x e -> m2
layer { cy a c ; h b ; i e }
layer { swap b e ; s a ; x c }
layer { sx c ; cz a b ; y e }
layer { cx e a ; z b }
noise pauli x=0.02 y=0.03 z=0.04 a
noise dephasing p=0.05 b
noise pair_depolarizing p=0.06 c e
noise pauli zz=0.03 xy=0.02 ix=0.02 a b
noise joint p=0.04 x a * y c * z e
layer { cx e a ; z b }
layer { sxdg c ; cz a b ; y e }
layer { swap b e ; sdg a ; x c }
layer { cy a c ; h b }
measure x a * z b * y c -> n1 flip 0.02
measure z b * x e -> n2
noise bitflip p=0.1 g
measure y g -> yg
noise dephasing p=0.07 k
measure x k -> xk flip 0.01
detector = m1 ^ n1
detector = m2 ^ n2
detector = yg
detector = xk
observable o = m2 ^ n2 ^ yg
";

/// A Bell pair under the `circuit` preset with bias: biased one- and two-qubit channels, idle
/// noise, reset errors and measurement flips, all inserted by `noise::apply`.
const BELL_FOR_PRESET: &str = "\
qubit d role data
qubit a role ancilla
reset z d, a
layer { h d }
layer { cx d a }
measure z d * z a -> zz
measure x d * x a -> xx
detector = zz
detector = xx
observable bell = zz
";

/// Exact detector marginals, pair probabilities, observable and measurement marginals from the
/// state-vector enumeration (independent method) agree with sampling within 5σ.
#[test]
fn sampled_statistics_match_exact_enumeration() {
    compare_with_exact(&load("t.slant", REPETITION_NOISY), 200_000, 11);
    compare_with_exact(&load("t.slant", ALL_CHANNELS), 200_000, 12);
    let preset = with_noise(&load("t.slant", BELL_FOR_PRESET), "circuit p=0.05 bias=3");
    compare_with_exact(&preset, 200_000, 13);
    let phen = with_noise(
        &load("t.slant", REPETITION_NOISY),
        "phenomenological p=0.02 q=0.04 bias=2",
    );
    let capacity = with_noise(&load("t.slant", REPETITION_NOISY), "capacity p=0.03");
    compare_with_exact(&phen, 100_000, 14);
    compare_with_exact(&capacity, 100_000, 15);
}

/// Distance-3 repetition code, code-capacity bit flips of probability p on each data qubit,
/// majority vote of the final readout: logical failure 3p² − 2p³ (Nielsen & Chuang, Quantum
/// Computation and Quantum Information, §10.1.1).
#[test]
fn repetition_code_majority_vote_fails_at_3p2_minus_2p3() {
    let p: f64 = 0.1;
    let c = load("t.slant", &format!(
        "qubit q[0..3] role data\nreset z q[0..3]\nnoise bitflip p={p} q[0..3]\nmeasure z q[0..3] -> f[0..3]\n"
    ));
    let shots = 400_000;
    let mut failures = 0u64;
    let what = Outputs {
        measurements: true,
        ..Outputs::default()
    };
    Sampler::new(&c).sample(shots, 7, what, |b| {
        for s in 0..b.shots {
            let ones = (0..3).filter(|&r| b.get(&b.measurements, r, s)).count();
            failures += u64::from(ones >= 2);
        }
    });
    within_5_sigma(
        failures,
        shots,
        3.0 * p * p - 2.0 * p * p * p,
        "logical failure",
    );
}

/// Bell pair with a depolarizing channel of strength p on one qubit: <ZZ> = <XX> = 1 − 4p/3
/// (textbook: X, Y, Z each with p/3; two of the three flip each correlator).
#[test]
fn bell_pair_correlations_under_depolarizing() {
    let p = 0.15;
    let c = load(
        "t.slant",
        &format!(
            "qubit a\nqubit b\nh a\ncx a b\nnoise depolarizing p={p} a\nmeasure z a * z b -> zz\n\
         measure x a * x b -> xx\ndetector = zz\ndetector = xx\n"
        ),
    );
    let k = sample_counts(&c, 400_000, 3);
    for d in 0..2 {
        let f = k.det[d] as f64 / k.shots as f64;
        let corr = 1.0 - 2.0 * f;
        let want = 1.0 - 4.0 * p / 3.0;
        let sigma = 2.0 * ((1.0 - want) / 2.0 * (1.0 + want) / 2.0 / k.shots as f64).sqrt();
        assert!(
            (corr - want).abs() < 5.0 * sigma,
            "detector {d}: {corr} vs {want}"
        );
    }
}

/// Noiseless circuits never produce a detection event or an observable flip, and the raw
/// results reproduce each detector's noiseless parity.
#[test]
fn noiseless_circuits_have_no_detection_events() {
    let mut circuits = vec![
        load("t.slant", REPETITION_NOISY),
        load("t.slant", ALL_CHANNELS),
        load("t.slant", BELL_FOR_PRESET),
    ];
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("circuits");
    for entry in std::fs::read_dir(&dir).into_iter().flatten().flatten() {
        let path = entry.path();
        if path.extension().is_some_and(|e| e == "slant") {
            // Loading checks every detector and observable is deterministic (common practice
            // for memory experiments): every bundled circuit must pass.
            let text = std::fs::read_to_string(&path).unwrap();
            let c = slant::ir::load_source(&Source::new(path.display().to_string(), text), &[])
                .unwrap_or_else(|e| panic!("{}: {}", path.display(), e[0].render()));
            circuits.push(c);
        }
    }
    for c in &mut circuits {
        for layer in &mut c.layers {
            layer.ops.retain(|op| !matches!(op.kind, OpKind::Noise(_)));
            for op in &mut layer.ops {
                if let OpKind::Measure { flip, .. } = &mut op.kind {
                    *flip = 0.0;
                }
            }
        }
        let sampler = Sampler::new(c);
        let reference = sampler.reference().clone();
        let what = Outputs {
            detectors: true,
            observables: true,
            measurements: true,
        };
        sampler.sample(3000, 5, what, |b| {
            assert!(b.detectors.not_any(), "{}", c.source.name);
            assert!(b.observables.not_any(), "{}", c.source.name);
            // Raw results reproduce every detector's noiseless parity in every shot.
            for (d, det) in c.detectors.iter().enumerate() {
                for s in 0..b.shots {
                    let parity = det
                        .records
                        .iter()
                        .fold(false, |a, &r| a ^ b.get(&b.measurements, r as usize, s));
                    assert_eq!(parity, reference.detectors[d], "detector {d}");
                }
            }
        });
    }
}

fn hand_circuit(n: usize, ops: Vec<Op>, records: usize) -> Circuit {
    let source = Source::new("random", "");
    Circuit {
        source,
        items: 0,
        params: Vec::new(),
        qubits: (0..n)
            .map(|q| Qubit {
                name: format!("q{q}"),
                coords: Vec::new(),
                roles: Vec::new(),
                span: Span::default(),
            })
            .collect(),
        layers: ops
            .into_iter()
            .map(|op| Layer {
                ops: vec![op],
                round: None,
                span: Span::default(),
            })
            .collect(),
        records: (0..records)
            .map(|r| Record {
                name: format!("m{r}"),
                layer: r as u32,
                span: Span::default(),
            })
            .collect(),
        detectors: Vec::new(),
        observables: Vec::new(),
        rounds: 0,
    }
}

/// The tableau's reference run agrees with the dense state-vector run (which resolves random
/// results to +1 the same way) on random Clifford circuits with Pauli-product measurements and
/// resets in every basis: same values, same random/deterministic classification. This checks
/// the signs of every gate (PRA 70, 052328 (2004) tracks them through the phase bit r).
#[test]
fn tableau_matches_statevector_on_random_circuits() {
    let mut rng = rand_xoshiro::Xoshiro256PlusPlus::seed_from_u64(2024);
    let paulis = [Pauli::X, Pauli::Y, Pauli::Z];
    for trial in 0..300 {
        let n = rng.gen_range(1..=5);
        let mut ops = Vec::new();
        let mut records = 0u32;
        for _ in 0..40 {
            let op = match rng.gen_range(0..10) {
                0..=5 => {
                    let g = Gate::ALL[rng.gen_range(0..Gate::ALL.len())];
                    if g.arity() == 2 && n < 2 {
                        continue;
                    }
                    let a = rng.gen_range(0..n) as u32;
                    let mut targets = vec![a];
                    if g.arity() == 2 {
                        let b = (a + rng.gen_range(1..n) as u32) % n as u32;
                        targets.push(b);
                    }
                    OpKind::Gate(g).with(targets, Vec::new())
                }
                6..=8 => {
                    let mut targets: Vec<u32> =
                        (0..n as u32).filter(|_| rng.gen_bool(0.5)).collect();
                    if targets.is_empty() {
                        targets.push(rng.gen_range(0..n) as u32);
                    }
                    let ps = targets
                        .iter()
                        .map(|_| paulis[rng.gen_range(0..3)])
                        .collect();
                    records += 1;
                    OpKind::Measure {
                        record: records - 1,
                        flip: 0.0,
                    }
                    .with(targets, ps)
                }
                _ => {
                    let b = [Basis::X, Basis::Y, Basis::Z][rng.gen_range(0..3)];
                    OpKind::Reset(b).with(vec![rng.gen_range(0..n) as u32], Vec::new())
                }
            };
            ops.push(op);
        }
        let c = hand_circuit(n, ops, records as usize);
        let tab = reference_run(&c);
        let sv = statevector::forced_run(&c);
        assert_eq!(sv.len(), records as usize);
        for (r, want) in sv.iter().enumerate() {
            assert_eq!(
                (tab.measurements[r], tab.random[r]),
                *want,
                "trial {trial}, record {r}"
            );
        }
    }
}

trait With {
    fn with(self, targets: Vec<u32>, paulis: Vec<Pauli>) -> Op;
}

impl With for OpKind {
    fn with(self, targets: Vec<u32>, paulis: Vec<Pauli>) -> Op {
        Op {
            kind: self,
            targets,
            paulis,
            span: Span::default(),
        }
    }
}

/// Presets need roles and rounds; their errors say so.
#[test]
fn round_presets_need_data_roles_and_rounds() {
    let c = load(
        "t.slant",
        "qubit a\nqubit b\nh a\ncx a b\nmeasure z a * z b -> zz\ndetector = zz\n",
    );
    for name in ["capacity", "phenomenological"] {
        let spec = NoiseSpec::parse(&format!("{name} p=0.01")).unwrap();
        let errs = noise::apply(&c, &spec).unwrap_err();
        let text: String = errs.iter().map(|d| d.render()).collect();
        assert!(text.contains("role `data`"), "{text}");
        assert!(text.contains("syndrome rounds"), "{text}");
    }
}

/// The `circuit` preset places one channel after each gate and reset, idle noise on untouched
/// qubits and flips on measurements, each pointing at its source statement.
#[test]
fn circuit_preset_placement() {
    let c = load("t.slant", BELL_FOR_PRESET);
    let noisy = with_noise(&c, "circuit p=0.01");
    let src = &noisy.source.text;
    let at = |op: &Op| src[op.span.start as usize..op.span.end as usize].to_string();
    for layer in &noisy.layers {
        for (i, op) in layer.ops.iter().enumerate() {
            let after = layer.ops.get(i + 1);
            match &op.kind {
                OpKind::Gate(_) | OpKind::Reset(_) => {
                    let next = after.expect("a channel after every gate and reset");
                    assert!(matches!(next.kind, OpKind::Noise(_)), "{}", at(op));
                    assert_eq!((&next.targets, next.span), (&op.targets, op.span));
                }
                _ => {}
            }
        }
    }
    // The `h d` layer idles `a`: a channel on `a` alone, pointing at the layer.
    let h_layer = noisy
        .layers
        .iter()
        .find(|l| l.ops.iter().any(|op| op.kind == OpKind::Gate(Gate::H)))
        .unwrap();
    let idle = h_layer.ops.last().unwrap();
    assert_eq!(idle.targets, vec![1]);
    assert!(at(idle).contains("h d"), "{}", at(idle));
    assert_eq!(
        idle.kind,
        OpKind::Noise(slant::ir::Channel::Depolarizing(0.01))
    );
    for (_, op) in noisy.ops() {
        if let OpKind::Measure { flip, .. } = op.kind {
            assert_eq!(flip, 0.01);
        }
    }
}

// ---- the command line ------------------------------------------------------------------------

fn run_threads(args: &[&str], threads: &str) -> std::process::Output {
    slant().args(args).env("RAYON_NUM_THREADS", threads).run()
}

/// Parses an `.npy` v1.0 header as NumPy documents it; returns (descr, shape, data).
fn read_npy(path: &Path) -> (String, (usize, usize), Vec<u8>) {
    let bytes = std::fs::read(path).unwrap();
    assert_eq!(&bytes[..6], b"\x93NUMPY");
    assert_eq!((bytes[6], bytes[7]), (1, 0));
    let len = u16::from_le_bytes([bytes[8], bytes[9]]) as usize;
    assert_eq!((10 + len) % 64, 0, "data must start 64-byte aligned");
    let header = std::str::from_utf8(&bytes[10..10 + len]).unwrap();
    assert!(header.contains("'fortran_order': False"));
    let descr = header
        .split("'descr': '")
        .nth(1)
        .unwrap()
        .split('\'')
        .next()
        .unwrap();
    let shape = header
        .split("'shape': (")
        .nth(1)
        .unwrap()
        .split(')')
        .next()
        .unwrap();
    let dims: Vec<usize> = shape
        .split(',')
        .filter(|s| !s.trim().is_empty())
        .map(|s| s.trim().parse().unwrap())
        .collect();
    (
        descr.to_string(),
        (dims[0], dims[1]),
        bytes[10 + len..].to_vec(),
    )
}

fn write_circuit(dir: &Path, text: &str) -> String {
    let path = dir.join("c.slant");
    std::fs::write(&path, text).unwrap();
    path.display().to_string()
}

/// Same seed, same bytes, with one thread and with two.
#[test]
fn cli_same_seed_same_bytes_for_any_thread_count() {
    let dir = tempfile::tempdir().unwrap();
    let file = write_circuit(dir.path(), REPETITION_NOISY);
    let mut outputs = Vec::new();
    for threads in ["1", "2"] {
        let out = dir.path().join(format!("t{threads}"));
        let o = run_threads(
            &[
                "shots",
                &file,
                "--noise",
                "circuit p=0.01",
                "--shots",
                "9000",
                "--seed",
                "5",
                "--measurements",
                "--out",
                out.to_str().unwrap(),
            ],
            threads,
        );
        assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
        let read = |n: &str| std::fs::read(out.join(n)).unwrap();
        outputs.push((
            read("detectors.npy"),
            read("observables.npy"),
            read("measurements.npy"),
        ));
    }
    assert!(outputs[0] == outputs[1]);
    assert!(outputs[0].0.contains(&1), "expected some detection events");
}

/// The files parse as NumPy .npy, the packed variant unpacks to the unpacked one (little-endian
/// bit order), and `--format bits` prints the same rows.
#[test]
fn cli_npy_packed_and_01_agree() {
    let dir = tempfile::tempdir().unwrap();
    let file = write_circuit(dir.path(), REPETITION_NOISY);
    let shots = "1500";
    let plain = dir.path().join("plain");
    let packed = dir.path().join("packed");
    let common = [
        "shots",
        &file,
        "--shots",
        shots,
        "--seed",
        "9",
        "--noise",
        "circuit p=0.02",
    ];
    let run = |extra: &[&str]| {
        let mut args: Vec<&str> = common.to_vec();
        args.extend_from_slice(extra);
        let o = run_threads(&args, "2");
        assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
        o
    };
    run(&["--out", plain.to_str().unwrap()]);
    run(&["--out", packed.to_str().unwrap(), "--packed"]);
    let lines = String::from_utf8(run(&["--format", "bits"]).stdout).unwrap();
    let (descr, (rows, cols), data) = read_npy(&plain.join("detectors.npy"));
    assert_eq!(descr, "|u1");
    assert_eq!((rows, cols), (1500, 6));
    assert_eq!(data.len(), rows * cols);
    assert!(data.iter().all(|&b| b <= 1));
    let (_, (prow, pcols), pdata) = read_npy(&packed.join("detectors.npy"));
    assert_eq!((prow, pcols), (1500, 1));
    let (_, (orow, ocols), odata) = read_npy(&plain.join("observables.npy"));
    assert_eq!((orow, ocols), (1500, 1));
    let lines: Vec<&str> = lines.lines().collect();
    assert_eq!(lines.len(), 1500);
    for s in 0..rows {
        for d in 0..cols {
            assert_eq!(
                pdata[s * pcols + d / 8] >> (d % 8) & 1,
                data[s * cols + d],
                "shot {s} detector {d}"
            );
        }
        let want: String = data[s * cols..(s + 1) * cols]
            .iter()
            .map(|b| char::from(b'0' + b))
            .collect::<String>()
            + " "
            + &char::from(b'0' + odata[s]).to_string();
        assert_eq!(lines[s], want, "shot {s}");
    }
    // No temporary files are left behind.
    for entry in std::fs::read_dir(&plain).unwrap() {
        let name = entry.unwrap().file_name().to_string_lossy().into_owned();
        assert!(!name.contains(".tmp"), "{name}");
    }
}

/// A bad `--noise` value is reported with a caret into the option text and a suggestion.
#[test]
fn cli_bad_noise_spec_points_into_the_option() {
    let dir = tempfile::tempdir().unwrap();
    let file = write_circuit(dir.path(), BELL_FOR_PRESET);
    let o = run_threads(
        &[
            "shots",
            &file,
            "--noise",
            "circuit p=0.01 bais=3",
            "--shots",
            "10",
            "--format",
            "bits",
        ],
        "1",
    );
    assert_eq!(o.status.code(), Some(1));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("unknown key `bais`"), "{err}");
    assert!(err.contains("--> --noise:1:16"), "{err}");
    assert!(err.contains("did you mean `bias`?"), "{err}");
}

/// A few variants of every generated family: both logical bases, both check styles, both
/// entanglers, both coupling orders, rectangular patches and the XZZX torus.
fn generated_specs() -> Vec<slant::gen::GenSpec> {
    use slant::gen::{Entangler, Family, Flip, GenSpec, LogicalBasis, Order, Style};
    let mut out = Vec::new();
    for flip in [Flip::X, Flip::Z] {
        for style in [Style::Ancilla, Style::Product] {
            let mut s = GenSpec::new(Family::Repetition, 3);
            s.rounds = 2;
            s.flip = Some(flip);
            s.style = Some(style);
            out.push(s);
        }
    }
    for family in [Family::Surface, Family::Xzzx] {
        for (dx, dz) in [(3, 3), (3, 5)] {
            for basis in [LogicalBasis::Z, LogicalBasis::X] {
                let mut s = GenSpec::new(family, dz);
                s.dx = dx;
                s.rounds = 2;
                s.basis = Some(basis);
                let mut p = s.clone();
                p.style = Some(Style::Product);
                out.push(p);
                for (e, o) in [
                    (Entangler::Native, Order::hook_safe()),
                    (Entangler::Cx, Order::hook_aligned()),
                ] {
                    let mut a = s.clone();
                    a.entangler = Some(e);
                    a.order = Some(o);
                    out.push(a);
                }
            }
        }
    }
    for (dx, dz) in [(4, 3), (3, 4), (5, 3)] {
        let mut s = GenSpec::new(Family::Xzzx, dz);
        s.dx = dx;
        s.rounds = 2;
        s.periodic = true;
        out.push(s);
    }
    out
}

/// Every generated family is a valid noiseless memory experiment: in 1024 sampled shots no
/// detector fires and no observable flips, while every record whose noiseless outcome is random
/// (e.g. the first round of the checks that do not stabilise the initial product state) takes
/// both values (each fails with probability 2^-1023) — so the frame's gauge randomisation is live and the zero result is not vacuous.
#[test]
fn generated_families_have_no_detection_events_without_noise() {
    let what = Outputs {
        detectors: true,
        observables: true,
        measurements: true,
    };
    for spec in generated_specs() {
        let line = spec.command_line().unwrap_or_else(|e| panic!("{e}"));
        let text = slant::gen::generate(&spec).unwrap_or_else(|e| panic!("{line}: {e}"));
        let c = load("t.slant", &text);
        assert!(
            !c.detectors.is_empty() && !c.observables.is_empty(),
            "{line}"
        );
        assert!(
            c.ops().all(|(_, op)| !matches!(op.kind, OpKind::Noise(_))),
            "{line}: generated circuits carry no noise"
        );
        let sampler = Sampler::new(&c);
        let reference = sampler.reference().clone();
        let mut seen = vec![[false; 2]; c.records.len()];
        sampler.sample(1024, 11, what, |b| {
            assert!(b.detectors.not_any(), "{line}: detector fired");
            assert!(b.observables.not_any(), "{line}: observable flipped");
            for (r, seen) in seen.iter_mut().enumerate() {
                for s in 0..b.shots {
                    seen[usize::from(b.get(&b.measurements, r, s))] = true;
                }
            }
        });
        // A record that is not random by itself may still follow an earlier random one (a
        // repeated check), so only random ⇒ both values is required.
        for (r, seen) in seen.iter().enumerate() {
            if reference.random[r] {
                assert!(seen[0] && seen[1], "{line}: random record {r} is constant");
            }
        }
    }
}
