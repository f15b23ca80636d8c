//! Notes on inserted channels: what produced each one, shared by the presets and the model
//! compiler so that the bias report classes channels the same way whatever wrote them, and the
//! error budget can group faults by the model section that wrote them.

use crate::base::Gate;
use crate::ir::Channel;
use crate::noise::implement::{Generator, Implementation};

/// What produced one inserted channel, or the flip probability added to one measurement.
#[derive(Clone, Debug, PartialEq)]
pub struct Note {
    /// Layer of the inserted operation in the compiled circuit.
    pub layer: usize,
    /// Position of the inserted operation in its layer. For class `measure`, the measurement
    /// whose flip probability the model raised (the note's `input` is then the bit flip the
    /// model added: the result flips with `f ⊕ q`, `f` the circuit's own flip).
    pub op: usize,
    /// Operation class: a gate name, `reset` or `idle` (and `round-start` for the data channel
    /// of the `capacity` and `phenomenological` presets).
    pub class: String,
    /// The gate it follows, if any.
    pub gate: Option<Gate>,
    /// How that gate is implemented.
    pub implementation: Implementation,
    /// The model's own rotation generator for that gate, if it gives one.
    pub generator: Option<Generator>,
    /// The channel as the model writes it, before mid-gate faults are transformed.
    pub input: Channel,
    /// The model section that wrote it, by its key path (`gates.cx`, `idle`, `reset`,
    /// `measure`, `override.0.idle`; presets use the same names and `round-start`). Gate
    /// channels are named after the gate even when a `default` section gives their rate, so
    /// that each gate kind is a section of its own.
    pub section: String,
    /// Human-readable origin, used as the comment in [`crate::noise::to_text`].
    pub text: String,
}
