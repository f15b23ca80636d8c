//! Failing configurations of a fault graph: the estimator interface an error budget reads, and
//! direct sampling of the graph's independent edges, its first implementation.
//!
//! In: edge priors (the graph's, or scaled ones), the edges' symptoms and a decoder. Out:
//! [`Failures`]: the logical error rate with its interval and the failing configurations (which
//! edges fired) drawn from the graph's distribution restricted to failures. Reweighting needs
//! nothing else: the derivative of `log p_L` is the mean score over failing configurations, and
//! the rate under other priors the mean likelihood ratio (see `weigh.rs`). Any estimator that
//! produces such configurations can feed a budget ([`FailureEstimator`]); the splitting method,
//! whose walks at the last rung sample the failing configurations at the target rate, is the
//! second (`split.rs`).
//!
//! Direct sampling draws every edge independently with its prior, by geometric skipping inside
//! buckets of edges whose priors lie within a factor 2 (candidates are accepted with `p/p_max ≥
//! 1/2`), so a shot costs about two draws per edge that fires plus one per bucket. Batches of
//! [`SHOTS_PER_BATCH`] shots have their own generator seeded by `(seed, batch)` and are counted in
//! batch order, so results do not depend on the number of threads.

use rand::{Rng, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;
use rayon::prelude::*;

use crate::base::odd_parity_in_place;
use crate::decode::Decoder;
use crate::study::pipeline::StudyError;
use crate::study::rare::Splitting;
use crate::study::stats::{Estimate, Z95};

/// Shots per batch of direct sampling.
pub const SHOTS_PER_BATCH: u64 = 4096;

/// Detectors and observables of each edge, in the form the sampler toggles them.
#[derive(Clone, Debug)]
pub struct Symptoms {
    /// Detectors of each edge.
    pub detectors: Vec<Vec<u32>>,
    /// Observables of each edge.
    pub observables: Vec<Vec<u32>>,
}

/// The failing configurations an estimator found, and its rate.
#[derive(Clone, Debug)]
pub struct Failures {
    /// What produced them (`direct sampling`, ...).
    pub method: String,
    /// Logical error rate per shot with its 95% interval.
    pub rate: Estimate,
    /// Shots sampled (direct sampling).
    pub shots: u64,
    /// Failed shots.
    pub failures: u64,
    /// Of those, shots the decoder could not decode completely.
    pub unmatched: u64,
    /// Fired edges of every failing configuration, concatenated.
    pub edges: Vec<u32>,
    /// Where each configuration starts in `edges` (one more entry than configurations).
    pub starts: Vec<usize>,
    /// Where each batch of dependent configurations starts, as configuration indices (one more
    /// entry than batches): the intervals are then batch-means intervals. Empty when the
    /// configurations are independent draws.
    pub batches: Vec<usize>,
    /// The ladder, when the configurations come from the splitting method (its target samples
    /// moved into `edges`).
    pub splitting: Option<Splitting>,
}

impl Failures {
    /// The failing configurations: sorted edge ids.
    pub fn configurations(&self) -> impl ExactSizeIterator<Item = &[u32]> + '_ {
        self.starts.windows(2).map(|w| &self.edges[w[0]..w[1]])
    }

    /// Number of failing configurations kept.
    pub fn len(&self) -> usize {
        self.starts.len().saturating_sub(1)
    }

    /// Whether no failing configuration was found.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }
}

/// A source of failing configurations for the budget: estimates the logical error rate of a
/// graph under `priors` with a fixed decoder, and returns configurations drawn from the
/// distribution of the edges restricted to the decoder's failures. `progress` receives
/// [`EstimatorEvent`]s as the estimator goes.
pub trait FailureEstimator: Sync {
    /// Runs the estimator.
    fn failures(
        &self,
        priors: &[f64],
        symptoms: &Symptoms,
        decoder: &dyn Decoder,
        progress: &mut dyn FnMut(EstimatorEvent),
    ) -> Result<Failures, StudyError>;

    /// An independent estimator of the same kind for direct re-estimate number `index` (a
    /// removed source), or `None` to re-estimate by direct sampling.
    fn again(&self, index: u64) -> Option<Box<dyn FailureEstimator>> {
        let _ = index;
        None
    }
}

/// What an estimator reports while it runs.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum EstimatorEvent {
    /// Direct sampling at `scale` times the noise (1 for direct sampling itself; the top of the
    /// ladder for the splitting method).
    Shots {
        /// The noise scale sampled.
        scale: f64,
        /// Shots so far.
        shots: u64,
        /// Failures so far.
        failures: u64,
    },
    /// The splitting method finished a rung.
    Rung {
        /// Rungs finished, the top included.
        done: usize,
        /// Rungs expected in all.
        expected: usize,
        /// Its noise scale.
        scale: f64,
    },
}

/// Direct sampling of the graph's independent edges.
#[derive(Clone, Copy, Debug)]
pub struct DirectSampling {
    /// Maximum number of shots.
    pub shots: u64,
    /// Stop after the batch at which this many failures have been seen.
    pub until_failures: Option<u64>,
    /// Seed.
    pub seed: u64,
}

/// Edges grouped by prior for geometric skipping.
struct Bucket {
    /// `1 / −ln(1 − p_max)`.
    inv_rate: f64,
    p_max: f64,
    edges: Vec<u32>,
    priors: Vec<f64>,
}

/// Draws the fired edges of one shot.
pub struct EdgeSampler {
    buckets: Vec<Bucket>,
}

impl EdgeSampler {
    /// A sampler for independent edges with these priors (edges with prior 0 never fire).
    pub fn new(priors: &[f64]) -> EdgeSampler {
        let mut by: std::collections::BTreeMap<i32, Bucket> = std::collections::BTreeMap::new();
        for (k, &p) in priors.iter().enumerate() {
            if p <= 0.0 {
                continue;
            }
            let p = p.min(1.0);
            let e = p.log2().floor() as i32;
            let b = by.entry(e).or_insert_with(|| {
                let p_max = 2f64.powi(e + 1).min(1.0);
                Bucket {
                    inv_rate: 1.0 / -(-p_max).ln_1p(),
                    p_max,
                    edges: Vec::new(),
                    priors: Vec::new(),
                }
            });
            b.edges.push(k as u32);
            b.priors.push(p);
        }
        EdgeSampler {
            buckets: by.into_values().collect(),
        }
    }

    /// Appends the edges that fire in one shot to `out` (cleared first), sorted.
    pub fn shot(&self, rng: &mut Xoshiro256PlusPlus, out: &mut Vec<u32>) {
        out.clear();
        for b in &self.buckets {
            let n = b.edges.len() as u64;
            let mut at = 0u64;
            loop {
                // A geometric gap: P(gap ≥ k) = (1 − p_max)^k.
                let u: f64 = 1.0 - rng.gen::<f64>();
                let g = -u.ln() * b.inv_rate;
                if g >= (n - at) as f64 {
                    break;
                }
                at += g as u64;
                let i = at as usize;
                if rng.gen::<f64>() * b.p_max < b.priors[i] {
                    out.push(b.edges[i]);
                }
                at += 1;
                if at >= n {
                    break;
                }
            }
        }
        out.sort_unstable();
    }
}

/// The generator of batch `index` of a run with `seed`.
pub fn batch_rng(seed: u64, index: u64) -> Xoshiro256PlusPlus {
    let mix = |mut v: u64| {
        v = (v ^ (v >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        v = (v ^ (v >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        v ^ (v >> 31)
    };
    Xoshiro256PlusPlus::seed_from_u64(mix(mix(seed ^ 0x6a09_e667_f3bc_c908) ^ index))
}

/// Whether the decoder fails on the configuration `fired`: its predicted observables differ
/// from the ones the edges flip, or it left an event unmatched (`(failed, unmatched)`).
pub fn fails(
    fired: &[u32],
    symptoms: &Symptoms,
    decoder: &dyn Decoder,
    events: &mut Vec<u32>,
    flips: &mut Vec<u32>,
) -> (bool, bool) {
    events.clear();
    flips.clear();
    for &m in fired {
        events.extend_from_slice(&symptoms.detectors[m as usize]);
        flips.extend_from_slice(&symptoms.observables[m as usize]);
    }
    odd_parity_in_place(events);
    odd_parity_in_place(flips);
    let d = decoder.decode(events);
    if d.unmatched > 0 {
        return (true, true);
    }
    (d.observables != *flips, false)
}

impl FailureEstimator for DirectSampling {
    fn failures(
        &self,
        priors: &[f64],
        symptoms: &Symptoms,
        decoder: &dyn Decoder,
        progress: &mut dyn FnMut(EstimatorEvent),
    ) -> Result<Failures, StudyError> {
        let sampler = EdgeSampler::new(priors);
        let batches = self.shots.div_ceil(SHOTS_PER_BATCH);
        let group = (rayon::current_num_threads() as u64 * 2).max(1);
        let mut out = Failures {
            method: "direct sampling".into(),
            rate: Estimate::wilson(0, 0, Z95),
            shots: 0,
            failures: 0,
            unmatched: 0,
            edges: Vec::new(),
            starts: vec![0],
            batches: Vec::new(),
            splitting: None,
        };
        let mut next = 0;
        'run: while next < batches {
            let end = (next + group).min(batches);
            let results: Vec<(u64, u64, Vec<u32>, Vec<usize>)> = (next..end)
                .into_par_iter()
                .map(|b| {
                    let n = (self.shots - b * SHOTS_PER_BATCH).min(SHOTS_PER_BATCH);
                    let mut rng = batch_rng(self.seed, b);
                    let (mut fired, mut events, mut flips) = (Vec::new(), Vec::new(), Vec::new());
                    let (mut edges, mut lens, mut unmatched) = (Vec::new(), Vec::new(), 0);
                    for _ in 0..n {
                        sampler.shot(&mut rng, &mut fired);
                        if fired.is_empty() {
                            continue;
                        }
                        let (failed, lost) =
                            fails(&fired, symptoms, decoder, &mut events, &mut flips);
                        if failed {
                            unmatched += lost as u64;
                            edges.extend_from_slice(&fired);
                            lens.push(fired.len());
                        }
                    }
                    (n, unmatched, edges, lens)
                })
                .collect();
            for (n, unmatched, edges, lens) in results {
                out.shots += n;
                out.unmatched += unmatched;
                out.failures += lens.len() as u64;
                let mut at = 0;
                for l in lens {
                    out.edges.extend_from_slice(&edges[at..at + l]);
                    at += l;
                    out.starts.push(out.edges.len());
                }
                progress(EstimatorEvent::Shots {
                    scale: 1.0,
                    shots: out.shots,
                    failures: out.failures,
                });
                if self.until_failures.is_some_and(|k| out.failures >= k) {
                    break 'run;
                }
            }
            next = end;
        }
        out.rate = Estimate::wilson(out.failures, out.shots, Z95);
        Ok(out)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn edges_fire_with_their_priors() {
        // Priors across several buckets, including 0 and 1.
        let priors = [0.3, 0.01, 0.0, 1.0, 0.07, 0.0004, 0.5];
        let s = EdgeSampler::new(&priors);
        let mut rng = batch_rng(7, 0);
        let mut count = [0u64; 7];
        let n = 200_000;
        let mut out = Vec::new();
        for _ in 0..n {
            s.shot(&mut rng, &mut out);
            for &m in &out {
                count[m as usize] += 1;
            }
        }
        for (k, &p) in priors.iter().enumerate() {
            let sd = (p * (1.0 - p) / n as f64).sqrt();
            let got = count[k] as f64 / n as f64;
            // 5 sigma binomial tolerance (common practice).
            assert!(
                (got - p).abs() <= 5.0 * sd + 1e-12,
                "edge {k}: {got} vs {p}"
            );
        }
    }
}
