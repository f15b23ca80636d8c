//! Monte Carlo estimation of logical error rates: sample, decode, count failures.
//!
//! In: a [`Sampler`] (circuit with explicit noise), a [`Decoder`] built from the same circuit's
//! matchable fault graph, and [`RunOptions`] (shots, optional error budget, seed). Out: [`Counts`]
//! of shots and logical failures.
//!
//! A shot *fails* when the decoder's predicted observable flips differ from the sampled ones in
//! any observable, or when the decoder left a detection event unmatched (see
//! [`crate::decode::Decoded::unmatched`]).
//!
//! Determinism: the sampler draws batch `b` of [`BATCH_SHOTS`] shots from its own generator
//! seeded by `(seed, b)`. Batches are sampled and decoded in parallel on the rayon pool but their
//! counts are accumulated in batch order, and the run stops after the first batch at which the
//! failure count reaches `until_failures`. The batches counted are therefore a prefix fixed by the
//! seed alone, and the result is the same for any number of threads.

use rayon::prelude::*;

use crate::decode::Decoder;
use crate::faults::MatchingStats;
use crate::sim::{Batch, Outputs, Sampler, BATCH_SHOTS};

/// A noisy circuit made ready for estimation: its sampler and a decoder for its fault graph
/// (built by [`crate::study::Pipeline::experiment`]).
pub struct Experiment {
    /// The frame sampler of the circuit.
    pub sampler: Sampler,
    /// The decoder built from the circuit's matchable fault graph.
    pub decoder: Box<dyn Decoder>,
    /// Number of `round` blocks (at least 1, for the per-round rate).
    pub rounds: u32,
    /// Number of detectors.
    pub detectors: usize,
    /// Number of observables.
    pub observables: usize,
    /// Number of edges of the matching graph.
    pub edges: usize,
    /// What the matchable view had to leave out or merge.
    pub graph_stats: MatchingStats,
}

impl Experiment {
    /// Runs [`run`] on this experiment.
    pub fn run(&self, opts: &RunOptions, progress: impl FnMut(Counts)) -> Counts {
        run(&self.sampler, self.decoder.as_ref(), opts, progress)
    }
}

/// What to run.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct RunOptions {
    /// Maximum number of shots.
    pub shots: u64,
    /// Stop after the batch at which this many failures have been seen (`None`: run all shots).
    pub until_failures: Option<u64>,
    /// Seed of the sampler.
    pub seed: u64,
}

/// Shots run and logical failures seen.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Counts {
    /// Shots sampled and decoded.
    pub shots: u64,
    /// Shots whose predicted observables differ from the sampled ones (or with unmatched events).
    pub failures: u64,
    /// Shots the decoder could not decode completely (also counted in `failures`).
    pub unmatched: u64,
}

impl Counts {
    fn add(&mut self, other: Counts) {
        self.shots += other.shots;
        self.failures += other.failures;
        self.unmatched += other.unmatched;
    }
}

/// Samples and decodes shots until `opts.shots` are done or `opts.until_failures` failures are
/// seen, calling `progress` with the running totals after each batch (in batch order).
pub fn run(
    sampler: &Sampler,
    decoder: &dyn Decoder,
    opts: &RunOptions,
    mut progress: impl FnMut(Counts),
) -> Counts {
    let per = BATCH_SHOTS as u64;
    let batches = opts.shots.div_ceil(per);
    // Enough batches in flight to keep every thread busy, few enough to stop soon after the
    // error budget is reached.
    let group = (rayon::current_num_threads() as u64 * 2).max(1);
    let mut total = Counts::default();
    let mut next = 0;
    while next < batches {
        let end = (next + group).min(batches);
        let counts: Vec<Counts> = (next..end)
            .into_par_iter()
            .map(|b| {
                let n = (opts.shots - b * per).min(per) as usize;
                let batch = sampler.run_batch(b, n, opts.seed, Outputs::syndromes());
                decode_batch(&batch, decoder)
            })
            .collect();
        for c in counts {
            total.add(c);
            progress(total);
            if opts.until_failures.is_some_and(|k| total.failures >= k) {
                return total;
            }
        }
        next = end;
    }
    total
}

/// Decodes every shot of a batch and counts failures.
pub fn decode_batch(batch: &Batch, decoder: &dyn Decoder) -> Counts {
    let w = batch.words;
    let num_det = batch.items(&batch.detectors);
    let num_obs = batch.items(&batch.observables);
    let detectors = batch.detectors.as_raw_slice();
    let mut events: Vec<Vec<u32>> = vec![Vec::new(); batch.shots];
    for d in 0..num_det {
        for (k, &word) in detectors[d * w..(d + 1) * w].iter().enumerate() {
            let mut bits = word;
            while bits != 0 {
                let s = k * 64 + bits.trailing_zeros() as usize;
                bits &= bits - 1;
                if s < batch.shots {
                    events[s].push(d as u32);
                }
            }
        }
    }
    let mut counts = Counts {
        shots: batch.shots as u64,
        ..Counts::default()
    };
    let mut actual = Vec::with_capacity(num_obs);
    for (s, ev) in events.iter().enumerate() {
        let decoded = decoder.decode(ev);
        actual.clear();
        actual
            .extend((0..num_obs as u32).filter(|&o| batch.get(&batch.observables, o as usize, s)));
        if decoded.unmatched > 0 {
            counts.unmatched += 1;
            counts.failures += 1;
        } else if decoded.observables != actual {
            counts.failures += 1;
        }
    }
    counts
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::decode::{Decoded, MatchingGraph};
    use crate::sim::BitTable;

    /// A decoder that predicts no flip: every shot with an observable flip fails.
    struct Nothing;
    impl Decoder for Nothing {
        fn decode(&self, _events: &[u32]) -> Decoded {
            Decoded::default()
        }
    }

    fn batch(shots: usize, det: &[(usize, usize)], obs: &[(usize, usize)]) -> Batch {
        let words = shots.div_ceil(64);
        let mut b = Batch {
            index: 0,
            first_shot: 0,
            shots,
            words,
            detectors: BitTable::repeat(false, 2 * words * 64),
            observables: BitTable::repeat(false, words * 64),
            measurements: BitTable::new(),
        };
        for &(d, s) in det {
            b.detectors.set(d * words * 64 + s, true);
        }
        for &(o, s) in obs {
            b.observables.set(o * words * 64 + s, true);
        }
        b
    }

    #[test]
    fn failures_are_shots_whose_prediction_differs() {
        let b = batch(100, &[(0, 3), (1, 70)], &[(0, 3), (0, 99)]);
        assert_eq!(
            decode_batch(&b, &Nothing),
            Counts {
                shots: 100,
                failures: 2,
                unmatched: 0
            }
        );
        // One edge from detector 0 to the boundary flipping the observable: shot 3 is corrected,
        // shot 99 (flip without event) still fails, shot 70 (event on an isolated detector
        // without boundary) is unmatched.
        let g = MatchingGraph {
            num_detectors: 2,
            num_observables: 1,
            edges: vec![crate::decode::MatchingEdge {
                a: 0,
                b: None,
                p: 0.1,
                observables: vec![0],
            }],
        };
        let mwpm = crate::decode::DecoderKind::Mwpm.build(&g).unwrap();
        assert_eq!(
            decode_batch(&b, mwpm.as_ref()),
            Counts {
                shots: 100,
                failures: 2,
                unmatched: 1
            }
        );
    }
}
