//! Checks of the ladder against exact answers on hand-made fault graphs.

use super::ladder::{run, Problem};
use super::walk::Symptoms;
use super::{fit_exponent, SplittingOptions, Start};
use crate::decode::{DecoderKind, MatchingEdge, MatchingGraph};

/// `Σ_{k>d/2} C(d,k) p^k (1−p)^{d−k}`: the failure probability of majority vote over `d` bits
/// that flip independently with probability `p` (binomial tail, any probability textbook).
fn binomial_tail(d: u32, p: f64) -> f64 {
    let choose = |n: u32, k: u32| (0..k).fold(1.0, |acc, i| acc * (n - i) as f64 / (i + 1) as f64);
    (d / 2 + 1..=d)
        .map(|k| choose(d, k) * p.powi(k as i32) * (1.0 - p).powi((d - k) as i32))
        .sum()
}

/// The repetition code of `d` bits under code-capacity noise: detector `i` compares bits `i` and
/// `i + 1`, bit 0 carries the observable. Minimum-weight matching on it is majority vote.
fn repetition(d: u32) -> (Symptoms, MatchingGraph) {
    let n = d - 1;
    let mut lists = Vec::new();
    let mut edges = Vec::new();
    for bit in 0..d {
        let dets: Vec<u32> = [bit.checked_sub(1), (bit < n).then_some(bit)]
            .into_iter()
            .flatten()
            .collect();
        let obs = if bit == 0 { vec![0] } else { vec![] };
        edges.push(MatchingEdge {
            a: dets[0],
            b: dets.get(1).copied(),
            p: 0.01,
            observables: obs.clone(),
        });
        lists.push((dets, obs));
    }
    let graph = MatchingGraph {
        num_detectors: n as usize,
        num_observables: 1,
        edges,
    };
    (Symptoms::from_lists(n as usize, 1, &lists), graph)
}

#[test]
fn majority_vote_tail_far_below_sampling() {
    // d = 7 at p = 0.001: the binomial tail is 3.49e-11, far out of reach of direct sampling.
    let (d, p) = (7, 0.001);
    let (sym, graph) = repetition(d);
    let decoder = DecoderKind::Mwpm.build(&graph).unwrap();
    let priors = move |s: f64| Ok(vec![p * s; d as usize]);
    let problem = Problem {
        sym: &sym,
        decoder: decoder.as_ref(),
        priors: &priors,
        valid: &|s| p * s < 0.5,
        preset_p: Some(p),
        shortest: &[],
    };
    let opts = SplittingOptions {
        chains: 6,
        sweeps: 300.0,
        top_failures: 400,
        seed: 11,
        ..SplittingOptions::default()
    };
    let result = run(&problem, &opts, |_| {}).unwrap();
    let exact = binomial_tail(d, p);
    assert!((exact - 3.49e-11).abs() < 0.01e-11, "{exact}");
    let got = result.target();
    assert!(
        got.uncertainty < 0.2,
        "stated uncertainty {}",
        got.uncertainty
    );
    // Within 4 stated standard deviations of ln P (a fixed seed; 4σ leaves room for the
    // uncertainty itself being estimated from six walks).
    let z = (got.rate / exact).ln() / got.uncertainty;
    assert!(z.abs() < 4.0, "{} vs exact {exact}: {z:.1} sigma", got.rate);
    // Every rung agrees with the tail at its own p.
    for pt in &result.points {
        let exact = binomial_tail(d, p * pt.scale);
        let z = (pt.rate / exact).ln() / pt.uncertainty;
        assert!(z.abs() < 4.0, "at {}: {} vs {exact}", pt.scale, pt.rate);
    }
    // The exponent at low p approaches the fewest flips that fail, (d+1)/2 = 4.
    let fit = fit_exponent(&result.points, 4.0).unwrap();
    assert!((fit.exponent - 4.0).abs() < 0.1, "{fit:?}");
}

#[test]
fn a_target_where_failures_are_common_is_sampled_directly() {
    let (sym, graph) = repetition(3);
    let decoder = DecoderKind::Mwpm.build(&graph).unwrap();
    let p = 0.2;
    let priors = move |s: f64| Ok(vec![p * s; 3]);
    let problem = Problem {
        sym: &sym,
        decoder: decoder.as_ref(),
        priors: &priors,
        valid: &|s| p * s < 0.5,
        preset_p: None,
        shortest: &[],
    };
    let opts = SplittingOptions {
        top_failures: 2000,
        ..SplittingOptions::default()
    };
    let result = run(&problem, &opts, |_| {}).unwrap();
    assert_eq!(result.points.len(), 1);
    let exact = binomial_tail(3, p); // 0.104
    let got = result.target();
    assert!(((got.rate / exact).ln() / got.uncertainty).abs() < 5.0);
}

#[test]
fn walks_from_the_shortest_logical_error_reach_the_same_tail() {
    // The same d = 7 majority-vote tail (binomial tail, any probability textbook; ratio method of
    // "Simulation of rare events in quantum error correction", Phys. Rev. A 88, 062308 (2013)),
    // with the walks started from the one logical error of the repetition code, all 7 bits
    // flipped, thinned to 4 of them. The top may sit where 0.5% of shots fail instead of 5%.
    let (d, p) = (7, 0.001);
    let (sym, graph) = repetition(d);
    let decoder = DecoderKind::Mwpm.build(&graph).unwrap();
    let priors = move |s: f64| Ok(vec![p * s; d as usize]);
    let all: Vec<u32> = (0..d).collect();
    let shortest = [all];
    let problem = Problem {
        sym: &sym,
        decoder: decoder.as_ref(),
        priors: &priors,
        valid: &|s| p * s < 0.5,
        preset_p: Some(p),
        shortest: &shortest,
    };
    let opts = SplittingOptions {
        chains: 6,
        sweeps: 300.0,
        top_failures: 400,
        seed: 5,
        start: Start::Shortest,
        ..SplittingOptions::default()
    };
    let result = run(&problem, &opts, |_| {}).unwrap();
    assert_eq!(result.start, Start::Shortest);
    assert!(result.warnings.is_empty(), "{:?}", result.warnings);
    let exact = binomial_tail(d, p);
    let got = result.target();
    assert!(got.uncertainty < 0.2, "{}", got.uncertainty);
    let z = (got.rate / exact).ln() / got.uncertainty;
    assert!(z.abs() < 4.0, "{} vs exact {exact}: {z:.1} sigma", got.rate);
    // A lower top than the sampling start needs: there 5% of shots fail (p_top ≥ 0.07 for
    // d = 7), here 0.5% suffice.
    let top = &result.points[0];
    let sampling_start = run(
        &problem,
        &SplittingOptions {
            start: Start::Sampling,
            ..opts.clone()
        },
        |_| {},
    )
    .unwrap();
    assert!(
        top.scale < sampling_start.points[0].scale,
        "{} vs {}",
        top.scale,
        sampling_start.points[0].scale
    );
}

#[test]
fn a_shortest_error_the_decoder_corrects_falls_back_to_sampling() {
    // A "logical error" list the decoder does not fail on (one bit flip of d = 5 is corrected):
    // the walks start from direct sampling and the result says why.
    let (d, p) = (5, 0.05);
    let (sym, graph) = repetition(d);
    let decoder = DecoderKind::Mwpm.build(&graph).unwrap();
    let priors = move |s: f64| Ok(vec![p * s; d as usize]);
    let shortest = [vec![2u32]];
    let problem = Problem {
        sym: &sym,
        decoder: decoder.as_ref(),
        priors: &priors,
        valid: &|s| p * s < 0.5,
        preset_p: Some(p),
        shortest: &shortest,
    };
    let opts = SplittingOptions {
        chains: 4,
        sweeps: 50.0,
        top_failures: 200,
        start: Start::Shortest,
        ..SplittingOptions::default()
    };
    let result = run(&problem, &opts, |_| {}).unwrap();
    assert_eq!(result.start, Start::Sampling);
    assert_eq!(result.warnings.len(), 1, "{:?}", result.warnings);
    assert!(
        result.warnings[0].contains("corrects"),
        "{}",
        result.warnings[0]
    );
    let exact = binomial_tail(d, p);
    let got = result.target();
    assert!(((got.rate / exact).ln() / got.uncertainty).abs() < 4.0);
}
