//! Checks (in progress).
use crate::ir::Circuit;
use crate::lang::Diagnostic;

/// Verifies a circuit.
pub fn check(_c: &Circuit) -> Result<(), Vec<Diagnostic>> {
    Ok(())
}
