//! Logical error estimates (`slant estimate`), sweeps (`slant sweep`, `slant merge`) and plots.
//!
//! Physics checks run small codes at a fixed seed and compare with exact formulas (within 5
//! binomial standard deviations) or with the ordering of distances below and above a published
//! threshold; full-size threshold runs live in `bench/thresholds.sh`.

use crate::support::{load, slant, Runner};
use slant::decode::DecoderKind;
use slant::gen::{Family, Flip, GenSpec, LogicalBasis, Style};
use slant::ir::Circuit;
use slant::noise::{self, NoiseSpec};
use slant::study::{Counts, Pipeline, RunOptions, SplittingOptions, Start};

fn with_noise(c: &Circuit, spec: &str) -> Circuit {
    let spec = NoiseSpec::parse(spec).unwrap_or_else(|d| panic!("{}", d.render()));
    noise::apply(c, &spec).unwrap_or_else(|d| panic!("{}", d[0].render()))
}

fn generated(spec: &GenSpec) -> Circuit {
    load(
        "t.slant",
        &slant::gen::generate(spec).expect("generator accepts the spec"),
    )
}

fn estimate(c: &Circuit, kind: DecoderKind, shots: u64, seed: u64) -> Counts {
    let exp = Pipeline::from_circuit(c.clone())
        .experiment(kind)
        .expect("decodable graph");
    exp.run(
        &RunOptions {
            shots,
            until_failures: None,
            seed,
        },
        |_| {},
    )
}

fn rate(c: Counts) -> f64 {
    c.failures as f64 / c.shots as f64
}

/// Asserts `|k/n − p| ≤ 5σ` with `σ = sqrt(p(1−p)/n)`.
fn assert_within_5_sigma(c: Counts, p: f64, what: &str) {
    let sigma = (p * (1.0 - p) / c.shots as f64).sqrt();
    let got = rate(c);
    assert!(
        (got - p).abs() <= 5.0 * sigma,
        "{what}: measured {got} ({} / {}), expected {p} ± {sigma}",
        c.failures,
        c.shots
    );
}

/// Asserts that `a`'s rate is below `b`'s by more than 5 combined standard deviations.
fn assert_clearly_below(a: Counts, b: Counts, what: &str) {
    let (pa, pb) = (rate(a), rate(b));
    let sigma = (pa * (1.0 - pa) / a.shots as f64 + pb * (1.0 - pb) / b.shots as f64).sqrt();
    assert!(
        pb - pa > 5.0 * sigma,
        "{what}: expected {pa} ({}/{}) < {pb} ({}/{}) by more than 5σ = {}",
        a.failures,
        a.shots,
        b.failures,
        b.shots,
        5.0 * sigma
    );
}

/// Distance-3 repetition code with perfect product measurements and one bit-flip channel per data
/// qubit: majority vote fails when two or three of the three bits flip.
const REP3_BITFLIP: &str = "\
for k in 0..3 { qubit d[k] role data }
reset z d[0..3]
round {
  noise bitflip p=0.1 d[0..3]
  measure z d[0] * z d[1] -> m[0]
  measure z d[1] * z d[2] -> m[1]
  detector = m[0]
  detector = m[1]
}
measure z d[0..3] -> f[0..3]
detector = f[0] ^ f[1] ^ m[0]
detector = f[1] ^ f[2] ^ m[1]
observable logical = f[0]
";

#[test]
fn repetition_d3_code_capacity_matches_3p2_minus_2p3() {
    // Textbook: the distance-3 repetition code under independent bit flips p fails with
    // probability 3p²(1−p) + p³ = 3p² − 2p³ (majority vote; MWPM on this graph is majority vote).
    let p: f64 = 0.1;
    let exact = 3.0 * p * p - 2.0 * p * p * p;
    let c = load("t.slant", REP3_BITFLIP);
    for kind in [DecoderKind::Mwpm, DecoderKind::UnionFind] {
        assert_within_5_sigma(estimate(&c, kind, 100_000, 7), exact, kind.name());
    }
    // The `capacity` preset is depolarizing: X and Y (total 2p/3) flip the Z-basis readout, so
    // the generated code fails with 3q² − 2q³ at q = 2p/3.
    let mut spec = GenSpec::new(Family::Repetition, 3);
    spec.rounds = 1;
    let c = with_noise(&generated(&spec), "capacity p=0.15");
    let q: f64 = 0.1;
    assert_within_5_sigma(
        estimate(&c, DecoderKind::Mwpm, 100_000, 11),
        3.0 * q * q - 2.0 * q * q * q,
        "generated, capacity preset",
    );
}

#[test]
fn repetition_phenomenological_orders_distances_around_the_threshold() {
    // Phenomenological noise with equal data and measurement flip probability: MWPM threshold
    // ≈ 10.3% (random-bond Ising mapping; Dennis, Kitaev, Landahl, Preskill, "Topological quantum
    // memory", J. Math. Phys. 43, 4452 (2002); Wang, Harrington, Preskill, Ann. Phys. 303, 31
    // (2003)). At CI size we only check that d = 7 beats d = 3 at p = 0.05 and loses at 0.15.
    // Phase-flip code with pure-Z data noise: data flips p, measurement flips q = p.
    let circuit = |d: u32, p: f64| {
        let mut spec = GenSpec::new(Family::Repetition, d);
        spec.flip = Some(Flip::Z);
        with_noise(
            &generated(&spec),
            &format!("phenomenological p={p} bias=inf"),
        )
    };
    let below3 = estimate(&circuit(3, 0.05), DecoderKind::Mwpm, 20_000, 1);
    let below7 = estimate(&circuit(7, 0.05), DecoderKind::Mwpm, 20_000, 1);
    assert_clearly_below(below7, below3, "p = 0.05: d = 7 below d = 3");
    let above3 = estimate(&circuit(3, 0.15), DecoderKind::Mwpm, 8_000, 2);
    let above7 = estimate(&circuit(7, 0.15), DecoderKind::Mwpm, 8_000, 2);
    assert_clearly_below(above3, above7, "p = 0.15: d = 3 below d = 7");
}

#[test]
fn surface_code_capacity_orders_distances_around_the_threshold() {
    // Rotated surface code, code capacity with independent flips, MWPM: threshold ≈ 10.3%
    // (Wang, Harrington, Preskill, "Confinement-Higgs transition in a disordered gauge theory
    // and the accuracy threshold for quantum memory", Ann. Phys. 303, 31 (2003)). X-basis
    // memory under pure Z flips of probability p (independent per qubit), perfect measurements.
    let circuit = |d: u32, p: f64| {
        let mut spec = GenSpec::new(Family::Surface, d);
        spec.rounds = 1;
        spec.style = Some(Style::Product);
        spec.basis = Some(LogicalBasis::X);
        with_noise(&generated(&spec), &format!("capacity p={p} bias=inf"))
    };
    let below3 = estimate(&circuit(3, 0.05), DecoderKind::Mwpm, 12_000, 3);
    let below7 = estimate(&circuit(7, 0.05), DecoderKind::Mwpm, 12_000, 3);
    assert_clearly_below(below7, below3, "p = 0.05: d = 7 below d = 3");
    let above3 = estimate(&circuit(3, 0.15), DecoderKind::Mwpm, 8_000, 4);
    let above7 = estimate(&circuit(7, 0.15), DecoderKind::Mwpm, 8_000, 4);
    assert_clearly_below(above3, above7, "p = 0.15: d = 3 below d = 7");
}

#[test]
fn surface_code_phenomenological_orders_distances_around_the_threshold() {
    // Rotated surface code, phenomenological noise (data flips p at the start of every round,
    // measurement flips q = p), MWPM: threshold ≈ 2.9% (Wang, Harrington, Preskill, Ann. Phys.
    // 303, 31 (2003)). X-basis memory with pure-Z data flips, d rounds, compared per shot (one
    // d-round memory): d = 7 clearly below d = 3 at p = 1.5%, clearly above at p = 4.5%.
    let circuit = |d: u32, p: f64| {
        let mut spec = GenSpec::new(Family::Surface, d);
        spec.rounds = d;
        spec.style = Some(Style::Product);
        spec.basis = Some(LogicalBasis::X);
        with_noise(
            &generated(&spec),
            &format!("phenomenological p={p} bias=inf"),
        )
    };
    let below3 = estimate(&circuit(3, 0.015), DecoderKind::Mwpm, 20_000, 8);
    let below7 = estimate(&circuit(7, 0.015), DecoderKind::Mwpm, 20_000, 8);
    assert_clearly_below(below7, below3, "p = 0.015: d = 7 below d = 3");
    let above3 = estimate(&circuit(3, 0.045), DecoderKind::Mwpm, 8_000, 9);
    let above7 = estimate(&circuit(7, 0.045), DecoderKind::Mwpm, 8_000, 9);
    assert_clearly_below(above3, above7, "p = 0.045: d = 3 below d = 7");
}

#[test]
fn surface_code_circuit_level_orders_distances_around_the_threshold() {
    // Rotated surface code, Z memory with d rounds, uniform circuit-level depolarizing noise
    // (preset `circuit p=P`: depolarizing channels of total P after every gate and on idle
    // qubits, reset and measurement flips P), MWPM: threshold between 0.5% and 1% depending on
    // the model ("Surface codes: towards practical large-scale quantum computation", PRA 86,
    // 032324 (2012); "Fault-tolerant thresholds for quantum error correction with the surface
    // code", PRA 89, 022321 (2014)). For this model the reduced sweep in bench/thresholds.sh
    // crosses at 0.59% (d=3/5) and 0.65% (d=5/7); at CI size we check the ordering at p = 0.2%
    // and p = 1.2%, on either side of that range.
    let circuit = |d: u32, p: f64| {
        with_noise(
            &generated(&GenSpec::new(Family::Surface, d)),
            &format!("circuit p={p}"),
        )
    };
    let below3 = estimate(&circuit(3, 0.002), DecoderKind::Mwpm, 40_000, 6);
    let below5 = estimate(&circuit(5, 0.002), DecoderKind::Mwpm, 40_000, 6);
    assert_clearly_below(below5, below3, "p = 0.002: d = 5 below d = 3");
    let above3 = estimate(&circuit(3, 0.012), DecoderKind::Mwpm, 10_000, 7);
    let above5 = estimate(&circuit(5, 0.012), DecoderKind::Mwpm, 10_000, 7);
    assert_clearly_below(above3, above5, "p = 0.012: d = 3 below d = 5");
}

#[test]
fn xzzx_threshold_lies_above_the_css_threshold_under_biased_circuit_noise() {
    // Z-biased circuit-level noise with bias-preserving CX (preset `circuit p=P bias=100
    // cx=bias-preserving`), X-basis memories with d rounds, native entanglers, MWPM: the XZZX
    // code's threshold lies well above the CSS surface code's ("Practical quantum error
    // correction with the XZZX code and Kerr-cat qubits", PRX Quantum 2, 030345 (2021)). The
    // reduced sweep of bench/thresholds/xzzx_biased.toml crosses at about 0.6% for CSS and 1.8%
    // for XZZX; at p = 1.2%, between the two, larger XZZX patches must already do better while
    // larger CSS patches do worse.
    let circuit = |family: Family, d: u32| {
        let mut spec = GenSpec::new(family, d);
        spec.basis = Some(LogicalBasis::X);
        with_noise(
            &generated(&spec),
            "circuit p=0.012 bias=100 cx=bias-preserving",
        )
    };
    let xzzx3 = estimate(&circuit(Family::Xzzx, 3), DecoderKind::Mwpm, 20_000, 11);
    let xzzx5 = estimate(&circuit(Family::Xzzx, 5), DecoderKind::Mwpm, 20_000, 11);
    assert_clearly_below(xzzx5, xzzx3, "XZZX at p = 0.012: d = 5 below d = 3");
    let css3 = estimate(&circuit(Family::Surface, 3), DecoderKind::Mwpm, 20_000, 12);
    let css5 = estimate(&circuit(Family::Surface, 5), DecoderKind::Mwpm, 20_000, 12);
    assert_clearly_below(css3, css5, "CSS at p = 0.012: d = 3 below d = 5");
}

#[test]
fn mwpm_and_union_find_mostly_agree_at_low_noise() {
    // Below threshold both decoders correct nearly every shot: their failure rates on the same
    // shots (same seed) stay within a few per mille of each other, and union-find is never
    // much better than exact matching.
    let spec = GenSpec::new(Family::Surface, 3);
    let c = with_noise(&generated(&spec), "circuit p=0.001");
    let mwpm = estimate(&c, DecoderKind::Mwpm, 20_000, 5);
    let uf = estimate(&c, DecoderKind::UnionFind, 20_000, 5);
    assert!(rate(mwpm) < 0.02 && rate(uf) < 0.02, "{mwpm:?} {uf:?}");
    assert!(
        (rate(mwpm) - rate(uf)).abs() < 0.005,
        "mwpm {mwpm:?} vs union-find {uf:?}"
    );
}

#[test]
fn until_failures_stops_early_at_a_batch_boundary() {
    let c = with_noise(
        &generated(&GenSpec::new(Family::Repetition, 3)),
        "phenomenological p=0.1",
    );
    let exp = Pipeline::from_circuit(c)
        .experiment(DecoderKind::Mwpm)
        .unwrap();
    let opts = RunOptions {
        shots: 1_000_000,
        until_failures: Some(50),
        seed: 9,
    };
    let mut calls = 0;
    let counts = exp.run(&opts, |_| calls += 1);
    assert!(counts.failures >= 50, "{counts:?}");
    assert!(
        counts.shots < 1_000_000 && counts.shots.is_multiple_of(4096),
        "{counts:?}"
    );
    assert_eq!(calls, counts.shots / 4096);
}

fn write_circuit(dir: &std::path::Path, name: &str, text: &str) -> std::path::PathBuf {
    let path = dir.join(name);
    std::fs::write(&path, text).unwrap();
    path
}

fn estimate_json(file: &std::path::Path, extra: &[&str], threads: &str) -> serde_json::Value {
    let stdout = crate::support::stdout_of(
        slant()
            .arg("estimate")
            .arg(file)
            .args(extra)
            .arg("--json")
            .env("RAYON_NUM_THREADS", threads),
    );
    serde_json::from_slice(&stdout).unwrap()
}

#[test]
fn estimate_cli_is_deterministic_per_seed_whatever_the_thread_count() {
    let dir = tempfile::tempdir().unwrap();
    let f = write_circuit(dir.path(), "rep.slant", REP3_BITFLIP);
    let args = [
        "--shots",
        "30000",
        "--seed",
        "42",
        "--until-failures",
        "300",
    ];
    let one = estimate_json(&f, &args, "1");
    let two = estimate_json(&f, &args, "2");
    let three = estimate_json(&f, &args, "3");
    for key in ["shots", "failures", "per_shot", "per_round"] {
        assert_eq!(one[key], two[key], "{key}");
        assert_eq!(one[key], three[key], "{key}");
    }
    assert_eq!(one["stopped_early"], true);
    let other = estimate_json(
        &f,
        &[
            "--shots",
            "30000",
            "--seed",
            "43",
            "--until-failures",
            "300",
        ],
        "2",
    );
    assert_ne!(one["failures"], other["failures"]);
}

#[test]
fn estimate_cli_reports_rates_intervals_and_the_model() {
    let dir = tempfile::tempdir().unwrap();
    let f = write_circuit(dir.path(), "rep.slant", REP3_BITFLIP);
    let out = slant()
        .args(["estimate", "--shots", "8192", "--decoder", "uf"])
        .arg(&f)
        .run();
    assert!(out.status.success());
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(
        text.contains("noise: as written in the circuit file"),
        "{text}"
    );
    assert!(text.contains("decoder: uf"), "{text}");
    assert!(text.contains("shots: 8192\n"), "{text}");
    assert!(text.contains("per round:"), "{text}");
    assert!(
        text.contains("estimates under the stated noise model: Pauli channels, independent faults"),
        "{text}"
    );
    let json = estimate_json(
        &f,
        &["--shots", "4096", "--noise", "phenomenological p=0.02"],
        "2",
    );
    assert_eq!(json["noise"], "phenomenological p=0.02");
    let lo = json["per_shot"]["low"].as_f64().unwrap();
    let hi = json["per_shot"]["high"].as_f64().unwrap();
    let r = json["per_shot"]["rate"].as_f64().unwrap();
    assert!(lo <= r && r <= hi && lo < hi);
    // A circuit without an observable is rejected with a diagnostic.
    let g = write_circuit(
        dir.path(),
        "none.slant",
        "qubit q\nmeasure z q -> m\ndetector = m\n",
    );
    let out = slant().args(["estimate", "--shots", "10"]).arg(&g).run();
    assert_eq!(out.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&out.stderr).contains("declares no observable"));
}

const SWEEP_SPEC: &str = r#"
shots = 49152
chunk = 4096
[[grid]]
label = "repetition phenomenological"
family = "repetition"
flip = "z"
distances = [3, 5]
noise = "phenomenological"
p = [0.08, 0.1]
bias = [inf]
"#;

/// `(task, chunk, shots, failures)` of every row, sorted: equal for runs that recorded the same
/// chunks with the same counts, in whatever order.
fn chunk_table(path: &std::path::Path) -> Vec<(String, u64, u64, u64)> {
    let mut t: Vec<_> = slant::study::read_store(path)
        .unwrap()
        .into_iter()
        .map(|r| (r.task, r.chunk, r.shots, r.failures))
        .collect();
    t.sort();
    t
}

fn sweep(spec: &std::path::Path, store: &std::path::Path, extra: &[&str]) {
    crate::support::stdout_of(
        slant()
            .arg("sweep")
            .arg(spec)
            .arg("--store")
            .arg(store)
            .args(extra),
    );
}

#[test]
fn sweep_resumes_after_sigkill_without_losing_or_double_counting() {
    let dir = tempfile::tempdir().unwrap();
    let spec = write_circuit(dir.path(), "spec.toml", SWEEP_SPEC);
    let reference = dir.path().join("ref.jsonl");
    sweep(&spec, &reference, &["--jobs", "2"]);
    let want = chunk_table(&reference);
    assert_eq!(want.len(), 4 * 12);

    let store = dir.path().join("killed.jsonl");
    let mut child = slant()
        .arg("sweep")
        .arg(&spec)
        .arg("--store")
        .arg(&store)
        .args(["--jobs", "1"])
        .stderr(std::process::Stdio::null())
        .spawn()
        .unwrap();
    let start = std::time::Instant::now();
    loop {
        let lines = std::fs::read_to_string(&store)
            .map(|s| s.lines().count())
            .unwrap_or(0);
        if lines >= 3 || start.elapsed() > std::time::Duration::from_secs(60) {
            break;
        }
        std::thread::sleep(std::time::Duration::from_millis(5));
    }
    // Child::kill sends SIGKILL on Unix.
    child.kill().unwrap();
    child.wait().unwrap();
    let partial = chunk_table(&store);
    assert!(
        !partial.is_empty() && partial.len() < want.len(),
        "the run was not interrupted mid-way ({} rows)",
        partial.len()
    );
    // A torn final line (as a crash in the middle of a write would leave) is cut off on resume.
    let mut f = std::fs::OpenOptions::new()
        .append(true)
        .open(&store)
        .unwrap();
    std::io::Write::write_all(&mut f, b"{\"task\":\"repetition phen").unwrap();
    drop(f);
    sweep(&spec, &store, &["--jobs", "2"]);
    assert_eq!(chunk_table(&store), want);
    // Running again finds nothing to do.
    sweep(&spec, &store, &[]);
    assert_eq!(chunk_table(&store), want);
}

#[test]
fn shard_and_merge_round_trip_equals_the_unsharded_sweep() {
    let dir = tempfile::tempdir().unwrap();
    let spec = write_circuit(dir.path(), "spec.toml", SWEEP_SPEC);
    let whole = dir.path().join("whole.jsonl");
    sweep(&spec, &whole, &[]);
    let shard = |k: u32| {
        let s = dir.path().join(format!("shard{k}.jsonl"));
        sweep(&spec, &s, &["--shard", &format!("{k}/3")]);
        s
    };
    let (a, b, c) = (shard(1), shard(2), shard(3));
    let ta = chunk_table(&a);
    assert!(!ta.is_empty() && ta.len() < 48);
    let merged = dir.path().join("merged.jsonl");
    let out = slant()
        .arg("merge")
        .args([&a, &b, &c, &a])
        .arg("-o")
        .arg(&merged)
        .run();
    assert!(out.status.success());
    assert!(String::from_utf8_lossy(&out.stderr).contains("duplicates dropped"));
    assert_eq!(chunk_table(&merged), chunk_table(&whole));
    let rows = slant::study::read_store(&merged).unwrap();
    let points = slant::study::aggregate(&rows);
    assert_eq!(points.len(), 4);
    assert!(points.iter().all(|p| p.shots == 49152));
}

#[test]
fn plot_marks_the_crossing_of_synthetic_power_laws() {
    // Rates pL = 0.1 (p/0.02)^((d+1)/2) (the below-threshold form of PRA 86, 032324 (2012)) cross
    // at p = 0.02 for every pair of distances; the plot must report and mark that crossing.
    let dir = tempfile::tempdir().unwrap();
    let mut text = String::new();
    for d in [3u32, 5, 7] {
        for p in [0.005, 0.01, 0.015, 0.025, 0.03] {
            let rate = 0.1 * (p / 0.02f64).powf((d as f64 + 1.0) / 2.0);
            let shots = 100_000_000u64;
            let row = slant::study::ChunkRow {
                version: slant::study::STORE_VERSION,
                task: format!("t d={d} p={p}"),
                chunk: 0,
                shots,
                failures: (rate * shots as f64).round() as u64,
                seed: 0,
                label: "synthetic".into(),
                family: "surface".into(),
                distance: d,
                rounds: d,
                p,
                bias: None,
                vary: Default::default(),
                noise: format!("capacity p={p}"),
                decoder: "mwpm".into(),
                method: "sampling".into(),
                splitting: None,
            };
            text += &serde_json::to_string(&row).unwrap();
            text.push('\n');
        }
    }
    let store = write_circuit(dir.path(), "s.jsonl", &text);
    let svg = dir.path().join("t.svg");
    let stdout = crate::support::stdout_of(slant().arg("plot").arg(&store).arg("-o").arg(&svg));
    let report = String::from_utf8(stdout).unwrap();
    assert!(
        report.contains("crossing d=3 / d=5: p = 2.0000e-2"),
        "{report}"
    );
    assert!(report.contains("p_th ≈ 2.0000e-2"), "{report}");
    let image = std::fs::read_to_string(&svg).unwrap();
    assert!(
        image.starts_with("<svg") && image.contains("threshold 2.00%"),
        "{image}"
    );
    assert!(image.contains("d = 7"));
    // PNG: the same drawing rasterised with the bundled font; check the PNG signature and the
    // image size in the header (1000 × 700 per panel).
    let png = dir.path().join("t.png");
    crate::support::stdout_of(slant().arg("plot").arg(&store).arg("-o").arg(&png));
    let bytes = std::fs::read(&png).unwrap();
    assert_eq!(&bytes[..8], b"\x89PNG\r\n\x1a\n");
    assert_eq!(u32::from_be_bytes(bytes[16..20].try_into().unwrap()), 1000);
    assert_eq!(
        u32::from_be_bytes(bytes[20..24].try_into().unwrap()) % 700,
        0
    );
    let bad = slant()
        .arg("plot")
        .arg(&store)
        .arg("-o")
        .arg(dir.path().join("t.jpg"))
        .run();
    assert_eq!(bad.status.code(), Some(1));
}

/// The splitting estimate of a pipeline's failure probability per shot, at a fixed seed.
fn splitting(
    c: &Circuit,
    noise: &str,
    kind: DecoderKind,
    opts: &SplittingOptions,
) -> slant::study::Splitting {
    let pipeline = Pipeline::from_circuit(c.clone())
        .noised(Some(noise))
        .unwrap_or_else(|d| panic!("{}", d[0].render()));
    slant::study::splitting(&pipeline, kind, opts, |_| {})
        .unwrap_or_else(|_| panic!("splitting runs on {noise}"))
}

#[test]
fn splitting_overlaps_direct_sampling_on_the_d3_surface_code() {
    // Overlap check of the rare-event method against plain sampling where both work ("Simulation
    // of rare events in quantum error correction", Phys. Rev. A 88, 062308 (2013), validates the
    // same way): hook-safe d = 3 surface code, 3 rounds, circuit depolarizing p = 0.005. The
    // ladder is forced to start at 2p so that it has rungs to walk.
    let c = load(
        "s.slant",
        &std::fs::read_to_string(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/circuits/surface_d3_hook_safe.slant"
        ))
        .unwrap(),
    );
    let noise = "circuit p=0.005";
    let opts = SplittingOptions {
        chains: 8,
        sweeps: 60.0,
        top: Some(2.0),
        top_failures: 800,
        seed: 4,
        ..SplittingOptions::default()
    };
    let rare = splitting(&c, noise, DecoderKind::UnionFind, &opts);
    assert!(rare.points.len() >= 3, "{:?}", rare.points.len());
    let got = rare.target();
    let direct = estimate(&with_noise(&c, noise), DecoderKind::UnionFind, 200_000, 9);
    let p = rate(direct);
    // ln-scale standard deviations: the binomial one of the direct count, the stated one of the
    // splitting estimate; 4 combined deviations (the stated one is itself estimated from 8 walks).
    let sd_direct = ((1.0 - p) / direct.failures as f64).sqrt();
    let sd = (sd_direct.powi(2) + got.uncertainty.powi(2)).sqrt();
    let z = (got.rate / p).ln() / sd;
    assert!(
        z.abs() < 4.0,
        "splitting {} ± {:.1}% vs direct {p} ({} failures): {z:.1} sigma",
        got.rate,
        100.0 * got.uncertainty,
        direct.failures
    );
    assert!(got.uncertainty < 0.15, "{}", got.uncertainty);
}

/// The hook-safe rotated surface code of distance `d` with `d` rounds.
fn surface(d: u32) -> Circuit {
    let mut spec = GenSpec::new(Family::Surface, d);
    spec.rounds = d;
    generated(&spec)
}

#[test]
#[ignore = "slow (minutes in a release build): cargo test --release -- --ignored exponent"]
fn splitting_exponent_follows_the_circuit_distance() {
    // Below threshold P_L ∝ p^⌈d/2⌉ for a circuit of circuit-level distance d (fewest faults
    // that fail the decoder; "Topological quantum memory", J. Math. Phys. 43, 4452 (2002)); the
    // hook-safe order keeps the circuit distance at d, so the exponent is (d + 1)/2 for odd d.
    // Fitted over 1x..4x a low p, where the approach to the asymptote is nearly done. MWPM:
    // union-find fails on some single faults of these circuits (measured by direct sampling at
    // d = 3, p = 2e-4: 8.3e-4 per shot against 9.1e-5 for MWPM), so its exponent is lower.
    for (d, p) in [(3, 2e-4), (5, 2e-4), (7, 2e-4)] {
        let opts = SplittingOptions {
            chains: 8,
            sweeps: 100.0,
            seed: 1,
            ..SplittingOptions::default()
        };
        let rare = splitting(
            &surface(d),
            &format!("circuit p={p}"),
            DecoderKind::Mwpm,
            &opts,
        );
        let fit = slant::study::fit_exponent(&rare.points, 4.0).unwrap();
        let expected = f64::from(d + 1) / 2.0;
        assert!(
            (fit.exponent - expected).abs() <= 0.3,
            "d = {d}: exponent {:.2} ± {:.2}, expected {expected}",
            fit.exponent,
            fit.error
        );
    }
}

/// The fitted exponent of `P_L ∝ p^k` over 1x..4x `circuit p=P` for a generated rotated surface
/// code, with walks from the shortest logical errors (fast: the top sits where 0.5% of shots
/// fail).
fn fitted_exponent(d: u32, rounds: u32, order: slant::gen::Order, p: f64) -> (f64, f64) {
    let mut spec = GenSpec::new(Family::Surface, d);
    spec.rounds = rounds;
    spec.order = Some(order);
    let opts = SplittingOptions {
        chains: 8,
        sweeps: 60.0,
        top_failures: 300,
        seed: 2,
        start: Start::Shortest,
        ..SplittingOptions::default()
    };
    let rare = splitting(
        &generated(&spec),
        &format!("circuit p={p}"),
        DecoderKind::Mwpm,
        &opts,
    );
    assert_eq!(rare.start, Start::Shortest, "{:?}", rare.warnings);
    let fit = slant::study::fit_exponent(&rare.points, 4.0).unwrap();
    (fit.exponent, fit.error)
}

#[test]
fn splitting_exponent_is_half_the_circuit_distance_at_d3() {
    // Below threshold P_L ∝ p^⌈d_circ/2⌉, d_circ the fewest faults of an undetected logical
    // error ("Topological quantum memory", J. Math. Phys. 43, 4452 (2002)). The hook-safe order
    // keeps d_circ = d = 3 (exponent 2); the hook-aligned order lets one ancilla fault spread to
    // two data qubits along the logical and drops d_circ to 2 (exponent 1) ("Low-distance surface
    // codes under realistic quantum noise", PRA 90, 062320 (2014), hook errors; both distances
    // are checked in tests/distance.rs). Fitted over 1x..4x p = 2e-4 (hook-safe) and p = 5e-5
    // (hook-aligned: there the p² terms of its weight-2 errors stay small); ±0.3 as the issue
    // states. The single fault of the hook-safe circuit that both decoders fail on (see
    // `union_find_corrects_every_single_fault_at_distance_3`) adds a p¹ term of about 1/20 of
    // the rate at 2e-4; the fit still lands within the band.
    let (safe, safe_err) = fitted_exponent(3, 3, slant::gen::Order::hook_safe(), 2e-4);
    assert!(
        (safe - 2.0).abs() <= 0.3,
        "hook-safe d = 3: exponent {safe:.2} ± {safe_err:.2}, expected 2"
    );
    let (aligned, aligned_err) = fitted_exponent(3, 3, slant::gen::Order::hook_aligned(), 5e-5);
    assert!(
        (aligned - 1.0).abs() <= 0.3,
        "hook-aligned d = 3: exponent {aligned:.2} ± {aligned_err:.2}, expected 1"
    );
}

#[test]
fn splitting_exponent_drops_with_the_hook_aligned_distance_at_d5() {
    // Same references as the d = 3 test: the hook-aligned d = 5 circuit has d_circ = 3
    // (tests/distance.rs), so the exponent is ⌈3/2⌉ = 2, not 3.
    let (k, err) = fitted_exponent(5, 5, slant::gen::Order::hook_aligned(), 2e-4);
    assert!(
        (k - 2.0).abs() <= 0.3,
        "hook-aligned d = 5: exponent {k:.2} ± {err:.2}, expected 2"
    );
}

/// A distance-3 code corrects every weight-1 error (Dennis, Kitaev, Landahl and Preskill,
/// J. Math. Phys. 43, 4452 (2002)); the union-find decoder (Delfosse and Nickerson, Quantum 5,
/// 595 (2021)) must too: every matchable edge of the circuit-level d = 3 hook-safe surface code
/// graph, fired alone, decodes to that edge's observables, as it does with MWPM.
#[test]
fn union_find_corrects_every_single_edge_at_distance_3() {
    use slant::decode::{Decoder, Mwpm, UnionFind};
    let c = load(
        "surface_d3_hook_safe.slant",
        &std::fs::read_to_string("circuits/surface_d3_hook_safe.slant").unwrap(),
    );
    let c = with_noise(&c, "circuit p=0.0002");
    let (g, _) = Pipeline::from_circuit(c).matching_graph();
    let uf = UnionFind::new(&g).unwrap();
    let mwpm = Mwpm::new(&g).unwrap();
    let mut wrong = Vec::new();
    for (k, e) in g.edges.iter().enumerate() {
        let mut events = vec![e.a];
        events.extend(e.b);
        events.sort_unstable();
        let mut want = e.observables.clone();
        want.sort_unstable();
        assert_eq!(
            mwpm.decode(&events).observables,
            want,
            "mwpm, edge {k}: {e:?}"
        );
        let got = uf.decode(&events);
        if got.observables != want || got.unmatched != 0 {
            wrong.push(format!("edge {k} {e:?}: uf gives {got:?}"));
        }
    }
    assert!(
        wrong.is_empty(),
        "{} of {} edges:\n{}",
        wrong.len(),
        g.edges.len(),
        wrong.join("\n")
    );
}

/// Every single fault of the circuit (every fault-graph edge, split hyperedges included) fired
/// alone: union-find fails on exactly the faults MWPM fails on. Finding (2026-12-02): of the
/// 221 faults of the d = 3 hook-safe circuit at `circuit p=0.0002`, only fault 17 (detectors
/// [1, 7, 9], no observable: a YY fault of a Z-check's `cz` flipping Z-type detectors 1 and 9
/// and X-type detector 7) is decoded wrongly, by both decoders alike: the matching graph keeps
/// the two-detector edge {1, 7} of boundary Y faults (a Z-type and an X-type detector), and
/// {1, 7} plus the boundary edge at 9, which crosses the logical, outweighs the correct {1, 9}
/// plus the boundary edge at 7. Halving such cross-type edges fixes this fault, but classing
/// detectors from the fault graph alone also halved same-type edges of the hook-aligned d = 3
/// circuit and doubled its failure rate, so it is not done yet.
#[test]
fn union_find_corrects_every_single_fault_at_distance_3() {
    use slant::decode::{Decoder, Mwpm, UnionFind};
    let c = load(
        "surface_d3_hook_safe.slant",
        &std::fs::read_to_string("circuits/surface_d3_hook_safe.slant").unwrap(),
    );
    let c = with_noise(&c, "circuit p=0.0002");
    let p = Pipeline::from_circuit(c);
    let (g, _) = p.matching_graph();
    let faults = p.graph(&slant::faults::ExtractOptions::default());
    let uf = UnionFind::new(&g).unwrap();
    let mwpm = Mwpm::new(&g).unwrap();
    let (mut wrong_uf, mut wrong_mwpm) = (Vec::new(), Vec::new());
    for (k, e) in faults.edges.iter().enumerate() {
        let mut events = e.detectors.clone();
        events.sort_unstable();
        let mut want = e.observables.clone();
        want.sort_unstable();
        if mwpm.decode(&events).observables != want {
            wrong_mwpm.push(k);
        }
        let got = uf.decode(&events);
        if got.observables != want || got.unmatched != 0 {
            wrong_uf.push(k);
        }
    }
    assert_eq!(wrong_uf, wrong_mwpm, "of {} faults", faults.edges.len());
    assert!(wrong_mwpm.len() <= 1, "mwpm wrong on {wrong_mwpm:?}");
}

#[test]
fn the_exponent_splits_by_class_as_the_class_distances_say() {
    // Under strong bias, p_L at low rates goes as p_high^⌈d_high/2⌉ times the low-rate faults
    // the cheapest failures need (none when the shortest logical error has no low-rate edge):
    // the XZZX code's scaling under biased noise (Bonilla Ataides, Tuckett, Bartlett,
    // Flammia, Brown, "The XZZX surface code", Nat. Commun. 12, 2172 (2021); the per-class
    // exponent as a derivative is common practice). The splitting budget grouped by class
    // measures d ln p_L / d ln s for each class at the target, which is that class's local
    // exponent; `distance` gives the class distances it must match.
    let circuit = "circuits/xzzx_d3_cx.slant";
    let noise = "circuit p=0.0002 bias=1000";
    let dist: serde_json::Value = serde_json::from_slice(&crate::support::stdout_of(
        slant().args(["distance", circuit, "--noise", noise, "--json"]),
    ))
    .unwrap();
    let d_high = dist["high_rate_distance"]["value"].as_u64().unwrap();
    let low_in_shortest = dist["lexicographic"]["low"].as_u64().unwrap();
    assert_eq!((d_high, low_in_shortest), (3, 0));
    let budget: serde_json::Value =
        serde_json::from_slice(&crate::support::stdout_of(slant().args([
            "budget",
            circuit,
            "--noise",
            noise,
            "--by",
            "class",
            "--method",
            "splitting",
            "--json",
        ])))
        .unwrap();
    let class = |key: &str| {
        budget["sources"]
            .as_array()
            .unwrap()
            .iter()
            .find(|s| s["key"] == key)
            .unwrap_or_else(|| panic!("no source {key}: {budget}"))["sensitivity"]
            .clone()
    };
    let (high, low) = (class("high"), class("low"));
    let f = |v: &serde_json::Value, k: &str| v[k].as_f64().unwrap();
    let expected = d_high.div_ceil(2) as f64;
    assert!(
        f(&high, "low") <= expected && expected <= f(&high, "high"),
        "high-rate exponent {high} against {expected}"
    );
    // At a finite rate, failures that trade high-rate faults for a low-rate one add a small
    // positive low-rate exponent (it vanishes as p -> 0); it must stay far below the
    // high-rate one and its interval must reach down to about zero.
    assert!(
        f(&low, "low") < 0.1 && f(&low, "value") < 0.25 * f(&high, "value"),
        "low-rate exponent {low} against high-rate {high}"
    );
}
