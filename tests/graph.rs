//! Fault-graph extraction (`slant graph`, `slant trace`): structure, exact statistics, exports.

use std::collections::BTreeSet;

use crate::support::{load_with, slant, Runner};
use slant::base::{Gate, Pauli};
use slant::faults::{self, ExtractOptions, FaultGraph};
use slant::faults::{Format, View};
use slant::ir::{Circuit, OpKind};

fn graph_of(text: &str, set: &[(&str, i64)]) -> FaultGraph {
    faults::extract(&load_with("t.slant", text, set), &ExtractOptions::default())
}

/// Bit-flip repetition code, ancilla-based extraction with perfect measurements and a bit flip
/// on every data qubit at the start of each round (code capacity).
const REPETITION: &str = "\
param d = 3
param rounds = 2
param p = 0
for k in 0..d { qubit q[k] at (2*k, 0) role data }
for k in 0..d-1 { qubit a[k] at (2*k+1, 0) role ancilla }
reset z q[0..d], a[0..d-1]
for r in 0..rounds {
  round {
    noise bitflip p=0.01 q[0..d]
    layer { cx q[0..d-1] a[0..d-1] }
    layer { cx q[1..d] a[0..d-1] }
    layer { for k in 0..d-1 { measure z a[k] -> m[r, k] } }
    layer { reset z a[0..d-1] }
    for k in 0..d-1 {
      if r == 0 { detector at (2*k+1, 0, r) = m[r, k] } else {
        detector at (2*k+1, 0, r) = m[r, k] ^ m[r-1, k]
      }
    }
  }
}
measure z q[0..d] -> f[0..d]
observable logical = f[0]
";

#[test]
fn repetition_code_capacity_is_a_path_graph() {
    // Structure check (common practice; e.g. "Topological quantum memory", J. Math. Phys. 43,
    // 4452 (2002), for the repetition code as the 1-D matching problem): under code-capacity bit
    // flips each round has d−1 detectors and d edges forming a path with both ends on the
    // boundary; the observable (data qubit 0) sits on exactly one boundary edge per round.
    for d in [3i64, 5, 7] {
        let rounds = 3;
        let g = graph_of(REPETITION, &[("d", d), ("rounds", rounds)]);
        let n = (d - 1) as usize;
        assert_eq!(g.detectors.len(), n * rounds as usize);
        let (mg, stats) = g.matching_graph();
        assert_eq!(stats.observable_conflicts, 0);
        assert_eq!(mg.edges.len(), d as usize * rounds as usize, "d={d}");
        for r in 0..rounds as u32 {
            let base = r * n as u32;
            let mut expected: BTreeSet<(u32, Option<u32>)> = BTreeSet::new();
            expected.insert((base, None));
            expected.insert((base + n as u32 - 1, None));
            for k in 0..n as u32 - 1 {
                expected.insert((base + k, Some(base + k + 1)));
            }
            let got: BTreeSet<(u32, Option<u32>)> = mg
                .edges
                .iter()
                .filter(|e| e.a >= base && e.a < base + n as u32)
                .map(|e| (e.a, e.b))
                .collect();
            assert_eq!(got, expected, "d={d} round {r}");
            let logical: Vec<_> = mg
                .edges
                .iter()
                .filter(|e| e.a >= base && e.a < base + n as u32 && !e.observables.is_empty())
                .collect();
            assert_eq!(logical.len(), 1);
            assert_eq!((logical[0].a, logical[0].b), (base, None));
        }
        for e in &mg.edges {
            assert!((e.p - 0.01).abs() < 1e-15);
            assert!((e.weight() - (0.99f64 / 0.01).ln()).abs() < 1e-12);
        }
    }
}

/// Rotated distance-3 surface code, Z memory, Pauli-product measurements, depolarizing data
/// noise. Data `q[3r+c]` on a 3×3 grid; stabilizers written out (checkerboard with X
/// boundaries top and bottom). Z_L is the top row.
const SURFACE3: &str = "\
param rounds = 2
for r in 0..3 { for c in 0..3 { qubit q[3*r+c] at (2*c, 2*r) role data } }
reset z q[0..9]
for t in 0..rounds {
  round {
    noise depolarizing p=0.01 q[0..9]
    measure z q[1] * z q[2] * z q[4] * z q[5] -> z0[t]
    measure z q[3] * z q[4] * z q[6] * z q[7] -> z1[t]
    measure z q[0] * z q[3] -> z2[t]
    measure z q[5] * z q[8] -> z3[t]
    measure x q[0] * x q[1] * x q[3] * x q[4] -> x0[t]
    measure x q[4] * x q[5] * x q[7] * x q[8] -> x1[t]
    measure x q[1] * x q[2] -> x2[t]
    measure x q[6] * x q[7] -> x3[t]
    if t == 0 {
      detector at (3, 1, t) = z0[t]
      detector at (1, 3, t) = z1[t]
      detector at (-1, 1, t) = z2[t]
      detector at (5, 3, t) = z3[t]
    } else {
      detector at (3, 1, t) = z0[t] ^ z0[t-1]
      detector at (1, 3, t) = z1[t] ^ z1[t-1]
      detector at (-1, 1, t) = z2[t] ^ z2[t-1]
      detector at (5, 3, t) = z3[t] ^ z3[t-1]
      detector at (1, 1, t) = x0[t] ^ x0[t-1]
      detector at (3, 3, t) = x1[t] ^ x1[t-1]
      detector at (3, -1, t) = x2[t] ^ x2[t-1]
      detector at (1, 5, t) = x3[t] ^ x3[t-1]
    }
  }
}
measure z q[0..9] -> f[0..9]
detector at (3, 1, rounds) = f[1] ^ f[2] ^ f[4] ^ f[5] ^ z0[rounds-1]
detector at (1, 3, rounds) = f[3] ^ f[4] ^ f[6] ^ f[7] ^ z1[rounds-1]
detector at (-1, 1, rounds) = f[0] ^ f[3] ^ z2[rounds-1]
detector at (5, 3, rounds) = f[5] ^ f[8] ^ z3[rounds-1]
observable logical = f[0] ^ f[1] ^ f[2]
";

#[test]
fn css_y_faults_split_into_x_and_z_parts() {
    // In a CSS code a Y fault is X·Z; its X part trips Z checks, its Z part X checks, and each
    // part is a edge of its own (the X and Z faults of the same channel). Every hyperedge
    // must therefore split (common practice for matching CSS codes).
    let g = graph_of(SURFACE3, &[("rounds", 3)]);
    assert!(g.hyperedges.hyperedges > 0);
    assert_eq!(g.hyperedges.split, g.hyperedges.hyperedges);
    assert!(g.hyperedges.unsplit.is_empty());
    for dec in &g.splits {
        let m = &g.edges[dec.edge as usize];
        let (mut dets, mut obs) = (Vec::new(), Vec::new());
        for (d, o) in g.parts(dec) {
            assert!((1..=2).contains(&d.len()));
            assert!(g
                .edges
                .iter()
                .any(|x| x.detectors == d && x.observables == o));
            dets = slant::base::xor_sets(&dets, d);
            obs = slant::base::xor_sets(&obs, o);
        }
        assert_eq!(dets, m.detectors);
        assert_eq!(obs, m.observables);
    }
    // Z-type checks have 4 detectors per round; X-type ones appear from the second round.
    assert_eq!(g.detectors.len(), 4 + 8 * 2 + 4);
    let (mg, stats) = g.matching_graph();
    assert_eq!(stats.unsplit.len(), 0);
    assert_eq!(stats.observable_conflicts, 0);
    assert!(mg.edges.iter().all(|e| e.b.is_none_or(|b| b > e.a)));
}

/// A small circuit exercising every channel kind, for the exact comparison.
const MIXED: &str = "\
qubit q[0..3]
qubit a[0..2]
reset z q[0..3], a[0..2]
noise depolarizing p=0.02 q[0..3]
layer { cx q[0] a[0] ; cx q[1] a[1] }
noise pair_depolarizing p=0.03 q[0] a[0]
noise pauli x=0.01 y=0.02 z=0.04 q[1]
noise joint p=0.05 x q[1] * z q[2]
layer { cx q[1] a[0] ; cx q[2] a[1] }
h a[1]
noise dephasing p=0.03 a[1]
h a[1]
measure z a[0] -> m0 flip 0.02
measure z a[1] -> m1
measure z q[0..3] -> f[0..3]
detector = m0 ^ f[0] ^ f[1]
detector = m1 ^ f[1] ^ f[2]
detector = f[0]
observable logical = f[0] ^ f[1] ^ f[2]
";

/// One noise location of the circuit: the op's position and one application's outcomes
/// `(probability, Paulis on qubits)` or a measurement flip.
struct Location {
    layer: usize,
    op: usize,
    app: usize,
    outcomes: Vec<(f64, Vec<Pauli>)>,
}

/// Exact detector marginals and pair probabilities by enumerating every combination of channel
/// outcomes (terms mutually exclusive, as written) and propagating each Pauli frame forward
/// through the circuit with the gates' Heisenberg images. Independent of the backward sweep and
/// of the independent-edge conversion.
fn exact_by_enumeration(c: &Circuit) -> (Vec<f64>, Vec<Vec<f64>>) {
    let mut locs = Vec::new();
    for (li, layer) in c.layers.iter().enumerate() {
        for (oi, op) in layer.ops.iter().enumerate() {
            match &op.kind {
                OpKind::Noise(ch) => {
                    for app in 0..op.targets.len() / ch.arity() {
                        let mut outcomes = vec![(1.0 - ch.total(), vec![Pauli::I; ch.arity()])];
                        outcomes.extend(ch.terms());
                        locs.push(Location {
                            layer: li,
                            op: oi,
                            app,
                            outcomes,
                        });
                    }
                }
                OpKind::Measure { flip, .. } if *flip > 0.0 => locs.push(Location {
                    layer: li,
                    op: oi,
                    app: 0,
                    outcomes: vec![(1.0 - flip, vec![]), (*flip, vec![Pauli::X])],
                }),
                _ => {}
            }
        }
    }
    let nd = c.detectors.len();
    let mut marg = vec![0.0; nd];
    let mut pair = vec![vec![0.0; nd]; nd];
    let mut choice = vec![0usize; locs.len()];
    loop {
        let prob: f64 = locs
            .iter()
            .zip(&choice)
            .map(|(l, &k)| l.outcomes[k].0)
            .product();
        let mut x = vec![false; c.qubits.len()];
        let mut z = vec![false; c.qubits.len()];
        let mut rec = vec![false; c.records.len()];
        for (li, layer) in c.layers.iter().enumerate() {
            for (oi, op) in layer.ops.iter().enumerate() {
                let chosen: Vec<(usize, &Vec<Pauli>)> = locs
                    .iter()
                    .zip(&choice)
                    .filter(|(l, _)| l.layer == li && l.op == oi)
                    .map(|(l, &k)| (l.app, &l.outcomes[k].1))
                    .collect();
                match &op.kind {
                    OpKind::Noise(ch) => {
                        for (app, ps) in chosen {
                            let qs = &op.targets[app * ch.arity()..(app + 1) * ch.arity()];
                            for (&q, p) in qs.iter().zip(ps) {
                                x[q as usize] ^= p.has_x();
                                z[q as usize] ^= p.has_z();
                            }
                        }
                    }
                    OpKind::Gate(g) => {
                        for qs in op.targets.chunks(g.arity()) {
                            let mut input = [Pauli::I; 2];
                            for (i, &q) in qs.iter().enumerate() {
                                input[i] = Pauli::from_bits(x[q as usize], z[q as usize]);
                            }
                            let out = g.conjugate(input);
                            for (i, &q) in qs.iter().enumerate() {
                                x[q as usize] = out[i].has_x();
                                z[q as usize] = out[i].has_z();
                            }
                        }
                        let _: Gate = *g;
                    }
                    OpKind::Measure { record, .. } => {
                        let mut flip = chosen.iter().any(|(_, ps)| !ps.is_empty());
                        for (&q, &p) in op.targets.iter().zip(&op.paulis) {
                            flip ^= Pauli::from_bits(x[q as usize], z[q as usize]).anticommutes(p);
                        }
                        rec[*record as usize] = flip;
                    }
                    OpKind::Reset(_) => {
                        for &q in &op.targets {
                            x[q as usize] = false;
                            z[q as usize] = false;
                        }
                    }
                }
            }
        }
        let fired: Vec<bool> = c
            .detectors
            .iter()
            .map(|d| {
                d.records
                    .iter()
                    .fold(false, |acc, &r| acc ^ rec[r as usize])
            })
            .collect();
        for i in 0..nd {
            if fired[i] {
                marg[i] += prob;
                for (j, &fj) in fired.iter().enumerate() {
                    if fj {
                        pair[i][j] += prob;
                    }
                }
            }
        }
        // Next combination (mixed radix).
        let mut i = 0;
        loop {
            if i == locs.len() {
                return (marg, pair);
            }
            choice[i] += 1;
            if choice[i] < locs[i].outcomes.len() {
                break;
            }
            choice[i] = 0;
            i += 1;
        }
    }
}

#[test]
#[allow(clippy::needless_range_loop)] // i and j index two matrices at once
fn detector_statistics_match_exhaustive_enumeration() {
    // Exact check: marginals and pair probabilities from the graph's independent edges,
    // P(odd number of touching edges fire), against exhaustive enumeration of the written
    // (mutually exclusive) channel terms with forward Pauli propagation. Every channel here has
    // an exact independent form (see `slant::faults` docs), so they agree to round-off.
    for text in [MIXED, REPETITION] {
        let c = load_with("t.slant", text, &[]);
        let g = faults::extract(&c, &ExtractOptions::default());
        assert_eq!(g.inexact_channels, 0);
        let (marg, pair) = exact_by_enumeration(&c);
        let from_graph = faults::detector_probabilities(&g);
        for i in 0..marg.len() {
            assert!(
                (marg[i] - from_graph[i]).abs() < 1e-12,
                "detector {i}: {} vs {}",
                marg[i],
                from_graph[i]
            );
            for j in 0..marg.len() {
                if i != j {
                    let p = faults::pair_probability(&g, i as u32, j as u32);
                    assert!((pair[i][j] - p).abs() < 1e-12, "pair {i},{j}");
                }
            }
        }
    }
}

#[test]
fn classes_follow_the_injected_pauli() {
    let g = graph_of(MIXED, &[]);
    for c in &g.provenance {
        let z_only = c.result.is_none() && c.term.iter().all(|p| !p.has_x());
        assert_eq!(c.class == faults::FaultClass::High, z_only, "{c:?}");
    }
    let flips = ExtractOptions {
        high_rate_flips: true,
    };
    let g2 = faults::extract(&load_with("t.slant", MIXED, &[]), &flips);
    assert!(g2
        .provenance
        .iter()
        .filter(|c| c.result.is_some())
        .all(|c| c.class == faults::FaultClass::High));
}

/// Reads a Matrix Market coordinate file into (rows, cols, columns as sorted row lists).
fn read_mtx(text: &str) -> (usize, usize, Vec<Vec<u32>>) {
    let mut lines = text.lines().filter(|l| !l.starts_with('%'));
    let head: Vec<usize> = lines
        .next()
        .unwrap()
        .split_whitespace()
        .map(|x| x.parse().unwrap())
        .collect();
    let mut cols = vec![Vec::new(); head[1]];
    let mut n = 0;
    for l in lines {
        let v: Vec<usize> = l.split_whitespace().map(|x| x.parse().unwrap()).collect();
        assert_eq!(v[2], 1);
        cols[v[1] - 1].push(v[0] as u32 - 1);
        n += 1;
    }
    assert_eq!(n, head[2]);
    for c in &mut cols {
        c.sort_unstable();
    }
    (head[0], head[1], cols)
}

fn read_npy_f64(bytes: &[u8]) -> Vec<f64> {
    assert_eq!(&bytes[..8], b"\x93NUMPY\x01\x00");
    let hl = u16::from_le_bytes([bytes[8], bytes[9]]) as usize;
    let header = std::str::from_utf8(&bytes[10..10 + hl]).unwrap();
    assert!(header.contains("'descr': '<f8'") && header.contains("'fortran_order': False"));
    assert!(header.ends_with('\n') && (10 + hl).is_multiple_of(64));
    let n: usize = header
        .split("'shape': (")
        .nth(1)
        .unwrap()
        .split(',')
        .next()
        .unwrap()
        .parse()
        .unwrap();
    let data = &bytes[10 + hl..];
    assert_eq!(data.len(), 8 * n);
    data.chunks(8)
        .map(|c| f64::from_le_bytes(c.try_into().unwrap()))
        .collect()
}

fn ids(v: &serde_json::Value) -> Vec<u32> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_u64().unwrap() as u32)
        .collect()
}

#[test]
fn exports_parse_back_to_the_same_graph() {
    let g = graph_of(SURFACE3, &[("rounds", 2)]);
    // JSON, full graph.
    let json = &slant::faults::render(&View::Full(&g), Format::Json)[0].1;
    let v: serde_json::Value = serde_json::from_slice(json).unwrap();
    assert_eq!(v["format"], "slant-fault-graph");
    assert_eq!(v["version"], 2);
    let mechs = v["edges"].as_array().unwrap();
    assert_eq!(mechs.len(), g.edges.len());
    for (m, j) in g.edges.iter().zip(mechs) {
        assert_eq!(ids(&j["detectors"]), m.detectors);
        assert_eq!(ids(&j["observables"]), m.observables);
        assert_eq!(j["probability"].as_f64().unwrap(), m.probability);
        assert_eq!(j["class"], m.classes.name());
        let r = ids(&j["provenance"]);
        assert_eq!(r[0]..r[1], m.provenance);
    }
    let prov = v["provenance"].as_array().unwrap();
    assert_eq!(prov.len(), g.provenance.len());
    let ops = v["operations"].as_array().unwrap();
    for (c, j) in g.provenance.iter().zip(prov) {
        assert_eq!(j["term"], c.term_text());
        let op = &ops[j["operation"].as_u64().unwrap() as usize];
        assert_eq!(op["location"], g.location(c));
        assert!(op["text"]
            .as_str()
            .unwrap()
            .starts_with("noise depolarizing"));
    }
    assert_eq!(v["detectors"].as_array().unwrap().len(), g.detectors.len());
    // JSON, matchable.
    let (mg, st) = g.matching_graph();
    let gl = View::Matching(&g, &mg, &st);
    let v: serde_json::Value =
        serde_json::from_slice(&slant::faults::render(&gl, Format::Json)[0].1).unwrap();
    assert_eq!(v["format"], "slant-matching-graph");
    let edges = v["edges"].as_array().unwrap();
    assert_eq!(edges.len(), mg.edges.len());
    for (e, j) in mg.edges.iter().zip(edges) {
        assert_eq!(j["a"].as_u64().unwrap() as u32, e.a);
        assert_eq!(j["b"].as_u64().map(|b| b as u32), e.b);
        assert_eq!(j["p"].as_f64().unwrap(), e.p);
        assert_eq!(ids(&j["observables"]), e.observables);
    }
    // Matrix Market + npy, full and matchable.
    for (view, cols) in [
        (
            View::Full(&g),
            g.edges
                .iter()
                .map(|m| (m.detectors.clone(), m.observables.clone(), m.probability))
                .collect::<Vec<_>>(),
        ),
        (
            View::Matching(&g, &mg, &st),
            mg.edges
                .iter()
                .map(|e| {
                    let mut d = vec![e.a];
                    d.extend(e.b);
                    (d, e.observables.clone(), e.p)
                })
                .collect(),
        ),
    ] {
        let files = slant::faults::render(&view, Format::Mtx);
        let get = |n: &str| &files.iter().find(|f| f.0 == n).unwrap().1;
        let (hr, hc, h) = read_mtx(std::str::from_utf8(get("H.mtx")).unwrap());
        let (lr, lc, l) = read_mtx(std::str::from_utf8(get("L.mtx")).unwrap());
        let priors = read_npy_f64(get("priors.npy"));
        assert_eq!((hr, lr), (g.detectors.len(), g.observables.len()));
        assert_eq!((hc, lc, priors.len()), (cols.len(), cols.len(), cols.len()));
        for (k, (d, o, p)) in cols.iter().enumerate() {
            assert_eq!(&h[k], d);
            assert_eq!(&l[k], o);
            assert_eq!(priors[k], *p);
        }
    }
    // Text: one line per edge after the header, with its detectors.
    let text = String::from_utf8(
        slant::faults::render(&View::Full(&g), Format::Text)[0]
            .1
            .clone(),
    )
    .unwrap();
    let lines: Vec<&str> = text.lines().collect();
    assert_eq!(lines.len(), 1 + g.edges.len());
    for (m, l) in g.edges.iter().zip(&lines[1..]) {
        let dets = l.split(" dets=").nth(1).unwrap().split(' ').next().unwrap();
        let parsed: Vec<u32> = if dets == "-" {
            vec![]
        } else {
            dets.split(',').map(|x| x.parse().unwrap()).collect()
        };
        assert_eq!(parsed, m.detectors);
    }
    // Dot: one node per detector plus the boundary; one edge line per matching edge.
    let dot = String::from_utf8(slant::faults::render(&gl, Format::Dot)[0].1.clone()).unwrap();
    assert_eq!(dot.matches("pos=\"").count(), g.detectors.len() + 1);
    assert_eq!(dot.matches(" -- ").count(), mg.edges.len());
}

#[test]
fn cli_graph_and_trace() {
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("rep.slant");
    std::fs::write(&file, REPETITION).unwrap();
    let out = dir.path().join("g.json");
    let st = slant()
        .args([
            "graph",
            file.to_str().unwrap(),
            "--set",
            "d=5",
            "--format",
            "json",
            "-o",
        ])
        .arg(&out)
        .run();
    assert!(st.status.success());
    let v: serde_json::Value = serde_json::from_slice(&std::fs::read(&out).unwrap()).unwrap();
    assert_eq!(v["detectors"].as_array().unwrap().len(), 8);
    let mtx = dir.path().join("mtx");
    let st = slant()
        .args([
            "graph",
            file.to_str().unwrap(),
            "--format",
            "mtx",
            "--matching",
            "-o",
        ])
        .arg(&mtx)
        .run();
    assert!(st.status.success());
    assert!(mtx.join("H.mtx").exists() && mtx.join("priors.npy").exists());
    // The edge between detectors 0 and 1 is the bit flip of q[1], written on line 9.
    let o = slant()
        .args(["trace", file.to_str().unwrap(), "--detectors", "0,1"])
        .run();
    assert!(o.status.success());
    let s = String::from_utf8(o.stdout).unwrap();
    assert!(s.contains("rep.slant:9:5"), "{s}");
    assert!(s.contains("X on q[1]"), "{s}");
    assert!(s.contains("noise bitflip p=0.01 q[0..d]"), "{s}");
    let o = slant()
        .args(["trace", file.to_str().unwrap(), "--edge", "999"])
        .run();
    assert_eq!(o.status.code(), Some(1));
}

/// A generated circuit with `noise` (a `--noise` preset) written in.
fn generated(spec: &slant::gen::GenSpec, noise: &str) -> Circuit {
    let text = slant::gen::generate(spec).unwrap_or_else(|e| panic!("{}", e.0));
    let clean = load_with("t.slant", &text, &[]);
    let spec = slant::noise::NoiseSpec::parse(noise).unwrap();
    match slant::noise::apply(&clean, &spec) {
        Ok(c) => c,
        Err(d) => panic!("{}", d.iter().map(|d| d.render()).collect::<String>()),
    }
}

#[test]
fn rotated_surface_memory_detectors_and_split() {
    use slant::gen::{Family, GenSpec};
    for d in [3u32, 5] {
        let rounds = 4;
        let spec = GenSpec {
            rounds,
            ..GenSpec::new(Family::Surface, d)
        };
        let c = generated(&spec, "circuit p=0.001");
        // A distance-d rotated surface code has d² data qubits and d² − 1 checks, half of each
        // type: (d² − 1)/2 detectors per round per basis ("Surface codes: Towards practical
        // large-scale quantum computation", Phys. Rev. A 86, 032324 (2012), rotated layout;
        // recalled from memory). In a Z-basis memory the first round's X checks are random and
        // the final data readout rebuilds only the Z checks, so the time coordinate counts
        // (d²−1)/2 at the first and at the last slice and d² − 1 in between.
        let half = ((d * d - 1) / 2) as usize;
        let mut per_time: std::collections::BTreeMap<i64, usize> = Default::default();
        for det in &c.detectors {
            *per_time
                .entry(*det.coords.last().unwrap() as i64)
                .or_default() += 1;
        }
        let counts: Vec<usize> = per_time.values().copied().collect();
        assert_eq!(counts.len(), rounds as usize + 1, "d={d}: {per_time:?}");
        assert_eq!(counts[0], half, "d={d}: {per_time:?}");
        assert_eq!(*counts.last().unwrap(), half, "d={d}: {per_time:?}");
        for &n in &counts[1..counts.len() - 1] {
            assert_eq!(n, 2 * half, "d={d}: {per_time:?}");
        }
        assert_eq!(c.detectors.len(), rounds as usize * 2 * half);

        // Every circuit-level fault is matchable after split (common practice for CSS
        // memories under depolarizing noise): its X part flips only Z-check detectors and its Z
        // part only X-check detectors, and with the hook-safe coupling order each part flips at
        // most two of them. Hyperedges exist (Y faults, two-qubit XZ-type terms) — count them —
        // and every one of them splits into existing edges.
        let g = faults::extract(&c, &ExtractOptions::default());
        assert!(
            g.hyperedges.hyperedges > 0,
            "d={d}: expected some hyperedges"
        );
        assert_eq!(g.hyperedges.split, g.hyperedges.hyperedges, "d={d}");
        assert!(g.hyperedges.unsplit.is_empty(), "d={d}");
        for m in &g.edges {
            assert!(!m.detectors.is_empty(), "d={d}: silent logical error");
        }
        let (_, stats) = g.matching_graph();
        assert!(stats.unsplit.is_empty() && stats.silent_logical.is_empty());
    }
}

#[test]
fn xzzx_under_pure_z_noise_splits_into_diagonal_chains() {
    // "The XZZX surface code", Nat. Commun. 12, 2172 (2021): under pure Z noise every error
    // flips checks along one diagonal of the lattice, so the decoding graph is a set of
    // independent one-dimensional repetition-code chains. With product-style checks and pure Z
    // data noise (capacity preset, bias=inf) there are no measurement faults, so each edge
    // joins two detectors of one round on the same diagonal, or one detector to the boundary.
    use slant::gen::{Family, GenSpec, Style};
    for d in [3u32, 5, 7] {
        let spec = GenSpec {
            rounds: 3,
            style: Some(Style::Product),
            ..GenSpec::new(Family::Xzzx, d)
        };
        let c = generated(&spec, "capacity p=0.01 bias=inf");
        let g = faults::extract(&c, &ExtractOptions::default());
        assert!(!g.edges.is_empty());
        let xy = |k: u32| {
            let c = &g.detectors[k as usize].coords;
            (c[0], c[1], c[2])
        };
        // Which diagonal direction (x − y or x + y constant) the edges follow: the same for all.
        let mut direction: Option<bool> = None;
        let mut degree = vec![0usize; g.detectors.len()];
        for m in &g.edges {
            assert!(
                (1..=2).contains(&m.detectors.len()),
                "d={d}: edge {:?} is not an edge",
                m.detectors
            );
            for &k in &m.detectors {
                degree[k as usize] += 1;
            }
            if let [a, b] = m.detectors[..] {
                let ((xa, ya, ta), (xb, yb, tb)) = (xy(a), xy(b));
                assert_eq!(ta, tb, "d={d}: edge across rounds");
                let anti = xa - ya == xb - yb;
                let main = xa + ya == xb + yb;
                assert!(anti || main, "d={d}: edge {a}-{b} not on a diagonal");
                let dir = *direction.get_or_insert(anti);
                assert_eq!(anti, dir, "d={d}: edges along both diagonals");
            }
        }
        // Chains: every detector has at most two incident edges (boundary edges included).
        assert!(degree.iter().all(|&n| n <= 2), "d={d}: {degree:?}");
        assert!(degree.iter().any(|&n| n > 0));
    }
}

#[test]
fn sampled_statistics_agree_with_the_graph() {
    // Sampler agreement: detector marginals and pair probabilities sampled with the Pauli-frame
    // sampler agree with the graph's independent-edge predictions within 5σ (binomial
    // standard error, fixed seed). The exact channel conversion makes the predictions exact
    // (module docs of `slant::faults`), so only sampling noise remains.
    use slant::gen::{Family, GenSpec};
    let cases = [
        (
            GenSpec {
                rounds: 3,
                ..GenSpec::new(Family::Repetition, 5)
            },
            "circuit p=0.01",
        ),
        (
            GenSpec {
                rounds: 2,
                ..GenSpec::new(Family::Surface, 3)
            },
            "circuit p=0.005",
        ),
        (
            GenSpec {
                rounds: 2,
                ..GenSpec::new(Family::Xzzx, 3)
            },
            "circuit p=0.005 bias=10",
        ),
    ];
    let shots = 200_000u64;
    for (spec, noise) in cases {
        let c = generated(&spec, noise);
        let g = faults::extract(&c, &ExtractOptions::default());
        let n = g.detectors.len();
        // Pairs that share a edge, where correlations are strongest.
        let mut pairs = BTreeSet::new();
        for m in &g.edges {
            for (i, &a) in m.detectors.iter().enumerate() {
                for &b in &m.detectors[i + 1..] {
                    pairs.insert((a, b));
                }
            }
        }
        let pairs: Vec<(u32, u32)> = pairs.into_iter().collect();
        let mut ones = vec![0u64; n];
        let mut both = vec![0u64; pairs.len()];
        slant::sim::sample(&c, shots, 7, slant::sim::Outputs::syndromes(), |b| {
            for s in 0..b.shots {
                for (k, o) in ones.iter_mut().enumerate() {
                    *o += u64::from(b.get(&b.detectors, k, s));
                }
                for (j, &(x, y)) in pairs.iter().enumerate() {
                    both[j] += u64::from(
                        b.get(&b.detectors, x as usize, s) && b.get(&b.detectors, y as usize, s),
                    );
                }
            }
        });
        let check = |what: String, count: u64, p: f64| {
            let f = count as f64 / shots as f64;
            let sigma = (p * (1.0 - p) / shots as f64)
                .sqrt()
                .max(1.0 / shots as f64);
            assert!(
                (f - p).abs() <= 5.0 * sigma,
                "{} {noise}: {what}: sampled {f}, graph {p}, σ {sigma}",
                spec.family.name()
            );
        };
        let marg = faults::detector_probabilities(&g);
        for k in 0..n {
            check(format!("detector {k}"), ones[k], marg[k]);
        }
        for (j, &(a, b)) in pairs.iter().enumerate() {
            check(
                format!("pair {a},{b}"),
                both[j],
                faults::pair_probability(&g, a, b),
            );
        }
        assert!(!pairs.is_empty());
    }
}
