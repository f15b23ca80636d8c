//! Decoder benchmark: sparse MWPM, the reference MWPM and union-find on surface-code graphs.
//!
//! Two modes. `--grid` (run by `bench/matching.sh`): the real circuit graphs at every distance
//! and rate of a grid; see [`grid`]. Otherwise (run by `bench/decode.sh`): one distance-9,
//! 9-round graph, synthetic unless `--circuit` is given. The synthetic graph is built here
//! with the shape of a circuit-level memory experiment: for each stabilizer type a 3-D lattice of
//! detectors (40 per round per type at d = 9), space-like edges for data-qubit flips (boundary
//! edges where a data qubit meets one stabilizer of the type), time-like edges for measurement
//! flips, and one diagonal (space-time) edge per data-qubit edge for mid-round faults. Z-type
//! detectors: 10 layers (9 rounds plus the final data readout); X-type: 8 layers (the first
//! X round is random, the Z readout gives none). Edge probabilities at physical rate `p` are
//! 2p (space-like), 3p (time-like) and p (diagonal), roughly the marginal flip rates of uniform
//! depolarizing noise of strength `p` on a CNOT schedule. Errors are sampled independently per
//! edge, so every shot's true observable flip is known.
//!
//! Prints per-decoder time per shot, mean detection events per shot and logical failures.
//! Options: `--shots N` (default 20000), `--p P` (default: both 1e-3 and 3e-3),
//! `--only mwpm|ref|uf`, `--overhead` (also time empty and two-event shots), `--circuit` (use
//! the real graph: `slant new surface` at d = 9 with 9 rounds, the `circuit p=…` noise preset and
//! the fault-graph extractor's matchable view, errors still sampled independently per edge).

use std::time::Instant;

use rand::{Rng, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;
use slant::base::Source;
use slant::decode::{Decoder, MatchingEdge, MatchingGraph, Mwpm, ReferenceMwpm, UnionFind};
use slant::faults::ExtractOptions;
use slant::gen::{generate, Family, GenSpec};
use slant::noise::NoiseSpec;

/// Plaquettes of one type of the rotated surface code: each is a list of data qubits `(x, y)`.
fn plaquettes(d: i32, z_type: bool) -> Vec<Vec<(i32, i32)>> {
    let mut out = Vec::new();
    for i in -1..d {
        for j in -1..d {
            if ((i + j).rem_euclid(2) == 0) != z_type {
                continue;
            }
            let corners: Vec<(i32, i32)> = [(i, j), (i + 1, j), (i, j + 1), (i + 1, j + 1)]
                .into_iter()
                .filter(|&(x, y)| (0..d).contains(&x) && (0..d).contains(&y))
                .collect();
            let left_right = i == -1 || i == d - 1;
            let top_bottom = j == -1 || j == d - 1;
            let keep = match corners.len() {
                4 => true,
                // Weight-2 boundary plaquettes: Z type on the left and right, X on top and bottom.
                2 => {
                    (z_type && left_right && !top_bottom) || (!z_type && top_bottom && !left_right)
                }
                _ => false,
            };
            if keep {
                out.push(corners);
            }
        }
    }
    out
}

/// Appends the space-time graph of one stabilizer type; returns the new detector count.
fn add_type(
    d: i32,
    z_type: bool,
    layers: u32,
    p: f64,
    first: u32,
    observable: Option<u32>,
    edges: &mut Vec<MatchingEdge>,
) -> u32 {
    let plaq = plaquettes(d, z_type);
    let per = plaq.len() as u32;
    assert_eq!(per, ((d * d - 1) / 2) as u32);
    let det = |s: u32, t: u32| first + t * per + s;
    // For each data qubit: the plaquettes of this type containing it (one or two).
    let mut data_edges = Vec::new();
    for x in 0..d {
        for y in 0..d {
            let owners: Vec<u32> = (0..per)
                .filter(|&s| plaq[s as usize].contains(&(x, y)))
                .collect();
            // The logical operator of the other type runs along the first row (Z type) or
            // column (X type): flips of those qubits flip the observable.
            let on_logical = if z_type { y == 0 } else { x == 0 };
            let obs: Vec<u32> = observable.filter(|_| on_logical).into_iter().collect();
            data_edges.push((owners, obs));
        }
    }
    for t in 0..layers {
        for (owners, obs) in &data_edges {
            let (a, b) = (det(owners[0], t), owners.get(1).map(|&s| det(s, t)));
            edges.push(MatchingEdge {
                a,
                b,
                p: 2.0 * p,
                observables: obs.clone(),
            });
            if t + 1 < layers {
                if let Some(&s2) = owners.get(1) {
                    let b = Some(det(s2, t + 1));
                    edges.push(MatchingEdge {
                        a,
                        b,
                        p,
                        observables: obs.clone(),
                    });
                }
            }
        }
        if t + 1 < layers {
            for s in 0..per {
                let (a, b) = (det(s, t), Some(det(s, t + 1)));
                edges.push(MatchingEdge {
                    a,
                    b,
                    p: 3.0 * p,
                    observables: vec![],
                });
            }
        }
    }
    first + layers * per
}

/// The real matchable fault graph of the generated rotated surface code (Z memory, default
/// hook-safe order) under the `circuit p=…` preset: generator, noise, extractor.
fn circuit_graph(d: u32, rounds: u32, p: f64) -> MatchingGraph {
    let mut spec = GenSpec::new(Family::Surface, d);
    spec.rounds = rounds;
    let text = generate(&spec).expect("generator accepts the spec");
    let circuit = slant::ir::load_source(&Source::new("bench.slant", &text), &[]).expect("valid");
    let noise = NoiseSpec::parse(&format!("circuit p={p}")).expect("valid preset");
    let noisy = slant::noise::apply(&circuit, &noise).expect("noise applies");
    let faults = slant::faults::extract(&noisy, &ExtractOptions::default());
    faults.matching_graph().0
}

fn surface_graph(d: i32, rounds: u32, p: f64) -> MatchingGraph {
    let mut edges = Vec::new();
    let n = add_type(d, true, rounds + 1, p, 0, Some(0), &mut edges);
    let n = add_type(d, false, rounds - 1, p, n, None, &mut edges);
    MatchingGraph {
        num_detectors: n as usize,
        num_observables: 1,
        edges,
    }
}

/// Samples shots: detection events and the true observable flips.
fn sample(g: &MatchingGraph, shots: usize, seed: u64) -> Vec<(Vec<u32>, Vec<u32>)> {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
    let mut det = vec![false; g.num_detectors];
    (0..shots)
        .map(|_| {
            let mut obs = false;
            let mut lit = Vec::new();
            for e in &g.edges {
                if rng.gen_bool(e.p) {
                    for v in std::iter::once(e.a).chain(e.b) {
                        det[v as usize] ^= true;
                        lit.push(v);
                    }
                    obs ^= !e.observables.is_empty();
                }
            }
            lit.sort_unstable();
            lit.dedup();
            let events: Vec<u32> = lit.into_iter().filter(|&v| det[v as usize]).collect();
            for v in &events {
                det[*v as usize] = false;
            }
            det.iter_mut().for_each(|x| *x = false);
            (events, if obs { vec![0] } else { vec![] })
        })
        .collect()
}

fn time(name: &str, dec: &dyn Decoder, shots: &[(Vec<u32>, Vec<u32>)]) -> f64 {
    // Warm-up pass so scratch space is allocated and caches are warm.
    for (events, _) in shots.iter().take(200) {
        std::hint::black_box(dec.decode(events));
    }
    let start = Instant::now();
    let mut failures = 0;
    let mut unmatched = 0;
    for (events, actual) in shots {
        let got = dec.decode(events);
        failures += usize::from(got.observables != *actual || got.unmatched > 0);
        unmatched += got.unmatched;
    }
    let us = start.elapsed().as_secs_f64() * 1e6 / shots.len() as f64;
    println!(
        "  {name:<5} {us:8.2} us/shot   logical failures {failures}/{}   unmatched {unmatched}",
        shots.len()
    );
    us
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    if args.iter().any(|a| a == "--grid") {
        grid(&args);
        return;
    }
    if args.iter().any(|a| a == "--unpaired") {
        unpaired(&args);
        return;
    }
    let shots: usize = args
        .iter()
        .position(|a| a == "--shots")
        .and_then(|i| args.get(i + 1))
        .and_then(|s| s.parse().ok())
        .unwrap_or(20_000);
    let (d, rounds) = (9, 9);
    let rates: Vec<f64> = args
        .iter()
        .position(|a| a == "--p")
        .and_then(|i| args.get(i + 1))
        .and_then(|s| s.parse().ok())
        .map_or(vec![1e-3, 3e-3], |p| vec![p]);
    for p in rates {
        let real = args.iter().any(|a| a == "--circuit");
        let g = if real {
            circuit_graph(d as u32, rounds, p)
        } else {
            surface_graph(d, rounds, p)
        };
        let start = Instant::now();
        let mwpm = Mwpm::new(&g).expect("valid graph");
        let build_ms = start.elapsed().as_secs_f64() * 1e3;
        let reference = ReferenceMwpm::new(&g).expect("valid graph");
        let uf = UnionFind::new(&g).expect("valid graph");
        let data = sample(&g, shots, 2026);
        let mean_events =
            data.iter().map(|(e, _)| e.len()).sum::<usize>() as f64 / data.len() as f64;
        println!(
            "d={d} rounds={rounds} p={p} ({}): {} detectors, {} edges, {mean_events:.1} events/shot, \
             MWPM build {build_ms:.0} ms, {shots} shots",
            if real { "generated circuit, circuit preset" } else { "synthetic graph" },
            g.num_detectors,
            g.edges.len()
        );
        if args.iter().any(|a| a == "--overhead") {
            let empty: Vec<(Vec<u32>, Vec<u32>)> = vec![(vec![], vec![]); shots];
            time("mwpm0", &mwpm, &empty);
            time("uf0", &uf, &empty);
            let one: Vec<(Vec<u32>, Vec<u32>)> =
                data.iter().filter(|(e, _)| e.len() == 2).cloned().collect();
            time("mwpm2", &mwpm, &one);
            time("uf2", &uf, &one);
        }
        let only = args
            .iter()
            .position(|a| a == "--only")
            .and_then(|i| args.get(i + 1));
        let run = |name: &str| only.is_none_or(|o| o == name);
        let t_mwpm = run("mwpm").then(|| time("mwpm", &mwpm, &data));
        let t_ref = run("ref").then(|| time("ref", &reference, &data));
        let t_uf = run("uf").then(|| time("uf", &uf, &data));
        if let (Some(a), Some(b)) = (t_mwpm, t_ref) {
            println!(
                "  sparse MWPM speed-up over the reference MWPM: {:.1}x",
                b / a
            );
        }
        if let (Some(a), Some(b)) = (t_mwpm, t_uf) {
            println!("  union-find speed-up over MWPM: {:.1}x", a / b);
        }
    }
}

/// The value after `--name`, parsed as a comma-separated list.
fn list<T: std::str::FromStr>(args: &[String], name: &str) -> Option<Vec<T>> {
    let i = args.iter().position(|a| a == name)?;
    args.get(i + 1)?
        .split(',')
        .map(|x| x.parse().ok())
        .collect()
}

/// Per-shot times (seconds) of `dec` on `shots`, after a warm-up, and the failure count.
fn time_shots(dec: &dyn Decoder, shots: &[(Vec<u32>, Vec<u32>)], budget_s: f64) -> (Vec<f64>, u64) {
    for (events, _) in shots.iter().take(50) {
        std::hint::black_box(dec.decode(events));
    }
    let mut times = Vec::with_capacity(shots.len());
    let mut failures = 0;
    let start = Instant::now();
    for (events, actual) in shots {
        let t0 = Instant::now();
        let got = dec.decode(events);
        times.push(t0.elapsed().as_secs_f64());
        failures += u64::from(got.observables != *actual || got.unmatched > 0);
        if start.elapsed().as_secs_f64() > budget_s {
            break;
        }
    }
    (times, failures)
}

fn mean_us(times: &[f64]) -> f64 {
    times.iter().sum::<f64>() * 1e6 / times.len().max(1) as f64
}

fn median(times: &[f64]) -> f64 {
    let mut v = times.to_vec();
    v.sort_by(f64::total_cmp);
    v.get(v.len() / 2).copied().unwrap_or(0.0)
}

/// Times `decs` on `shots` in `reps` interleaved passes (decoder 1, decoder 2, …, then again)
/// so that load from other processes falls on all of them alike; keeps each shot's best time.
/// Returns per decoder the per-shot best times (seconds) and the failure count.
fn time_interleaved(
    decs: &[&dyn Decoder],
    shots: &[(Vec<u32>, Vec<u32>)],
    reps: usize,
) -> Vec<(Vec<f64>, u64)> {
    let mut out: Vec<(Vec<f64>, u64)> = decs
        .iter()
        .map(|_| (vec![f64::INFINITY; shots.len()], 0))
        .collect();
    for rep in 0..reps.max(1) {
        for (dec, (best, failures)) in decs.iter().zip(out.iter_mut()) {
            let (times, f) = time_shots(*dec, shots, f64::INFINITY);
            for (b, t) in best.iter_mut().zip(times) {
                *b = b.min(t);
            }
            if rep == 0 {
                *failures = f;
            }
        }
    }
    out
}

/// The grid benchmark. For every `d` (`--d`, default 5,9,13,17,21,25) and `p` (`--p`, default
/// 0.001,0.003,0.005,0.007): the generated rotated surface code with `d` rounds under
/// `circuit p=…`, its matchable fault graph, `--shots` shots (default 2000) sampled
/// independently per edge with a fixed seed, decoded on one thread by the sparse MWPM and
/// union-find in `--reps` interleaved passes (default 3; each shot's best time is kept, as the
/// machine is shared), and by the reference MWPM once. The reference runs only up to
/// `--ref-max-d` (default 17; beyond, single shots take seconds) and stops after
/// `--ref-budget` seconds (default 20) per point, reporting the shots it did; the failure
/// counts of the two MWPM decoders are compared on those shots. `--only mwpm|uf` times one
/// decoder alone (for profiling). Then: the least-squares exponent of sparse-MWPM time per
/// shot against events per shot over d = 9..25 at p = 0.005 (the target: <= 1.2).
fn grid(args: &[String]) {
    let ds: Vec<u32> = list(args, "--d").unwrap_or(vec![5, 9, 13, 17, 21, 25]);
    let ps: Vec<f64> = list(args, "--p").unwrap_or(vec![0.001, 0.003, 0.005, 0.007]);
    let first = |name: &str| list::<f64>(args, name).and_then(|v| v.first().copied());
    let shots = first("--shots").map_or(2000, |x| x as usize);
    let reps = first("--reps").map_or(3, |x| x as usize);
    let budget = first("--ref-budget").unwrap_or(20.0);
    let ref_max_d = first("--ref-max-d").map_or(17, |x| x as u32);
    let only: Option<String> = list::<String>(args, "--only").and_then(|v| v.first().cloned());
    println!(
        "sparse MWPM vs reference MWPM and union-find; rotated surface code, d rounds, \
         circuit p, {shots} shots per point, best of {reps} interleaved passes, one thread"
    );
    println!(
        "{:>3} {:>6} {:>6} {:>8} | {:>9} {:>7} {:>7} | {:>9} {:>6} | {:>9} {:>6} {:>6} | \
         failures mwpm/ref/uf",
        "d",
        "p",
        "dets",
        "ev/shot",
        "mwpm us",
        "us/ev",
        "max/med",
        "uf us",
        "mw/uf",
        "ref us",
        "ref/mw",
        "shots",
    );
    let mut fit: Vec<(f64, f64)> = Vec::new();
    for &d in &ds {
        for &p in &ps {
            let g = circuit_graph(d, d, p);
            let mwpm = Mwpm::new(&g).expect("valid graph");
            let uf = UnionFind::new(&g).expect("valid graph");
            let data = sample(&g, shots, 2026 + u64::from(d));
            let events: f64 =
                data.iter().map(|(e, _)| e.len()).sum::<usize>() as f64 / data.len() as f64;
            let head = format!("{d:>3} {p:>6} {:>6} {events:>8.1}", g.num_detectors);
            match only.as_deref() {
                Some("mwpm") | Some("uf") => {
                    let dec: &dyn Decoder = if only.as_deref() == Some("uf") {
                        &uf
                    } else {
                        &mwpm
                    };
                    let r = time_interleaved(&[dec], &data, reps);
                    println!(
                        "{head} | {:>9.2} us/shot ({})",
                        mean_us(&r[0].0),
                        only.as_deref().unwrap_or("")
                    );
                    continue;
                }
                _ => {}
            }
            let r = time_interleaved(&[&mwpm, &uf], &data, reps);
            let (t_mw, f_mw) = &r[0];
            let (t_uf, f_uf) = &r[1];
            let mw = mean_us(t_mw);
            let uf_us = mean_us(t_uf);
            if (p - 0.005).abs() < 1e-12 && d >= 9 {
                fit.push((events.ln(), mw.ln()));
            }
            let max = t_mw.iter().copied().fold(0.0, f64::max);
            let ratio = max / median(t_mw).max(1e-9);
            let (t_ref, f_ref) = if d <= ref_max_d {
                // All-pairs tables stop at 2048 detectors and its blossom step is cubic in
                // the events of a component, so it gets a time budget.
                let reference = ReferenceMwpm::new(&g).expect("valid graph");
                time_shots(&reference, &data, budget)
            } else {
                (Vec::new(), 0)
            };
            let done = t_ref.len();
            let f_mw_prefix = data[..done]
                .iter()
                .filter(|(e, actual)| {
                    let got = mwpm.decode(e);
                    got.observables != *actual || got.unmatched > 0
                })
                .count();
            let ref_us = mean_us(&t_ref);
            let ref_text = if done == 0 {
                format!("{:>9} {:>6} {:>6} | {f_mw}/-/{f_uf}", "skipped", "-", 0)
            } else if done == data.len() {
                format!(
                    "{ref_us:>9.1} {:>6.1} {done:>6} | {f_mw}/{f_ref}/{f_uf}",
                    ref_us / mw
                )
            } else {
                format!(
                    "{ref_us:>9.1} {:>6.1} {done:>6} | {f_mw}/-/{f_uf}; on the first {done} \
                     shots {f_mw_prefix}/{f_ref}",
                    ref_us / mw
                )
            };
            println!(
                "{head} | {mw:>9.2} {:>7.3} {ratio:>7.1} | {uf_us:>9.2} {:>6.2} | {ref_text}",
                mw / events.max(1e-9),
                mw / uf_us,
            );
        }
    }
    if fit.len() >= 2 {
        let n = fit.len() as f64;
        let (sx, sy) = fit
            .iter()
            .fold((0.0, 0.0), |(a, b), &(x, y)| (a + x, b + y));
        let (mx, my) = (sx / n, sy / n);
        let num: f64 = fit.iter().map(|&(x, y)| (x - mx) * (y - my)).sum();
        let den: f64 = fit.iter().map(|&(x, _)| (x - mx) * (x - mx)).sum();
        println!(
            "fitted exponent of sparse-MWPM time per shot vs events per shot, d >= 9 at \
             p = 0.005: {:.3}",
            num / den
        );
    }
}

/// The unpaired case: the d = 9, 9-round circuit graph at `--p` (default 0.005) with every
/// boundary edge removed, so the whole graph is one boundary-free component and every shot
/// with an odd number of events must leave one unmatched (the sparse decoder then floods the
/// component). Half the shots get one extra event to make them odd. Prints, per decoder, the
/// mean time of even and odd shots and the max / median shot time over all shots (best of
/// `--reps` interleaved passes), then the reference's means on the shots it decodes within 20 s.
fn unpaired(args: &[String]) {
    let first = |name: &str| list::<f64>(args, name).and_then(|v| v.first().copied());
    let p = first("--p").unwrap_or(0.005);
    let shots = first("--shots").map_or(2000, |x| x as usize);
    let reps = first("--reps").map_or(3, |x| x as usize);
    let mut g = circuit_graph(9, 9, p);
    g.edges.retain(|e| e.b.is_some());
    let mut data = sample(&g, shots, 77);
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(78);
    for (k, (events, _)) in data.iter_mut().enumerate() {
        if (events.len() % 2 == 0) == (k % 2 == 0) {
            let extra = rng.gen_range(0..g.num_detectors as u32);
            if let Err(at) = events.binary_search(&extra) {
                events.insert(at, extra);
            } else {
                events.retain(|&e| e != extra);
            }
        }
    }
    let odd: Vec<bool> = data.iter().map(|(e, _)| e.len() % 2 == 1).collect();
    let mwpm = Mwpm::new(&g).expect("valid graph");
    let uf = UnionFind::new(&g).expect("valid graph");
    println!(
        "unpaired case: d=9 circuit graph at p={p} without boundary edges, {} detectors, \
         {shots} shots ({} odd), best of {reps} passes",
        g.num_detectors,
        odd.iter().filter(|&&o| o).count()
    );
    let r = time_interleaved(&[&mwpm, &uf], &data, reps);
    for ((times, _), name) in r.iter().zip(["mwpm", "uf"]) {
        let mean = |want: bool| {
            let v: Vec<f64> = times
                .iter()
                .zip(&odd)
                .filter(|&(_, &o)| o == want)
                .map(|(&t, _)| t)
                .collect();
            mean_us(&v)
        };
        let max = times.iter().copied().fold(0.0, f64::max);
        println!(
            "  {name:<5} even shots {:8.2} us, odd shots {:8.2} us, max/median {:6.1}",
            mean(false),
            mean(true),
            max / median(times)
        );
    }
    // The reference on the same shots, within a time budget.
    let reference = ReferenceMwpm::new(&g).expect("valid graph");
    let (times, _) = time_shots(&reference, &data, 20.0);
    let (mut even, mut odd_t) = (Vec::new(), Vec::new());
    for (t, &o) in times.iter().zip(&odd) {
        if o {
            odd_t.push(*t)
        } else {
            even.push(*t)
        }
    }
    println!(
        "  ref   even shots {:8.2} us, odd shots {:8.2} us ({} shots within 20 s)",
        mean_us(&even),
        mean_us(&odd_t),
        times.len()
    );
}
