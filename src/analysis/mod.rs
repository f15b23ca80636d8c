//! Analyses of fault graphs: circuit-level distances by fault class ([`distance`]) and
//! side-by-side comparison of circuits or generated variants ([`compare`]).
//!
//! In: [`crate::faults::FaultGraph`] values (and, for comparisons, the circuits they came from).
//! Out: plain report values; rendering belongs to `cli`.

pub mod bias;
pub mod compare;
pub mod distance;

pub use distance::{distances, DistanceOptions, DistanceReport};
