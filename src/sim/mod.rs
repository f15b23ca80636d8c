//! Simulators: the stabilizer tableau (noiseless reference run) and the bit-packed Pauli-frame
//! sampler (noisy shots).
//!
//! In: a checked [`crate::ir::Circuit`], usually with explicit noise from [`crate::noise::apply`].
//! Out: a [`tableau::Reference`] (noiseless value of every record, detector and observable) and
//! streamed [`frame::Batch`]es of detection events, observable flips and raw measurement results.
//!
//! Conventions shared by both simulators: every qubit starts in |0>; a measurement result `0`
//! means eigenvalue +1 of the measured Pauli product; a reset prepares the +1 eigenstate of its
//! basis; gate semantics are those of [`crate::base::Gate::heisenberg`] (tests compare against it).

mod bits;
mod frame;
mod tableau;

pub use bits::{append_shot_rows, row_bytes};
pub use frame::{
    sample, sampler_bytes, xor_baseline, Batch, BitTable, Outputs, Sampler, BATCH_SHOTS,
};
pub use tableau::{branch_run, reference_run, Measured, Reference, Tableau};
