//! Checks of the error budget against exact calculations and direct re-estimation.

use std::sync::Arc;

use super::*;
use crate::base::Source as Text;
use crate::faults::FaultClass;
use crate::ir::Limits;

fn pipeline(file: &str, set: &[(&str, i64)], noise: &str) -> Pipeline {
    let text = std::fs::read_to_string(file).unwrap();
    let source: Arc<Text> = Text::new(file, text);
    let set: Vec<(String, i64)> = set.iter().map(|(k, v)| (k.to_string(), *v)).collect();
    Pipeline::load(&source, &set, &Limits::default())
        .unwrap()
        .noised(Some(noise))
        .unwrap()
}

fn options(by: Grouping, removal: Removal, shots: u64, seed: u64) -> BudgetOptions {
    BudgetOptions {
        by,
        removal,
        improve: 0.9,
        min_effective: 30.0,
        retune: false,
        decoder: DecoderKind::Mwpm,
        direct: DirectSampling {
            shots,
            until_failures: None,
            seed: seed + 1000,
        },
    }
}

fn run(p: &Pipeline, opts: &BudgetOptions, shots: u64, seed: u64) -> Budget {
    let sample = DirectSampling {
        shots,
        until_failures: None,
        seed,
    };
    budget(p, &sample, opts, &mut |_| {}).unwrap()
}

/// Binomial tail `P(X ≥ k)` for `X ~ Bin(n, f)` and its derivative in `f`.
fn tail(n: u64, k: u64, f: f64) -> (f64, f64) {
    let choose = |n: u64, r: u64| (0..r).fold(1.0, |c, i| c * (n - i) as f64 / (i + 1) as f64);
    let p = (k..=n)
        .map(|j| choose(n, j) * f.powi(j as i32) * (1.0 - f).powi((n - j) as i32))
        .sum();
    // d/df P(X ≥ k) = n·C(n−1, k−1)·f^(k−1)·(1−f)^(n−k) (a standard identity of the binomial tail).
    let d = n as f64 * choose(n - 1, k - 1) * f.powi(k as i32 - 1) * (1.0 - f).powi((n - k) as i32);
    (p, d)
}

/// Exact `d log p_L / d log s` of the distance-`d` repetition code with one round under
/// `capacity p` (depolarizing): every data qubit flips with `f(s) = xor(s·q, s·q)`, `q` the
/// independent X (and Y) probability of the channel, and majority decoding fails when at least
/// `⌈d/2⌉` flip.
fn exact_repetition(d: u64, p: f64) -> f64 {
    let q = (1.0 - (1.0 - 4.0 * p / 3.0).sqrt()) / 2.0;
    let f = 2.0 * q * (1.0 - q);
    let df = 2.0 * q * (1.0 - 2.0 * q);
    let (pl, dpl) = tail(d, d.div_ceil(2), f);
    df * dpl / pl
}

#[test]
fn a_single_source_gets_everything() {
    // Code capacity on the bit-flip repetition code: only the round-start channel's X and Y
    // faults reach the graph (Z is silent), so there is one source.
    let p = pipeline(
        "circuits/repetition_d5.slant",
        &[("rounds", 1)],
        "capacity p=0.1",
    );
    let b = run(
        &p,
        &options(Grouping::default(), Removal::Reweight, 0, 0),
        50_000,
        1,
    );
    assert!(b.failures > 50, "{}", b.failures);
    assert_eq!(b.sources.len(), 1, "{:?}", b.sources);
    let s = &b.sources[0];
    assert_eq!(s.source.section.as_deref(), Some("round-start"));
    assert_eq!(s.source.class, Some(FaultClass::Low));
    assert!((s.share.unwrap().value - 1.0).abs() < 1e-12);
    assert!((s.sensitivity.value - b.total.value).abs() < 1e-9);
    // Removing the only source removes every failure.
    assert_eq!(s.removed.ratio.value, 0.0);
}

#[test]
fn repetition_sensitivity_is_the_binomial_tail_slope() {
    // Exact value from the binomial tail; it tends to ⌈d/2⌉ = 3 at small p.
    assert!((exact_repetition(5, 1e-5) - 3.0).abs() < 1e-3);
    for (p, shots) in [(0.1, 200_000), (0.03, 2_000_000)] {
        let pipe = pipeline(
            "circuits/repetition_d5.slant",
            &[("rounds", 1)],
            &format!("capacity p={p}"),
        );
        let b = run(
            &pipe,
            &options(Grouping::default(), Removal::Reweight, 0, 0),
            shots,
            3,
        );
        let exact = exact_repetition(5, p);
        let s = b.total;
        // The 95% interval widened to 5 sigma (common practice for sampled checks).
        let half = (s.high - s.low) / 2.0 * 5.0 / crate::study::Z95;
        assert!(
            (s.value - exact).abs() <= half,
            "p = {p}: {} [{}, {}] vs exact {exact}",
            s.value,
            s.low,
            s.high
        );
        assert!(b.failures > 50, "p = {p}: {} failures", b.failures);
    }
}

#[test]
fn reweighting_agrees_with_direct_re_estimation() {
    let p = pipeline(
        "circuits/xzzx_d3_cx.slant",
        &[],
        "circuit p=0.002 bias=1000",
    );
    let by = Grouping::default();
    let b = run(&p, &options(by, Removal::Reweight, 0, 0), 100_000, 11);
    let h = b
        .sources
        .iter()
        .find(|s| {
            s.source.section.as_deref() == Some("gates.h")
                && s.source.class == Some(FaultClass::High)
        })
        .unwrap();
    let graph = p.graph(&ExtractOptions::default());
    let sources = Sources::group(&graph, p.noisy(), p.notes(), &by);
    let id = sources.list.iter().position(|s| *s == h.source).unwrap() as u32;
    let run_direct = |scale: f64, seed: u64| {
        direct_scaled(
            &p,
            &by,
            Some(id),
            scale,
            DecoderKind::Mwpm,
            false,
            &DirectSampling {
                shots: 100_000,
                until_failures: None,
                seed,
            },
        )
        .unwrap()
    };
    // Removal (s = 0) and the 10% improvement, each against its own direct run.
    for (scale, reweighted) in [(0.0, h.removed.reweighted), (0.9, h.improved.ratio)] {
        let direct = run_direct(scale, 21);
        let ratio = ratio_of(direct.rate, b.rate);
        assert!(
            ratio.overlaps(&reweighted),
            "scale {scale}: direct {ratio:?} vs reweighted {reweighted:?}"
        );
    }
    // The sensitivity against a finite difference of direct estimates at s = 0.7 and 1.3.
    let (lo, hi) = (run_direct(0.7, 31), run_direct(1.3, 32));
    let slope = (hi.rate.rate / lo.rate.rate).ln() / (1.3f64 / 0.7).ln();
    let spread = ((hi.rate.high / hi.rate.low).ln() + (lo.rate.high / lo.rate.low).ln())
        / 2.0
        / (1.3f64 / 0.7).ln();
    assert!(
        (slope - h.sensitivity.value).abs() <= spread + (h.sensitivity.high - h.sensitivity.low),
        "finite difference {slope} ± {spread} vs {:?}",
        h.sensitivity
    );
}

#[test]
fn hadamard_schedule_puts_the_converted_faults_on_top() {
    // The XZZX code with cx and Hadamards on half the data: under a strongly biased model the
    // Hadamards turn Z faults into X ("The XZZX surface code", Nat. Commun. 12, 2172 (2021)),
    // and the bias report names them as the converters. The budget must put the high-rate faults
    // the Hadamards convert on top; with the native schedule (bias kept) it must not.
    let noise = "circuit p=0.002 bias=1000";
    let cx = pipeline("circuits/xzzx_d3_cx.slant", &[], noise);
    let native = pipeline("circuits/xzzx_d3_hook_safe.slant", &[], noise);
    let bias_cx = crate::analysis::analyze_bias(cx.noisy(), cx.notes());
    assert!(!bias_cx.kept());
    assert!(bias_cx.converters.iter().all(|c| c.what == "h"));
    assert!(crate::analysis::analyze_bias(native.noisy(), native.notes()).kept());

    let b = run(
        &cx,
        &options(Grouping::default(), Removal::Reweight, 0, 0),
        100_000,
        5,
    );
    let top = &b.sources[0].source;
    assert_eq!(
        (top.section.as_deref(), top.class),
        (Some("gates.h"), Some(FaultClass::High)),
        "{}",
        b.answer()
    );
    assert!(b.answer().starts_with("improve h gates, high-rate first"));

    let class = Grouping::parse("class").unwrap();
    let high_share = |p: &Pipeline| {
        let b = run(p, &options(class, Removal::Reweight, 0, 0), 200_000, 7);
        let s = b
            .sources
            .iter()
            .find(|s| s.source.class == Some(FaultClass::High))
            .unwrap();
        s.share.unwrap()
    };
    let (a, n) = (high_share(&cx), high_share(&native));
    assert!(a.low > 0.8, "cx schedule: high-rate share {a:?}");
    assert!(n.high < 0.7, "native schedule: high-rate share {n:?}");
}

#[test]
fn sections_name_overrides_and_split_measurement_flips() {
    // A model with an ancilla override: its idle noise is a source of its own, labelled with the
    // override's selector; the model's measurement flips are the `measure` section.
    let p = pipeline(
        "circuits/xzzx_d3_hook_safe.slant",
        &[],
        "circuits/models/cat-bias-preserving.toml",
    );
    let graph = p.graph(&ExtractOptions::default());
    let by = Grouping::parse("section").unwrap();
    let sources = Sources::group(&graph, p.noisy(), p.notes(), &by);
    let names: Vec<_> = sources
        .list
        .iter()
        .filter_map(|s| s.section.clone())
        .collect();
    for want in [
        "override.0.idle",
        "idle",
        "gates.cx",
        "gates.cz",
        "measure",
        "reset",
    ] {
        assert!(
            names.iter().any(|n| n == want),
            "{want} missing from {names:?}"
        );
    }
    let sel = selectors(&p);
    assert_eq!(
        section_label("override.0.idle", &sel),
        "idle on role ancilla"
    );
    // Every edge's prior recombines from its parts.
    for (k, m) in graph.edges.iter().enumerate() {
        assert!((sources.scaled_prior(k, None, 1.0) - m.probability).abs() < 1e-12);
    }
}

#[test]
fn flips_written_in_the_circuit_stay_with_the_circuit() {
    let text = "qubit a role data\nqubit b role ancilla\nlayer { cx a b }\n\
        layer { measure z b -> m flip 0.01 }\nmeasure z a -> f\ndetector = m\n\
        observable o = f\n";
    let source = Text::new("t.slant", text);
    let p = Pipeline::load(&source, &[], &Limits::default())
        .unwrap()
        .noised(Some("circuit p=0.02"))
        .unwrap();
    let graph = p.graph(&ExtractOptions::default());
    let sources = Sources::group(
        &graph,
        p.noisy(),
        p.notes(),
        &Grouping::parse("section").unwrap(),
    );
    let circuit = sources
        .list
        .iter()
        .find(|s| s.section.as_deref() == Some(CIRCUIT_SECTION))
        .unwrap();
    assert!((circuit.expected - 0.01).abs() < 1e-12, "{circuit:?}");
    let measure = sources
        .list
        .iter()
        .find(|s| s.section.as_deref() == Some("measure"))
        .unwrap();
    assert!((measure.expected - 2.0 * 0.02).abs() < 1e-12, "{measure:?}");
    for (k, m) in graph.edges.iter().enumerate() {
        assert!((sources.scaled_prior(k, None, 1.0) - m.probability).abs() < 1e-12);
    }
}
