//! The expanded circuit: the contract between the language front end and every back end.
//!
//! In: an [`crate::lang::Ast`] plus parameter overrides (see [`expand`]). Out: a [`Circuit`] with
//! loops unrolled and parameters substituted. Invariants a back end may rely on once
//! [`check()`] has passed:
//!
//! - qubits are numbered `0..qubits.len()`; every target index is in range;
//! - within one [`Layer`], gates, resets and measurements touch disjoint qubits; noise
//!   operations in a layer act at their textual position relative to the other operations;
//! - measurement results are numbered in execution order (`0..records.len()`), and each
//!   [`OpKind::Measure`] writes exactly one record;
//! - detectors and observables refer only to records that exist, and are deterministic in the
//!   noiseless circuit.
//!
//! Every qubit, operation, record, detector and observable keeps the [`Span`] it came from, so
//! later stages can report `file:line:column`.

mod check;
mod expand;
mod load;
mod sensitivity;

pub use check::check;
pub use expand::{cost, expand, Limits};
pub use load::{load_source, load_source_with};
pub use sensitivity::{record_symptoms, sensitivity_sweep, Sensitivity, SweepPoint, SymSet};

use std::sync::Arc;

use crate::base::{Basis, ChannelKind, Gate, Pauli, Source, Span};

/// A qubit with its name, optional coordinates and roles.
#[derive(Clone, Debug, PartialEq)]
pub struct Qubit {
    /// Display name, e.g. `d[2,3]`.
    pub name: String,
    /// Optional coordinates (usually two).
    pub coords: Vec<f64>,
    /// Roles and tags such as `data`, `ancilla` or user tags, in declaration order.
    pub roles: Vec<String>,
    /// Where it was declared.
    pub span: Span,
}

impl Qubit {
    /// Whether the qubit carries a role or tag.
    pub fn has_role(&self, role: &str) -> bool {
        self.roles.iter().any(|r| r == role)
    }
}

/// A noise channel as written in the language. Terms of one channel are mutually exclusive.
#[derive(Clone, Debug, PartialEq)]
pub enum Channel {
    /// X with probability `p` on each target.
    BitFlip(f64),
    /// Z with probability `p` on each target.
    Dephasing(f64),
    /// Each of X, Y, Z with probability `p/3` on each target.
    Depolarizing(f64),
    /// One Pauli product fault with probability `p`; factor `k` acts on target `k` of the op.
    Joint {
        /// Probability that the product fires.
        p: f64,
        /// The factors, one per target qubit.
        paulis: Vec<Pauli>,
    },
    /// Each of the 15 non-identity two-qubit Paulis with probability `p/15` on each pair.
    PairDepolarizing(f64),
    /// A two-qubit Pauli channel on each pair; index `4*a + b - 1` for the Pauli pair `(a, b)`
    /// with `I=0, X=1, Y=2, Z=3` (so `IX` is 0 and `ZZ` is 14).
    PairPauli(Box<[f64; 15]>),
    /// A single-qubit Pauli channel on each target.
    Pauli {
        /// Probability of X.
        px: f64,
        /// Probability of Y.
        py: f64,
        /// Probability of Z.
        pz: f64,
    },
}

impl Channel {
    /// Number of qubits one application acts on (a joint fault counts as one application
    /// over its own product).
    pub fn arity(&self) -> usize {
        match self {
            Channel::PairDepolarizing(_) | Channel::PairPauli(_) => 2,
            Channel::Joint { paulis, .. } => paulis.len(),
            _ => 1,
        }
    }

    /// The mutually exclusive terms of one application: `(probability, Paulis on the
    /// application's qubits in order)`. Zero-probability terms are skipped.
    pub fn terms(&self) -> Vec<(f64, Vec<Pauli>)> {
        let mut out = Vec::new();
        let mut push = |p: f64, ps: Vec<Pauli>| {
            if p > 0.0 {
                out.push((p, ps));
            }
        };
        match self {
            Channel::BitFlip(p) => push(*p, vec![Pauli::X]),
            Channel::Dephasing(p) => push(*p, vec![Pauli::Z]),
            Channel::Depolarizing(p) => {
                for q in [Pauli::X, Pauli::Y, Pauli::Z] {
                    push(p / 3.0, vec![q]);
                }
            }
            Channel::Pauli { px, py, pz } => {
                push(*px, vec![Pauli::X]);
                push(*py, vec![Pauli::Y]);
                push(*pz, vec![Pauli::Z]);
            }
            Channel::PairDepolarizing(p) => {
                for k in 1..16 {
                    push(p / 15.0, Pauli::pair_from_index(k));
                }
            }
            Channel::PairPauli(probs) => {
                for (k, &p) in probs.iter().enumerate() {
                    push(p, Pauli::pair_from_index(k + 1));
                }
            }
            Channel::Joint { p, paulis } => push(*p, paulis.clone()),
        }
        out
    }

    /// Sum of the term probabilities of one application.
    pub fn total(&self) -> f64 {
        self.terms().iter().map(|t| t.0).sum()
    }

    /// The kind of the channel.
    pub fn kind(&self) -> ChannelKind {
        match self {
            Channel::BitFlip(_) => ChannelKind::BitFlip,
            Channel::Joint { .. } => ChannelKind::Joint,
            Channel::Dephasing(_) => ChannelKind::Dephasing,
            Channel::Depolarizing(_) => ChannelKind::Depolarizing,
            Channel::PairDepolarizing(_) => ChannelKind::PairDepolarizing,
            Channel::Pauli { .. } => ChannelKind::Pauli,
            Channel::PairPauli(_) => ChannelKind::PairPauli,
        }
    }

    /// The language keyword of the channel.
    pub fn keyword(&self) -> &'static str {
        self.kind().name()
    }
}

/// What an operation does.
#[derive(Clone, Debug, PartialEq)]
pub enum OpKind {
    /// A Clifford gate on each target (pairs, in order, for two-qubit gates).
    Gate(Gate),
    /// Projective measurement of a Pauli product writing one record; `flip` is the classical
    /// probability that the reported result is wrong.
    Measure {
        /// The record written.
        record: u32,
        /// Probability of reporting the wrong result.
        flip: f64,
    },
    /// A noise channel applied to each target (pairs for two-qubit channels; the qubits of the
    /// product for a joint fault).
    Noise(Channel),
    /// Reset of each target to the +1 eigenstate of the basis.
    Reset(Basis),
}

/// One operation of a layer.
#[derive(Clone, Debug, PartialEq)]
pub struct Op {
    /// What it does.
    pub kind: OpKind,
    /// Qubits it acts on. For [`OpKind::Measure`], the qubits of the product; the Pauli of each
    /// factor is in [`Op::paulis`].
    pub targets: Vec<u32>,
    /// For [`OpKind::Measure`]: the Pauli measured on each target. Empty otherwise.
    pub paulis: Vec<Pauli>,
    /// The statement it came from.
    pub span: Span,
}

/// A time step: operations that happen together.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Layer {
    /// Operations in textual order.
    pub ops: Vec<Op>,
    /// The syndrome-extraction round the layer belongs to, if it sits inside a `round` block.
    pub round: Option<u32>,
    /// The `layer` block (or lone statement) it came from.
    pub span: Span,
}

/// A named measurement result.
#[derive(Clone, Debug, PartialEq)]
pub struct Record {
    /// Display name, e.g. `m[2,0]`.
    pub name: String,
    /// Layer that produced it.
    pub layer: u32,
    /// The measurement statement.
    pub span: Span,
}

/// A parity of records that is deterministic without noise.
#[derive(Clone, Debug, PartialEq)]
pub struct Detector {
    /// Display name (generated as `detector#K` when the source gives none).
    pub name: String,
    /// Space-time coordinates, usually `(x, y, round)`.
    pub coords: Vec<f64>,
    /// Records whose XOR is the detector, sorted, without repeats.
    pub records: Vec<u32>,
    /// The statement.
    pub span: Span,
}

/// A parity of records that reveals a logical flip.
#[derive(Clone, Debug, PartialEq)]
pub struct Observable {
    /// Name, e.g. `logical`.
    pub name: String,
    /// Records whose XOR is the observable, sorted, without repeats.
    pub records: Vec<u32>,
    /// The declaring statement.
    pub span: Span,
}

/// The expanded circuit.
#[derive(Clone, Debug)]
pub struct Circuit {
    /// The text the circuit came from, for diagnostics.
    pub source: Arc<Source>,
    /// Parameters after overrides, in declaration order.
    pub params: Vec<(String, i64)>,
    /// Qubits by index.
    pub qubits: Vec<Qubit>,
    /// Time layers in order.
    pub layers: Vec<Layer>,
    /// Measurement results by index.
    pub records: Vec<Record>,
    /// Detectors by index.
    pub detectors: Vec<Detector>,
    /// Observables by index.
    pub observables: Vec<Observable>,
    /// Number of `round` blocks executed.
    pub rounds: u32,
    /// Items of the size budget the expansion spent (see [`cost`]): how close the circuit
    /// comes to [`Limits::max_items`].
    pub items: u64,
}

impl Circuit {
    /// The result name → record index table (names as in [`Record::name`], e.g. `m[2,0]`).
    pub fn record_table(&self) -> std::collections::HashMap<&str, u32> {
        self.records
            .iter()
            .enumerate()
            .map(|(i, r)| (r.name.as_str(), i as u32))
            .collect()
    }

    /// Total number of operations.
    pub fn op_count(&self) -> usize {
        self.layers.iter().map(|l| l.ops.len()).sum()
    }

    /// Iterates over all operations with their layer index.
    pub fn ops(&self) -> impl Iterator<Item = (usize, &Op)> {
        self.layers
            .iter()
            .enumerate()
            .flat_map(|(i, l)| l.ops.iter().map(move |op| (i, op)))
    }

    /// Index of a qubit by name.
    pub fn qubit_index(&self, name: &str) -> Option<u32> {
        self.qubits
            .iter()
            .position(|q| q.name == name)
            .map(|i| i as u32)
    }
}
