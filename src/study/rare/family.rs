//! The noise scales of a ladder: the edge priors of the fault graph at scale `s`, a multiple of
//! the target noise (`s = 1` is the noise asked for).
//!
//! - A preset (`circuit p=P`, `capacity`, `phenomenological`) is rebuilt at `p = s·P` (and
//!   `q = s·Q`), bias unchanged, and its fault graph extracted again: the priors are exact at
//!   every scale. The edges (their symptoms) must be the same at every scale, which holds
//!   whenever no term's probability is zero at one scale and not at another; it is checked.
//! - A model file (or a preset with a non-ideal `cx=`) is scaled edge by edge: `p_m(s) = s·p_m`.
//!   Every rate of the model multiplied by `s` gives this to first order in the rates.
//!
//! Noise the circuit file writes itself is scaled with the rest only when there is no
//! `--noise` (edge by edge); with a preset it stays as written at every scale.

use crate::faults::{ExtractOptions, FaultGraph};
use crate::noise::{NoiseSpec, Preset};
use crate::study::pipeline::{Pipeline, StudyError};

/// How priors change with the scale.
#[derive(Clone, Debug)]
enum Scaling {
    /// Rebuild the preset at the scaled rates.
    Preset(Preset),
    /// Multiply every edge prior of the target graph by the scale.
    Edges,
}

/// The fault graph at the target noise and the means to get its priors at any scale.
pub(super) struct Family {
    /// The pipeline without `--noise` (noise is written in per scale).
    base: Pipeline,
    scaling: Scaling,
    /// The fault graph at the target noise.
    pub graph: FaultGraph,
    /// Its priors.
    pub target: Vec<f64>,
}

impl Family {
    /// The family of `pipeline`'s noise (`pipeline.noise()` must be the noise text it was built
    /// with; without one, the noise the file writes is scaled edge by edge).
    pub fn new(pipeline: &Pipeline) -> Result<Family, StudyError> {
        let graph = pipeline.graph(&ExtractOptions::default());
        let target = graph.edges.iter().map(|e| e.probability).collect();
        let scaling = match pipeline.noise().map(NoiseSpec::parse).transpose()? {
            Some(NoiseSpec::Preset(p)) => Scaling::Preset(p),
            _ => Scaling::Edges,
        };
        Ok(Family {
            base: pipeline.noised(None)?,
            scaling,
            graph,
            target,
        })
    }

    /// The target preset's `p`, if the noise is a preset rebuilt per scale.
    pub fn preset_p(&self) -> Option<f64> {
        match &self.scaling {
            Scaling::Preset(p) => Some(p.p),
            Scaling::Edges => None,
        }
    }

    /// Whether scale `s` gives valid priors (every edge below 1/2, preset rates at most 1).
    pub fn valid(&self, s: f64) -> bool {
        let max = self.target.iter().copied().fold(0.0, f64::max);
        let preset_ok = match &self.scaling {
            Scaling::Preset(p) => p.p * s <= 1.0 && p.q.is_none_or(|q| q * s <= 1.0),
            Scaling::Edges => true,
        };
        preset_ok && max * s < 0.5
    }

    /// The edge priors at scale `s`.
    pub fn priors(&self, s: f64) -> Result<Vec<f64>, StudyError> {
        if s == 1.0 {
            return Ok(self.target.clone());
        }
        match &self.scaling {
            Scaling::Edges => Ok(self.target.iter().map(|&p| (p * s).min(0.5)).collect()),
            Scaling::Preset(preset) => {
                let scaled = Preset {
                    p: preset.p * s,
                    q: preset.q.map(|q| q * s),
                    ..preset.clone()
                };
                let text = scaled.text();
                let spec = NoiseSpec::parse(&text)?;
                let graph = self
                    .base
                    .noised_spec(&spec)?
                    .graph(&ExtractOptions::default());
                let same =
                    graph.edges.len() == self.graph.edges.len()
                        && graph.edges.iter().zip(&self.graph.edges).all(|(a, b)| {
                            a.detectors == b.detectors && a.observables == b.observables
                        });
                if !same {
                    return Err(crate::base::Diagnostic::bare(format!(
                        "the fault graph under `{text}` has other edges than at the target \
                         noise, so the ladder cannot connect the two"
                    ))
                    .into());
                }
                Ok(graph.edges.iter().map(|e| e.probability).collect())
            }
        }
    }
}
