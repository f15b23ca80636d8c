//! Verification of an expanded circuit: every detector and observable must be deterministic
//! without noise.
//!
//! Method: the backward sensitivity sweep ([`crate::ir::sensitivity_sweep`]). In a noiseless stabilizer
//! circuit, all randomness of measurement outcomes can be attributed to *gauge* Paulis that leave
//! the state unchanged: the measured Pauli right after a measurement, the reset basis right after
//! a reset, and Z on every qubit at the start (all qubits start in |0>). Inserting such a Pauli
//! with probability 1/2 reproduces the outcome distribution (this is how a Pauli-frame sampler
//! draws random outcomes). A parity of results is therefore deterministic iff no gauge Pauli flips
//! it, and when one does, that gauge location names the measurement or reset that randomises it.
//! The stabilizer tableau in `sim` computes the reference values. A property test checks this
//! verdict on random Clifford circuits against two independent ones: noiseless Pauli-frame
//! sampling, and the tableau run down random branches of the outcome tree (`branch_run` in
//! `sim`, a later stage, which is why this is not a link).

use crate::base::{Diagnostic, Span};
use crate::ir::sensitivity::{sensitivity_sweep_within, SweepPoint};
use crate::ir::{Circuit, OpKind};

/// What made a parity random.
#[derive(Clone, Copy, Debug)]
enum Culprit {
    Measurement { span: Span, qubit: u32 },
    Reset { span: Span, qubit: u32 },
    Start { qubit: u32 },
}

/// Most non-determinism errors reported at once.
const MAX_REPORTED: usize = 20;

/// Verifies that every detector and observable is deterministic.
pub fn check(c: &Circuit) -> Result<(), Vec<Diagnostic>> {
    check_within(c, &crate::ir::Limits::default())
}

/// [`check`] within the memory budget of `limits`: the sweep's sets of symptom ids (4 bytes
/// each) may take at most half of it, and a circuit that needs more is refused when it gets
/// there, not after the allocation fails.
pub fn check_within(c: &Circuit, limits: &crate::ir::Limits) -> Result<(), Vec<Diagnostic>> {
    let d = c.detectors.len();
    let mut culprit: Vec<Option<Culprit>> = vec![None; d + c.observables.len()];
    let mut mark = |ids: &[u32], who: Culprit| {
        for &id in ids {
            culprit[id as usize].get_or_insert(who);
        }
    };
    let max_ids = limits.memory_bytes() / 2 / 4;
    let swept = sensitivity_sweep_within(c, max_ids, |point, s| match point {
        SweepPoint::After { op, .. } => match &op.kind {
            OpKind::Measure { .. } => {
                let ids = s.of_product(op.paulis.iter().copied().zip(op.targets.iter().copied()));
                mark(
                    &ids,
                    Culprit::Measurement {
                        span: op.span,
                        qubit: op.targets[0],
                    },
                );
            }
            OpKind::Reset(basis) => {
                for &q in &op.targets {
                    mark(
                        &s.of(basis.pauli(), q),
                        Culprit::Reset {
                            span: op.span,
                            qubit: q,
                        },
                    );
                }
            }
            _ => {}
        },
        SweepPoint::Start => {
            for q in 0..c.qubits.len() {
                mark(&s.z[q], Culprit::Start { qubit: q as u32 });
            }
        }
    });
    if let Err(held) = swept {
        return Err(vec![Diagnostic::bare(format!(
            "checking this circuit needs more than {} MB for the detectors each fault location \
             would flip ({held} ids held at once), past the memory budget of {} MB",
            held * 4 / 1_000_000,
            limits.memory_bytes() / 1_000_000
        ))
        .with_hint(
            "a qubit measured many times without a reset after many others were entangled \
             with it makes every one of them flip every later result; reset it, or raise the \
             budget with `--max-items`",
        )]);
    }
    let mut errors = Vec::new();
    for (id, who) in culprit.iter().enumerate() {
        let Some(who) = who else { continue };
        if errors.len() >= MAX_REPORTED {
            break;
        }
        let (kind, name, span) = if id < d {
            let det = &c.detectors[id];
            ("detector", &det.name, det.span)
        } else {
            let obs = &c.observables[id - d];
            ("observable", &obs.name, obs.span)
        };
        let base = Diagnostic::error(
            &c.source,
            span,
            format!("{kind} `{name}` is not deterministic: without noise its value is random"),
        );
        let diag = match *who {
            Culprit::Measurement { span, qubit } => base.with_label(
                &c.source,
                span,
                format!(
                    "randomised by this measurement (on `{}`)",
                    c.qubits[qubit as usize].name
                ),
            ),
            Culprit::Reset { span, qubit } => base.with_label(
                &c.source,
                span,
                format!(
                    "randomised by this reset of `{}`",
                    c.qubits[qubit as usize].name
                ),
            ),
            Culprit::Start { qubit } => base.with_label(
                &c.source,
                c.qubits[qubit as usize].span,
                format!(
                    "randomised by the initial |0> state of `{}`",
                    c.qubits[qubit as usize].name
                ),
            ),
        };
        errors.push(diag.with_hint(if kind == "detector" {
            "a detector compares results whose parity is fixed without noise; check the bases and which round it compares"
        } else {
            "an observable is the parity of results that read out one logical operator: measure \
             its qubits in the basis it was prepared in, and include every qubit of the logical"
        }));
    }
    if errors.is_empty() {
        Ok(())
    } else {
        Err(errors)
    }
}
