//! The ladder itself: direct sampling at the top, the walks at each rung, the ratios and their
//! uncertainties (the method is described in the module docs of `rare/mod.rs`), and the fit of
//! the scaling exponent.

use rand::SeedableRng;
use rand_xoshiro::Xoshiro256PlusPlus;
use rayon::prelude::*;

use super::ratio::{bennett, integrated_time, ln_ratio_at, mean_and_variance_of_mean};
use super::walk::{Odds, Symptoms, Walk};
use super::{
    LadderPoint, Mixing, Splitting, SplittingEvent, SplittingOptions, Start, TargetSamples,
    TopSampling,
};
use crate::decode::Decoder;
use crate::study::pipeline::StudyError;
use crate::study::stats::fit_line;
use crate::study::stats::Z95;

/// Failure rate at which a pilot run accepts a scale as the top of the ladder.
const TOP_RATE: f64 = 0.05;
/// The same when the walks start from the shortest logical errors: the top only anchors the
/// ladder, so it may sit lower (module docs of `rare/mod.rs`).
const SHORTEST_TOP_RATE: f64 = 0.005;
/// Failures a pilot run waits for.
const PILOT_FAILURES: u64 = 50;
/// Shots per direct-sampling block (one generator each).
const BLOCK: u64 = 1024;
/// Samples recorded per walk and rung (at most).
const RECORDED: u64 = 2000;
/// Burn-in at each rung, as a share of the recorded proposals.
const BURN_IN: f64 = 0.25;

/// What the ladder runs on: the edges, the decoder and the priors at each scale.
pub(super) struct Problem<'a> {
    /// Edge symptoms.
    pub sym: &'a Symptoms,
    /// The decoder (built at the target noise).
    pub decoder: &'a dyn Decoder,
    /// Priors at a scale.
    pub priors: &'a (dyn Fn(f64) -> Result<Vec<f64>, StudyError> + Sync),
    /// Whether a scale gives valid priors.
    pub valid: &'a (dyn Fn(f64) -> bool + Sync),
    /// The preset's `p` at scale 1, if any (for the points' `p`).
    pub preset_p: Option<f64>,
    /// Logical errors (edge lists whose detectors cancel) the walks start from with
    /// [`Start::Shortest`].
    pub shortest: &'a [Vec<u32>],
}

/// The generator of stream `(seed, kind, a, b)`: a SplitMix64-style finaliser separates nearby
/// inputs.
fn rng(seed: u64, kind: u64, a: u64, b: u64) -> Xoshiro256PlusPlus {
    fn mix(mut z: u64) -> u64 {
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        z ^ (z >> 31)
    }
    let h = mix(mix(mix(seed ^ 0x5a17_0000_0000_0000) ^ kind) ^ a);
    Xoshiro256PlusPlus::seed_from_u64(mix(h ^ b))
}

/// Direct sampling at one scale: shots, failures and the first failing configurations.
struct Direct {
    shots: u64,
    failures: u64,
    seeds: Vec<Vec<u32>>,
}

/// What one direct-sampling run draws.
struct DirectRun {
    /// Its scale (reported, and part of the generators' seeds).
    scale: f64,
    /// Most shots.
    max_shots: u64,
    /// Stop after the block at which this many failures are seen.
    until: u64,
    /// Failing configurations to keep.
    keep: usize,
    /// Seed.
    seed: u64,
}

/// Samples configurations from `p` in blocks until `run.until` failures or `run.max_shots`
/// shots, keeping the first `run.keep` failing configurations. Blocks run in parallel and are
/// counted in order, so the result depends on the seed only.
fn direct(
    pr: &Problem,
    p: &[f64],
    run: &DirectRun,
    progress: &mut dyn FnMut(SplittingEvent),
) -> Direct {
    let DirectRun {
        scale,
        max_shots,
        until,
        keep,
        seed,
    } = *run;
    let p_max = p.iter().copied().fold(0.0, f64::max);
    let mut out = Direct {
        shots: 0,
        failures: 0,
        seeds: Vec::new(),
    };
    let group = (rayon::current_num_threads() as u64 * 2).max(1);
    let blocks = max_shots.div_ceil(BLOCK);
    let mut next = 0;
    while next < blocks {
        let end = (next + group).min(blocks);
        let results: Vec<Direct> = (next..end)
            .into_par_iter()
            .map(|b| {
                let n = (max_shots - b * BLOCK).min(BLOCK);
                let mut r = rng(seed, 1, scale.to_bits(), b);
                let mut w = Walk::new(pr.sym, pr.decoder);
                let mut d = Direct {
                    shots: n,
                    failures: 0,
                    seeds: Vec::new(),
                };
                for _ in 0..n {
                    w.draw(p, p_max, &mut r);
                    if w.fails() {
                        d.failures += 1;
                        if d.seeds.len() < keep {
                            d.seeds.push(w.fired().to_vec());
                        }
                    }
                }
                d
            })
            .collect();
        for d in results {
            out.shots += d.shots;
            out.failures += d.failures;
            let room = keep.saturating_sub(out.seeds.len());
            out.seeds.extend(d.seeds.into_iter().take(room));
            progress(SplittingEvent::Sampling {
                scale,
                shots: out.shots,
                failures: out.failures,
            });
            if out.failures >= until {
                return out;
            }
        }
        next = end;
    }
    out
}

/// What one walk recorded at one rung.
struct Recorded {
    /// Fired edges of each sample, concatenated; sample `k` is `edges[start[k]..start[k+1]]`.
    edges: Vec<u32>,
    start: Vec<usize>,
    /// Number of fired edges of each sample.
    sizes: Vec<f64>,
    accepted: u64,
    proposals: u64,
    /// The state at the end, where the walk continues at the next rung.
    last: Vec<u32>,
}

impl Recorded {
    /// `ln(π_b(E)/π_a(E))` of each sample, from the per-edge terms `a` and the constant.
    fn log_ratios(&self, coef: &[f64], constant: f64) -> Vec<f64> {
        self.start
            .windows(2)
            .map(|w| {
                constant
                    + self.edges[w[0]..w[1]]
                        .iter()
                        .map(|&m| coef[m as usize])
                        .sum::<f64>()
            })
            .collect()
    }
}

/// The configurations the walks recorded at the last rung, each sorted, walk by walk.
fn target_samples(recs: &[Recorded]) -> TargetSamples {
    let mut out = TargetSamples {
        edges: Vec::new(),
        starts: vec![0],
        walks: vec![0],
    };
    for r in recs {
        for w in r.start.windows(2) {
            let at = out.edges.len();
            out.edges.extend_from_slice(&r.edges[w[0]..w[1]]);
            out.edges[at..].sort_unstable();
            out.starts.push(out.edges.len());
        }
        out.walks.push(out.starts.len() - 1);
    }
    out
}

/// Runs every walk at one rung from its current state, after `burn` proposals of burn-in.
fn rung(
    pr: &Problem,
    p: &[f64],
    starts: &[Vec<u32>],
    (proposals, burn): (u64, u64),
    seed: u64,
    index: u64,
) -> Vec<Recorded> {
    let odds = Odds::new(p);
    let stride = (proposals / RECORDED).max(1);
    starts
        .par_iter()
        .enumerate()
        .map(|(i, start)| {
            let mut r = rng(seed, 2, index, i as u64);
            let mut w = Walk::new(pr.sym, pr.decoder);
            w.set(start);
            let mut rec = Recorded {
                edges: Vec::new(),
                start: vec![0],
                sizes: Vec::new(),
                accepted: 0,
                proposals: 0,
                last: Vec::new(),
            };
            for _ in 0..burn {
                rec.accepted += u64::from(w.step(&odds, &mut r));
            }
            for t in 1..=proposals {
                rec.accepted += u64::from(w.step(&odds, &mut r));
                if t % stride == 0 {
                    rec.edges.extend_from_slice(w.fired());
                    rec.start.push(rec.edges.len());
                    rec.sizes.push(w.fired().len() as f64);
                }
            }
            rec.proposals = burn + proposals;
            rec.last = w.fired().to_vec();
            rec
        })
        .collect()
}

/// One starting configuration per walk from the logical errors of `pr.shortest` (walk `i` takes
/// error `i mod n`), each thinned to a least failing subset: its edges are tried for removal in
/// an order drawn for the walk, and an edge is removed when the rest still fails. Different
/// orders give different subsets, so the walks start spread over the error's halves. Errors the
/// decoder does not fail on are skipped; empty when none fails.
fn thin_all(pr: &Problem, chains: usize, seed: u64) -> Vec<Vec<u32>> {
    use rand::seq::SliceRandom;
    let mut w = Walk::new(pr.sym, pr.decoder);
    let failing: Vec<&Vec<u32>> = pr
        .shortest
        .iter()
        .filter(|e| {
            w.set(e);
            !e.is_empty() && w.fails()
        })
        .collect();
    if failing.is_empty() {
        return Vec::new();
    }
    (0..chains)
        .map(|i| {
            let mut order = failing[i % failing.len()].clone();
            order.shuffle(&mut rng(seed, 3, i as u64, 0));
            w.set(&order);
            for &m in &order {
                w.toggle(m as usize);
                if !w.fails() {
                    w.toggle(m as usize);
                }
            }
            w.fired().to_vec()
        })
        .collect()
}

/// The mixing diagnostics of one rung.
fn mixing(recs: &[Recorded], proposals: u64) -> Mixing {
    let total: u64 = recs.iter().map(|r| r.proposals).sum();
    let accepted: u64 = recs.iter().map(|r| r.accepted).sum();
    let sizes: Vec<Vec<f64>> = recs.iter().map(|r| r.sizes.clone()).collect();
    let samples: usize = sizes.iter().map(Vec::len).sum();
    let mean_fired = sizes.iter().flatten().sum::<f64>() / samples.max(1) as f64;
    let autocorrelation = integrated_time(&sizes);
    Mixing {
        proposals: total,
        acceptance: accepted as f64 / total.max(1) as f64,
        mean_fired,
        samples: samples as u64,
        stride: (proposals / RECORDED).max(1),
        autocorrelation,
        effective_samples: samples as f64 / autocorrelation.unwrap_or(samples as f64).max(1.0),
    }
}

/// The next scale below `s`: steps of `2^{−1/√w}` (the paper's rule), evened out so that the
/// last one lands on the target.
fn next_scale(s: f64, w: f64) -> f64 {
    let n = rungs_below(s, w);
    if n <= 1 {
        1.0
    } else {
        (s.ln() * (n - 1) as f64 / n as f64).exp()
    }
}

/// Rungs still expected below `s` with failing weight `w`.
fn rungs_below(s: f64, w: f64) -> usize {
    if s <= 1.0 {
        0
    } else {
        (s.ln() / (2f64.ln() / w.max(1.0).sqrt()) - 1e-9)
            .ceil()
            .max(1.0) as usize
    }
}

/// The point of a rung, without the diagnostics that only rungs below the top have.
fn point(pr: &Problem, scale: f64, ln_rate: f64, variance: f64) -> LadderPoint {
    let sigma = variance.max(0.0).sqrt();
    let rate = ln_rate.exp();
    LadderPoint {
        scale,
        p: pr.preset_p.map(|p| p * scale),
        rate,
        uncertainty: sigma,
        low: rate * (-Z95 * sigma).exp(),
        high: (rate * (Z95 * sigma).exp()).min(1.0),
        slope: None,
        overlap: None,
        mixing: None,
        walks: Vec::new(),
    }
}

/// The ladder from the top down to the target (module docs of `rare/mod.rs`).
pub(super) fn run(
    pr: &Problem,
    opts: &SplittingOptions,
    mut progress: impl FnMut(SplittingEvent),
) -> Result<Splitting, StudyError> {
    let bare = |m: String| StudyError::from(crate::base::Diagnostic::bare(m));
    let chains = opts.chains.max(2);
    let m = pr.sym.len();
    if m == 0 {
        return Err(bare(
            "the fault graph has no edges, so nothing can fail".into(),
        ));
    }
    // 0. Where the walks start.
    let mut warnings = Vec::new();
    let mut start = opts.start;
    let mut thinned = Vec::new();
    if start == Start::Shortest {
        thinned = thin_all(pr, chains, opts.seed);
        if thinned.is_empty() {
            warnings.push(if pr.shortest.is_empty() {
                "the distance search found no logical error to start the walks from; they \
                 start from direct sampling instead"
                    .to_string()
            } else {
                format!(
                    "the decoder corrects all {} shortest logical errors the distance search \
                     found, so none can start a walk; the walks start from direct sampling \
                     instead",
                    pr.shortest.len()
                )
            });
            start = Start::Sampling;
        }
    }
    let top_rate = match start {
        Start::Sampling => TOP_RATE,
        Start::Shortest => SHORTEST_TOP_RATE,
    };
    // 1. The top.
    let top = match opts.top {
        Some(s) => {
            if !(s >= 1.0 && (pr.valid)(s)) {
                return Err(bare(format!(
                    "the top of the ladder must be at least the target noise and keep every \
                     edge below 1/2; {s} times the target does not"
                )));
            }
            s
        }
        None => {
            let mut s = 1.0;
            loop {
                let p = (pr.priors)(s)?;
                let shots = (PILOT_FAILURES as f64 / top_rate * 4.0) as u64;
                let run = DirectRun {
                    scale: s,
                    max_shots: shots,
                    until: PILOT_FAILURES,
                    keep: 0,
                    seed: opts.seed,
                };
                let pilot = direct(pr, &p, &run, &mut progress);
                if pilot.failures as f64 >= top_rate * pilot.shots as f64 {
                    break s;
                }
                if !(pr.valid)(2.0 * s) {
                    if pilot.failures == 0 {
                        return Err(bare(format!(
                            "direct sampling finds no failure even at {s} times the target noise; \
                             give the top of the ladder by hand"
                        )));
                    }
                    break s;
                }
                s *= 2.0;
            }
        }
    };
    let p_top = (pr.priors)(top)?;
    let run = DirectRun {
        scale: top,
        max_shots: opts.max_shots,
        until: match start {
            Start::Sampling => opts.top_failures.max(chains as u64),
            Start::Shortest => opts.top_failures.max(1),
        },
        keep: match start {
            Start::Sampling => chains,
            Start::Shortest => 0,
        },
        seed: opts.seed,
    };
    let d = direct(pr, &p_top, &run, &mut progress);
    if d.failures == 0 {
        return Err(bare(format!(
            "direct sampling at {top} times the target noise found no failure in {} shots",
            d.shots
        )));
    }
    let rate0 = d.failures as f64 / d.shots as f64;
    let var0 = (1.0 - rate0) / d.failures as f64;
    let mut states = match start {
        Start::Sampling => d.seeds,
        Start::Shortest => thinned,
    };
    while states.len() < chains {
        // Fewer failures than walks: walks share starting points.
        let again = states[states.len() % d.failures.clamp(1, chains as u64) as usize].clone();
        states.push(again);
    }
    let proposals = ((opts.sweeps * m as f64).ceil() as u64).max(RECORDED);
    let mut out = Splitting {
        points: Vec::new(),
        top: TopSampling {
            shots: d.shots,
            failures: d.failures,
        },
        edges: m,
        chains,
        proposals,
        start,
        warnings,
        samples: None,
        distance: None,
    };
    if top <= 1.0 {
        out.points.push(point(pr, 1.0, rate0.ln(), var0));
        progress(SplittingEvent::Rung {
            done: 1,
            expected: 1,
            scale: 1.0,
        });
        return Ok(out);
    }
    // 2. The rungs.
    let mut s = top;
    let mut p = p_top;
    // Walks from thinned logical errors are not draws from π_{t_0}: they burn in for a whole
    // rung's proposals before recording.
    let burn = (proposals as f64 * BURN_IN) as u64;
    let top_burn = if start == Start::Shortest {
        burn + proposals
    } else {
        burn
    };
    let mut recs = rung(pr, &p, &states, (proposals, top_burn), opts.seed, 0);
    let mut mix = mixing(&recs, proposals);
    let mut ln_rate = rate0.ln();
    let mut ln_chain = vec![ln_rate; chains];
    out.points.push(LadderPoint {
        mixing: Some(mix.clone()),
        walks: ln_chain.clone(),
        ..point(pr, s, ln_rate, var0)
    });
    let mut index = 0u64;
    while s > 1.0 {
        progress(SplittingEvent::Rung {
            done: out.points.len(),
            expected: out.points.len() + rungs_below(s, mix.mean_fired),
            scale: s,
        });
        index += 1;
        let s_next = next_scale(s, mix.mean_fired);
        let p_next = (pr.priors)(s_next)?;
        // ln(π_next(E)/π(E)) = Σ_all ln((1−p')/(1−p)) + Σ_{m∈E} [ln(p'/p) − ln((1−p')/(1−p))].
        let mut constant = 0.0;
        let coef: Vec<f64> = p
            .iter()
            .zip(&p_next)
            .map(|(&a, &b)| {
                let off = (-b).ln_1p() - (-a).ln_1p();
                constant += off;
                if a > 0.0 && b > 0.0 {
                    (b / a).ln() - off
                } else {
                    0.0
                }
            })
            .collect();
        let la: Vec<Vec<f64>> = recs.iter().map(|r| r.log_ratios(&coef, constant)).collect();
        let starts: Vec<Vec<u32>> = recs.iter().map(|r| r.last.clone()).collect();
        let next = rung(pr, &p_next, &starts, (proposals, burn), opts.seed, index);
        let lb: Vec<Vec<f64>> = next.iter().map(|r| r.log_ratios(&coef, constant)).collect();
        let all_a: Vec<f64> = la.iter().flatten().copied().collect();
        let all_b: Vec<f64> = lb.iter().flatten().copied().collect();
        let Some(ratio) = bennett(&all_a, &all_b) else {
            return Err(bare(format!(
                "the walks at {s:.4} and {s_next:.4} times the target noise do not overlap; run \
                 longer walks (more sweeps)"
            )));
        };
        ln_rate += ratio.ln_ratio;
        // A walk whose own averages vanish has no estimate of its own from here on (NaN), and
        // the spread, hence the uncertainty, becomes unknown (infinite).
        for (i, lnc) in ln_chain.iter_mut().enumerate() {
            *lnc += ln_ratio_at(&la[i], &lb[i], ratio.c).unwrap_or(f64::NAN);
        }
        let variance = match mean_and_variance_of_mean(&ln_chain) {
            Some((_, v)) if v.is_finite() => var0 + v,
            _ => f64::INFINITY,
        };
        recs = next;
        mix = mixing(&recs, proposals);
        out.points.push(LadderPoint {
            slope: Some(ratio.ln_ratio / (s_next / s).ln()),
            overlap: Some([ratio.down, ratio.up]),
            mixing: Some(mix.clone()),
            walks: ln_chain.clone(),
            ..point(pr, s_next, ln_rate, variance)
        });
        s = s_next;
        p = p_next;
    }
    progress(SplittingEvent::Rung {
        done: out.points.len(),
        expected: out.points.len(),
        scale: 1.0,
    });
    out.samples = Some(target_samples(&recs));
    Ok(out)
}

/// A least-squares fit of `ln P_L = ln A + k ln t` over some rungs.
#[derive(Clone, Copy, Debug, PartialEq, serde::Serialize)]
pub struct ExponentFit {
    /// The exponent `k`.
    pub exponent: f64,
    /// Its standard error, from the spread of the same fit over the independent walks.
    pub error: f64,
    /// Points used.
    pub points: usize,
    /// Smallest and largest scale used.
    pub scales: [f64; 2],
}

/// Fits the exponent by least squares of `ln P_L` on `ln t` over the points with `scale ≤
/// max_scale`. Its standard error comes from the walks: the same fit of each walk's own
/// estimates, whose spread over the independent walks gives the error of the mean. `None` with
/// fewer than two such points.
pub fn fit_exponent(points: &[LadderPoint], max_scale: f64) -> Option<ExponentFit> {
    let used: Vec<&LadderPoint> = points
        .iter()
        .filter(|p| p.scale <= max_scale && p.rate > 0.0)
        .collect();
    if used.len() < 2 {
        return None;
    }
    // Unweighted: the walks' spread, not the fit's residuals, gives the error below.
    let slope = |y: &[f64]| -> Option<f64> {
        let data: Vec<(f64, f64, Option<f64>)> = used
            .iter()
            .zip(y)
            .map(|(p, &y)| (p.scale.ln(), y, None))
            .collect();
        fit_line(&data).map(|(slope, _, _)| slope)
    };
    let exponent = slope(&used.iter().map(|p| p.rate.ln()).collect::<Vec<_>>())?;
    let walks = used.iter().map(|p| p.walks.len()).min().unwrap_or(0);
    let per_walk: Vec<f64> = (0..walks)
        .filter_map(|i| {
            let y: Vec<f64> = used.iter().map(|p| p.walks[i]).collect();
            slope(&y).filter(|v| v.is_finite())
        })
        .collect();
    let error = if per_walk.len() == walks {
        mean_and_variance_of_mean(&per_walk).map_or(f64::INFINITY, |(_, v)| v.sqrt())
    } else {
        f64::INFINITY
    };
    let scales = used.iter().fold([f64::INFINITY, 0.0f64], |acc, p| {
        [acc[0].min(p.scale), acc[1].max(p.scale)]
    });
    Some(ExponentFit {
        exponent,
        error,
        points: used.len(),
        scales,
    })
}
