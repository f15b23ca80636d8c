//! The words every stage shares, at the bottom of the crate: source files and spans, the one
//! diagnostic type and its renderer, Paulis, gates and bases with their semantics, noise channel
//! kinds, and small helpers for probabilities, parity sets, `.npy` files and atomic output.
//!
//! In: nothing from the rest of the crate (`base` imports no other stage). Out: plain types and
//! functions, re-exported here; the files below are private.

mod channel;
mod diagnostic;
mod gate;
mod npy;
mod output;
mod parity;
mod pauli;
mod prob;
mod read;
mod source;
mod words;

pub use channel::{key_arity, Arity, ChannelKind};
pub use diagnostic::{did_you_mean, Diagnostic, Label, Severity};
pub use gate::{Basis, Gate};
pub use npy::{npy_f64_vector, npy_header, read_npy_header, NpyHeader};
pub use output::{
    check_output_set, write_atomic, write_atomic_with, AtomicFile, OutputSet, SET_MANIFEST,
};
pub use parity::{odd_parity, odd_parity_in_place, xor_into, xor_sets};
pub use pauli::Pauli;
pub use prob::xor_prob;
pub use read::source_from_bytes;
pub use source::{Source, Span, BOM};
pub use words::{count, plural};
