//! The backward sensitivity sweep: which detectors and observables a Pauli at a given point of the
//! circuit would flip.
//!
//! Walking the circuit from the end to the start, we keep for every qubit the set of *symptoms*
//! (detector ids `0..D`, then observable ids `D..D+O`) that an X and a Z at the current point would
//! flip. Past a gate, the sets follow the gate's Heisenberg images ([`Gate::heisenberg`]); past a
//! measurement of `P`, every Pauli that anticommutes with `P` also flips that record's symptoms;
//! past a reset, the qubit forgets everything (errors before a reset do nothing).
//!
//! One sweep serves two clients: the determinism check (a detector is deterministic iff no
//! *gauge* Pauli flips it: the measured Pauli right after a measurement, the reset basis right
//! after a reset, Z on every qubit at the start) and the fault-graph extractor (a fault's
//! symptom is the XOR of the sensitivities of its Pauli terms). Each costs one pass over the
//! circuit, never one simulation per fault.
//!
//! Sets are sorted `Vec<u32>`: in codes with local checks each set holds a handful of ids, so
//! merging two short sorted vectors beats bitsets of width D+O. `bench/sensitivity.sh` runs both
//! on surface code memories (d rounds, circuit-level noise, symptoms of every X/Y/Z location):
//! equal at d = 5, bitsets 1.3× slower at d = 9, 3.5× at d = 15 and 11× at d = 25.

use crate::base::{xor_into, xor_sets, Gate, Pauli};
use crate::ir::{Circuit, Op, OpKind};

/// A sorted set of symptom ids.
pub type SymSet = Vec<u32>;

/// `acc ^= b`, with `tmp` as the second buffer (swapped with `acc`).
fn xor_assign(acc: &mut Vec<u32>, b: &[u32], tmp: &mut Vec<u32>) {
    if b.is_empty() {
        return;
    }
    xor_into(acc, b, tmp);
    std::mem::swap(acc, tmp);
}

/// Where the sweep is when it calls the visitor.
#[derive(Clone, Copy, Debug)]
pub enum SweepPoint<'c> {
    /// Just after `op` (layer `layer`, position `index` in it), before the sweep undoes it.
    After {
        /// Layer index.
        layer: usize,
        /// Position in the layer.
        index: usize,
        /// The operation.
        op: &'c Op,
    },
    /// The start of the circuit, where every qubit is in |0>.
    Start,
}

/// Per-qubit X and Z sensitivities at the sweep's current point.
#[derive(Clone, Debug)]
pub struct Sensitivity {
    /// `x[q]`: symptoms an X on qubit q would flip.
    pub x: Vec<SymSet>,
    /// `z[q]`: symptoms a Z on qubit q would flip.
    pub z: Vec<SymSet>,
    /// For each record, the symptoms that contain it.
    pub record_symptoms: Vec<SymSet>,
    /// Number of detectors (observable ids start here).
    pub detectors: u32,
    /// Reused buffers for gate images, so the sweep allocates nothing per gate.
    scratch: Vec<SymSet>,
    tmp: SymSet,
    /// Ids held in `x` and `z` together: what the sweep's memory grows with.
    held: u64,
}

impl Sensitivity {
    /// Symptoms flipped by one Pauli on one qubit.
    pub fn of(&self, pauli: Pauli, qubit: u32) -> SymSet {
        let q = qubit as usize;
        match pauli {
            Pauli::I => Vec::new(),
            Pauli::X => self.x[q].clone(),
            Pauli::Z => self.z[q].clone(),
            Pauli::Y => xor_sets(&self.x[q], &self.z[q]),
        }
    }

    /// Symptoms flipped by a Pauli product.
    pub fn of_product(&self, factors: impl IntoIterator<Item = (Pauli, u32)>) -> SymSet {
        let mut acc = Vec::new();
        for (p, q) in factors {
            if p.has_x() {
                acc = xor_sets(&acc, &self.x[q as usize]);
            }
            if p.has_z() {
                acc = xor_sets(&acc, &self.z[q as usize]);
            }
        }
        acc
    }

    fn undo(&mut self, op: &Op) {
        match &op.kind {
            OpKind::Noise(_) => {}
            OpKind::Reset(_) => {
                for &q in &op.targets {
                    self.held -= (self.x[q as usize].len() + self.z[q as usize].len()) as u64;
                    self.x[q as usize].clear();
                    self.z[q as usize].clear();
                }
            }
            OpKind::Measure { record, .. } => {
                let flips = &self.record_symptoms[*record as usize];
                if flips.is_empty() {
                    return;
                }
                for (&q, &p) in op.targets.iter().zip(&op.paulis) {
                    let q = q as usize;
                    let before = (self.x[q].len() + self.z[q].len()) as u64;
                    // An X flips the result iff P has a Z part, and vice versa.
                    if p.has_z() {
                        xor_assign(&mut self.x[q], flips, &mut self.tmp);
                    }
                    if p.has_x() {
                        xor_assign(&mut self.z[q], flips, &mut self.tmp);
                    }
                    self.held = self.held - before + (self.x[q].len() + self.z[q].len()) as u64;
                }
            }
            OpKind::Gate(g) => self.undo_gate(*g, &op.targets),
        }
    }

    fn undo_gate(&mut self, gate: Gate, targets: &[u32]) {
        let h = gate.heisenberg();
        let mut outs = std::mem::take(&mut self.scratch);
        for chunk in targets.chunks(gate.arity()) {
            outs.resize_with(2 * chunk.len(), Vec::new);
            // Sensitivity before the gate of X_i (Z_i) = XOR of the sensitivities after it of
            // the factors of its Heisenberg image.
            for (k, out) in outs.iter_mut().enumerate() {
                out.clear();
                for (&q, p) in chunk.iter().zip(h[k]) {
                    if p.has_x() {
                        xor_assign(out, &self.x[q as usize], &mut self.tmp);
                    }
                    if p.has_z() {
                        xor_assign(out, &self.z[q as usize], &mut self.tmp);
                    }
                }
            }
            // Swap, not clone: the old sets become next gate's scratch buffers.
            for (i, &q) in chunk.iter().enumerate() {
                let (q, k) = (q as usize, 2 * i);
                self.held = self.held - (self.x[q].len() + self.z[q].len()) as u64
                    + (outs[k].len() + outs[k + 1].len()) as u64;
                let q = q as u32;
                std::mem::swap(&mut self.x[q as usize], &mut outs[2 * i]);
                std::mem::swap(&mut self.z[q as usize], &mut outs[2 * i + 1]);
            }
        }
        self.scratch = outs;
    }
}

/// For each measurement result, the symptoms (detector ids, then observable ids from `D`) whose
/// parity includes it, each list sorted.
pub fn record_symptoms(circuit: &Circuit) -> Vec<SymSet> {
    let d = circuit.detectors.len() as u32;
    let mut out = vec![Vec::new(); circuit.records.len()];
    for (i, det) in circuit.detectors.iter().enumerate() {
        for &r in &det.records {
            out[r as usize].push(i as u32);
        }
    }
    for (i, obs) in circuit.observables.iter().enumerate() {
        for &r in &obs.records {
            out[r as usize].push(d + i as u32);
        }
    }
    out
}

/// Runs the backward sweep over `circuit`, calling `visit` at every operation (with the
/// sensitivities just after it) and finally at the start.
pub fn sensitivity_sweep<'c>(
    circuit: &'c Circuit,
    visit: impl FnMut(SweepPoint<'c>, &Sensitivity),
) {
    let _ = sensitivity_sweep_within(circuit, u64::MAX, visit);
}

/// [`sensitivity_sweep`] that stops once the sets hold more than `max_ids` ids together
/// (4 bytes each), returning the ids held then. No count of items bounds them: a qubit
/// measured many times without a reset after many others were entangled with it holds
/// qubits × results ids.
pub fn sensitivity_sweep_within<'c>(
    circuit: &'c Circuit,
    max_ids: u64,
    mut visit: impl FnMut(SweepPoint<'c>, &Sensitivity),
) -> Result<(), u64> {
    let n = circuit.qubits.len();
    let d = circuit.detectors.len() as u32;
    let mut s = Sensitivity {
        x: vec![Vec::new(); n],
        z: vec![Vec::new(); n],
        record_symptoms: record_symptoms(circuit),
        detectors: d,
        scratch: Vec::new(),
        tmp: Vec::new(),
        held: 0,
    };
    for (li, layer) in circuit.layers.iter().enumerate().rev() {
        for (oi, op) in layer.ops.iter().enumerate().rev() {
            visit(
                SweepPoint::After {
                    layer: li,
                    index: oi,
                    op,
                },
                &s,
            );
            s.undo(op);
            if s.held > max_ids {
                return Err(s.held);
            }
        }
    }
    visit(SweepPoint::Start, &s);
    Ok(())
}
