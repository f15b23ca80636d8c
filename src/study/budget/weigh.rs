//! Sensitivities and scaled rates from one set of failing configurations, by reweighting.
//!
//! Edges are independent, so the probability of a configuration `x` (which edges fired) is a
//! product over edges and so is the likelihood ratio between two sets of priors. Scaling the
//! parts of source `S` by `s` changes the priors `p_m` of the edges it touches to `p_m(s)`
//! (recombined from their parts, [`Sources::scaled_prior`]). With `F` the decoder's failures
//! (the decoder is held fixed: "the hardware improves, the decoder is not re-tuned"):
//!
//! - **sensitivity**: `d log p_L / d log s` at `s = 1` is `E[score(x) | F]`, with the score
//!   `∂ log P(x)/∂s = Σ_{m fired} p'_m/(p_m(1 − p_m)) − Σ_m p'_m/(1 − p_m)` (`p'_m = dp_m/ds`);
//! - **scaled rate**: `p_L(s)/p_L(1) = E[LR(x) | F]` with
//!   `LR(x) = Π_m (1 − p_m(s))/(1 − p_m) · Π_{m fired} odds(p_m(s))/odds(p_m)`.
//!
//! # Derivation
//! Source `S` scaled by `s` multiplies each of its elementary faults' probabilities, `q_i → s·q_i`
//! for `i ∈ S`; an edge `m` is the `⊕` of its faults (some in `S`, some not), so
//! `1 − 2p_m(s) = Π_{i→m, i∈S} (1 − 2s·q_i) · Π_{i→m, i∉S} (1 − 2q_i)`, and at `s = 1`
//! `p'_m = Σ_{i→m, i∈S} q_i · Π_{j→m, j≠i} (1 − 2q_j)` ([`Sources::prior_derivative`]; an edge
//! without a fault of `S` has `p'_m = 0`). Configurations have weight
//! `π_s(x) = Π_m p_m(s)^{x_m} (1 − p_m(s))^{1−x_m}`, and with the decoder fixed the failure set `F`
//! does not depend on `s`, so `p_L(s) = Σ_{x∈F} π_s(x)` and
//!
//! ```text
//! d p_L/ds = Σ_{x∈F} π_s(x) · ∂_s ln π_s(x)
//! d ln p_L / d ln s |_{s=1} = E_{π_1}[ ∂_s ln π_s(x) | F ]
//! ∂_s ln π_s(x) = Σ_m [x_m p'_m/p_m − (1 − x_m) p'_m/(1 − p_m)] = Σ_m (x_m − p_m) p'_m / (p_m (1 − p_m))
//! ```
//!
//! For an edge made of faults of `S` alone and small `q`, `p'_m ≈ p_m` and its term is
//! `(x_m − p_m)/(1 − p_m)`: each fired edge of the source counts about 1, so at low rates the
//! sensitivity tends to the mean number of the source's edges in the dominant failing
//! configurations. Likewise `p_L(s)/p_L(1) = Σ_F π_s/Σ_F π_1 = E_{π_1}[π_s(x)/π_1(x) | F]`.
//! Any sampler of `π_1` restricted to `F` serves: direct sampling (its failing shots) or the
//! splitting method's walks at the target rung.
//!
//! # Intervals
//! Both are means over the failing configurations. For independent configurations (direct
//! sampling) the interval is the normal 95% interval of the mean (the delta method for the ratio
//! `E[fail·score]/E[fail]`, whose variance is `E[(score − mean)² | F]/failures`). Configurations
//! from Markov chains come in batches ([`Failures::batches`]): the interval is then the batch-means
//! one, the spread of the `B` batch means with Student's t at `B − 1` degrees of freedom. The
//! likelihood ratio of a large change (`s = 0`, removing a source) can have a huge variance: the
//! effective sample size `(Σ LR)²/Σ LR²` says how many configurations carry the estimate (for
//! dependent configurations it counts samples, an upper bound on independent ones). Removing
//! `S` gives `LR = 0` to every configuration that fires an edge made of `S` alone; the estimate
//! stays unbiased, but where every likely failure needs such an edge no sampled configuration
//! carries it.

use serde::Serialize;

use crate::study::budget::sample::Failures;
use crate::study::budget::sources::Sources;
use crate::study::stats::{student_t95, Z95};

/// A value with its 95% interval.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Interval {
    /// Point estimate.
    pub value: f64,
    /// Lower end.
    pub low: f64,
    /// Upper end.
    pub high: f64,
}

impl Interval {
    /// A value without uncertainty.
    pub fn exact(v: f64) -> Interval {
        Interval {
            value: v,
            low: v,
            high: v,
        }
    }

    /// Whether `other`'s interval overlaps this one.
    pub fn overlaps(&self, other: &Interval) -> bool {
        self.low <= other.high && other.low <= self.high
    }

    /// The 95% interval of the mean of `values`: the normal one for independent values
    /// (`batches` empty), else the batch-means one (`batches` as in [`Failures::batches`]).
    pub(super) fn of_mean(values: &[f64], batches: &[usize]) -> Interval {
        let n = values.len();
        if n == 0 {
            return Interval::exact(f64::NAN);
        }
        let mean = values.iter().sum::<f64>() / n as f64;
        let half = if batches.len() < 2 {
            let var = if n > 1 {
                values.iter().map(|v| (v - mean) * (v - mean)).sum::<f64>() / (n - 1) as f64
            } else {
                0.0
            };
            Z95 * (var / n as f64).sqrt()
        } else {
            // Batches of unequal length: the variance of a ratio of batch sums,
            // Σ n_j²(m_j − mean)² / n² · B/(B − 1), which is s²_m/B for equal lengths.
            let b = batches.len() - 1;
            let sum: f64 = batches
                .windows(2)
                .map(|w| {
                    let dev: f64 = values[w[0]..w[1]].iter().map(|v| v - mean).sum();
                    dev * dev
                })
                .sum();
            let var = if b > 1 {
                sum / (n as f64 * n as f64) * b as f64 / (b - 1) as f64
            } else {
                f64::INFINITY
            };
            student_t95(b.saturating_sub(1)) * var.sqrt()
        };
        Interval {
            value: mean,
            low: mean - half,
            high: mean + half,
        }
    }
}

/// The rate ratio at one scale.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Ratio {
    /// The scale of the source.
    pub scale: f64,
    /// `p_L(scale) / p_L(1)` with its interval (the lower end clipped at 0).
    pub ratio: Interval,
    /// Effective number of configurations carrying it, `(Σ LR)²/Σ LR²`.
    pub effective: f64,
}

/// What reweighting gives for one source.
#[derive(Clone, Debug, PartialEq)]
pub struct Weighed {
    /// `d log p_L / d log s` at `s = 1`.
    pub sensitivity: Interval,
    /// One ratio per requested scale.
    pub ratios: Vec<Ratio>,
}

/// Reweights `failures` (drawn under `priors`) for source `source` of `sources` (`None`: every
/// part, the whole noise scaled at once) at each of `scales`.
pub fn weigh(
    sources: &Sources,
    priors: &[f64],
    failures: &Failures,
    source: Option<u32>,
    scales: &[f64],
) -> Weighed {
    let e = priors.len();
    let touched: Vec<usize> = match source {
        Some(s) => sources.edges_of(s).collect(),
        None => (0..e).filter(|&k| priors[k] > 0.0).collect(),
    };
    // Per fired edge: score term and log odds ratio at each scale; per configuration: constants.
    let mut gain = vec![0.0; e];
    let mut log_odds = vec![vec![0.0; e]; scales.len()];
    let mut score_const = 0.0;
    let mut log_const = vec![0.0; scales.len()];
    for &k in &touched {
        let p = priors[k];
        if p <= 0.0 || p >= 1.0 {
            continue;
        }
        let dp = sources.prior_derivative(k, source);
        gain[k] = dp / (p * (1.0 - p));
        score_const += dp / (1.0 - p);
        for (j, &s) in scales.iter().enumerate() {
            let q = sources.scaled_prior(k, source, s).clamp(0.0, 1.0);
            log_const[j] += (1.0 - q).ln() - (1.0 - p).ln();
            log_odds[j][k] = if q <= 0.0 {
                f64::NEG_INFINITY
            } else {
                (q / (1.0 - q)).ln() - (p / (1.0 - p)).ln()
            };
        }
    }
    let scores: Vec<f64> = failures
        .configurations()
        .map(|c| c.iter().map(|&m| gain[m as usize]).sum::<f64>() - score_const)
        .collect();
    let sensitivity = Interval::of_mean(&scores, &failures.batches);
    let ratios = scales
        .iter()
        .enumerate()
        .map(|(j, &scale)| {
            let w: Vec<f64> = failures
                .configurations()
                .map(|c| {
                    (log_const[j] + c.iter().map(|&m| log_odds[j][m as usize]).sum::<f64>()).exp()
                })
                .collect();
            let mut ratio = Interval::of_mean(&w, &failures.batches);
            ratio.low = ratio.low.max(0.0);
            let (s1, s2) = w.iter().fold((0.0, 0.0), |(a, b), &x| (a + x, b + x * x));
            Ratio {
                scale,
                ratio,
                effective: if s2 > 0.0 { s1 * s1 / s2 } else { 0.0 },
            }
        })
        .collect();
    Weighed {
        sensitivity,
        ratios,
    }
}
