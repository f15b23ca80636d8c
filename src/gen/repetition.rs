//! The repetition code on a line: data `d[k]` at `(2k + 1, 0)`, check `k` between `d[k]` and
//! `d[k + 1]` at `(2k + 2, 0)`.
//!
//! Bit-flip code (`flip = x`): checks `Z Z`, data prepared and read out in z, observable `Z` on
//! `d[0]`. Phase-flip code (`flip = z`): checks `X X`, everything in x. Every check is
//! deterministic from the first round because the data start in an eigenstate of all checks.

use super::{Entangler, Flip, GenSpec, Resolved, Style, Text};

pub(super) fn write(w: &mut Text, spec: &GenSpec, r: &Resolved) {
    let flip = r.flip.unwrap_or(Flip::X);
    // The check Pauli and the data basis coincide: Z checks on |0…0>, X checks on |+…+>.
    let b = if flip == Flip::X { "z" } else { "x" };
    let kind = if flip == Flip::X {
        "bit-flip"
    } else {
        "phase-flip"
    };
    w.line(&format!(
        "# {kind} repetition code memory: checks {p} {p} on neighbouring data qubits, data \
         prepared and read out in the {b} basis.",
        p = b.to_uppercase()
    ));
    w.line("");
    w.line(&format!("param distance = {}", spec.dz));
    w.line(&format!("param rounds = {}", spec.rounds));
    w.line("");
    w.block(
        "for k in 0..distance",
        "qubit d[k] at (2 * k + 1, 0) role data",
    );
    if r.style == Style::Ancilla {
        w.block(
            "for k in 0..distance - 1",
            "qubit a[k] at (2 * k + 2, 0) role ancilla",
        );
    }
    w.line("");
    w.block("layer", &format!("reset {b} d[0..distance]"));
    w.line("");
    w.open("for r in 0..rounds");
    w.open("round");
    match r.style {
        Style::Ancilla => {
            w.block("layer", "reset x a[0..distance - 1]");
            // Step 0 couples each check to its west data qubit, step 1 to its east one.
            for data in ["d[0..distance - 1]", "d[1..distance]"] {
                match (flip, r.entangler) {
                    (Flip::Z, _) => w.block("layer", &format!("cx a[0..distance - 1] {data}")),
                    (Flip::X, Some(Entangler::Cx)) => {
                        w.block("layer", &format!("h {data}"));
                        w.block("layer", &format!("cx a[0..distance - 1] {data}"));
                        w.block("layer", &format!("h {data}"));
                    }
                    (Flip::X, _) => w.block("layer", &format!("cz a[0..distance - 1] {data}")),
                }
            }
            w.block(
                "layer",
                "measure x a[0..distance - 1] -> m[r, 0..distance - 1]",
            );
        }
        Style::Product => {
            // Neighbouring checks share a data qubit, so even and odd checks take turns.
            for start in [0, 1] {
                w.open("layer");
                w.block(
                    &format!("for k in {start}..distance - 1 by 2"),
                    &format!("measure {b} d[k] * {b} d[k + 1] -> m[r, k]"),
                );
                w.close();
            }
        }
    }
    w.open("for k in 0..distance - 1");
    w.open("if r == 0");
    w.line("detector at (2 * k + 2, 0, r) = m[r, k]");
    w.else_open("");
    w.line("detector at (2 * k + 2, 0, r) = m[r, k] ^ m[r - 1, k]");
    w.close();
    w.close();
    w.close();
    w.close();
    w.line("");
    w.line("# Final readout: each check's parity from the data must match the last round.");
    w.block(
        "layer",
        &format!("measure {b} d[0..distance] -> f[0..distance]"),
    );
    w.block(
        "for k in 0..distance - 1",
        "detector at (2 * k + 2, 0, rounds) = f[k] ^ f[k + 1] ^ m[rounds - 1, k]",
    );
    w.line("observable logical = f[0]");
}
