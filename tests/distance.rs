//! `slant distance` / `analysis::distance`: circuit-level distances by fault class, checked
//! against published code distances, derivations and brute force; `slant compare` end to end.

use crate::support::{slant, Runner};
use slant::analysis::{distances, symptom, DistanceOptions, DistanceReport, Unproven, Unresolved};
use slant::faults::{ExtractOptions, FaultGraph};
use slant::gen::{generate, Entangler, Family, GenSpec, LogicalBasis, Order, Style};

fn graph_of(spec: &GenSpec, noise: &str) -> FaultGraph {
    let text = generate(spec).expect("generate");
    let circuit = crate::support::load("gen.slant", &text);
    let spec = slant::noise::NoiseSpec::parse(noise).expect("noise");
    let noisy = slant::noise::apply(&circuit, &spec).expect("apply");
    slant::faults::extract(&noisy, &ExtractOptions::default())
}

/// Distances, with every returned logical error checked independently of the search: XOR of
/// the edges' symptoms has no detectors and flips an observable.
fn report(graph: &FaultGraph) -> DistanceReport {
    let r = distances(graph, &DistanceOptions::default()).expect("distances");
    let errors = [
        r.distance.as_ref().map(|c| &c.error),
        r.high_rate.as_ref().map(|c| &c.error),
        r.lexicographic.as_ref().map(|l| &l.error),
        r.weighted.as_ref().map(|w| &w.error),
    ];
    for e in errors.into_iter().flatten() {
        let (dets, obs) = symptom(graph, &e.edges);
        assert!(dets.is_empty(), "logical error leaves detectors {dets:?}");
        assert!(!obs.is_empty(), "logical error flips no observable");
        assert_eq!(obs, e.observables);
    }
    if let Some(c) = &r.distance {
        assert_eq!(c.error.edges.len() as u32, c.value);
    }
    if let Some(l) = &r.lexicographic {
        assert_eq!(l.error.edges.len() as u32, l.total);
        let low = l
            .error
            .edges
            .iter()
            .filter(|&&m| !graph.edges[m as usize].classes.has_high())
            .count() as u32;
        assert_eq!(low, l.low);
    }
    r
}

fn exact_distance(r: &DistanceReport) -> u32 {
    let c = r.distance.as_ref().expect("a logical error exists");
    assert!(c.exact(), "distance not proven exact: {c:?}");
    c.value
}

/// Least number of edges forming an undetected logical error, by trying every subset
/// (only for graphs with few edges).
fn brute_force(graph: &FaultGraph, allow: impl Fn(usize) -> bool) -> Option<u32> {
    let ids: Vec<u32> = (0..graph.edges.len() as u32)
        .filter(|&m| allow(m as usize))
        .collect();
    assert!(ids.len() <= 20, "too many edges to brute-force");
    let mut best: Option<u32> = None;
    for mask in 1u32..(1 << ids.len()) {
        let w = mask.count_ones();
        if best.is_some_and(|b| w >= b) {
            continue;
        }
        let set: Vec<u32> = (0..ids.len())
            .filter(|&i| mask >> i & 1 == 1)
            .map(|i| ids[i])
            .collect();
        let (dets, obs) = symptom(graph, &set);
        if dets.is_empty() && !obs.is_empty() {
            best = Some(w);
        }
    }
    best
}

fn rotated(family: Family, d: u32, rounds: u32, order: Order) -> GenSpec {
    let mut s = GenSpec::new(family, d);
    s.rounds = rounds;
    s.order = Some(order);
    s
}

// "Topological quantum memory", J. Math. Phys. 43, 4452 (2002) (distance-d rotated/planar code)
// and "Low-distance surface codes under realistic quantum noise", PRA 90, 062320 (2014): with the
// hook-safe coupling order the circuit-level distance of the rotated surface code stays d; with
// the other standard order hook errors (one ancilla fault spreading to two data qubits along the
// logical) shorten it.
#[test]
fn surface_hook_safe_keeps_distance_d() {
    for d in [3, 5, 7] {
        let g = graph_of(
            &rotated(Family::Surface, d, d, Order::hook_safe()),
            "circuit p=0.001",
        );
        let r = report(&g);
        assert_eq!(exact_distance(&r), d, "hook-safe d={d}");
        // A Z-basis memory: pure-Z faults never flip the Z logical.
        assert!(r.high_rate.is_none());
        // Every fault of the shortest error is low-rate here, so the lexicographic search agrees.
        let l = r.lexicographic.as_ref().unwrap();
        assert_eq!((l.low, l.total), (d, d));
    }
}

#[test]
fn surface_hook_aligned_is_shorter() {
    for d in [3, 5, 7] {
        let g = graph_of(
            &rotated(Family::Surface, d, d, Order::hook_aligned()),
            "circuit p=0.001",
        );
        let r = report(&g);
        let dist = exact_distance(&r);
        assert!(dist < d, "hook-aligned d={d} gave {dist}");
        // A hook fault moves two data errors at once: at most ceil(d/2) faults are needed
        // (PRA 90, 062320 (2014), hook errors).
        assert!(dist >= d.div_ceil(2), "hook-aligned d={d} gave {dist}");
    }
}

// Repetition code (bit flip, Z memory), phenomenological noise over R rounds. Derivation: the
// observable is one final data readout, which is perfect. A measurement flip toggles two
// consecutive detectors of one check and never the observable, so time-like chains (length R+1
// from the first to the last time boundary) are not logical errors. A data flip toggles the
// observable only through the final readout, and a set of data flips hides from every check only
// if the flips of all d qubits have the same parity; flips in different rounds leave the checks
// between them firing for the rounds in between, which costs extra measurement flips. Hence the
// distance is exactly d for every R ≥ 1 (min(d, R+1) would be wrong here: the time-like
// distance R+1 does not flip the observable).
#[test]
fn repetition_phenomenological_distance_is_d_for_every_round_count() {
    for d in [3, 5] {
        for rounds in [1, 2, 5] {
            let mut s = GenSpec::new(Family::Repetition, d);
            s.rounds = rounds;
            let r = report(&graph_of(&s, "phenomenological p=0.01"));
            assert_eq!(exact_distance(&r), d, "d={d} R={rounds}");
        }
    }
}

#[test]
fn repetition_circuit_level_distance_is_d() {
    for d in [3, 5, 7] {
        let r = report(&graph_of(
            &GenSpec::new(Family::Repetition, d),
            "circuit p=0.001",
        ));
        assert_eq!(exact_distance(&r), d, "d={d}");
    }
}

// "The XZZX surface code", Nat. Commun. 12, 2172 (2021): under pure Z noise the XZZX code acts as
// repetition codes along its diagonals; the shortest pure-Z logical of a d × d planar patch has
// length d. It anticommutes with the stored X-type logical (the Z-type memory has no pure-Z
// logical error at all, which the test also checks). Brute force over every subset of the
// capacity-noise edges of one noisy round (rounds = 2: the first round's results are the
// reference) confirms the graph search.
#[test]
fn xzzx_infinite_bias_high_rate_distance_is_d() {
    for d in [3u32, 5] {
        let mut s = GenSpec::new(Family::Xzzx, d);
        s.rounds = 2;
        s.style = Some(Style::Product);
        s.basis = Some(LogicalBasis::X);
        let g = graph_of(&s, "capacity p=0.01 bias=inf");
        let r = report(&g);
        let high = r.high_rate.as_ref().expect("pure-Z logical exists");
        assert!(high.exact());
        assert_eq!(high.value, d, "{}", s.command_line().unwrap());
        if g.edges.len() <= 20 {
            assert_eq!(brute_force(&g, |_| true), Some(d));
        }
        s.basis = Some(LogicalBasis::Z);
        let r = report(&graph_of(&s, "capacity p=0.01 bias=inf"));
        assert!(r.high_rate.is_none(), "Z memory: {:?}", r.high_rate);
    }
}

// Same source: the shortest pure-Z logical on a co-prime torus wraps the whole lattice, n = dx·dz
// data qubits (recalled from memory; tests/codes.rs confirms it by exhaustive search on the code).
// The generated memory encodes with one perfect pass of face measurements, so the circuit-level
// pure-Z distance under capacity noise must equal the code's.
#[test]
fn xzzx_coprime_torus_pure_z_distance_is_n() {
    let mut torus = GenSpec::new(Family::Xzzx, 3);
    torus.periodic = true;
    torus.dx = 4;
    torus.dz = 3;
    torus.rounds = 2;
    let g = graph_of(&torus, "capacity p=0.01 bias=inf");
    let r = report(&g);
    assert_eq!(r.high_rate.as_ref().map(|c| c.value), Some(12));
}

// Same source: with bias-preserving (native) couplings, circuit-level pure-Z noise keeps the
// pure-Z distance of the planar XZZX patch at d.
#[test]
fn xzzx_native_circuit_infinite_bias_high_rate_distance_is_d() {
    for d in [3, 5] {
        let mut s = GenSpec::new(Family::Xzzx, d);
        s.entangler = Some(Entangler::Native);
        s.basis = Some(LogicalBasis::X);
        let r = report(&graph_of(&s, "circuit p=0.001 bias=inf cx=bias-preserving"));
        let high = r.high_rate.as_ref().expect("pure-Z logical exists");
        assert_eq!(high.value, d, "d={d}");
        assert!(high.exact());
    }
}

// CSS surface code under the same pure-Z noise: a Z logical has weight d ("Topological quantum
// memory", J. Math. Phys. 43, 4452 (2002)); it flips the X-basis memory.
#[test]
fn css_surface_pure_z_distance_is_d() {
    for d in [3, 5] {
        let mut s = GenSpec::new(Family::Surface, d);
        s.rounds = 2;
        s.style = Some(Style::Product);
        s.basis = Some(LogicalBasis::X);
        let r = report(&graph_of(&s, "capacity p=0.01 bias=inf"));
        let high = r.high_rate.as_ref().expect("pure-Z logical");
        assert!(high.exact());
        assert_eq!(high.value, d);
        // The same circuit-level noise as the XZZX check above (ancilla extraction, d rounds,
        // bias-preserving CX): still d.
        let mut s = GenSpec::new(Family::Surface, d);
        s.basis = Some(LogicalBasis::X);
        let r = report(&graph_of(&s, "circuit p=0.001 bias=inf cx=bias-preserving"));
        let high = r.high_rate.as_ref().expect("pure-Z logical");
        assert_eq!((high.value, high.exact()), (d, true), "circuit-level d={d}");
    }
}

// Rectangular XZZX patches. The claim we set out to check ("the low-rate count follows the
// short side, the high-rate distance the long one", after "The XZZX surface code", Nat. Commun.
// 12, 2172 (2021), recalled from memory) does not hold for this rotated layout: a pure-Z string
// along a diagonal already joins the two long boundaries after `short side` steps. What must
// hold is that the circuit-level high-rate distance under pure-Z capacity noise equals the
// least weight of a Z-only operator of the code that commutes with every check and flips the
// stored observable, found here by exhaustive search from the checks the circuit measures.
// Measured (3 × 5 and 5 × 3, either basis): one basis has a pure-Z logical of weight = short side,
// the other none; there the fewest low-rate faults grows with the long side (1 at 3 × 5, 2 at
// 3 × 7), which is what makes long rectangles useful under bias.
#[test]
fn rectangular_xzzx_high_rate_distance_equals_brute_force_z_logical() {
    for (dx, dz) in [(3u32, 5u32), (5, 3)] {
        for basis in [LogicalBasis::Z, LogicalBasis::X] {
            let mut s = GenSpec::new(Family::Xzzx, 3);
            s.dx = dx;
            s.dz = dz;
            s.rounds = 2;
            s.style = Some(Style::Product);
            s.basis = Some(basis);
            let text = generate(&s).expect("generate");
            let circuit = crate::support::load("rect.slant", &text);
            let brute = min_pure_z_logical(&circuit);
            let r = report(&graph_of(&s, "capacity p=0.01 bias=inf"));
            assert_eq!(
                r.high_rate.as_ref().map(|c| c.value as usize),
                brute,
                "{dx}x{dz} {basis:?}"
            );
            if brute.is_none() {
                // Some low-rate fault is needed, and the total is the circuit distance.
                let biased = report(&graph_of(&s, "capacity p=0.01 bias=100"));
                assert!(biased.lexicographic.as_ref().is_some_and(|l| l.low >= 1));
            }
        }
    }
    // In the basis without a pure-Z logical, the fewest low-rate faults in a logical error
    // grows with the long side: 1 at 3 × 5, 2 at 3 × 7.
    let fewest_low = |dz: u32| {
        [LogicalBasis::Z, LogicalBasis::X]
            .into_iter()
            .find_map(|basis| {
                let mut s = GenSpec::new(Family::Xzzx, 3);
                (s.dx, s.dz, s.rounds) = (3, dz, 2);
                s.style = Some(Style::Product);
                s.basis = Some(basis);
                let pure_z = report(&graph_of(&s, "capacity p=0.01 bias=inf"));
                let proven_none =
                    pure_z.high_rate.is_none() && pure_z.unresolved.high_rate.is_none();
                proven_none.then(|| {
                    let biased = report(&graph_of(&s, "capacity p=0.01 bias=100"));
                    biased.lexicographic.expect("a logical error exists").low
                })
            })
    };
    assert_eq!(fewest_low(5), Some(1));
    assert_eq!(fewest_low(7), Some(2));
}

/// The least weight of a Z-only operator on the data that commutes with every round-0 check of a
/// product-style circuit and anticommutes with the stored observable (exhaustive, n ≤ 20).
fn min_pure_z_logical(c: &slant::ir::Circuit) -> Option<usize> {
    let data: Vec<u32> = (0..c.qubits.len() as u32)
        .filter(|&q| c.qubits[q as usize].has_role("data"))
        .collect();
    let bit = |q: u32| 1u64 << data.iter().position(|&d| d == q).expect("data qubit");
    // A Z-only operator anticommutes with a product iff it overlaps its X/Y factors oddly.
    let mut x_parts = Vec::new();
    let mut observable_x = 0u64;
    for layer in &c.layers {
        for op in &layer.ops {
            if let slant::ir::OpKind::Measure { record, .. } = op.kind {
                let xs = op
                    .targets
                    .iter()
                    .zip(&op.paulis)
                    .filter(|(_, p)| p.has_x())
                    .fold(0, |a, (&q, _)| a | bit(q));
                if layer.round == Some(0) {
                    x_parts.push(xs);
                }
                if c.observables[0].records.contains(&record) {
                    observable_x ^= xs;
                }
            }
        }
    }
    let n = data.len();
    assert!(n <= 20);
    (1u64..1 << n)
        .filter(|z| {
            x_parts.iter().all(|s| (s & z).count_ones() % 2 == 0)
                && (observable_x & z).count_ones() % 2 == 1
        })
        .map(|z| z.count_ones() as usize)
        .min()
}

// The found error is real: graph search against brute force on a small circuit-level graph.
#[test]
fn distance_matches_brute_force_on_small_graphs() {
    let mut s = GenSpec::new(Family::Repetition, 3);
    s.rounds = 1;
    let g = graph_of(&s, "phenomenological p=0.01");
    let r = report(&g);
    assert_eq!(
        Some(exact_distance(&r)),
        brute_force(&g, |_| true),
        "edges: {}",
        g.edges.len()
    );
}

/// The fault graph of [`HYPER`].
fn hyperedge_graph() -> FaultGraph {
    let circuit = crate::support::load("hyper.slant", HYPER);
    slant::faults::extract(&circuit, &ExtractOptions::default())
}

/// Six qubits under dephasing, read in X, with five detectors of three or four results each.
const HYPER: &str = "qubit q[0..6]\nreset x q[0..6]\nnoise dephasing p=0.01 q[0..6]\n\
    measure x q[0..6] -> f[0..6]\n\
    detector = f[0] ^ f[1] ^ f[2] ^ f[3]\ndetector = f[0] ^ f[1] ^ f[4] ^ f[5]\n\
    detector = f[2] ^ f[3] ^ f[4] ^ f[5]\ndetector = f[0] ^ f[2] ^ f[4]\n\
    detector = f[1] ^ f[3] ^ f[5]\nobservable o = f[0] ^ f[2]\n";

// Hyperedges only: every fault of this small code-capacity circuit flips three detectors (each
// qubit lies in three of the detector parities), so the graph search has nothing to use and the
// exhaustive meet-in-the-middle search must match brute force over all subsets. The least
// logical error has weight 4 (`{0,1,4,5}` or `{2,3,4,5}`, found by hand from the parities).
#[test]
fn exhaustive_search_matches_brute_force_on_hyperedges() {
    let g = hyperedge_graph();
    assert!(g.edges.iter().all(|m| m.detectors.len() > 2));
    let r = report(&g);
    let c = r.distance.as_ref().expect("logical error");
    assert_eq!(c.method, slant::analysis::Method::Exhaustive);
    assert_eq!(Some(c.value), brute_force(&g, |_| true));
    assert_eq!(c.value, 4);
    // The class and weighted searches see no matchable edge here: their absence is
    // unproven, and the report must say so rather than claim "none".
    assert!(r.lexicographic.is_none());
    assert_eq!(r.unresolved.lexicographic, Some(Unproven::MatchableOnly));
    assert_eq!(r.unresolved.distance, None);
}

#[test]
fn unfinished_searches_are_reported_as_unproven() {
    // The same 4-edge logical error as above, searched with too small a depth or state
    // cap: "none" would be false, so the report gives the proven bound or says it cannot tell.
    let g = hyperedge_graph();
    let shallow = DistanceOptions {
        exhaustive_depth: 3,
        ..DistanceOptions::default()
    };
    let r = distances(&g, &shallow).unwrap();
    assert!(r.distance.is_none());
    assert_eq!(r.unresolved.distance, Some(Unproven::AboveDepth(3)));
    let capped = DistanceOptions {
        max_states: 4,
        ..DistanceOptions::default()
    };
    let r = distances(&g, &capped).unwrap();
    assert!(r.distance.is_none());
    assert_eq!(r.unresolved.distance, Some(Unproven::Capped));
    // A graph without hyperedges has an exact search: an absence there is proven.
    let text = "qubit q[0..2]\nreset x q[0..2]\nnoise dephasing p=0.01 q[0..2]\n\
        measure x q[0..2] -> m[0..2]\ndetector = m[0] ^ m[1]\n";
    let circuit = crate::support::load("plain.slant", text);
    let plain = slant::faults::extract(&circuit, &ExtractOptions::default());
    let r = distances(&plain, &DistanceOptions::default()).unwrap();
    assert!(r.distance.is_none());
    assert_eq!(r.unresolved, Unresolved::default());
}

#[test]
fn cli_distance_prints_error_with_source_lines() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("s.slant");
    let spec = rotated(Family::Surface, 3, 3, Order::hook_aligned());
    std::fs::write(&path, generate(&spec).unwrap()).unwrap();
    let stdout = crate::support::stdout_of(slant().args([
        "distance",
        path.to_str().unwrap(),
        "--noise",
        "circuit p=0.001",
    ]));
    let text = String::from_utf8(stdout).unwrap();
    assert!(text.starts_with("distance             2"), "{text}");
    assert!(text.contains("high-rate distance   none"), "{text}");
    assert!(text.contains("s.slant:"), "no provenance: {text}");
    let out = slant()
        .args([
            "distance",
            path.to_str().unwrap(),
            "--noise",
            "circuit p=0.001",
            "--json",
        ])
        .run();
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["distance"]["value"], 2);
    assert_eq!(v["distance"]["exact"], true);
    assert!(v["high_rate_distance"].is_null());
}

#[test]
fn cli_compare_orders_marks_best() {
    let stdout = crate::support::stdout_of(slant().args([
        "compare",
        "--family",
        "surface",
        "--with",
        "distance=3",
        "--vary",
        "order=hook-safe,hook-aligned",
        "--noise",
        "circuit p=0.001",
        "--csv",
    ]));
    let text = String::from_utf8(stdout).unwrap();
    let lines: Vec<&str> = text.lines().collect();
    assert_eq!(lines.len(), 3, "{text}");
    let col = |line: &str, i: usize| line.split(',').nth(i).unwrap().to_string();
    assert_eq!(col(lines[1], 0), "order=hook-safe");
    assert_eq!(col(lines[1], 7), "3");
    assert_eq!(col(lines[2], 7), "2");
    // The last column lists where a row is best, as `*` does in the table.
    let best = |line: &str| line.rsplit(',').next().unwrap().to_string();
    assert!(best(lines[1]).split(';').any(|c| c == "distance"), "{text}");
    assert!(
        !best(lines[2]).split(';').any(|c| c == "distance"),
        "{text}"
    );
    // Values holding commas (a custom order) are separated by `;` and quoted in the CSV.
    let stdout = crate::support::stdout_of(slant().args([
        "compare",
        "--family",
        "surface",
        "--with",
        "distance=3",
        "--vary",
        "order=hook-safe;custom:nw,ne,sw,se",
        "--noise",
        "circuit p=0.001",
        "--csv",
    ]));
    let text = String::from_utf8(stdout).unwrap();
    assert!(
        text.lines()
            .nth(2)
            .unwrap()
            .starts_with("\"order=custom:nw,ne,sw,se\","),
        "{text}"
    );
    let out = slant()
        .args([
            "compare",
            "--family",
            "surface",
            "--with",
            "distance=3",
            "--vary",
            "order=hook-safe,hook-aligned",
            "--noise",
            "circuit p=0.001",
        ])
        .run();
    let text = String::from_utf8(out.stdout).unwrap();
    let safe = text
        .lines()
        .find(|l| l.starts_with("order=hook-safe"))
        .unwrap();
    assert!(safe.contains("3*"), "{text}");
}

/// Runs `slant compare` and returns its standard output, failing with its standard error.
fn compare_stdout(args: &[&str]) -> String {
    String::from_utf8(crate::support::stdout_of(slant().arg("compare").args(args))).unwrap()
}

/// The coloured data lines of a plot: `(stroke colour, points)` of every `stroke-width="2"`
/// polyline with more than one point that is not a legend swatch (legend swatches are
/// horizontal 20-pixel segments).
fn svg_series(svg: &str) -> Vec<(String, Vec<(f64, f64)>)> {
    let attr = |tag: &str, name: &str| {
        let key = format!(" {name}=\"");
        tag.find(&key).map(|i| {
            let rest = &tag[i + key.len()..];
            rest[..rest.find('"').unwrap()].to_string()
        })
    };
    svg.split("<polyline")
        .skip(1)
        .map(|t| &t[..t.find("/>").unwrap()])
        .filter(|t| attr(t, "stroke-width").as_deref() == Some("3"))
        .map(|t| {
            let pts: Vec<(f64, f64)> = attr(t, "points")
                .unwrap()
                .split_whitespace()
                .map(|xy| {
                    let (x, y) = xy.split_once(',').unwrap();
                    (x.parse().unwrap(), y.parse().unwrap())
                })
                .collect();
            (attr(t, "stroke").unwrap(), pts)
        })
        // Legend samples are short horizontal strokes (three of at most 11 px per entry).
        .filter(|(_, pts)| !(pts.len() == 2 && pts[0].1 == pts[1].1 && pts[1].0 - pts[0].0 <= 12.0))
        .collect()
}

/// One run covers the bias columns, the logical error rates and the plot, to keep CI short.
///
/// Bias: with bias-preserving CX gates, the XZZX code's native schedule keeps Z-type faults Z at
/// the data, while the `cx` entangler's Hadamards (H Z H = X, an exact Clifford identity) turn
/// them into X ("The XZZX surface code", J. P. Bonilla Ataides, D. K. Tuckett, S. D. Bartlett,
/// S. T. Flammia, B. J. Brown, Nat. Commun. 12, 2172 (2021), which relies on bias-preserving
/// gates for its high thresholds). So `native` is kept, `cx` lost, and only `cx` has a
/// high-rate-only logical error.
#[test]
fn cli_compare_bias_rates_and_plot() {
    let dir = tempfile::tempdir().unwrap();
    let svg_path = dir.path().join("cmp.svg");
    let text = compare_stdout(&[
        "--family",
        "xzzx",
        "--with",
        "distance=3",
        "--vary",
        "entangler=native,cx",
        "--noise",
        "circuit p=0.001 bias=100 cx=bias-preserving",
        "--p",
        "0.002,0.004",
        "--shots",
        "2000",
        "--json",
        "--plot",
        svg_path.to_str().unwrap(),
    ]);
    let doc: serde_json::Value = serde_json::from_str(&text).unwrap();
    assert_eq!(
        (&doc["format"], &doc["version"]),
        (&"slant-compare".into(), &2.into())
    );
    let rows = doc["rows"].as_array().unwrap();
    assert_eq!(rows.len(), 2);
    let (native, cx) = (&rows[0], &rows[1]);
    assert_eq!(native["circuit"], "entangler=native");
    assert_eq!(native["bias"]["kept"], true);
    assert_eq!(native["bias"]["verdict"], "bias kept");
    assert_eq!(cx["bias"]["kept"], false);
    assert!(cx["bias"]["verdict"]
        .as_str()
        .unwrap()
        .starts_with("bias lost at"));
    let eta = |r: &serde_json::Value| r["bias"]["data_eta"].as_f64().unwrap();
    assert!(eta(native) > 10.0 * eta(cx), "{text}");
    assert!(native["high_rate_distance"].is_null());
    assert!(cx["high_rate_distance"]["value"].as_u64().is_some());

    // Rates: per-round Wilson intervals that contain the estimate, consistent with the counts.
    for r in rows {
        let rates = r["rates"].as_array().unwrap();
        assert_eq!(rates.len(), 2, "{text}");
        for (x, p) in rates.iter().zip([0.002, 0.004]) {
            assert_eq!(x["p"].as_f64().unwrap(), p);
            assert_eq!(x["shots"].as_u64().unwrap(), 2000);
            let (k, n, rounds) = (
                x["failures"].as_u64().unwrap() as f64,
                2000.0,
                x["rounds"].as_u64().unwrap() as i32,
            );
            let pr = &x["per_round"];
            let (rate, low, high) = (
                pr["rate"].as_f64().unwrap(),
                pr["low"].as_f64().unwrap(),
                pr["high"].as_f64().unwrap(),
            );
            assert!((1.0 - (1.0 - rate).powi(rounds) - k / n).abs() < 1e-12);
            assert!(0.0 <= low && low <= rate && rate <= high && high < 1.0 && low < high);
        }
    }
    let rate =
        |r: &serde_json::Value, i: usize| r["rates"][i]["per_round"]["rate"].as_f64().unwrap();
    for r in rows {
        assert!(rate(r, 1) > rate(r, 0), "rate grows with p: {text}");
    }

    // Best marks: `none` beats a finite high-rate distance; kept beats lost; a rate is marked
    // exactly when its interval lies below the other row's.
    let best = |r: &serde_json::Value| -> Vec<String> {
        r["best"]
            .as_array()
            .unwrap()
            .iter()
            .map(|b| b.as_str().unwrap().to_string())
            .collect()
    };
    for col in ["high-rate", "bias", "data-eta"] {
        assert!(best(native).contains(&col.to_string()), "{col}: {text}");
        assert!(!best(cx).contains(&col.to_string()), "{col}: {text}");
    }
    assert!(
        !best(native).contains(&"distance".to_string()),
        "tie: {text}"
    );
    for (i, p) in ["0.002", "0.004"].iter().enumerate() {
        let bound =
            |r: &serde_json::Value, end: &str| r["rates"][i]["per_round"][end].as_f64().unwrap();
        for (a, b) in [(native, cx), (cx, native)] {
            assert_eq!(
                best(a).contains(&format!("rate p={p}")),
                bound(a, "high") < bound(b, "low"),
                "{text}"
            );
        }
    }

    // The plot: one line per variant, labelled, with its points ordered as the rates (SVG y
    // grows downwards).
    let svg = std::fs::read_to_string(&svg_path).unwrap();
    assert!(svg.starts_with("<svg") && svg.trim_end().ends_with("</svg>"));
    assert!(svg.contains("entangler=native") && svg.contains("entangler=cx"));
    let series = svg_series(&svg);
    assert_eq!(series.len(), 2, "{series:?}");
    assert_ne!(series[0].0, series[1].0, "distinct colours");
    for (_, pts) in &series {
        assert_eq!(pts.len(), 2);
        assert!(pts[0].0 < pts[1].0, "x grows with p");
        assert!(pts[1].1 < pts[0].1, "higher rate is drawn higher");
    }
    for i in 0..2 {
        assert_eq!(
            series[0].1[i].1 > series[1].1[i].1,
            rate(native, i) < rate(cx, i),
            "{series:?}"
        );
    }
}
