//! Analyses of noisy circuits and their fault graphs: where the high-rate faults end up
//! ([`analyze_bias`]) and circuit-level distances by fault class ([`distances`]).
//!
//! In: a circuit with explicit noise and the compiler's notes, or a
//! [`crate::faults::FaultGraph`]. Out: plain report values; rendering belongs to `cli`.

mod bias;
mod distance;

pub use bias::{analyze as analyze_bias, BiasReport, ClassBias, Component, Converter, RoundBias};
pub use distance::{
    distances, distances_reporting, symptom, Count, DistanceOptions, DistanceReport, Lexicographic,
    LogicalError, Method, Unproven, Unresolved, Weighted, DISTANCE_SEARCHES, EXHAUSTIVE_DEPTH,
};
