//! Sources of an error budget: the elementary faults of every fault-graph edge, grouped by the
//! model section that wrote them, their class and, on request, the qubits or roles they act on.
//!
//! In: a [`FaultGraph`] (each edge lists its contributors), the noisy circuit and the noise
//! compiler's [`Note`]s (which section wrote each channel and how much flip probability the
//! model added to each measurement). Out: [`Sources`]: the list of sources and, per edge, its
//! *parts* — independent faults with a probability and the sources they belong to — so that an
//! edge's prior under any scaling of the sources recombines from its parts with
//! [`xor_prob`].
//!
//! A measurement flip is one contributor in the graph (the circuit's own flip `f` and the
//! model's `q` already combined as `f ⊕ q`); it is split back into two parts, the circuit's
//! `(r − q)/(1 − 2q)` (`r` the combined flip) and the model's `q`, which are independent by
//! construction. Noise the circuit file writes itself belongs to the section `circuit`.

use std::collections::HashMap;
use std::ops::Range;

use crate::base::xor_prob;
use crate::faults::{FaultClass, FaultGraph, Small};
use crate::ir::{Channel, Circuit};
use crate::noise::Note;

/// Which properties of a fault make its source (any combination; default section and class).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Grouping {
    /// The model section that wrote it (`gates.cx`, `idle`, `override.0.measure`, ...).
    pub section: bool,
    /// Its class, high-rate or low-rate.
    pub class: bool,
    /// Each qubit it acts on (a fault on two qubits belongs to both sources).
    pub qubit: bool,
    /// Each role of the qubits it acts on (`no role` for qubits without one).
    pub role: bool,
}

impl Default for Grouping {
    fn default() -> Grouping {
        Grouping {
            section: true,
            class: true,
            qubit: false,
            role: false,
        }
    }
}

impl Grouping {
    /// The words `--by` takes.
    pub const WORDS: [&'static str; 4] = ["section", "class", "qubit", "role"];

    /// Parses a comma-separated list of [`Grouping::WORDS`].
    pub fn parse(text: &str) -> Result<Grouping, String> {
        let mut g = Grouping {
            section: false,
            class: false,
            qubit: false,
            role: false,
        };
        for w in text.split(',').map(str::trim).filter(|w| !w.is_empty()) {
            match w {
                "section" => g.section = true,
                "class" => g.class = true,
                "qubit" => g.qubit = true,
                "role" => g.role = true,
                _ => {
                    return Err(format!(
                        "unknown grouping `{w}` (expected a comma-separated list of {})",
                        Grouping::WORDS.map(|w| format!("`{w}`")).join(", ")
                    ))
                }
            }
        }
        if !(g.section || g.class || g.qubit || g.role) {
            return Err("`--by` needs at least one of `section`, `class`, `qubit`, `role`".into());
        }
        Ok(g)
    }

    /// Whether a fault can belong to several sources (grouping by qubit or role).
    pub fn overlapping(&self) -> bool {
        self.qubit || self.role
    }

    /// The words of this grouping, comma-separated.
    pub fn text(&self) -> String {
        let on = [self.section, self.class, self.qubit, self.role];
        Grouping::WORDS
            .iter()
            .zip(on)
            .filter(|(_, b)| *b)
            .map(|(w, _)| *w)
            .collect::<Vec<_>>()
            .join(",")
    }
}

/// One source: the faults sharing a section, class and place (as the grouping asks).
#[derive(Clone, Debug, PartialEq)]
pub struct Source {
    /// The model section, when grouping by section.
    pub section: Option<String>,
    /// The class, when grouping by class.
    pub class: Option<FaultClass>,
    /// The qubit name (grouping by qubit).
    pub qubit: Option<String>,
    /// The role (grouping by role).
    pub role: Option<String>,
    /// Elementary faults (parts) of the fault graph in it.
    pub faults: usize,
    /// Their summed probability: the expected number of its faults per shot.
    pub expected: f64,
    /// Edges with at least one of its faults.
    pub edges: usize,
}

impl Source {
    /// A short machine key: the present dimensions joined by `/`, e.g. `idle/high`.
    pub fn key(&self) -> String {
        let mut parts: Vec<String> = Vec::new();
        if let Some(s) = &self.section {
            parts.push(s.clone());
        }
        if let Some(c) = self.class {
            parts.push(c.name().to_string());
        }
        if let Some(q) = &self.qubit {
            parts.push(q.clone());
        }
        if let Some(r) = &self.role {
            parts.push(format!("role {r}"));
        }
        parts.join("/")
    }
}

/// One independent fault of an edge and the sources it belongs to.
#[derive(Clone, Debug, PartialEq)]
pub struct Part {
    /// Probability of the independent fault.
    pub probability: f64,
    /// Indices into [`Sources::list`].
    pub sources: Small<u32>,
}

/// The sources of a fault graph and the parts of each of its edges.
#[derive(Clone, Debug)]
pub struct Sources {
    /// The sources, in order of first appearance.
    pub list: Vec<Source>,
    /// Parts of every edge, grouped by edge.
    pub parts: Vec<Part>,
    /// Range of [`Sources::parts`] of each edge.
    pub edge_parts: Vec<Range<u32>>,
    /// Whether a part can belong to several sources.
    pub overlapping: bool,
}

/// What identifies a source: section, class, qubit, role (each present when grouped by).
type SourceKey = (
    Option<String>,
    Option<FaultClass>,
    Option<String>,
    Option<String>,
);

/// The section of noise the circuit file writes itself.
pub const CIRCUIT_SECTION: &str = "circuit";

impl Sources {
    /// Groups the faults of `graph` (extracted from `noisy`, whose inserted channels `notes`
    /// describe) as `by` says.
    pub fn group(graph: &FaultGraph, noisy: &Circuit, notes: &[Note], by: &Grouping) -> Sources {
        let note_at: HashMap<(u32, u32), &Note> = notes
            .iter()
            .map(|n| ((n.layer as u32, n.op as u32), n))
            .collect();
        let mut index: HashMap<SourceKey, u32> = HashMap::new();
        let mut list: Vec<Source> = Vec::new();
        let mut parts = Vec::with_capacity(graph.provenance.len());
        let mut edge_parts = Vec::with_capacity(graph.edges.len());
        let mut places: Vec<(Option<String>, Option<String>)> = Vec::new();
        for k in 0..graph.edges.len() {
            let start = parts.len() as u32;
            for c in graph.contributors(k) {
                let note = note_at.get(&(c.layer, c.op)).copied();
                // (probability, section) of each independent piece of this contributor.
                let mut pieces: Small<(f64, String)> = Small::new();
                match (c.result, note) {
                    (Some(_), Some(n)) if n.class == "measure" => {
                        let q = match n.input {
                            Channel::BitFlip(q) => q,
                            _ => 0.0,
                        };
                        let own = if q < 0.5 {
                            ((c.probability - q) / (1.0 - 2.0 * q)).max(0.0)
                        } else {
                            0.0
                        };
                        if own > 1e-15 {
                            pieces.push((own, CIRCUIT_SECTION.to_string()));
                        }
                        pieces.push((q, n.section.clone()));
                    }
                    (None, Some(n)) => pieces.push((c.probability, n.section.clone())),
                    _ => pieces.push((c.probability, CIRCUIT_SECTION.to_string())),
                }
                places.clear();
                if by.qubit || by.role {
                    for &q in c.qubits.iter() {
                        let qubit = &noisy.qubits[q as usize];
                        let name = by.qubit.then(|| qubit.name.clone());
                        if by.role {
                            if qubit.roles.is_empty() {
                                places.push((name.clone(), Some("no role".into())));
                            }
                            for r in &qubit.roles {
                                places.push((name.clone(), Some(r.clone())));
                            }
                        } else {
                            places.push((name, None));
                        }
                    }
                    places.sort();
                    places.dedup();
                } else {
                    places.push((None, None));
                }
                for (p, section) in pieces {
                    let mut sources = Small::new();
                    for (qubit, role) in &places {
                        let key = (
                            by.section.then(|| section.clone()),
                            by.class.then_some(c.class),
                            qubit.clone(),
                            role.clone(),
                        );
                        let id = *index.entry(key.clone()).or_insert_with(|| {
                            list.push(Source {
                                section: key.0,
                                class: key.1,
                                qubit: key.2,
                                role: key.3,
                                faults: 0,
                                expected: 0.0,
                                edges: 0,
                            });
                            list.len() as u32 - 1
                        });
                        let s = &mut list[id as usize];
                        s.faults += 1;
                        s.expected += p;
                        if !sources.contains(&id) {
                            sources.push(id);
                        }
                    }
                    parts.push(Part {
                        probability: p,
                        sources,
                    });
                }
            }
            let end = parts.len() as u32;
            let mut seen: Vec<u32> = parts[start as usize..end as usize]
                .iter()
                .flat_map(|p| p.sources.iter().copied())
                .collect();
            seen.sort_unstable();
            seen.dedup();
            for s in seen {
                list[s as usize].edges += 1;
            }
            edge_parts.push(start..end);
        }
        Sources {
            list,
            parts,
            edge_parts,
            overlapping: by.overlapping(),
        }
    }

    /// The parts of edge `k`.
    pub fn parts_of(&self, k: usize) -> &[Part] {
        let r = &self.edge_parts[k];
        &self.parts[r.start as usize..r.end as usize]
    }

    /// The prior of edge `k` with every part of source `s` scaled by `scale` (`None`: every
    /// part scaled), recombined with `⊕`.
    pub fn scaled_prior(&self, k: usize, s: Option<u32>, scale: f64) -> f64 {
        self.parts_of(k).iter().fold(0.0, |acc, p| {
            let hit = s.is_none_or(|s| p.sources.contains(&s));
            xor_prob(
                acc,
                if hit {
                    scale * p.probability
                } else {
                    p.probability
                },
            )
        })
    }

    /// `dp_k/ds` at `s = 1` for source `s` (`None`: every part): from `1 − 2p = Π(1 − 2q_i)`,
    /// `dp/ds = Σ_{i∈S} q_i·Π_{j≠i}(1 − 2q_j)`.
    pub fn prior_derivative(&self, k: usize, s: Option<u32>) -> f64 {
        let parts = self.parts_of(k);
        let mut total = 0.0;
        for (i, p) in parts.iter().enumerate() {
            if !s.is_none_or(|s| p.sources.contains(&s)) {
                continue;
            }
            let others: f64 = parts
                .iter()
                .enumerate()
                .filter(|(j, _)| *j != i)
                .map(|(_, q)| 1.0 - 2.0 * q.probability)
                .product();
            total += p.probability * others;
        }
        total
    }

    /// Edges with a part of source `s`.
    pub fn edges_of(&self, s: u32) -> impl Iterator<Item = usize> + '_ {
        (0..self.edge_parts.len())
            .filter(move |&k| self.parts_of(k).iter().any(|p| p.sources.contains(&s)))
    }
}
