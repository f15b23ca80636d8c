//! The splitting method as a source of failing configurations, for budgets at rates far below
//! what direct sampling reaches.
//!
//! In: the budget's edge priors, symptoms and decoder. Out: [`Failures`] whose configurations
//! are the samples the splitting method's walks recorded at the last rung of the ladder, the
//! target noise itself (`crate::study::rare`, run on these priors scaled edge by edge, as for a
//! model file). Those walks are Metropolis chains whose stationary distribution is `π_1`
//! restricted to the decoder's failures `F` (the decoder is the budget's, built at the target,
//! so `F` is the budget's failure set), and they arrive at the target already mixed by the rungs
//! above plus a burn-in. The reweighting identities of `weigh.rs` need exactly draws from that
//! distribution, so the sensitivities, the 10% improvement and the removals come out of the same
//! formulas as for direct sampling; only the rate (from the ladder, with its relative
//! uncertainty) and the intervals differ.
//!
//! # Intervals: batch means
//! Samples of one walk depend on each other; walks are independent. Each walk's samples are cut into
//! contiguous batches of at least [`TAUS_PER_BATCH`] integrated autocorrelation times of the
//! walks' number of fired edges at the target (the ladder's mixing diagnostic), at most
//! [`MAX_BATCHES_PER_WALK`] per walk; a walk whose fired count never changed is one batch. The
//! batch means are then treated as independent (Student's t, `weigh.rs`). With `K` walks there
//! are at least `K` batches, so the interval never rests on fewer than the independent walks.
//!
//! # Removing a source
//! The rate without a source is the mean likelihood ratio over the target samples; at low
//! rates, when the source sits on every minimum-weight failure, the failures without it are of
//! higher weight and the walks at the target visit them (almost) never, so the effective number
//! of configurations behind the ratio is near 0. The budget then reports the removal as not
//! estimable rather than a ratio of 0, or on request re-runs the ladder with the source removed
//! ([`FailureEstimator::again`]).

use crate::decode::Decoder;
use crate::study::budget::sample::{EstimatorEvent, FailureEstimator, Failures, Symptoms};
use crate::study::pipeline::StudyError;
use crate::study::rare::{splitting_on_edges, SplittingEvent, SplittingOptions};
use crate::study::stats::Estimate;

/// A batch spans at least this many autocorrelation times (common practice for batch means:
/// batches much longer than the correlation time).
pub(super) const TAUS_PER_BATCH: f64 = 10.0;
/// At most this many batches per walk.
pub(super) const MAX_BATCHES_PER_WALK: usize = 10;

/// The splitting method's walks at the target as the budget's failing configurations.
#[derive(Clone, Debug)]
pub struct SplittingSampling {
    /// The ladder's options.
    pub opts: SplittingOptions,
}

/// Contiguous batches of each walk's samples (`walks` as in `TargetSamples::walks`), each at
/// least `TAUS_PER_BATCH·tau` samples long; `tau = None` makes each walk one batch.
pub(super) fn walk_batches(walks: &[usize], tau: Option<f64>) -> Vec<usize> {
    let mut out = vec![0];
    for w in walks.windows(2) {
        let n = w[1] - w[0];
        if n == 0 {
            continue;
        }
        let b = match tau {
            Some(t) => {
                ((n as f64 / (TAUS_PER_BATCH * t.max(1.0))) as usize).clamp(1, MAX_BATCHES_PER_WALK)
            }
            None => 1,
        };
        for k in 1..=b {
            out.push(w[0] + n * k / b);
        }
    }
    out
}

impl FailureEstimator for SplittingSampling {
    fn failures(
        &self,
        priors: &[f64],
        symptoms: &Symptoms,
        decoder: &dyn Decoder,
        progress: &mut dyn FnMut(EstimatorEvent),
    ) -> Result<Failures, StudyError> {
        let mut result = splitting_on_edges(
            &symptoms.detectors,
            &symptoms.observables,
            priors,
            decoder,
            &self.opts,
            |e| {
                progress(match e {
                    SplittingEvent::Sampling {
                        scale,
                        shots,
                        failures,
                    } => EstimatorEvent::Shots {
                        scale,
                        shots,
                        failures,
                    },
                    SplittingEvent::Rung {
                        done,
                        expected,
                        scale,
                    } => EstimatorEvent::Rung {
                        done,
                        expected,
                        scale,
                    },
                })
            },
        )?;
        let target = result.target().clone();
        let rate = Estimate {
            rate: target.rate,
            low: target.low,
            high: target.high,
        };
        let mut out = Failures {
            method: "splitting".into(),
            rate,
            shots: result.top.shots,
            failures: 0,
            unmatched: 0,
            edges: Vec::new(),
            starts: vec![0],
            batches: Vec::new(),
            splitting: None,
        };
        match result.samples.take() {
            Some(samples) => {
                let tau = target.mixing.as_ref().and_then(|m| m.autocorrelation);
                out.batches = walk_batches(&samples.walks, tau);
                out.failures = (samples.starts.len() - 1) as u64;
                out.edges = samples.edges;
                out.starts = samples.starts;
            }
            None => {
                // The target is the top (failures are common there): direct sampling's draws
                // are independent, and the estimate is its own.
                let direct = crate::study::budget::DirectSampling {
                    shots: self.opts.max_shots,
                    until_failures: Some(self.opts.top_failures),
                    seed: self.opts.seed,
                };
                let mut d = direct.failures(priors, symptoms, decoder, progress)?;
                d.method = "direct sampling (failures are common at the target)".into();
                d.splitting = Some(result);
                return Ok(d);
            }
        }
        out.splitting = Some(result);
        Ok(out)
    }

    fn again(&self, index: u64) -> Option<Box<dyn FailureEstimator>> {
        Some(Box::new(SplittingSampling {
            opts: SplittingOptions {
                seed: self.opts.seed.wrapping_add(1 + index),
                ..self.opts.clone()
            },
        }))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn batches_cover_each_walk_and_follow_the_correlation_time() {
        // Two walks of 1000 and 400 samples.
        let walks = [0, 1000, 1400];
        assert_eq!(walk_batches(&walks, None), vec![0, 1000, 1400]);
        // τ = 20: 1000/200 = 5 batches and 400/200 = 2.
        assert_eq!(
            walk_batches(&walks, Some(20.0)),
            vec![0, 200, 400, 600, 800, 1000, 1200, 1400]
        );
        // Short τ: capped at MAX_BATCHES_PER_WALK per walk.
        let b = walk_batches(&walks, Some(1.0));
        assert_eq!(b.len(), 2 * MAX_BATCHES_PER_WALK + 1);
        assert_eq!(
            (b[0], b[MAX_BATCHES_PER_WALK], b[b.len() - 1]),
            (0, 1000, 1400)
        );
        // Very long τ: one batch per walk.
        assert_eq!(walk_batches(&walks, Some(1e6)), vec![0, 1000, 1400]);
    }
}
