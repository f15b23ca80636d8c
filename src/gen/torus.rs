//! The XZZX code on a `dz` × `dx` torus (columns × rows, co-prime), product style.
//!
//! Data `d[i, j]` at `(2i + 1, 2j + 1)`; face `(i, j)` at `(2i, 2j)` measures X on
//! `d[i-1, j-1]`, Z on `d[i, j-1]`, Z on `d[i-1, j]`, X on `d[i, j]` (indices mod the sides), as
//! on the planar XZZX patch ("The XZZX surface code", Nat. Commun. 12, 2172 (2021)).
//!
//! Which logical to store: a Z fault on `d[i, j]` flips faces `(i, j)` and `(i+1, j+1)`, so pure-Z
//! logicals run along the diagonal, which on a co-prime torus visits every qubit: Z on all data.
//! To see that logical as a failure the experiment must store an operator anticommuting with it.
//! `Y` along a whole row commutes with every face (each face meets the row in two qubits, both
//! anticommuting with Y), and it anticommutes with the all-Z logical when the row length is odd;
//! otherwise the column is odd (co-prime sides) and `Y` down a column does the same job.
//!
//! All data are therefore prepared and read out in y. No single face is deterministic on that
//! product state, so an *encoding* pass measures every face once (results `p[i, j]`) outside any
//! `round` block: per-round presets add no noise there, which models perfect preparation of a
//! code state, and every face of round 0 is then compared with its encoding value. (Without it,
//! pure-Z faults before the first round would be seen only by row and column products of faces,
//! and `max(dx, dz)` of them could flip the observable unseen.) The final readout in y yields
//! only row and column products of faces (`Y` on two neighbouring data rows or columns), so the
//! final detectors are those products; row detectors sit at the row's centre
//! `(dz - 1, 2j, round)`, column detectors at `(2i, dx - 1, round)`.

use super::{GenSpec, Text};

pub(super) fn write(w: &mut Text, spec: &GenSpec) {
    w.line("# XZZX code on a torus of dz columns × dx rows (co-prime), Pauli-product checks.");
    w.line("# Face (i, j) at (2i, 2j) measures x d[i-1,j-1] * z d[i,j-1] * z d[i-1,j] * x d[i,j]");
    w.line("# (indices mod the sides). Data are prepared and read out in y; the observable is Y");
    w.line("# along an odd side, which anticommutes with the all-Z logical.");
    w.line("");
    w.grid_header(spec);
    w.line("");
    w.block("layer", "reset y d[0..dz, 0..dx]");
    w.line("");
    let face = |result: &str| {
        format!(
            "measure x d[(i + dz - 1) % dz, (j + dx - 1) % dx] * z d[i, (j + dx - 1) % dx] \
             * z d[(i + dz - 1) % dz, j] * x d[i, j] -> {result}"
        )
    };
    // Faces whose columns (rows) fall in the same class share no data qubit: even indices below
    // the last, odd ones below the last, and the last one alone (it wraps onto index 0).
    let classes = |n: &str| {
        [
            format!("0..{n} - 1 by 2"),
            format!("1..{n} - 1 by 2"),
            format!("{n} - 1..{n}"),
        ]
    };
    let all_faces = |w: &mut Text, result: &str| {
        for ci in classes("dz") {
            for cj in classes("dx") {
                w.open("layer");
                w.open(&format!("for i in {ci}"));
                w.block(&format!("for j in {cj}"), &face(result));
                w.close();
                w.close();
            }
        }
    };
    w.line("# Encoding: one measurement of every face projects the product state onto a code");
    w.line("# state. It sits outside any `round`, so per-round noise presets treat it as perfect");
    w.line("# state preparation; every later face value is then deterministic.");
    all_faces(w, "p[i, j]");
    w.line("");
    w.open("for r in 0..rounds");
    w.open("round");
    all_faces(w, "m[r, i, j]");
    w.open("for i in 0..dz");
    w.open("for j in 0..dx");
    w.open("if r == 0");
    w.line("detector at (2 * i, 2 * j, r) = m[r, i, j] ^ p[i, j]");
    w.else_open("");
    w.line("detector at (2 * i, 2 * j, r) = m[r, i, j] ^ m[r - 1, i, j]");
    w.close();
    w.close();
    w.close();
    w.close();
    w.close();
    w.line("");
    w.line("# Final readout: row and column products of faces, recomputed from the data.");
    w.block("layer", "measure y d[0..dz, 0..dx] -> f[0..dz, 0..dx]");
    w.block(
        "for j in 0..dx",
        "detector at (dz - 1, 2 * j, rounds) = f[0..dz, (j + dx - 1) % dx] ^ f[0..dz, j] ^ \
         m[rounds - 1, 0..dz, j]",
    );
    w.block(
        "for i in 0..dz",
        "detector at (2 * i, dx - 1, rounds) = f[(i + dz - 1) % dz, 0..dx] ^ f[i, 0..dx] ^ \
         m[rounds - 1, i, 0..dx]",
    );
    if spec.dz % 2 == 1 {
        w.line("observable logical = f[0..dz, 0]");
    } else {
        w.line("observable logical = f[0, 0..dx]");
    }
}
