//! What a picture shows, before any pixel: qubits at their places, checks with their supports
//! and gate steps, the layers of a round, and the overlays (faults of a logical error or of one
//! fault-graph edge, the detection events of one shot with the decoder's matching).
//!
//! Everything here is plain data in circuit coordinates; `paint.rs` turns it into shapes and
//! the tests read it directly.

use crate::base::{Basis, Gate, Pauli};
use crate::faults::FaultClass;

/// A point in circuit coordinates `(x, y)`; `y` grows downwards on the page, as the generators'
/// `nw`/`se` names assume.
pub type Point = (f64, f64);

/// What a qubit is for, read from its roles (`data`, `ancilla`, `flag`; anything else is
/// [`Role::Other`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Role {
    /// Holds the code's information.
    Data,
    /// Measured to read a check.
    Ancilla,
    /// Catches faults spreading from an ancilla.
    Flag,
    /// No known role.
    Other,
}

impl Role {
    /// The role of a qubit with these roles; `data` wins over `ancilla` over `flag`.
    pub fn of(roles: &[String]) -> Role {
        let has = |r: &str| roles.iter().any(|x| x == r);
        if has("data") {
            Role::Data
        } else if has("ancilla") {
            Role::Ancilla
        } else if has("flag") {
            Role::Flag
        } else {
            Role::Other
        }
    }

    /// Lower-case name, also the SVG class.
    pub fn name(self) -> &'static str {
        match self {
            Role::Data => "data",
            Role::Ancilla => "ancilla",
            Role::Flag => "flag",
            Role::Other => "other",
        }
    }
}

/// One qubit as drawn.
#[derive(Clone, Debug, PartialEq)]
pub struct QubitMark {
    /// Index in the circuit.
    pub index: u32,
    /// Name, e.g. `d[1,2]`.
    pub name: String,
    /// Where it is drawn.
    pub at: Point,
    /// Its role.
    pub role: Role,
}

/// The Pauli type of a check.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum CheckKind {
    /// X on every qubit of the support.
    X,
    /// Y on every qubit of the support.
    Y,
    /// Z on every qubit of the support.
    Z,
    /// Different Paulis on different qubits (as in the XZZX code).
    Mixed,
}

impl CheckKind {
    /// The kind of a check measuring these Paulis (identity factors ignored).
    pub fn of(paulis: impl IntoIterator<Item = Pauli>) -> CheckKind {
        let mut seen: Option<Pauli> = None;
        for p in paulis.into_iter().filter(|&p| p != Pauli::I) {
            match seen {
                None => seen = Some(p),
                Some(q) if q != p => return CheckKind::Mixed,
                Some(_) => {}
            }
        }
        match seen {
            Some(Pauli::X) => CheckKind::X,
            Some(Pauli::Y) => CheckKind::Y,
            Some(Pauli::Z) | None | Some(Pauli::I) => CheckKind::Z,
        }
    }

    /// Legend text, e.g. `X-type check`.
    pub fn name(self) -> &'static str {
        match self {
            CheckKind::X => "X-type check",
            CheckKind::Y => "Y-type check",
            CheckKind::Z => "Z-type check",
            CheckKind::Mixed => "mixed check",
        }
    }

    /// The SVG class suffix: `x`, `y`, `z` or `mixed`.
    pub fn class(self) -> &'static str {
        match self {
            CheckKind::X => "x",
            CheckKind::Y => "y",
            CheckKind::Z => "z",
            CheckKind::Mixed => "mixed",
        }
    }
}

/// A qubit of a check's support with the Pauli the check measures on it.
#[derive(Clone, Debug, PartialEq)]
pub struct SupportQubit {
    /// The qubit.
    pub qubit: u32,
    /// The Pauli measured on it.
    pub pauli: Pauli,
    /// Where the check reaches it: the qubit's own place, or its image across a periodic
    /// boundary when the check wraps around (see `place.rs`).
    pub at: Point,
}

/// One two-qubit gate between a check's ancilla and another qubit.
#[derive(Clone, Debug, PartialEq)]
pub struct Coupling {
    /// The other qubit.
    pub qubit: u32,
    /// The gate.
    pub gate: Gate,
    /// Whether the ancilla is the gate's first target (the control of a `cx`).
    pub ancilla_first: bool,
    /// Step of the round (1-based; see [`Timeline`]).
    pub step: u32,
    /// Layer of the circuit, in the first round of the structure.
    pub layer: u32,
}

/// A check of one round: an ancilla coupled to its support and measured, or one product
/// measurement.
#[derive(Clone, Debug, PartialEq)]
pub struct Check {
    /// The ancilla's name, or the result name of a product measurement.
    pub name: String,
    /// The measured ancilla; `None` for a product measurement.
    pub ancilla: Option<u32>,
    /// Where the check is drawn: its ancilla, else the coordinates of a detector reading it,
    /// else the centre of its support.
    pub at: Point,
    /// Its Pauli type.
    pub kind: CheckKind,
    /// The qubits it measures, by qubit index.
    pub support: Vec<SupportQubit>,
    /// The ancilla's gates in time order (empty for a product measurement).
    pub couplings: Vec<Coupling>,
    /// The step of a product measurement (`None` for an ancilla check).
    pub step: Option<u32>,
}

/// The checks of a set of rounds that share them (same ancillas, supports and gate steps).
#[derive(Clone, Debug, PartialEq)]
pub struct Structure {
    /// The rounds (empty: the circuit has no `round` blocks and this is the whole circuit).
    pub rounds: Vec<u32>,
    /// Its checks, in the order their measurements appear.
    pub checks: Vec<Check>,
    /// Number of steps of one round.
    pub steps: u32,
}

impl Structure {
    /// Panel title: `rounds 0–4`, `round 2`, `rounds 0, 2, 4` or `whole circuit`.
    pub fn title(&self) -> String {
        let r = &self.rounds;
        match r.len() {
            0 => "whole circuit".into(),
            1 => format!("round {}", r[0]),
            _ if r.windows(2).all(|w| w[1] == w[0] + 1) => {
                format!("rounds {}\u{2013}{}", r[0], r[r.len() - 1])
            }
            _ => format!(
                "rounds {}",
                r.iter().map(u32::to_string).collect::<Vec<_>>().join(", ")
            ),
        }
    }
}

/// How the qubits got their places.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Placement {
    /// From the coordinates the circuit gives.
    Coordinates,
    /// No qubit has coordinates: data in one row, ancillas in the row below, flags and other
    /// qubits below that, each row in declaration order.
    Rows,
}

/// The patch: qubits, checks per distinct round structure, and the lattice facts the painter
/// needs.
#[derive(Clone, Debug, PartialEq)]
pub struct Layout {
    /// The circuit's file name.
    pub source: String,
    /// Every qubit, by index.
    pub qubits: Vec<QubitMark>,
    /// How the places were found.
    pub placement: Placement,
    /// One entry per distinct round structure, in order of first round.
    pub structures: Vec<Structure>,
    /// Median distance from a qubit to its nearest neighbour: the unit of mark sizes.
    pub spacing: f64,
    /// The outline of the data qubits (their convex hull, counter-clockwise); empty with fewer
    /// than three data qubits off one line.
    pub outline: Vec<Point>,
}

/// What a layer of the circuit is, for time labels.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum LayerKind {
    /// Holds a two-qubit gate or a product measurement: step `k` of its round (1-based).
    Step(u32),
    /// Holds measurements (one qubit each), no entangling operation.
    Measure,
    /// Holds resets only (besides noise and one-qubit gates).
    Reset,
    /// Holds one-qubit gates only.
    Gates,
    /// Holds noise only (a hardware model's or preset's own layer).
    Noise,
}

/// Where a layer sits in time.
#[derive(Clone, Debug, PartialEq)]
pub struct LayerTime {
    /// Its round, if inside one.
    pub round: Option<u32>,
    /// What it holds.
    pub kind: LayerKind,
    /// Short label, e.g. `r1 s2`, `r0 reset`, `start`, `end`.
    pub short: String,
    /// Long label, e.g. `round 1, step 2`.
    pub long: String,
}

/// Every layer of the circuit with its time labels.
#[derive(Clone, Debug, PartialEq)]
pub struct Timeline {
    /// By layer index.
    pub layers: Vec<LayerTime>,
}

/// One operation of a layer, as the time view draws it.
#[derive(Clone, Debug, PartialEq)]
pub enum LayerOp {
    /// A one-qubit gate.
    Gate1 {
        /// The gate.
        gate: Gate,
        /// Its qubit.
        qubit: u32,
    },
    /// A two-qubit gate.
    Gate2 {
        /// The gate.
        gate: Gate,
        /// First target (a `cx` control).
        a: u32,
        /// Second target.
        b: u32,
    },
    /// A reset.
    Reset {
        /// Its basis.
        basis: Basis,
        /// Its qubit.
        qubit: u32,
    },
    /// A measurement of one Pauli product.
    Measure {
        /// The measured qubits with their Paulis.
        factors: Vec<(u32, Pauli)>,
    },
}

/// One panel of the time view: a layer and what acts in it.
#[derive(Clone, Debug, PartialEq)]
pub struct LayerPanel {
    /// Layer index in the circuit.
    pub layer: u32,
    /// Long label, e.g. `round 0, step 2`.
    pub label: String,
    /// The operations, noise left out.
    pub ops: Vec<LayerOp>,
}

/// Where one circuit fault sits and what it does.
#[derive(Clone, Debug, PartialEq)]
pub struct FaultMark {
    /// Number in the logical error (1-based), or 0 for a circuit fault of an edge overlay.
    pub number: usize,
    /// Index of its fault-graph edge.
    pub edge: u32,
    /// High or low rate.
    pub class: FaultClass,
    /// Pauli term on [`FaultMark::qubits`] (e.g. `YZ`), or `flip` for a measurement flip.
    pub term: String,
    /// Qubits it acts on (a flip: the measured qubits).
    pub qubits: Vec<u32>,
    /// Where the mark goes: one point per qubit, or the check's place for the flip of a product
    /// measurement.
    pub at: Vec<Point>,
    /// Whether it is a two-qubit fault of a gate (drawn along the gate).
    pub on_gate: bool,
    /// Layer of the circuit.
    pub layer: u32,
    /// The [`Structure`] (panel) it is drawn on: the one holding its round, else the first
    /// (before the rounds) or the last (after them).
    pub structure: usize,
    /// Short time label, e.g. `r1 s2`.
    pub when: String,
    /// Long time label, e.g. `round 1, step 2`.
    pub when_long: String,
    /// The data-qubit Paulis the fault has become by the end of its round, when gates spread it
    /// beyond its own data qubits (a hook); empty otherwise.
    pub spread: Vec<(u32, Pauli)>,
    /// `file:line:col` of the operation.
    pub location: String,
    /// The operation's text.
    pub op: String,
    /// Probability of the independent fault.
    pub probability: f64,
    /// How many other circuit faults give the same edge.
    pub others: usize,
}

/// A detector as drawn.
#[derive(Clone, Debug, PartialEq)]
pub struct DetectorMark {
    /// Index.
    pub index: u32,
    /// Name.
    pub name: String,
    /// Place in the plane.
    pub at: Point,
    /// Time coordinate (its third coordinate, else its round).
    pub time: f64,
}

/// Faults placed on the patch: a logical error's, or one edge's.
#[derive(Clone, Debug, PartialEq)]
pub struct FaultOverlay {
    /// What is shown, e.g. `shortest logical error: 2 edges, flips logical`.
    pub title: String,
    /// The faults.
    pub marks: Vec<FaultMark>,
    /// Detectors to mark (an edge's symptom; empty for a logical error, whose symptom is empty).
    pub detectors: Vec<DetectorMark>,
}

/// One sampled shot and the decoder's matching.
#[derive(Clone, Debug, PartialEq)]
pub struct ShotOverlay {
    /// The seed (the first shot `slant shots --seed SEED` gives).
    pub seed: u64,
    /// The detection events.
    pub events: Vec<DetectorMark>,
    /// Matched pairs of events (detector indices); `None`: matched to the boundary.
    pub pairs: Vec<(u32, Option<u32>)>,
    /// For each event matched to the boundary, where the boundary is drawn: past the data
    /// qubits of the last edge of its lightest path to the boundary (`None`: not found; the
    /// picture then points to the nearest side of the patch).
    pub boundary: Vec<(u32, Option<Point>)>,
    /// Observables the decoder predicts flipped.
    pub predicted: Vec<String>,
    /// Observables the shot really flipped.
    pub flipped: Vec<String>,
    /// Distinct time coordinates of the events, ascending: one panel each.
    pub slices: Vec<f64>,
}

/// What the picture shows besides the patch.
#[derive(Clone, Debug, PartialEq)]
pub enum View {
    /// The patch with its checks and gate steps, and optionally faults on it.
    Patch(Option<FaultOverlay>),
    /// One panel per layer of one round.
    Layers {
        /// Title, e.g. `layers of round 0`.
        title: String,
        /// The round shown (`None`: the circuit has no rounds).
        round: Option<u32>,
        /// The panels.
        panels: Vec<LayerPanel>,
    },
    /// One sampled shot, one panel per time slice.
    Shot(ShotOverlay),
}

/// The whole drawing model.
#[derive(Clone, Debug, PartialEq)]
pub struct Drawing {
    /// The patch.
    pub layout: Layout,
    /// What is shown on it.
    pub view: View,
    /// Notes for the reader (e.g. how qubits were placed), shown under the title.
    pub notes: Vec<String>,
}
