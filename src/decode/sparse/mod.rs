//! Exact minimum-weight perfect matching (MWPM) grown directly on the detector graph.
//!
//! In: a [`MatchingGraph`]. Out: an [`Mwpm`] decoder; per shot, the observables flipped along
//! a minimum-weight set of paths that pairs every detection event with another event or with
//! the boundary. The decoding problem is that of "Topological quantum memory", Dennis et al.,
//! J. Math. Phys. 43, 4452 (2002); the method of solving it without a complete graph of events
//! is that of "Sparse Blossom: correcting a million errors per core second with
//! minimum-weight matching", Higgott and Gidney, Quantum 9, 1600 (2025).
//!
//! # Method
//! Edmonds' primal–dual blossom algorithm run on the graph itself. The dual variable of each
//! odd set of events is drawn as a *region* of the graph with that radius: every event starts a
//! trivial region of radius 0, and all regions that are outer nodes of an alternating tree grow
//! at unit speed while inner ones shrink. A region reaching an empty node takes it; two regions
//! touching along an edge means the path between their events is tight, which is exactly when
//! Edmonds' algorithm acts (grow a tree, augment, form a blossom); a shrinking blossom reaching
//! radius 0 is shattered. Time advances from event to event through a monotone radix heap. No
//! distances between events are ever computed: a contact records only the two events it joins,
//! the path length and the XOR of observables along it (each node remembers the mask of the
//! path back to the event it was reached from). The work is proportional to the area the
//! regions cover, so it grows about linearly with the number of events. Files: `region.rs`
//! (regions, compressed edges), `flooder.rs` (growth on the graph), `matcher.rs` (trees,
//! blossoms, augmentation), `extract.rs` (reading out the pairs), `solver.rs` (per-shot state and
//! the event loop); beside this directory, shared with union-find: `sparse_graph.rs` (integer
//! weights, adjacency) and `radix_heap.rs` (the event queue).
//!
//! # Weights and exactness
//! Weights `ln((1−p)/p)` are rounded once per graph to integers: the heaviest edge maps to
//! `2^20` and every weight to `round(w · 2^20 / w_max)`, a resolution (quantum) of
//! `w_max / 2^20` ([`Mwpm::quantum`]; `9.2·10^-6` for the d = 9 surface-code circuit under
//! `circuit p=0.001`, whose weights run from 4.2 to 9.6). The matching is exactly minimum for
//! these integer weights; internally every length is doubled so that two growing regions always
//! meet at a whole time step. Each edge's rounding error is at most half a quantum, so a
//! matching that is minimum for the real weights can lose to another only when their real
//! weights differ by less than `(edges on both matchings' paths) · quantum / 2`.
//!
//! # Determinism
//! Ties (several minimum matchings) are broken by the order of events, which depends only on
//! the graph and the shot: the same events give the same matching on any thread.
//!
//! # Semantics shared with every decoder
//! Handling of repeated and out-of-range events, `p > 1/2` edges, `p = 0` edges and parallel
//! edges is that of [`crate::decode`] (the common graph preparation). A boundary-free connected
//! component with an odd number of events cannot be paired: its highest-numbered event is left
//! out before matching and counted in [`Decoded::unmatched`], and the rest is paired at minimum
//! weight. (Choosing the event whose removal leaves the lightest matching would cost a flood of
//! the whole component; the shot counts as a failure either way.)
//!
//! Graphs with more than 64 observables run the matcher once per 64 observables; the matching
//! is the same each time (determinism), only the tracked observables differ.

mod extract;
mod flooder;
mod matcher;
mod region;
mod solver;
#[cfg(test)]
mod tests;

use super::sparse_graph::SparseGraph;
use super::{odd_parity_in_place, BuildError, Decoded, Decoder, MatchingGraph, Pool, Prepared};
use region::BOUNDARY;
use solver::Solver;

pub use super::sparse_graph::RESOLUTION_BITS;

/// A sparse minimum-weight perfect matching decoder, built once per graph.
#[derive(Debug)]
pub struct Mwpm {
    g: SparseGraph,
    pool: Pool<Solver>,
}

/// How one shot was matched.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Matching {
    /// Matched pairs of detection events; `None` is the boundary. Events are after the fixed
    /// toggles of flipped edges (see the module docs of [`crate::decode`]). An event left
    /// unmatched appears in no pair.
    pub pairs: Vec<(u32, Option<u32>)>,
    /// Total weight of the matched paths in integer units of [`Mwpm::quantum`].
    pub weight: u64,
    /// The prediction.
    pub decoded: Decoded,
}

impl Mwpm {
    /// Builds the decoder for `graph`.
    pub fn new(graph: &MatchingGraph) -> Result<Mwpm, BuildError> {
        Mwpm::with_resolution(graph, RESOLUTION_BITS)
    }

    /// Builds the decoder with the heaviest edge `2^bits` units long (`bits <= 20`); tests use
    /// coarse resolutions to force ties.
    pub(crate) fn with_resolution(graph: &MatchingGraph, bits: u32) -> Result<Mwpm, BuildError> {
        let prepared = Prepared::new(graph)?;
        if prepared.n >= solver::REGION_EVENT as usize {
            return Err(BuildError::TooManyDetectors(prepared.n));
        }
        Ok(Mwpm {
            g: SparseGraph::new(prepared, graph.num_observables, bits),
            pool: Pool::new(),
        })
    }

    /// The real weight of one integer weight unit.
    pub fn quantum(&self) -> f64 {
        self.g.quantum
    }

    /// The integer weight of each prepared edge (crate-private order of [`Prepared::ends`]).
    #[cfg(test)]
    pub(crate) fn integer_weights(&self) -> &[u32] {
        &self.g.weight
    }

    /// Decodes one shot and reports the matching as well as the prediction.
    pub fn decode_matching(&self, events: &[u32]) -> Matching {
        self.run(events, true)
    }

    fn run(&self, events: &[u32], want_pairs: bool) -> Matching {
        let g = &self.g;
        self.pool.with(
            || Solver::new(g),
            |s| {
                let mut list = std::mem::take(&mut s.events);
                let bad = g.prepared.normalize_into(events, &mut list)
                    + g.drop_unpairable(&mut list, &mut s.component_count);
                let mut observables = g.prepared.fixed_observables.clone();
                for window in 0..g.words {
                    s.solve(g, &list, window);
                    let mut m = s.outcome.mask;
                    while m != 0 {
                        observables.push(64 * window as u32 + m.trailing_zeros());
                        m &= m - 1;
                    }
                }
                s.events = list;
                if g.words > 1 || !g.prepared.fixed_observables.is_empty() {
                    odd_parity_in_place(&mut observables);
                }
                let out = &s.outcome;
                let pairs = if want_pairs {
                    out.pairs
                        .iter()
                        .map(|&(a, b)| match b {
                            BOUNDARY => (a, None),
                            b => (a.min(b), Some(a.max(b))),
                        })
                        .collect()
                } else {
                    Vec::new()
                };
                debug_assert!(out.unmatched == 0 && out.len == out.dual);
                Matching {
                    pairs,
                    weight: (out.len / 2) as u64,
                    decoded: Decoded {
                        observables,
                        unmatched: out.unmatched + bad,
                    },
                }
            },
        )
    }
}

impl Decoder for Mwpm {
    fn decode(&self, events: &[u32]) -> Decoded {
        self.run(events, false).decoded
    }
}
