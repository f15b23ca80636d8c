//! Gate implementations and idle channels against their physics: Pauli twirling of amplitude
//! and phase damping, the mid-gate faults of a generic (rotation) CX checked by an independent
//! matrix routine, the bias-preserving CX of cat qubits, and the Clifford facts the bias report
//! relies on; and a model's own rotation generators, which must implement their gate.

use crate::noise::{assert_refused, model, ONE_CX};
use crate::support::load;
use slant::analysis::analyze_bias as analyze;
use slant::base::{Gate, Pauli};
use slant::ir::{Channel, Circuit};
use slant::noise::{
    cat_idle, compile, mid_gate_fault, twirled_decoherence, Generator, Implementation,
};

fn idx(name: &str) -> usize {
    Pauli::pair_index(name).unwrap()
}

/// Pauli-twirled amplitude and phase damping: "Surface code with decoherence", PRA 86, 062318
/// (2012): px = py = (1 − e^(−t/T1))/4, pz = (1 − e^(−t/T2))/2 − (1 − e^(−t/T1))/4.
#[test]
fn twirling_formulas_and_limits() {
    let (t, t1, t2) = (0.3, 20.0, 15.0);
    let (px, py, pz) = twirled_decoherence(t, t1, t2);
    let a = 1.0 - (-t / t1).exp();
    assert!((px - a / 4.0).abs() < 1e-15 && (py - a / 4.0).abs() < 1e-15);
    assert!((pz - ((1.0 - (-t / t2).exp()) / 2.0 - a / 4.0)).abs() < 1e-15);
    // t → 0: no error; first order px ≈ t/(4T1).
    assert_eq!(twirled_decoherence(0.0, t1, t2), (0.0, 0.0, 0.0));
    let (px, _, _) = twirled_decoherence(1e-6, t1, t2);
    assert!((px / (1e-6 / (4.0 * t1)) - 1.0).abs() < 1e-6);
    // T1 → ∞: pure dephasing with pz = (1 − e^(−t/T2))/2.
    let (px, py, pz) = twirled_decoherence(t, f64::INFINITY, t2);
    assert_eq!((px, py), (0.0, 0.0));
    assert!((pz - (1.0 - (-t / t2).exp()) / 2.0).abs() < 1e-15);
    // T2 = 2T1 (no pure dephasing) still gives pz ≥ 0.
    assert!(twirled_decoherence(1.0, 1.0, 2.0).2 >= 0.0);
    // Cat-like idle without bit flips is pure dephasing.
    let (x, y, z) = cat_idle(t, f64::INFINITY, t2);
    assert_eq!((x, y), (0.0, 0.0));
    assert!((z - (1.0 - (-t / t2).exp()) / 2.0).abs() < 1e-15);
}

/// An independent 4×4 complex routine: CX = exp(iπΠ) with Π = |1⟩⟨1| ⊗ |−⟩⟨−| (the projector
/// (I−Z_c)(I−X_t)/4), so the rest of the gate after time s is I + (e^{iφ} − 1)Π, φ = π(1−s).
/// The twirled distribution of V Z_t V† averaged over s by the midpoint rule must give
/// IZ 3/8, ZZ 3/8, IY 1/8, ZY 1/8 (values stated in issue 6, derived there by direct matrix
/// exponentiation; re-derived here).
#[test]
fn cx_rotation_check_values() {
    type C = (f64, f64);
    let mul = |a: C, b: C| (a.0 * b.0 - a.1 * b.1, a.0 * b.1 + a.1 * b.0);
    let kron = |a: [[C; 2]; 2], b: [[C; 2]; 2]| {
        let mut m = [[(0.0, 0.0); 4]; 4];
        for i in 0..4 {
            for j in 0..4 {
                m[i][j] = mul(a[i / 2][j / 2], b[i % 2][j % 2]);
            }
        }
        m
    };
    let o = (1.0, 0.0);
    let z0 = (0.0, 0.0);
    let pi = |p: char| -> [[C; 2]; 2] {
        match p {
            'I' => [[o, z0], [z0, o]],
            'X' => [[z0, o], [o, z0]],
            'Y' => [[z0, (0.0, -1.0)], [(0.0, 1.0), z0]],
            _ => [[o, z0], [z0, (-1.0, 0.0)]],
        }
    };
    let proj1 = [[z0, z0], [z0, o]];
    let minus = [[(0.5, 0.0), (-0.5, 0.0)], [(-0.5, 0.0), (0.5, 0.0)]];
    let big_pi = kron(proj1, minus);
    let matmul = |a: &[[C; 4]; 4], b: &[[C; 4]; 4]| {
        let mut m = [[(0.0, 0.0); 4]; 4];
        for i in 0..4 {
            for j in 0..4 {
                for k in 0..4 {
                    let t = mul(a[i][k], b[k][j]);
                    m[i][j].0 += t.0;
                    m[i][j].1 += t.1;
                }
            }
        }
        m
    };
    let steps = 4000;
    let names = ["IZ", "ZZ", "IY", "ZY"];
    let mut acc = [0.0; 4];
    let mut total = 0.0;
    for k in 0..steps {
        let s = (k as f64 + 0.5) / steps as f64;
        let phi = std::f64::consts::PI * (1.0 - s);
        let e = (phi.cos() - 1.0, phi.sin());
        let mut v = [[(0.0, 0.0); 4]; 4];
        let mut vd = v;
        for i in 0..4 {
            for j in 0..4 {
                let id = if i == j { 1.0 } else { 0.0 };
                let t = mul(e, big_pi[i][j]);
                v[i][j] = (id + t.0, t.1);
                let t2 = mul((e.0, -e.1), big_pi[i][j]);
                vd[i][j] = (id + t2.0, t2.1);
            }
        }
        let f = matmul(&matmul(&v, &kron(pi('I'), pi('Z'))), &vd);
        for a in ['I', 'X', 'Y', 'Z'] {
            for b in ['I', 'X', 'Y', 'Z'] {
                let p = kron(pi(a), pi(b));
                let mut tr = (0.0, 0.0);
                for i in 0..4 {
                    for j in 0..4 {
                        let t = mul(p[i][j], f[j][i]);
                        tr.0 += t.0;
                        tr.1 += t.1;
                    }
                }
                let w = (tr.0 * tr.0 + tr.1 * tr.1) / 16.0 / steps as f64;
                total += w;
                let name = format!("{a}{b}");
                if let Some(n) = names.iter().position(|x| *x == name) {
                    acc[n] += w;
                }
            }
        }
    }
    let expected = [3.0 / 8.0, 3.0 / 8.0, 1.0 / 8.0, 1.0 / 8.0];
    assert!((total - 1.0).abs() < 1e-9);
    let lib = mid_gate_fault(Gate::Cx, Implementation::Rotation, [Pauli::I, Pauli::Z]);
    for (n, name) in names.iter().enumerate() {
        assert!((acc[n] - expected[n]).abs() < 1e-6, "{name}: {}", acc[n]);
        assert!(
            (lib[idx(name)] - expected[n]).abs() < 1e-9,
            "{name}: lib {}",
            lib[idx(name)]
        );
    }
    // A control Z commutes with the generator and stays ZI.
    let c = mid_gate_fault(Gate::Cx, Implementation::Rotation, [Pauli::Z, Pauli::I]);
    assert!((c[idx("ZI")] - 1.0).abs() < 1e-12);
}

/// Bias-preserving CX of cat qubits: target Z → Z_t or Z_c Z_t with equal weight, control Z
/// stays ("Repetition cat qubits for fault-tolerant quantum computation", PRX 9, 041053 (2019);
/// "Bias-preserving gates with stabilized cat qubits", Sci. Adv. 6, eaay5901 (2020) — the equal
/// split is recalled from memory, not re-derived).
#[test]
fn bias_preserving_cx() {
    let t = mid_gate_fault(
        Gate::Cx,
        Implementation::BiasPreserving,
        [Pauli::I, Pauli::Z],
    );
    assert_eq!((t[idx("IZ")], t[idx("ZZ")]), (0.5, 0.5));
    let c = mid_gate_fault(
        Gate::Cx,
        Implementation::BiasPreserving,
        [Pauli::Z, Pauli::I],
    );
    assert_eq!(c[idx("ZI")], 1.0);
    // Bit flips are untouched (after-gate).
    let x = mid_gate_fault(
        Gate::Cx,
        Implementation::BiasPreserving,
        [Pauli::X, Pauli::I],
    );
    assert_eq!(x[idx("XI")], 1.0);
}

/// CZ commutes with Z faults under any implementation; H maps Z to X (Clifford tables).
#[test]
fn cz_keeps_z_and_h_maps_z_to_x() {
    for imp in Implementation::ALL {
        for f in [
            [Pauli::Z, Pauli::I],
            [Pauli::I, Pauli::Z],
            [Pauli::Z, Pauli::Z],
        ] {
            let d = mid_gate_fault(Gate::Cz, imp, f);
            let name = format!("{}{}", f[0].letter(), f[1].letter());
            assert!((d[idx(&name)] - 1.0).abs() < 1e-12, "{imp:?} {name}");
        }
    }
    assert_eq!(
        Gate::H.conjugate([Pauli::Z, Pauli::I]),
        [Pauli::X, Pauli::I]
    );
    assert_eq!(
        Generator::default_for(Gate::H)
            .conjugate([Pauli::Z, Pauli::I])
            .0,
        [Pauli::X, Pauli::I]
    );
}

fn cx_rotation_model(extra: &str) -> String {
    format!(
        "[gates.cx]\nzi = 0.001\niz = 0.001\nimplementation = \"rotation\"\n{extra}[measure]\nflip = 0\n[reset]\np = 0\n"
    )
}

/// The noise channels of a compiled circuit, in order.
fn channels(c: &Circuit) -> Vec<Channel> {
    c.layers
        .iter()
        .flat_map(|l| &l.ops)
        .filter_map(|o| match &o.kind {
            slant::ir::OpKind::Noise(ch) => Some(ch.clone()),
            _ => None,
        })
        .collect()
}

/// A model may give a gate's rotation generator. Written equal to the default, it compiles to
/// exactly the default channel; equal up to a global phase (no `II` term), to the same channel
/// up to rounding; a different path to the same gate gives a different channel, so the
/// generator is really used.
#[test]
fn model_generator_overrides_default() {
    let circuit = load("one.slant", ONE_CX);
    let default = compile(&circuit, &model(&cx_rotation_model("")).unwrap()).unwrap();
    let explicit = model(&cx_rotation_model(
        "generator = \"II - ZI - IX + ZX\"\nangle = \"pi/4\"\n",
    ))
    .unwrap();
    assert!(explicit.gates[0].1.generator.is_some());
    let c = compile(&circuit, &explicit).unwrap();
    assert_eq!(channels(&c.circuit), channels(&default.circuit));
    assert_eq!(c.notes[0].generator, explicit.gates[0].1.generator);
    let report = analyze(&c.circuit, &c.notes);
    let cx = report.classes.iter().find(|c| c.class == "cx").unwrap();
    assert!((cx.output_z_share() - 7.0 / 8.0).abs() < 1e-9);

    for (extra, what) in [
        (
            "generator = \"ZX - ZI - IX\"\nangle = 0.7853981633974483\n",
            "no II",
        ),
        (
            "generator = \"-II + ZI + IX - ZX\"\nangle = \"-pi/4\"\n",
            "negated",
        ),
    ] {
        let m = model(&cx_rotation_model(extra)).unwrap_or_else(|d| panic!("{}", d.render()));
        let c = compile(&circuit, &m).unwrap();
        for (a, b) in channels(&c.circuit).iter().zip(channels(&default.circuit)) {
            let (Channel::PairPauli(a), Channel::PairPauli(b)) = (a, &b) else {
                panic!("{what}: expected a two-qubit pauli channel")
            };
            for k in 0..15 {
                assert!((a[k] - b[k]).abs() < 1e-15, "{what}: term {k}");
            }
        }
    }

    // `II − ZI + 3 IX + ZX` = 4Π + 4·IX with Π = |1⟩⟨1| ⊗ |−⟩⟨−|: IX commutes with Π and
    // exp(iπ·IX) = −I, so exp(iπ/4·G) is CX up to a sign. Mid-gate (u = 1 − s, hand derivation):
    // the rest of the gate turns the target about X by 2πu when the control is 0 and by 3πu
    // when it is 1, so a target Z leaves as P0⊗(cos a Z + sin a Y) + P1⊗(cos b Z + sin b Y),
    // a = 2πu, b = 3πu: IZ = (cos a + cos b)/2, ZZ = (cos a − cos b)/2, IY = (sin a + sin b)/2,
    // ZY = (sin a − sin b)/2. Over u ∈ [0, 1] the squares of cos and sin average 1/2 and the
    // cross terms (cos πu ± cos 5πu)/2 average 0, so each of the four is 1/4 (the default
    // generator gives 3/8, 3/8, 1/8, 1/8).
    let other = model(&cx_rotation_model(
        "generator = \"II - ZI + 3 IX + ZX\"\nangle = \"pi/4\"\n",
    ))
    .unwrap_or_else(|d| panic!("{}", d.render()));
    let g = other.gates[0].1.generator.as_ref().unwrap();
    let d = slant::noise::mid_gate_fault_with(
        Gate::Cx,
        Implementation::Rotation,
        Some(g),
        [Pauli::I, Pauli::Z],
    );
    for name in ["IZ", "ZZ", "IY", "ZY"] {
        assert!(
            (d[idx(name)] - 0.25).abs() < 1e-9,
            "{name}: {}",
            d[idx(name)]
        );
    }
    // Through the compiler and the bias report: the Z-type share of the cx channel is now
    // (1 + 1/2)/2 = 3/4 (control Z stays ZI; target Z is Z-type half the time).
    let c = compile(&circuit, &other).unwrap();
    assert_ne!(channels(&c.circuit), channels(&default.circuit));
    let report = analyze(&c.circuit, &c.notes);
    let cx = report.classes.iter().find(|c| c.class == "cx").unwrap();
    assert!(
        (cx.output_z_share() - 3.0 / 4.0).abs() < 1e-9,
        "{}",
        cx.output_z_share()
    );
}

/// Generators that are not the gate, malformed, or misplaced are refused at line:col.
#[test]
fn bad_generators_are_located() {
    let cases: &[(&str, &str, usize, usize)] = &[
        // √CX, not CX: refused at the generator value.
        (
            "generator = \"II - ZI - IX + ZX\"\nangle = \"pi/8\"\n",
            "this generator does not implement `cx`",
            5,
            13,
        ),
        // CZ's generator given to cx.
        (
            "generator = \"II - ZI - IZ + ZZ\"\nangle = \"pi/4\"\n",
            "this generator does not implement `cx`",
            5,
            13,
        ),
        // A Pauli string of the wrong length, located inside the string.
        (
            "generator = \"II - ZI - IXZ + ZX\"\nangle = \"pi/4\"\n",
            "`IXZ` has 3 letters",
            5,
            24,
        ),
        (
            "generator = \"II - ZI - IX + ZX\"\n",
            "`generator` needs `angle`",
            5,
            1,
        ),
        ("angle = \"pi/4\"\n", "`angle` needs `generator`", 5, 1),
        (
            "generator = \"II - ZI - IX + ZX\"\nangle = \"tau/4\"\n",
            "`tau/4` is not an angle",
            6,
            9,
        ),
        (
            "generator = \"1e400 II\"\nangle = 1\n",
            "coefficient `1e400` is not finite",
            5,
            14,
        ),
        (
            "generator = \"II - ZI - IX + ZX\"\nangle = \"64*pi\"\n",
            "winds too far",
            6,
            9,
        ),
    ];
    for &(extra, msg, line, col) in cases {
        let text = cx_rotation_model(extra);
        let d = model(&text).expect_err(&text);
        assert!(d.message.contains(msg), "{text}: {}", d.message);
        let (_, l, c) = d.location().unwrap();
        assert_eq!((l, c), (line, col), "{text}: {}", d.message);
    }
    let d = model(&cx_rotation_model(
        "generator = \"II - ZI - IX + ZX\"\nangle = \"pi/8\"\n",
    ))
    .unwrap_err();
    assert_eq!(
        d.hint.as_deref(),
        Some("`cx` is, for example, `generator = \"II - ZI - IX + ZX\"` with `angle = \"pi/4\"`")
    );
    let others: &[(&str, &str, usize, usize)] = &[
        // A generator needs the rotation implementation.
        (
            "[gates.cx]\np = 0.01\ngenerator = \"II - ZI - IX + ZX\"\nangle = \"pi/4\"\n",
            "`generator` applies only to `implementation = \"rotation\"`",
            3,
            1,
        ),
        // ... and one gate.
        (
            "[gates.default]\np = 0.01\nimplementation = \"rotation\"\ngenerator = \"X\"\nangle = \"pi/2\"\n",
            "`generator` describes one gate, not `gates.default`",
            4,
            1,
        ),
        // H to four digits is off by about 1e-5: refused, with the deviation.
        (
            "[gates.h]\np = 0.01\nimplementation = \"rotation\"\ngenerator = \"0.7071 X + 0.7071 Z\"\nangle = \"pi/2\"\n",
            "differs from the gate by 1.5e-5",
            4,
            13,
        ),
        // Inside an override too.
        (
            "p = 0.01\n[gates.default]\n[[override]]\nrole = \"data\"\ngates.cz = { implementation = \"rotation\", generator = \"II - ZI - IX + ZX\", angle = \"pi/4\" }\n",
            "this generator does not implement `cz`",
            5,
            55,
        ),
    ];
    assert_refused(others);
    // Eight digits of 1/√2 are close enough.
    model("[gates.h]\np = 0.01\nimplementation = \"rotation\"\ngenerator = \"0.70710678 X + 0.70710678 Z\"\nangle = \"pi/2\"\n")
        .unwrap_or_else(|d| panic!("{}", d.render()));
}
