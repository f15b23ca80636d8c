//! The fault graph of a noisy circuit: extraction, mechanisms, decomposition and exports.
//!
//! In: a checked [`crate::ir::Circuit`] whose noise is explicit. Out: a
//! [`graph::FaultGraph`], and from it the [`graph::MatchingGraph`] matching decoders read.
pub mod graph;

pub use graph::{FaultGraph, MatchingEdge, MatchingGraph};
