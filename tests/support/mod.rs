//! Shared test helpers.

pub mod statevector;
