//! The one pipeline every study runs: circuit source + noise → noisy circuit → fault graph /
//! matching graph / samples → decoder → estimates.
//!
//! A [`Pipeline`] is built from a circuit (a source text with parameter overrides and size
//! limits, or an already checked circuit) and then given noise
//! ([`Pipeline::noised`]: a preset text or the path of a model file, as `--noise` takes it). It
//! keeps the circuit as loaded, the circuit with the noise written in, what produced each inserted
//! channel, the model's total duration and the model's warnings. Warnings are data: the pipeline
//! never prints, the caller shows them ([`Pipeline::warnings`]).
//!
//! Every later product is computed from the noisy circuit on request: the fault graph
//! ([`Pipeline::graph`]), the matching graph a decoder reads ([`Pipeline::matching_graph`]), the
//! Pauli-frame sampler ([`Pipeline::sampler`]) and the sampler paired with a decoder
//! ([`Pipeline::experiment`]), which [`crate::study::Experiment::run`] turns into counts.

use std::sync::Arc;

use crate::base::{Diagnostic, Source};
use crate::decode::{BuildError, DecoderKind, MatchingGraph};
use crate::faults::{ExtractOptions, FaultGraph, MatchingStats};
use crate::ir::{Circuit, Limits};
use crate::noise::{NoiseSpec, Note};
use crate::sim::Sampler;
use crate::study::montecarlo::Experiment;

/// A checked circuit with its noise written in, ready for every study.
#[derive(Clone, Debug)]
pub struct Pipeline {
    /// The circuit as loaded (noise statements of the file only).
    circuit: Circuit,
    /// The circuit with the `--noise` channels written in; equal to `circuit` without noise.
    noisy: Circuit,
    /// What produced each inserted channel.
    notes: Vec<Note>,
    /// Total duration under a hardware model (`None` when it gives no durations).
    duration: Option<f64>,
    /// The noise text as given, if any.
    noise: Option<String>,
    /// The model's warnings about this circuit.
    warnings: Vec<Diagnostic>,
    /// The size limits the circuit was loaded under; their memory budget also bounds the
    /// sampler.
    limits: Limits,
}

impl Pipeline {
    /// Parses, expands and checks `source` with parameter overrides and size limits. The
    /// pipeline has no noise beyond what the file writes until [`Pipeline::noised`].
    pub fn load(
        source: &Arc<Source>,
        overrides: &[(String, i64)],
        limits: &Limits,
    ) -> Result<Pipeline, Vec<Diagnostic>> {
        let mut p = Pipeline::from_circuit(crate::ir::load_source_with(source, overrides, limits)?);
        p.limits = limits.clone();
        Ok(p)
    }

    /// A pipeline for a circuit already loaded and checked (under the default limits).
    pub fn from_circuit(circuit: Circuit) -> Pipeline {
        Pipeline {
            noisy: circuit.clone(),
            circuit,
            notes: Vec::new(),
            duration: None,
            noise: None,
            warnings: Vec::new(),
            limits: Limits::default(),
        }
    }

    /// The same circuit with the noise of `text` written in: a preset such as `circuit p=0.001`
    /// or the path of a model file (see [`NoiseSpec::parse`]). `None` keeps only the noise the
    /// file writes. Any noise given before is replaced, not added to.
    pub fn noised(&self, text: Option<&str>) -> Result<Pipeline, Vec<Diagnostic>> {
        match text {
            None => Ok(Pipeline {
                limits: self.limits.clone(),
                ..Pipeline::from_circuit(self.circuit.clone())
            }),
            Some(text) => {
                let spec = NoiseSpec::parse(text).map_err(|d| vec![d])?;
                let mut out = self.noised_spec(&spec)?;
                out.noise = Some(text.to_string());
                Ok(out)
            }
        }
    }

    /// [`Pipeline::noised`] with a parsed specification.
    pub fn noised_spec(&self, spec: &NoiseSpec) -> Result<Pipeline, Vec<Diagnostic>> {
        let c = crate::noise::apply_noted(&self.circuit, spec)?;
        Ok(Pipeline {
            circuit: self.circuit.clone(),
            noisy: c.circuit,
            notes: c.notes,
            // Zero means no operation had a duration: the model (or preset) says nothing about
            // time.
            duration: (c.duration > 0.0).then_some(c.duration),
            noise: None,
            warnings: c.warnings,
            limits: self.limits.clone(),
        })
    }

    /// The circuit as loaded, without the `--noise` channels.
    pub fn circuit(&self) -> &Circuit {
        &self.circuit
    }

    /// The circuit with every channel explicit.
    pub fn noisy(&self) -> &Circuit {
        &self.noisy
    }

    /// What produced each inserted channel (empty without noise).
    pub fn notes(&self) -> &[Note] {
        &self.notes
    }

    /// Total duration under a hardware model; `None` when the model gives no durations (the
    /// presets never do).
    pub fn duration(&self) -> Option<f64> {
        self.duration
    }

    /// The noise text the pipeline was given, if any.
    pub fn noise(&self) -> Option<&str> {
        self.noise.as_deref()
    }

    /// The noise model's warnings about this circuit (e.g. an override for a role the circuit
    /// does not use), for the caller to show.
    pub fn warnings(&self) -> &[Diagnostic] {
        &self.warnings
    }

    /// The fault graph of the noisy circuit, hyperedges split for matching.
    pub fn graph(&self, opts: &ExtractOptions) -> FaultGraph {
        crate::faults::extract(&self.noisy, opts)
    }

    /// The matching graph a decoder reads, with what building it left out or merged.
    pub fn matching_graph(&self) -> (MatchingGraph, MatchingStats) {
        self.graph(&ExtractOptions::default()).matching_graph()
    }

    /// The Pauli-frame sampler of the noisy circuit, refused before anything is allocated when
    /// it would hold more than the memory budget ([`Limits::memory_bytes`]).
    pub fn sampler(&self) -> Result<Sampler, Diagnostic> {
        let need = crate::sim::sampler_bytes(&self.noisy);
        let budget = self.limits.memory_bytes();
        if need > budget {
            return Err(Diagnostic::bare(format!(
                "sampling this circuit needs about {} of memory ({} qubits: the reference run's \
                 tableau grows with their square), past the memory budget of {}",
                human_bytes(need),
                self.noisy.qubits.len(),
                human_bytes(budget),
            ))
            .with_hint(format!(
                "the budget is `--max-items` × {} bytes; raise it with `--max-items {}` if the \
                 machine has the memory",
                Limits::BYTES_PER_ITEM,
                need.div_ceil(Limits::BYTES_PER_ITEM)
            )));
        }
        Ok(Sampler::new(&self.noisy))
    }

    /// The sampler paired with a decoder of `kind` built from the matching graph, ready for
    /// Monte Carlo runs.
    pub fn experiment(&self, kind: DecoderKind) -> Result<Experiment, StudyError> {
        let sampler = self.sampler()?;
        let (matching, graph_stats) = self.matching_graph();
        let decoder = kind.build(&matching)?;
        Ok(Experiment {
            sampler,
            decoder,
            rounds: self.noisy.rounds.max(1),
            detectors: self.noisy.detectors.len(),
            observables: self.noisy.observables.len(),
            edges: matching.edges.len(),
            graph_stats,
        })
    }
}

/// `1.4 GB`, `25.9 GB`, `512 MB`: a byte count for a message.
fn human_bytes(b: u64) -> String {
    let b = b as f64;
    if b >= 1e9 {
        format!("{:.1} GB", b / 1e9)
    } else {
        format!("{:.0} MB", (b / 1e6).max(1.0))
    }
}

/// Why a study could not run.
#[derive(Debug)]
pub enum StudyError {
    /// The input was rejected, with located diagnostics.
    Rejected(Vec<Diagnostic>),
    /// The matching graph extracted from a checked circuit could not be decoded: a bug.
    Undecodable(BuildError),
}

impl From<Vec<Diagnostic>> for StudyError {
    fn from(d: Vec<Diagnostic>) -> StudyError {
        StudyError::Rejected(d)
    }
}

impl From<Diagnostic> for StudyError {
    fn from(d: Diagnostic) -> StudyError {
        StudyError::Rejected(vec![d])
    }
}

impl From<BuildError> for StudyError {
    fn from(e: BuildError) -> StudyError {
        StudyError::Undecodable(e)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A two-qubit repetition code, one round: both detectors and the observable are fixed
    /// without noise.
    const BELL: &str = "qubit a role data\nqubit b role data\nqubit c role ancilla\nround {\n    \
        cx a c\n    cx b c\n    measure z c -> m\n}\nmeasure z a -> ma\nmeasure z b -> mb\n\
        detector = m\ndetector = m ^ ma ^ mb\nobservable o = ma\n";

    fn bell() -> Pipeline {
        Pipeline::load(&Source::new("bell.slant", BELL), &[], &Limits::default()).unwrap()
    }

    #[test]
    fn noise_is_written_into_a_copy() {
        let p = bell();
        assert_eq!(p.noisy().op_count(), p.circuit().op_count());
        assert!(p.noise().is_none() && p.notes().is_empty() && p.warnings().is_empty());
        let n = p.noised(Some("circuit p=0.01")).unwrap();
        assert!(n.noisy().op_count() > n.circuit().op_count());
        assert_eq!(n.circuit().op_count(), p.circuit().op_count());
        assert_eq!(n.noise(), Some("circuit p=0.01"));
        assert!(!n.notes().is_empty());
        assert_eq!(n.duration(), None);
        // Re-noising replaces the noise rather than stacking it.
        let again = n.noised(Some("circuit p=0.01")).unwrap();
        assert_eq!(again.noisy().op_count(), n.noisy().op_count());
        let none = n.noised(None).unwrap();
        assert_eq!(none.noisy().op_count(), p.circuit().op_count());
    }

    #[test]
    fn bad_noise_is_rejected_with_its_location() {
        let d = bell().noised(Some("circiut p=0.1")).unwrap_err();
        assert!(
            d[0].message.contains("unknown noise preset"),
            "{}",
            d[0].message
        );
        assert_eq!(d[0].location().map(|l| l.0), Some("--noise".to_string()));
    }

    #[test]
    fn every_product_comes_from_the_noisy_circuit() {
        let n = bell().noised(Some("circuit p=0.01")).unwrap();
        let graph = n.graph(&ExtractOptions::default());
        assert!(!graph.edges.is_empty());
        let (matching, _) = n.matching_graph();
        assert_eq!(matching.num_detectors, 2);
        let exp = n.experiment(DecoderKind::Mwpm).unwrap();
        assert_eq!((exp.detectors, exp.observables, exp.rounds), (2, 1, 1));
        assert_eq!(exp.edges, matching.edges.len());
    }
}
