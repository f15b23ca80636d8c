//! Notes on inserted channels: what produced each one, shared by the presets and the model
//! compiler so that the bias report classes channels the same way whatever wrote them.

use crate::base::Gate;
use crate::ir::Channel;
use crate::noise::implement::{Generator, Implementation};

/// What produced one inserted channel.
#[derive(Clone, Debug, PartialEq)]
pub struct Note {
    /// Layer of the inserted operation in the compiled circuit.
    pub layer: usize,
    /// Position of the inserted operation in its layer.
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
    /// Human-readable origin, used as the comment in [`crate::noise::to_text`].
    pub text: String,
}
