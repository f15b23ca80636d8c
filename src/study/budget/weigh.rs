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
//! Both are means over the failing configurations; the intervals are the normal 95% intervals of
//! those means (for direct sampling this is the delta method for the ratio `E[fail·score]/E[fail]`,
//! whose variance is `E[(score − mean)² | F]/failures`). Configurations from a Markov chain
//! would need their effective number instead. The likelihood ratio of a large
//! change (`s = 0`, removing a source) can have a huge variance: the effective sample size
//! `(Σ LR)²/Σ LR²` says how many configurations carry the estimate.

use serde::Serialize;

use crate::study::budget::sample::Failures;
use crate::study::budget::sources::Sources;
use crate::study::stats::Z95;

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

    /// The normal interval of a sample mean.
    fn of_mean(values: impl Iterator<Item = f64> + Clone, n: usize) -> Interval {
        if n == 0 {
            return Interval::exact(f64::NAN);
        }
        let mean = values.clone().sum::<f64>() / n as f64;
        let var = if n > 1 {
            values.map(|v| (v - mean) * (v - mean)).sum::<f64>() / (n - 1) as f64
        } else {
            0.0
        };
        let half = Z95 * (var / n as f64).sqrt();
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
    let n = failures.len();
    let scores: Vec<f64> = failures
        .configurations()
        .map(|c| c.iter().map(|&m| gain[m as usize]).sum::<f64>() - score_const)
        .collect();
    let sensitivity = Interval::of_mean(scores.iter().copied(), n);
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
            let mut ratio = Interval::of_mean(w.iter().copied(), n);
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
