//! Noise specifications and the pass that writes them into a circuit as explicit channels.
//!
//! In: a [`Circuit`] (roles and rounds marked) and a [`NoiseSpec`] parsed from the `--noise`
//! option. Out: a new [`Circuit`] with [`OpKind::Noise`](crate::ir::OpKind::Noise) operations
//! and measurement flip probabilities added; everything else is unchanged, so the simulators and
//! the fault-graph extractor only ever see explicit channels. Inserted operations carry the span of
//! the operation or layer they belong to, so fault provenance points at the source.
//!
//! Presets (see [`preset`] for the exact placement rules), written exactly as
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

pub mod compile;
pub mod implement;
pub mod model;
pub mod preset;

use std::sync::Arc;

use crate::base::{Diagnostic, Source};
use crate::ir::Circuit;

pub use preset::{Preset, PresetKind};

/// A parsed `--noise` value.
#[derive(Clone, Debug, PartialEq)]
pub enum NoiseSpec {
    /// A hardware model: a model file (`--noise FILE.toml`) or a `circuit` preset with a
    /// non-ideal `cx=` implementation (see [`model`] and [`implement`]).
    Model(Box<model::NoiseModel>),
    /// A standard preset (`capacity`, `phenomenological`, `circuit`).
    Preset(Preset),
}

impl NoiseSpec {
    /// Parses the text of a `--noise` option. Diagnostics point into the option text, shown as a
    /// source named `--noise`.
    pub fn parse(text: &str) -> Result<NoiseSpec, Diagnostic> {
        let source = Source::new("--noise", text);
        NoiseSpec::parse_source(&source)
    }

    /// Parses a specification held in a [`Source`].
    pub fn parse_source(source: &Arc<Source>) -> Result<NoiseSpec, Diagnostic> {
        if let Some(spec) = model::parse_extension(source) {
            return spec;
        }
        Preset::parse(source).map(NoiseSpec::Preset)
    }
}

/// Returns a copy of `circuit` with the noise of `spec` written in as explicit operations.
pub fn apply(circuit: &Circuit, spec: &NoiseSpec) -> Result<Circuit, Vec<Diagnostic>> {
    apply_noted(circuit, spec).map(|c| c.circuit)
}

/// Like [`apply`], with one [`compile::Note`] per inserted channel saying what produced it and
/// its operation class (presets and model files class channels alike). Presets give no
/// durations, so their total duration is 0.
pub fn apply_noted(
    circuit: &Circuit,
    spec: &NoiseSpec,
) -> Result<compile::Compiled, Vec<Diagnostic>> {
    match spec {
        NoiseSpec::Model(m) => compile::compile(circuit, m),
        NoiseSpec::Preset(p) => p
            .apply_noted(circuit)
            .map(|(circuit, notes)| compile::Compiled {
                circuit,
                notes,
                duration: 0.0,
                warnings: Vec::new(),
            }),
    }
}
