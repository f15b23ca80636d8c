//! The fault graph of a noisy circuit: extraction, edges, hyperedge splitting and exports.
//!
//! In: a checked [`crate::ir::Circuit`] whose noise is explicit (noise statements and
//! measurement flip probabilities). Out: a [`FaultGraph`] and, through
//! [`FaultGraph::matching_graph`], the [`MatchingGraph`] that matching decoders read.
//!
//! # Pipeline
//! 1. `extract::extract_edges`: one backward sensitivity sweep
//!    ([`crate::ir::sensitivity_sweep`]). Each Pauli term of each channel application and each
//!    measurement flip becomes an *elementary fault* whose symptom (detectors + observables)
//!    is read off the sensitivities at its point of injection. Faults with the same symptom merge
//!    into one *edge* with `p ⊕ q = p(1−q) + q(1−p)`; faults with an empty symptom are
//!    counted in [`Silent`] and dropped (they flip nothing, so they are harmless).
//! 2. `split`: hyperedges (more than two detectors) are split into existing matchable
//!    edges for matching.
//!
//! # Independence approximation
//! The terms of one channel are mutually exclusive, but a fault graph is a list of independent
//! edges. Each channel application is converted by [`extract::independent_terms`]: the
//! exact conversion (a Pauli channel with positive Pauli eigenvalues is a composition of
//! independent single-Pauli channels, solved with a Walsh–Hadamard transform over the
//! symplectic form) whenever it gives probabilities in `[0, 1/2)`, which covers depolarizing
//! (one and two qubits), dephasing, bit flip, joint faults and most Pauli channels. For
//! single-qubit depolarizing `p` it gives X, Y and Z each with `q = (1 − sqrt(1 − 4p/3))/2`.
//! Otherwise (e.g. X and Z without Y) the first-order conversion `q_k = p_k / (p_I + p_k)` is
//! used and the application is counted in [`FaultGraph::inexact_channels`]. Channels at
//! different locations are independent by the noise model's own assumption. With the exact
//! conversion, detector statistics computed from the graph equal the circuit's exactly.
//!
//! # Classes
//! An elementary fault is [`FaultClass::High`] when its Pauli term has only Z and I factors at
//! injection, or when it is a measurement flip and [`ExtractOptions::high_rate_flips`] is set;
//! otherwise [`FaultClass::Low`]. A edge carries the [`ClassSet`] of its contributors.
//!
//! # Provenance
//! Every edge keeps its contributors ([`Contributor`]: layer, op, span, Pauli term and
//! qubits, written and independent probabilities, class) so `slant trace` can say which lines
//! of the circuit produce it.

mod export;
mod extract;
mod graph;
mod intern;
mod split;

pub use export::{render, write_one, Files, Format, View};
pub use extract::{independent_terms, ExtractOptions, IndependentTerm};
pub use graph::{
    weight_of, ClassSet, Contributor, DetectorInfo, FaultClass, FaultEdge, FaultGraph,
    HyperedgeStats, MatchingEdge, MatchingGraph, MatchingStats, Silent, Small, Split,
};
pub use split::{MAX_ATOMS, MAX_SEARCH};

use crate::ir::Circuit;

/// Extracts the fault graph of `circuit`, hyperedges split for matching.
pub fn extract(circuit: &Circuit, opts: &ExtractOptions) -> FaultGraph {
    let mut extracted = extract::extract_edges(circuit, opts);
    split::split_hyperedges(&mut extracted);
    extracted.graph
}

/// Probability that each detector fires, treating the edges of `graph` as independent:
/// `P(odd number of edges touching it fire) = (1 − Π(1 − 2p))/2`.
pub fn detector_probabilities(graph: &FaultGraph) -> Vec<f64> {
    let mut prod = vec![1.0; graph.detectors.len()];
    for m in &graph.edges {
        for &d in &m.detectors {
            prod[d as usize] *= 1.0 - 2.0 * m.probability;
        }
    }
    prod.into_iter().map(|x| (1.0 - x) / 2.0).collect()
}

/// Probability that detectors `a` and `b` (distinct) both fire, treating edges as
/// independent: `P(a ∧ b) = (P(a) + P(b) − P(a ⊕ b)) / 2`, each term an odd-parity probability.
pub fn pair_probability(graph: &FaultGraph, a: u32, b: u32) -> f64 {
    let (mut pa, mut pb, mut pab) = (1.0, 1.0, 1.0);
    for m in &graph.edges {
        let (ha, hb) = (m.detectors.contains(&a), m.detectors.contains(&b));
        let f = 1.0 - 2.0 * m.probability;
        if ha {
            pa *= f;
        }
        if hb {
            pb *= f;
        }
        if ha != hb {
            pab *= f;
        }
    }
    let odd = |x: f64| (1.0 - x) / 2.0;
    (odd(pa) + odd(pb) - odd(pab)) / 2.0
}
