//! The fault graph: edges with their symptoms, classes and provenance, and the matchable
//! view matching decoders read.
//!
//! In: elementary faults from [`crate::faults::extract()`]. Out: a [`FaultGraph`] (every edge,
//! hyperedges included) and, through [`FaultGraph::matching_graph`], a [`MatchingGraph`] whose edges
//! touch one or two detectors.
//!
//! Conventions:
//! - detector ids are `0..num_detectors`, observable ids `0..num_observables` (their own range,
//!   not offset by the detector count);
//! - every id list is sorted and free of repeats;
//! - probabilities are of independent edges; two independent edges with the same
//!   symptom combine as `p ⊕ q = p(1−q) + q(1−p)` (the probability that exactly one fires, i.e.
//!   that their common symptom is flipped);
//! - the weight of a edge is `ln((1−p)/p)`: the log-likelihood ratio a minimum-weight
//!   decoder adds up along a path ("Topological quantum memory", J. Math. Phys. 43, 4452 (2002)).

use std::collections::HashMap;
use std::ops::Range;
use std::sync::Arc;

use crate::base::{xor_prob, Pauli, Source, Span};

/// The matching weight `ln((1−p)/p)` of an event of probability `p`.
pub fn weight_of(p: f64) -> f64 {
    ((1.0 - p) / p).ln()
}

/// The graph a matching decoder works on: every edge touches one detector (and the boundary) or
/// two detectors. Parallel edges are already merged.
#[derive(Clone, Debug, PartialEq)]
pub struct MatchingGraph {
    /// Number of detectors; edge endpoints are below this.
    pub num_detectors: usize,
    /// Number of observables; edge observable ids are below this.
    pub num_observables: usize,
    /// The edges, sorted by `(a, b)` with boundary edges (`b = None`) first for each `a`.
    pub edges: Vec<MatchingEdge>,
}

/// One edge of a [`MatchingGraph`].
#[derive(Clone, Debug, PartialEq)]
pub struct MatchingEdge {
    /// First detector (the smaller one when `b` is set).
    pub a: u32,
    /// Second detector, or `None` for an edge to the boundary.
    pub b: Option<u32>,
    /// Probability that the edge's edge fires (independent of every other edge).
    pub p: f64,
    /// Observables flipped when it fires, sorted.
    pub observables: Vec<u32>,
}

impl MatchingEdge {
    /// Matching weight `ln((1−p)/p)`; negative when `p > 1/2`.
    pub fn weight(&self) -> f64 {
        weight_of(self.p)
    }
}

/// Probability and observables of an edge being merged.
type EdgeAcc = (f64, Vec<u32>);

/// What happens to a [`MatchingGraph`] while parallel edges are merged and hyperedges split.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct MatchingStats {
    /// Edges with more than two detectors that were split into existing edges.
    pub split: usize,
    /// Edges with more than two detectors that could not be split; they are left out.
    pub unsplit: Vec<u32>,
    /// Edges with observables but no detectors: silent logical errors, left out.
    pub silent_logical: Vec<u32>,
    /// Parallel edges whose observable sets differed; the more likely one was kept.
    pub observable_conflicts: usize,
}

/// The class of an elementary fault, which the bias and distance reports use.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum FaultClass {
    /// A pure Z-type Pauli at injection (only Z and I factors), or a measurement flip the
    /// noise model declares high-rate.
    High,
    /// Anything else: X or Y factors, ordinary measurement flips.
    Low,
}

impl FaultClass {
    /// Lower-case name used in the exports.
    pub fn name(self) -> &'static str {
        match self {
            FaultClass::High => "high",
            FaultClass::Low => "low",
        }
    }
}

/// Which classes contributed to a edge.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum ClassSet {
    /// Only high-rate contributors.
    High,
    /// Only low-rate contributors.
    Low,
    /// Both kinds.
    Mixed,
}

impl ClassSet {
    /// The set holding one class.
    pub fn of(c: FaultClass) -> ClassSet {
        match c {
            FaultClass::High => ClassSet::High,
            FaultClass::Low => ClassSet::Low,
        }
    }

    /// Union with one more class.
    pub fn with(self, c: FaultClass) -> ClassSet {
        match (self, c) {
            (ClassSet::High, FaultClass::High) => ClassSet::High,
            (ClassSet::Low, FaultClass::Low) => ClassSet::Low,
            _ => ClassSet::Mixed,
        }
    }

    /// Whether some contributor is high-rate.
    pub fn has_high(self) -> bool {
        self != ClassSet::Low
    }

    /// Whether some contributor is low-rate.
    pub fn has_low(self) -> bool {
        self != ClassSet::High
    }

    /// Lower-case name used in the exports.
    pub fn name(self) -> &'static str {
        match self {
            ClassSet::High => "high",
            ClassSet::Low => "low",
            ClassSet::Mixed => "mixed",
        }
    }
}

/// A short list that reads as a slice: up to four entries are stored in place, longer ones on
/// the heap. A graph holds one contributor per elementary fault (a million at distance 25),
/// nearly all with one or two qubits, so per-fault heap lists would dominate extraction.
pub type Small<T> = smallvec::SmallVec<[T; 4]>;

/// Where an elementary fault comes from.
#[derive(Clone, Debug, PartialEq)]
pub struct Contributor {
    /// Layer index of the operation.
    pub layer: u32,
    /// Position of the operation in its layer.
    pub op: u32,
    /// The operation's statement.
    pub span: Span,
    /// Pauli factors (`I X Y Z`) on [`Contributor::qubits`]; empty for a measurement flip.
    pub term: Small<Pauli>,
    /// Qubits the term acts on; for a measurement flip, the measured qubits.
    pub qubits: Small<u32>,
    /// For a measurement flip, the index of its result; `None` for a Pauli fault.
    pub result: Option<u32>,
    /// Probability of the term in the channel as written (terms of one channel are mutually
    /// exclusive).
    pub term_probability: f64,
    /// Probability of the equivalent independent edge (see the module docs of
    /// [`crate::faults`]); this is what the edge's probability combines.
    pub probability: f64,
    /// High or low rate.
    pub class: FaultClass,
}

impl Contributor {
    /// The Pauli term as text, e.g. `ZY`, or `flip` for a measurement flip.
    pub fn term_text(&self) -> String {
        if self.result.is_some() {
            "flip".to_string()
        } else {
            self.term.iter().map(|p| p.letter()).collect()
        }
    }
}

/// Detector data copied from the circuit.
#[derive(Clone, Debug, PartialEq)]
pub struct DetectorInfo {
    /// Display name.
    pub name: String,
    /// Space-time coordinates.
    pub coords: Vec<f64>,
}

/// A set of elementary faults with one symptom, acting as one independent event.
#[derive(Clone, Debug, PartialEq)]
pub struct FaultEdge {
    /// Probability that the symptom is flipped (the ⊕ of the contributors' probabilities).
    pub probability: f64,
    /// Detectors flipped, sorted.
    pub detectors: Vec<u32>,
    /// Observables flipped, sorted.
    pub observables: Vec<u32>,
    /// Classes of the contributors.
    pub classes: ClassSet,
    /// Range of [`FaultGraph::provenance`] holding this edge's contributors.
    pub provenance: Range<u32>,
}

impl FaultEdge {
    /// Matching weight `ln((1−p)/p)`.
    pub fn weight(&self) -> f64 {
        weight_of(self.probability)
    }
}

/// Faults with an empty symptom: they flip nothing, so they are harmless.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Silent {
    /// Number of elementary faults with no symptom.
    pub count: usize,
    /// Combined probability that an odd number of them fire (for reference only).
    pub probability: f64,
}

/// How a hyperedge (more than two detectors) was split for matching.
#[derive(Clone, Debug, PartialEq)]
pub struct Split {
    /// The edge split.
    pub edge: u32,
    /// Its matchable parts: indices of existing edges with one or two detectors, whose
    /// symptoms XOR to the whole symptom ([`FaultGraph::parts`] reads them).
    pub parts: Vec<u32>,
}

/// Summary of hyperedges and their split.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct HyperedgeStats {
    /// Edges with more than two detectors.
    pub hyperedges: usize,
    /// Of those, how many were split into existing matchable edges.
    pub split: usize,
    /// Edges that could not be split.
    pub unsplit: Vec<u32>,
}

/// The weighted fault graph of a noisy circuit.
#[derive(Clone, Debug)]
pub struct FaultGraph {
    /// The text the circuit came from, to render provenance as `file:line:col` and op text.
    pub source: Arc<Source>,
    /// Detectors by index.
    pub detectors: Vec<DetectorInfo>,
    /// Observable names by index.
    pub observables: Vec<String>,
    /// Edges, sorted by `(detectors, observables)`.
    pub edges: Vec<FaultEdge>,
    /// Every contributing elementary fault, grouped by edge.
    pub provenance: Vec<Contributor>,
    /// Faults that flip nothing.
    pub silent: Silent,
    /// Hyperedge splits for matching, one per split edge.
    pub splits: Vec<Split>,
    /// Hyperedge summary.
    pub hyperedges: HyperedgeStats,
    /// Channel applications whose terms could not be converted exactly into independent
    /// edges and used the first-order conversion instead (see [`crate::faults`]).
    pub inexact_channels: usize,
}

impl FaultGraph {
    /// The `(detectors, observables)` of each part of a split.
    pub fn parts<'g>(
        &'g self,
        d: &'g Split,
    ) -> impl ExactSizeIterator<Item = (&'g [u32], &'g [u32])> + 'g {
        d.parts.iter().map(|&r| {
            let m = &self.edges[r as usize];
            (m.detectors.as_slice(), m.observables.as_slice())
        })
    }

    /// The contributors of edge `k`.
    pub fn contributors(&self, k: usize) -> &[Contributor] {
        let r = &self.edges[k].provenance;
        &self.provenance[r.start as usize..r.end as usize]
    }

    /// `file:line:col` of a contributor.
    pub fn location(&self, c: &Contributor) -> String {
        let (line, col) = self.source.line_col(c.span.start);
        format!("{}:{}:{}", self.source.name, line, col)
    }

    /// The source text of a contributor's statement (first line only).
    pub fn op_text(&self, c: &Contributor) -> String {
        let text = self.source.slice(c.span);
        text.lines().next().unwrap_or("").trim().to_string()
    }

    /// Index of the edge with exactly these detectors (and any observables), if unique.
    pub fn find_by_detectors(&self, detectors: &[u32]) -> Vec<usize> {
        self.edges
            .iter()
            .enumerate()
            .filter(|(_, m)| m.detectors == detectors)
            .map(|(i, _)| i)
            .collect()
    }

    /// The matchable view for matching decoders: edges with one or two detectors become
    /// edges, split hyperedges add their probability to each of their parts' edges, and
    /// parallel edges merge with `⊕`. Edges that cannot enter a matching graph (no
    /// detectors, or an unsplittable hyperedge) are counted in the returned stats.
    pub fn matching_graph(&self) -> (MatchingGraph, MatchingStats) {
        let mut stats = MatchingStats::default();
        // Key (a, b) with b = u32::MAX for the boundary, so boundary edges sort first per a.
        let mut edges: HashMap<(u32, u32), EdgeAcc> = HashMap::new();
        let mut add = |dets: &[u32], obs: &[u32], p: f64, stats: &mut MatchingStats| {
            let key = match *dets {
                [a] => (a, u32::MAX),
                [a, b] => (a.min(b), a.max(b)),
                _ => return,
            };
            match edges.get_mut(&key) {
                None => {
                    edges.insert(key, (p, obs.to_vec()));
                }
                Some(e) if e.1 == obs => e.0 = xor_prob(e.0, p),
                Some(e) => {
                    stats.observable_conflicts += 1;
                    if p > e.0 {
                        *e = (p, obs.to_vec());
                    }
                }
            }
        };
        let mut split = vec![None; self.edges.len()];
        for (i, d) in self.splits.iter().enumerate() {
            split[d.edge as usize] = Some(i);
        }
        for (k, m) in self.edges.iter().enumerate() {
            match m.detectors.len() {
                0 => {
                    if !m.observables.is_empty() {
                        stats.silent_logical.push(k as u32);
                    }
                }
                1 | 2 => add(&m.detectors, &m.observables, m.probability, &mut stats),
                _ => match split[k] {
                    Some(i) => {
                        stats.split += 1;
                        for (dets, obs) in self.parts(&self.splits[i]) {
                            add(dets, obs, m.probability, &mut stats);
                        }
                    }
                    None => stats.unsplit.push(k as u32),
                },
            }
        }
        let mut list: Vec<_> = edges.into_iter().collect();
        list.sort_by_key(|e| (e.0 .0, if e.0 .1 == u32::MAX { 0 } else { 1 }, e.0 .1));
        let edges = list
            .into_iter()
            .map(|((a, b), (p, observables))| MatchingEdge {
                a,
                b: (b != u32::MAX).then_some(b),
                p,
                observables,
            })
            .collect();
        (
            MatchingGraph {
                num_detectors: self.detectors.len(),
                num_observables: self.observables.len(),
                edges,
            },
            stats,
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn short_lists_cost_no_more_than_a_vec() {
        // One contributor per elementary fault: the inline lists must not grow it.
        assert_eq!(
            std::mem::size_of::<Small<u32>>(),
            std::mem::size_of::<Vec<u32>>()
        );
        assert_eq!(
            std::mem::size_of::<Small<Pauli>>(),
            std::mem::size_of::<Vec<u32>>()
        );
        let long = Small::from_slice(&[1u32, 2, 3, 4, 5]);
        assert!(long.spilled() && long[..] == [1, 2, 3, 4, 5]);
    }

    #[test]
    fn even_odds_weigh_nothing() {
        assert!((weight_of(0.5)).abs() < 1e-15);
    }

    #[test]
    fn class_sets() {
        let s = ClassSet::of(FaultClass::High);
        assert_eq!(s.with(FaultClass::High), ClassSet::High);
        assert_eq!(s.with(FaultClass::Low), ClassSet::Mixed);
        assert!(ClassSet::Mixed.has_high() && ClassSet::Mixed.has_low());
    }
}
