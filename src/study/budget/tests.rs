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

// The budget through the splitting method: its walks at the target rung sample the failing
// configurations where direct sampling sees none.

fn splitting_run(p: &Pipeline, opts: &BudgetOptions, top: Option<f64>, seed: u64) -> Budget {
    let ladder = SplittingSampling {
        opts: crate::study::SplittingOptions {
            chains: 8,
            sweeps: 100.0,
            top,
            top_failures: 500,
            seed,
            ..crate::study::SplittingOptions::default()
        },
    };
    budget(p, &ladder, opts, &mut |_| {}).unwrap()
}

/// `|a − b|` within `k` combined standard deviations read off two 95% intervals.
fn agree(a: &Interval, b: &Interval, k: f64) -> bool {
    let sd = |i: &Interval| (i.high - i.low) / 2.0 / crate::study::Z95;
    (a.value - b.value).abs() <= k * (sd(a).powi(2) + sd(b).powi(2)).sqrt()
}

#[test]
fn splitting_budget_finds_the_binomial_tail_slope_at_low_p() {
    // d = 5 and 7 under code capacity at p = 1e-3 (p_L ≈ 3e-9 and 4e-12: far out of reach of
    // direct sampling). The exact d log p_L / d log s is the binomial tail's slope, near ⌈d/2⌉.
    for (file, d) in [
        ("circuits/repetition_d5.slant", 5),
        ("circuits/repetition_d3.slant", 3),
    ] {
        let pipe = pipeline(file, &[("rounds", 1)], "capacity p=0.001");
        let b = splitting_run(
            &pipe,
            &options(Grouping::default(), Removal::Auto, 0, 0),
            None,
            4,
        );
        assert_eq!(b.method, "splitting");
        assert!(b.batches.unwrap() >= 8, "{:?}", b.batches);
        let exact = exact_repetition(d, 0.001);
        assert!((exact - d.div_ceil(2) as f64).abs() < 0.01, "{exact}");
        let s = b.total;
        // The 95% interval widened to 5 sigma (common practice for sampled checks); at this p
        // nearly every failing configuration has exactly ⌈d/2⌉ flips, so it is narrow.
        let half = ((s.high - s.low) / 2.0 * 5.0 / crate::study::Z95).max(0.02);
        assert!(
            (s.value - exact).abs() <= half,
            "d = {d}: {s:?} vs exact {exact}"
        );
        // The rate itself against the binomial tail (capacity: X and Y flip each bit).
        let q = (1.0 - (1.0 - 4.0 * 0.001 / 3.0f64).sqrt()) / 2.0;
        let (tail_p, _) = tail(d, d.div_ceil(2), 2.0 * q * (1.0 - q));
        // Within 4 stated standard deviations of ln p_L (as the ladder's own check does).
        let sigma = b.splitting.as_ref().unwrap().target().uncertainty;
        assert!(
            (b.rate.rate / tail_p).ln().abs() < 4.0 * sigma,
            "d = {d}: {:?} vs exact {tail_p}",
            b.rate
        );
        // One source: everything is its, and without it nothing fails, which reweighting
        // cannot carry (no sampled failure lacks it): not estimable, not a ratio of 0.
        assert_eq!(b.sources.len(), 1);
        let only = &b.sources[0];
        assert!((only.share.unwrap().value - 1.0).abs() < 1e-12);
        assert!((only.sensitivity.value - b.total.value).abs() < 1e-9);
        assert_eq!(only.removed.method, RemovalMethod::NotEstimable);
        assert!(only.removed.ratio.value.is_nan());
    }
}

#[test]
fn splitting_and_sampling_budgets_agree_where_both_work() {
    // d = 3 surface code, 3 rounds, circuit noise p = 0.004: direct sampling sees thousands of
    // failures; the ladder is forced to start 4x above so that the walks do the work.
    let pipe = pipeline(
        "circuits/surface_d3_hook_safe.slant",
        &[],
        "circuit p=0.004",
    );
    let opts = options(Grouping::default(), Removal::Reweight, 0, 0);
    let direct = run(&pipe, &opts, 400_000, 9);
    let split = splitting_run(&pipe, &opts, Some(4.0), 10);
    assert!(split.splitting.as_ref().unwrap().points.len() >= 3);
    assert!(direct.failures > 2000, "{}", direct.failures);
    // The rates (independent estimates) overlap.
    assert!(
        split.rate.low <= direct.rate.high && direct.rate.low <= split.rate.high,
        "splitting {:?} vs sampling {:?}",
        split.rate,
        direct.rate
    );
    assert!(
        agree(&split.total, &direct.total, 4.0),
        "{:?} vs {:?}",
        split.total,
        direct.total
    );
    for s in &split.sources {
        let d = direct
            .sources
            .iter()
            .find(|d| d.source == s.source)
            .unwrap();
        // 4 combined standard deviations: several sources are compared at once.
        assert!(
            agree(&s.sensitivity, &d.sensitivity, 4.0),
            "{}: splitting {:?} vs sampling {:?}",
            s.label,
            s.sensitivity,
            d.sensitivity
        );
        assert!(
            agree(&s.improved.ratio, &d.improved.ratio, 4.0),
            "{}: -10% splitting {:?} vs sampling {:?}",
            s.label,
            s.improved.ratio,
            d.improved.ratio
        );
    }
}

#[test]
fn splitting_budget_names_the_hadamard_converted_faults_at_low_p() {
    // As `hadamard_schedule_puts_the_converted_faults_on_top`, at p = 2e-4 where direct
    // sampling would need ~1e8 shots: the XZZX code with cx and Hadamards turns Z faults into X
    // ("The XZZX surface code", Nat. Commun. 12, 2172 (2021)); the bias report names the
    // Hadamards as the converters, and the budget puts their high-rate faults on top.
    let noise = "circuit p=0.0002 bias=1000";
    let cx = pipeline("circuits/xzzx_d3_cx.slant", &[], noise);
    let native = pipeline("circuits/xzzx_d3_hook_safe.slant", &[], noise);
    let bias_cx = crate::analysis::analyze_bias(cx.noisy(), cx.notes());
    assert!(!bias_cx.kept());
    assert!(bias_cx.converters.iter().all(|c| c.what == "h"));
    assert!(crate::analysis::analyze_bias(native.noisy(), native.notes()).kept());

    let b = splitting_run(
        &cx,
        &options(Grouping::default(), Removal::Auto, 0, 0),
        None,
        5,
    );
    // About 8 failures in the 100,000 shots of the sampling test: too few for a budget.
    assert!(b.rate.rate < 1e-4, "{:?}", b.rate);
    // The Z faults the Hadamards convert are high-rate faults of every section before an h
    // (idle, the h gates themselves, cx): those three lead, the h gates among the first two.
    // (At p = 0.002 the h gates lead; here idle is ahead of them within the intervals.)
    let lead: Vec<_> = b.sources[..3]
        .iter()
        .map(|s| (s.source.section.as_deref().unwrap(), s.source.class))
        .collect();
    for want in ["idle", "gates.h", "gates.cx"] {
        assert!(
            lead.contains(&(want, Some(FaultClass::High))),
            "{lead:?}: {}",
            b.answer()
        );
    }
    assert!(b.sources[..2]
        .iter()
        .any(|s| s.source.section.as_deref() == Some("gates.h")));
    // The low p shows in the total: the fewest converted faults that fail, ⌈3/2⌉ = 2.
    assert!((b.total.value - 2.0).abs() < 0.1, "{:?}", b.total);
    let class = Grouping::parse("class").unwrap();
    let high_share = |p: &Pipeline, seed| {
        let b = splitting_run(p, &options(class, Removal::Auto, 0, 0), None, seed);
        let s = b
            .sources
            .iter()
            .find(|s| s.source.class == Some(FaultClass::High))
            .unwrap();
        (s.share.unwrap(), b.rate.rate)
    };
    let ((a, rate_cx), (n, rate_native)) = (high_share(&cx, 6), high_share(&native, 7));
    assert!(a.low > 0.8, "cx schedule: high-rate share {a:?}");
    // With the bias kept, the high-rate faults still matter at this p (measurement and reset
    // flips are the only low-rate faults of note, five times fewer than the Z faults), but less
    // than with the Hadamards, and the rate is several times lower (measured 87% vs 72% and
    // 7.6e-5 vs 1.0e-5, seeds 6 and 7).
    assert!(n.value < a.value, "native {n:?} vs cx {a:?}");
    assert!(rate_cx > 3.0 * rate_native, "{rate_cx} vs {rate_native}");
}

#[test]
fn batch_means_widen_the_interval_of_dependent_values() {
    // 4 batches of 5 equal values: the batch means 0, 1, 2, 3 have mean 1.5 and standard error
    // sqrt(var(0,1,2,3)/4) = sqrt((5/3)/4); Student's t with 3 degrees of freedom is 3.182.
    let values: Vec<f64> = (0..20).map(|i| (i / 5) as f64).collect();
    let batches = [0, 5, 10, 15, 20];
    let i = Interval::of_mean(&values, &batches);
    let half = 3.182 * (5.0f64 / 3.0 / 4.0).sqrt();
    assert!((i.value - 1.5).abs() < 1e-12);
    assert!((i.high - 1.5 - half).abs() < 1e-9, "{i:?}");
    // The same values taken as independent give a much narrower interval.
    let iid = Interval::of_mean(&values, &[]);
    assert!(iid.high - iid.low < (i.high - i.low) / 2.0);
}
