//! Decoders for matchable fault graphs: minimum-weight perfect matching and union-find.
//!
//! In: a [`MatchingGraph`] (detectors `0..num_detectors`, edges touching one detector and the
//! boundary or two detectors, each with a probability and the observables it flips). Out: a
//! [`Decoder`] that maps the detection events of one shot to the observables it predicts flipped.
//!
//! Conventions and invariants:
//! - every edge to the boundary goes to one shared boundary node, so "several boundaries" are
//!   simply boundary edges anywhere; the observables on each edge tell the boundaries apart;
//! - edge weights are `ln((1−p)/p)`. An edge with `p > 1/2` has negative weight; it is handled
//!   exactly by assuming it fired (its detectors and observables are toggled up front) and using
//!   the edge with weight `ln(p/(1−p)) > 0`. Edges with `p = 0` are dropped, and so are edges
//!   from a detector to itself (they flip no detector and cannot be decoded); parallel edges keep
//!   the lighter one;
//! - detection events are a set with parity: an id listed twice cancels;
//! - a detection event that cannot be paired (a connected component of the graph with no boundary
//!   edge and an odd number of events), or an event id out of range, is not matched; it is
//!   counted in [`Decoded::unmatched`] and the prediction covers the rest. Callers estimating
//!   logical error rates should count such a shot as a failure;
//! - decoders are `Send + Sync` and keep per-call scratch space in a small pool, so one decoder
//!   can be shared by rayon threads.

mod matching;
mod radix_heap;
mod sparse;
mod sparse_graph;
mod unionfind;

use std::collections::HashMap;
use std::fmt;
use std::sync::Mutex;

// The decoders (`matching`, `sparse`, `unionfind`, and new ones beside them) take these as `super::…`.
use crate::base::{odd_parity, odd_parity_in_place};

pub use crate::faults::{MatchingEdge, MatchingGraph};

pub use matching::{ReferenceMwpm, ReferenceMwpmOptions};
pub use sparse::Mwpm;
pub use unionfind::UnionFind;

/// The result of decoding one shot.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct Decoded {
    /// Observables predicted flipped, sorted ascending.
    pub observables: Vec<u32>,
    /// Detection events that could not be paired with another event or the boundary (or that
    /// were out of range). Zero for a complete decoding.
    pub unmatched: u32,
}

/// A decoder built once for a graph and then called once per shot.
pub trait Decoder: Send + Sync {
    /// Decodes the detection events of one shot (detector ids, any order).
    fn decode(&self, events: &[u32]) -> Decoded;
}

/// Which decoder to build.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum DecoderKind {
    /// Exact minimum-weight perfect matching ([`Mwpm`], grown on the sparse graph).
    Mwpm,
    /// Weighted union-find with peeling ([`UnionFind`]).
    UnionFind,
}

impl DecoderKind {
    /// Builds the decoder of this kind for `graph`.
    pub fn build(self, graph: &MatchingGraph) -> Result<Box<dyn Decoder>, BuildError> {
        Ok(match self {
            DecoderKind::Mwpm => Box::new(Mwpm::new(graph)?),
            DecoderKind::UnionFind => Box::new(UnionFind::new(graph)?),
        })
    }

    /// The command-line name: `mwpm` or `uf`.
    pub fn name(self) -> &'static str {
        match self {
            DecoderKind::Mwpm => "mwpm",
            DecoderKind::UnionFind => "uf",
        }
    }
}

impl std::str::FromStr for DecoderKind {
    type Err = String;

    fn from_str(s: &str) -> Result<Self, String> {
        match s {
            "mwpm" => Ok(DecoderKind::Mwpm),
            "uf" | "union-find" | "unionfind" => Ok(DecoderKind::UnionFind),
            _ => Err(format!("unknown decoder `{s}` (expected `mwpm` or `uf`)")),
        }
    }
}

/// Why a decoder could not be built from a graph.
#[derive(Clone, Debug, PartialEq)]
pub enum BuildError {
    /// An edge names a detector at or above `num_detectors`.
    DetectorOutOfRange {
        /// Index of the edge in [`MatchingGraph::edges`].
        edge: usize,
        /// The detector id.
        detector: u32,
    },
    /// An edge names an observable at or above `num_observables`.
    ObservableOutOfRange {
        /// Index of the edge.
        edge: usize,
        /// The observable id.
        observable: u32,
    },
    /// An edge probability is not a number in `[0, 1]`.
    BadProbability {
        /// Index of the edge.
        edge: usize,
        /// The probability.
        p: f64,
    },
    /// More detectors than a `u32` id can name.
    TooManyDetectors(usize),
}

impl fmt::Display for BuildError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            BuildError::DetectorOutOfRange { edge, detector } => {
                write!(
                    f,
                    "edge {edge} names detector {detector}, which does not exist"
                )
            }
            BuildError::ObservableOutOfRange { edge, observable } => {
                write!(
                    f,
                    "edge {edge} names observable {observable}, which does not exist"
                )
            }
            BuildError::BadProbability { edge, p } => {
                write!(f, "edge {edge} has probability `{p}`, not in [0, 1]")
            }
            BuildError::TooManyDetectors(n) => write!(f, "{n} detectors is too many to decode"),
        }
    }
}

impl std::error::Error for BuildError {}

/// The graph in the form both decoders walk: compressed adjacency over `n + 1` nodes where node
/// `n` is the boundary, non-negative weights, and the fixed toggles of flipped (`p > 1/2`) edges.
#[derive(Clone, Debug)]
pub(crate) struct Prepared {
    /// Number of detectors; the boundary node is `n`.
    pub n: usize,
    /// `adj[adj_start[v]..adj_start[v + 1]]` lists `(neighbour, edge)` of node `v`.
    pub adj_start: Vec<u32>,
    /// Adjacency entries.
    pub adj: Vec<(u32, u32)>,
    /// Endpoints of each edge (`ends[e].1 == n` for a boundary edge).
    pub ends: Vec<(u32, u32)>,
    /// Weight of each edge, finite and `>= 0`.
    pub weight: Vec<f64>,
    /// `obs[obs_start[e]..obs_start[e + 1]]` are the observables edge `e` flips.
    pub obs_start: Vec<u32>,
    /// Observable entries.
    pub obs: Vec<u32>,
    /// Detectors toggled by edges assumed fired (`p > 1/2`), with parity, sorted.
    pub fixed_events: Vec<u32>,
    /// Observables toggled by edges assumed fired, with parity, sorted.
    pub fixed_observables: Vec<u32>,
}

impl Prepared {
    /// Validates and converts `graph`.
    pub fn new(graph: &MatchingGraph) -> Result<Prepared, BuildError> {
        let n = graph.num_detectors;
        if n >= u32::MAX as usize {
            return Err(BuildError::TooManyDetectors(n));
        }
        let mut fixed_events = Vec::new();
        let mut fixed_observables = Vec::new();
        // (a, b) with a < b (b = n for the boundary) -> (weight, original edge index).
        let mut best: HashMap<(u32, u32), (f64, usize)> = HashMap::new();
        for (i, e) in graph.edges.iter().enumerate() {
            for &d in std::iter::once(&e.a).chain(e.b.iter()) {
                if d as usize >= n {
                    return Err(BuildError::DetectorOutOfRange {
                        edge: i,
                        detector: d,
                    });
                }
            }
            if let Some(&o) = e
                .observables
                .iter()
                .find(|&&o| o as usize >= graph.num_observables)
            {
                return Err(BuildError::ObservableOutOfRange {
                    edge: i,
                    observable: o,
                });
            }
            if !(0.0..=1.0).contains(&e.p) {
                return Err(BuildError::BadProbability { edge: i, p: e.p });
            }
            let b = e.b.unwrap_or(n as u32);
            let flipped = e.p > 0.5;
            if flipped {
                fixed_events.push(e.a);
                if let Some(b) = e.b {
                    fixed_events.push(b);
                }
                fixed_observables.extend_from_slice(&e.observables);
            }
            // After flipping, the edge stands for "the assumed firing did not happen", which
            // has probability 1 − p and weight ln(p/(1−p)) = |w|.
            let q = if flipped { 1.0 - e.p } else { e.p };
            if q <= 0.0 || b == e.a {
                continue;
            }
            let w = ((1.0 - q) / q).ln().max(0.0);
            let key = (e.a.min(b), e.a.max(b));
            match best.get(&key) {
                Some(&(w0, _)) if w0 <= w => {}
                _ => {
                    best.insert(key, (w, i));
                }
            }
        }
        let mut chosen: Vec<((u32, u32), (f64, usize))> = best.into_iter().collect();
        chosen.sort_by_key(|&(k, _)| k);
        let mut ends = Vec::with_capacity(chosen.len());
        let mut weight = Vec::with_capacity(chosen.len());
        let mut obs_start = vec![0u32];
        let mut obs = Vec::new();
        for &(k, (w, i)) in &chosen {
            ends.push(k);
            weight.push(w);
            obs.extend_from_slice(&graph.edges[i].observables);
            obs_start.push(obs.len() as u32);
        }
        let mut degree = vec![0u32; n + 2];
        for &(a, b) in &ends {
            degree[a as usize + 1] += 1;
            degree[b as usize + 1] += 1;
        }
        for v in 0..=n {
            degree[v + 1] += degree[v];
        }
        let adj_start = degree.clone();
        let mut fill = degree;
        let mut adj = vec![(0u32, 0u32); adj_start[n + 1] as usize];
        for (e, &(a, b)) in ends.iter().enumerate() {
            adj[fill[a as usize] as usize] = (b, e as u32);
            fill[a as usize] += 1;
            adj[fill[b as usize] as usize] = (a, e as u32);
            fill[b as usize] += 1;
        }
        Ok(Prepared {
            n,
            adj_start,
            adj,
            ends,
            weight,
            obs_start,
            obs,
            fixed_events: odd_parity(fixed_events),
            fixed_observables: odd_parity(fixed_observables),
        })
    }

    /// Neighbours `(node, edge)` of node `v` (`v == n` is the boundary).
    #[inline]
    pub fn neighbours(&self, v: usize) -> &[(u32, u32)] {
        &self.adj[self.adj_start[v] as usize..self.adj_start[v + 1] as usize]
    }

    /// Observables flipped by edge `e`.
    #[inline]
    pub fn edge_observables(&self, e: usize) -> &[u32] {
        &self.obs[self.obs_start[e] as usize..self.obs_start[e + 1] as usize]
    }

    /// The other endpoint of edge `e` seen from `v`.
    #[inline]
    pub fn other(&self, e: usize, v: u32) -> u32 {
        let (a, b) = self.ends[e];
        if a == v {
            b
        } else {
            a
        }
    }

    /// The shot's events with the fixed toggles applied, as a sorted set; out-of-range ids are
    /// dropped and counted in the second value.
    pub fn normalize_events(&self, events: &[u32]) -> (Vec<u32>, u32) {
        let mut all = Vec::new();
        let bad = self.normalize_into(events, &mut all);
        (all, bad)
    }

    /// [`Prepared::normalize_events`] into a reused buffer; returns the out-of-range count.
    pub fn normalize_into(&self, events: &[u32], out: &mut Vec<u32>) -> u32 {
        out.clear();
        let mut bad = 0u32;
        for &e in events {
            if (e as usize) < self.n {
                out.push(e);
            } else {
                bad += 1;
            }
        }
        out.extend_from_slice(&self.fixed_events);
        odd_parity_in_place(out);
        bad
    }
}

/// A pool of reusable scratch values so that `&self` decoders can run on many threads without
/// allocating per shot. Each call takes a value out (or makes one) and puts it back afterwards.
#[derive(Debug, Default)]
pub(crate) struct Pool<T> {
    free: Mutex<Vec<T>>,
}

impl<T> Pool<T> {
    /// An empty pool.
    pub fn new() -> Pool<T> {
        Pool {
            free: Mutex::new(Vec::new()),
        }
    }

    /// Runs `f` with a scratch value, made by `make` when none is free.
    pub fn with<R>(&self, make: impl FnOnce() -> T, f: impl FnOnce(&mut T) -> R) -> R {
        let taken = self.free.lock().map(|mut v| v.pop()).unwrap_or(None);
        let mut s = taken.unwrap_or_else(make);
        let r = f(&mut s);
        if let Ok(mut v) = self.free.lock() {
            v.push(s);
        }
        r
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn edge(a: u32, b: Option<u32>, p: f64, obs: &[u32]) -> MatchingEdge {
        MatchingEdge {
            a,
            b,
            p,
            observables: obs.to_vec(),
        }
    }

    #[test]
    fn prepare_merges_parallel_edges_and_flips_likely_ones() {
        let g = MatchingGraph {
            num_detectors: 3,
            num_observables: 2,
            edges: vec![
                edge(0, Some(1), 0.1, &[0]),
                edge(0, Some(1), 0.2, &[1]),
                edge(1, None, 0.9, &[1]),
                edge(2, None, 0.0, &[]),
            ],
        };
        let p = Prepared::new(&g).unwrap();
        assert_eq!(p.ends, vec![(0, 1), (1, 3)]);
        // The heavier-probability parallel edge wins (lighter weight).
        assert!((p.weight[0] - (0.8f64 / 0.2).ln()).abs() < 1e-12);
        assert_eq!(p.edge_observables(0), &[1]);
        assert!((p.weight[1] - 9f64.ln()).abs() < 1e-12);
        assert_eq!(p.fixed_events, vec![1]);
        assert_eq!(p.fixed_observables, vec![1]);
        assert_eq!(p.neighbours(3), &[(1, 1)]);
        assert_eq!(p.normalize_events(&[1, 2, 7]), (vec![2], 1));
    }

    #[test]
    fn prepare_rejects_bad_graphs() {
        let bad = |edges| MatchingGraph {
            num_detectors: 2,
            num_observables: 1,
            edges,
        };
        assert_eq!(
            Prepared::new(&bad(vec![edge(0, Some(2), 0.1, &[])])).unwrap_err(),
            BuildError::DetectorOutOfRange {
                edge: 0,
                detector: 2
            }
        );
        assert_eq!(
            Prepared::new(&bad(vec![edge(0, None, 0.1, &[1])])).unwrap_err(),
            BuildError::ObservableOutOfRange {
                edge: 0,
                observable: 1
            }
        );
        assert!(matches!(
            Prepared::new(&bad(vec![edge(0, None, f64::NAN, &[])])),
            Err(BuildError::BadProbability { .. })
        ));
    }
}
