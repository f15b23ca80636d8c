//! Noise specifications and the pass that writes them into a circuit as explicit channels.
//!
//! In: a [`Circuit`](crate::ir::Circuit) (roles and rounds marked) and a [`NoiseSpec`] parsed from the `--noise`
//! option. Out: a new circuit with [`OpKind::Noise`](crate::ir::OpKind::Noise) operations
//! and measurement flip probabilities added; everything else is unchanged, so the simulators and
//! the fault-graph extractor only ever see explicit channels. Inserted operations carry the span of
//! the operation or layer they belong to, so fault provenance points at the source.
//!
//! Presets (the exact placement rules are in `src/noise/preset.rs`), written exactly as
//! `NAME key=value ...`:
//!
//! | preset | keys | meaning |
//! |--------|------|---------|
//! | `capacity` | `p`, `bias` | Pauli channel of total `p` on every `data` qubit at the start of each round; perfect measurements |
//! | `phenomenological` | `p`, `q`, `bias` | the same, plus flip probability `q` (default `p`) on every measurement inside a round |
//! | `circuit` | `p`, `bias` | after every gate a one- or two-qubit channel of total `p`; idle qubits `p`; measurement flips `p`; reset errors `p` |
//!
//! **Bias** (`bias=ETA`, a positive number or `inf`; default: depolarizing). One qubit: a channel
//! of total `P` splits as `pZ = P·ETA/(ETA+1)`, `pX = pY = P/(2(ETA+1))`, so that
//! `ETA = pZ/(pX+pY)` ("Ultrahigh error threshold for surface codes with biased noise",
//! PRL 120, 050505 (2018)). Two qubits: the high-rate terms `ZI`, `IZ`, `ZZ` share `P·ETA/(ETA+1)`
//! equally and the other twelve terms share `P/(ETA+1)` equally. Without `bias`, one-qubit
//! channels are depolarizing (`P/3` each) and two-qubit channels depolarizing (`P/15` each).
//! `bias=0.5` gives the one-qubit depolarizing split; for two qubits the depolarizing split has
//! `ETA = 3/12`, i.e. `bias=0.25`.
//!
//! The enum grows with new kinds of specification (noise-model files, gate implementations);
//! callers match on it only through [`apply`].

mod compile;
mod implement;
mod model;
mod note;
mod preset;
mod reader;
mod settings;
mod spec;

pub use compile::{compile, to_text, Compiled};
pub use implement::{
    angle_text, effective_channel, effective_channel_with, mid_gate_fault, mid_gate_fault_with,
    parse_angle, parse_polynomial, Generator, Implementation, Terms, GATE_TOLERANCE, MAX_WINDING,
    RESOLUTION,
};
pub use model::{
    canonical_qubit_name, cat_idle, twirled_decoherence, BasisSpam, GateNoise, IdleNoise,
    MeasureNoise, NoiseModel, Override, Rate, ResetNoise, Selector, SpamNoise, TIME_UNITS,
};
pub use note::Note;
pub use preset::{Preset, PresetKind};
pub use reader::MODEL_KEYS;
pub use settings::{split_settings, Setting, SCALE_KINDS};
pub use spec::{apply, apply_noted, is_model_text, NoiseSpec};
