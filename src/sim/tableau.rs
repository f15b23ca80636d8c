//! Stabilizer tableau: the noiseless reference run of a circuit.
//!
//! In: a [`Circuit`]. Out: a [`Reference`] with the noiseless value of every measurement result,
//! detector and observable. Noise operations and measurement flip probabilities are ignored.
//!
//! # Method
//!
//! The state is `U|0…0>` for a Clifford `U`. Following Aaronson and Gottesman ("Improved
//! simulation of stabilizer circuits", PRA 70, 052328 (2004)) we keep `2n` bit-packed Pauli rows
//! with a sign bit each and multiply rows with their phase function `g`. We store the *inverse*
//! of their tableau: row `2q` is `U† X_q U` and row `2q+1` is `U† Z_q U`, written on the initial
//! qubits. (Their rows are the forward images `U X_k U†`, `U Z_k U†`; the two tables hold the same
//! information.) The inverse form makes the common operations cost `O(n/64)` word operations:
//!
//! - a gate `G` on the current qubits replaces each row `T(P)` by `T(G† P G)`, a product of at
//!   most two rows of the gate's qubits;
//! - measuring a Pauli product `Q` forms `R = T(Q)`; the initial state `|0…0>` is an eigenstate of
//!   `R` iff `R` has no X part, and then the result is the sign of `R` (deterministic);
//! - otherwise the result is random. We *collapse* by prepending Cliffords on the initial side that
//!   fix `|0…0>` (CX from a pivot qubit `k` in `R`'s X support, CZ, S) until `R = ±X_k`, then a
//!   Hadamard on `k` (the projection onto `|±>_k`) and, if needed, `X_k` so that `R = +Z_k`.
//!   These are column operations over all `2n` rows; they only happen at random measurements,
//!   whose Pauli support is small in syndrome-extraction circuits.
//!
//! **Random outcomes are resolved as 0** (the +1 eigenvalue) in the reference run; the sampler
//! randomises them per shot, so the choice only fixes which value "no flip" refers to.
//! [`Reference::random`] says which records were random.
//!
//! Resets are a measurement of the basis Pauli followed by a Pauli that flips a `1` result.

use crate::base::{Basis, Gate, Pauli};
use crate::ir::{Circuit, OpKind};

/// The noiseless values of a circuit's records, detectors and observables.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Reference {
    /// Value of every measurement result (`true` = 1 = eigenvalue −1). Random outcomes are 0.
    pub measurements: Vec<bool>,
    /// Whether each record's noiseless outcome was random (resolved as 0).
    pub random: Vec<bool>,
    /// Parity of every detector's records.
    pub detectors: Vec<bool>,
    /// Parity of every observable's records.
    pub observables: Vec<bool>,
}

/// Runs the circuit without noise on a stabilizer tableau.
pub fn reference_run(circuit: &Circuit) -> Reference {
    branch_run(circuit, || false)
}

/// Runs the circuit without noise, resolving each random measurement outcome by `choose()`:
/// one branch of the circuit's outcome tree ([`reference_run`] takes the all-zero branch).
/// With fair coin flips this samples the noiseless outcome distribution, so a detector or
/// observable whose parity differs between two branches is not deterministic.
pub fn branch_run(circuit: &Circuit, mut choose: impl FnMut() -> bool) -> Reference {
    let mut t = Tableau::new(circuit.qubits.len());
    let mut measurements = vec![false; circuit.records.len()];
    let mut random = vec![false; circuit.records.len()];
    let mut factors = Vec::new();
    for (_, op) in circuit.ops() {
        match &op.kind {
            OpKind::Gate(g) => {
                for chunk in op.targets.chunks(g.arity()) {
                    t.apply_gate(*g, chunk);
                }
            }
            OpKind::Measure { record, .. } => {
                factors.clear();
                factors.extend(op.targets.iter().copied().zip(op.paulis.iter().copied()));
                let m = t.measure_resolving(&factors, &mut choose);
                measurements[*record as usize] = m.outcome;
                random[*record as usize] = m.random;
            }
            OpKind::Reset(basis) => {
                // A reset of an entangled qubit measures it first: a branch point too, or the
                // qubits entangled with it would never vary between branches.
                for &q in &op.targets {
                    t.reset_resolving(q, *basis, &mut choose);
                }
            }
            OpKind::Noise(_) => {}
        }
    }
    let parity = |records: &[u32]| {
        records
            .iter()
            .fold(false, |a, &r| a ^ measurements[r as usize])
    };
    let detectors = circuit
        .detectors
        .iter()
        .map(|d| parity(&d.records))
        .collect();
    let observables = circuit
        .observables
        .iter()
        .map(|o| parity(&o.records))
        .collect();
    Reference {
        measurements,
        random,
        detectors,
        observables,
    }
}

/// A measurement result.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Measured {
    /// The result (`true` = eigenvalue −1).
    pub outcome: bool,
    /// Whether it was random (then `outcome` is the chosen one and the state collapsed onto it).
    pub random: bool,
}

/// An inverse stabilizer tableau on `n` qubits (see the module docs).
#[derive(Clone, Debug)]
pub struct Tableau {
    n: usize,
    /// Words per row.
    w: usize,
    /// X bits of row `r` at `x[r*w..(r+1)*w]`.
    x: Vec<u64>,
    z: Vec<u64>,
    sign: Vec<bool>,
    /// Scratch row for products.
    sx: Vec<u64>,
    sz: Vec<u64>,
}

/// Sum of Aaronson–Gottesman's `g` over the qubits, mod 4: the power of `i` in `A·B` when both are
/// written with Hermitian factors (PRA 70, 052328 (2004), the `rowsum` subroutine).
#[inline]
fn phase_of_product(ax: &[u64], az: &[u64], bx: &[u64], bz: &[u64]) -> u32 {
    let mut plus = 0u32;
    let mut minus = 0u32;
    for i in 0..ax.len() {
        let (x1, z1, x2, z2) = (ax[i], az[i], bx[i], bz[i]);
        let (a_x, a_z, a_y) = (x1 & !z1, !x1 & z1, x1 & z1);
        // g = z2(2x2-1) for X, x2(1-2z2) for Z, z2-x2 for Y.
        let p = (a_x & x2 & z2) | (a_z & x2 & !z2) | (a_y & z2 & !x2);
        let m = (a_x & !x2 & z2) | (a_z & x2 & z2) | (a_y & x2 & !z2);
        plus += p.count_ones();
        minus += m.count_ones();
    }
    plus.wrapping_sub(minus) & 3
}

/// Signs of the inverse images `G† P G` for `P = X_a, Z_a, X_b, Z_b`; the Paulis themselves are
/// those of [`Gate::heisenberg`] (conjugating by `G` or `G†` differs only in sign).
fn inverse_image_signs(g: Gate) -> [bool; 4] {
    match g {
        // X Z X = -Z; Y X Y = -X, Y Z Y = -Z; Z X Z = -X.
        Gate::X => [false, true, false, false],
        Gate::Y => [true, true, false, false],
        Gate::Z => [true, false, false, false],
        // S† X S = -Y; S X S† = +Y.
        Gate::S => [true, false, false, false],
        // Sx† Z Sx = +Y; Sx Z Sx† = -Y (Sx = H S H).
        Gate::Sxdg => [false, true, false, false],
        _ => [false; 4],
    }
}

/// Bit `q` of a row.
#[inline]
fn bit(row: &[u64], q: usize) -> bool {
    row[q >> 6] >> (q & 63) & 1 != 0
}

#[inline]
fn flip(row: &mut [u64], q: usize) {
    row[q >> 6] ^= 1 << (q & 63);
}

// Column operations: conjugate one row by a Clifford on the initial qubits (prepending it to U).
// All preserve |0…0> except `col_h` and `col_x`, which implement the collapse.

fn col_cx(x: &mut [u64], z: &mut [u64], sign: &mut bool, c: usize, t: usize) {
    let (xc, zc, xt, zt) = (bit(x, c), bit(z, c), bit(x, t), bit(z, t));
    // PRA 70, 052328 (2004), CNOT rule.
    *sign ^= xc & zt & !(xt ^ zc);
    if xc {
        flip(x, t);
    }
    if zt {
        flip(z, c);
    }
}

fn col_cz(x: &mut [u64], z: &mut [u64], sign: &mut bool, a: usize, b: usize) {
    let (xa, za, xb, zb) = (bit(x, a), bit(z, a), bit(x, b), bit(z, b));
    // CZ = H_b CX H_b; composing the rules gives this.
    *sign ^= xa & xb & (za ^ zb);
    if xb {
        flip(z, a);
    }
    if xa {
        flip(z, b);
    }
}

/// `P → S† P S`: X → −Y, Y → X.
fn col_s(x: &mut [u64], z: &mut [u64], sign: &mut bool, k: usize) {
    let (xk, zk) = (bit(x, k), bit(z, k));
    *sign ^= xk & !zk;
    if xk {
        flip(z, k);
    }
}

fn col_h(x: &mut [u64], z: &mut [u64], sign: &mut bool, k: usize) {
    let (xk, zk) = (bit(x, k), bit(z, k));
    *sign ^= xk & zk;
    if xk != zk {
        flip(x, k);
        flip(z, k);
    }
}

fn col_x(_x: &mut [u64], z: &mut [u64], sign: &mut bool, k: usize) {
    *sign ^= bit(z, k);
}

impl Tableau {
    /// Bytes the tableau of `n` qubits holds: two bit matrices of 2n rows of n bits (dense, so
    /// quadratic in the qubits), checked against the memory budget before it is built.
    pub fn bytes(n: usize) -> u64 {
        let w = n.div_ceil(64).max(1) as u64;
        2 * (2 * n as u64 * w * 8) + 2 * n as u64 + 16 * w
    }

    /// The tableau of `|0…0>` on `n` qubits.
    pub fn new(n: usize) -> Tableau {
        let w = n.div_ceil(64).max(1);
        let mut x = vec![0u64; 2 * n * w];
        let mut z = vec![0u64; 2 * n * w];
        for q in 0..n {
            flip(&mut x[2 * q * w..(2 * q + 1) * w], q);
            flip(&mut z[(2 * q + 1) * w..(2 * q + 2) * w], q);
        }
        Tableau {
            n,
            w,
            x,
            z,
            sign: vec![false; 2 * n],
            sx: vec![0; w],
            sz: vec![0; w],
        }
    }

    /// Number of qubits.
    pub fn qubits(&self) -> usize {
        self.n
    }

    /// Row `dst` ← row `dst` · row `src`, for commuting rows.
    fn mul_rows(&mut self, dst: usize, src: usize) {
        let w = self.w;
        let (d0, s0) = (dst * w, src * w);
        let mut plus = 0u32;
        let mut minus = 0u32;
        for i in 0..w {
            let (x1, z1, x2, z2) = (
                self.x[d0 + i],
                self.z[d0 + i],
                self.x[s0 + i],
                self.z[s0 + i],
            );
            let (a_x, a_z, a_y) = (x1 & !z1, !x1 & z1, x1 & z1);
            let p = (a_x & x2 & z2) | (a_z & x2 & !z2) | (a_y & z2 & !x2);
            let m = (a_x & !x2 & z2) | (a_z & x2 & z2) | (a_y & x2 & !z2);
            plus += p.count_ones();
            minus += m.count_ones();
            self.x[d0 + i] = x1 ^ x2;
            self.z[d0 + i] = z1 ^ z2;
        }
        let g = plus.wrapping_sub(minus) & 3;
        self.sign[dst] ^= self.sign[src] ^ (g == 2);
    }

    fn swap_rows(&mut self, a: usize, b: usize) {
        let w = self.w;
        for i in 0..w {
            self.x.swap(a * w + i, b * w + i);
            self.z.swap(a * w + i, b * w + i);
        }
        self.sign.swap(a, b);
    }

    /// Scratch ← product of rows (a power of `i` tracked in `exp`).
    fn scratch_mul_row(&mut self, row: usize, exp: &mut u32) {
        let w = self.w;
        let (rx, rz) = (
            &self.x[row * w..(row + 1) * w],
            &self.z[row * w..(row + 1) * w],
        );
        *exp += phase_of_product(&self.sx, &self.sz, rx, rz) + 2 * u32::from(self.sign[row]);
        for i in 0..w {
            self.sx[i] ^= rx[i];
            self.sz[i] ^= rz[i];
        }
    }

    /// Scratch ← `T(P_1 ⊗ P_2 ⊗ …)`; returns its sign (whether it is `−` times a Pauli string).
    fn load_product(&mut self, factors: &[(u32, Pauli)]) -> bool {
        self.sx.fill(0);
        self.sz.fill(0);
        let mut exp = 0u32;
        for &(q, p) in factors {
            let q = q as usize;
            match p {
                Pauli::I => {}
                Pauli::X => self.scratch_mul_row(2 * q, &mut exp),
                Pauli::Z => self.scratch_mul_row(2 * q + 1, &mut exp),
                Pauli::Y => {
                    // Y = i X Z.
                    exp += 1;
                    self.scratch_mul_row(2 * q, &mut exp);
                    self.scratch_mul_row(2 * q + 1, &mut exp);
                }
            }
        }
        // Factors on distinct qubits give a Hermitian product, so `exp` is even.
        exp & 3 == 2
    }

    /// Applies a gate to one group of targets (one qubit, or a pair for two-qubit gates).
    pub fn apply_gate(&mut self, gate: Gate, targets: &[u32]) {
        let a = targets[0] as usize;
        match gate {
            Gate::I => {}
            Gate::X => self.sign[2 * a + 1] ^= true,
            Gate::Z => self.sign[2 * a] ^= true,
            Gate::Y => {
                self.sign[2 * a] ^= true;
                self.sign[2 * a + 1] ^= true;
            }
            Gate::H => self.swap_rows(2 * a, 2 * a + 1),
            Gate::Cx => {
                let b = targets[1] as usize;
                self.mul_rows(2 * a, 2 * b);
                self.mul_rows(2 * b + 1, 2 * a + 1);
            }
            Gate::Cz => {
                let b = targets[1] as usize;
                self.mul_rows(2 * a, 2 * b + 1);
                self.mul_rows(2 * b, 2 * a + 1);
            }
            Gate::Swap => {
                let b = targets[1] as usize;
                self.swap_rows(2 * a, 2 * b);
                self.swap_rows(2 * a + 1, 2 * b + 1);
            }
            _ => self.apply_generic(gate, targets),
        }
    }

    /// `T(P) ← T(G† P G)` from the signed images, for any gate.
    fn apply_generic(&mut self, gate: Gate, targets: &[u32]) {
        let images = gate.heisenberg();
        let signs = inverse_image_signs(gate);
        let k = gate.arity();
        let w = self.w;
        let mut new_rows: Vec<(Vec<u64>, Vec<u64>, bool)> = Vec::with_capacity(2 * k);
        for g in 0..2 * k {
            let factors: Vec<(u32, Pauli)> = targets
                .iter()
                .copied()
                .zip(images[g].iter().copied())
                .take(k)
                .collect();
            let neg = self.load_product(&factors) ^ signs[g];
            new_rows.push((self.sx.clone(), self.sz.clone(), neg));
        }
        for (g, (x, z, s)) in new_rows.into_iter().enumerate() {
            let row = 2 * targets[g / 2] as usize + g % 2;
            self.x[row * w..(row + 1) * w].copy_from_slice(&x);
            self.z[row * w..(row + 1) * w].copy_from_slice(&z);
            self.sign[row] = s;
        }
    }

    /// The value of a Pauli-product measurement if it is deterministic, without changing state.
    pub fn peek(&mut self, factors: &[(u32, Pauli)]) -> Option<bool> {
        let neg = self.load_product(factors);
        self.sx.iter().all(|&v| v == 0).then_some(neg)
    }

    /// Measures a Pauli product (factors on distinct qubits); random outcomes are resolved as 0.
    pub fn measure(&mut self, factors: &[(u32, Pauli)]) -> Measured {
        self.measure_resolving(factors, || false)
    }

    /// Measures a Pauli product; a random outcome is `resolve()` (called only then).
    pub fn measure_resolving(
        &mut self,
        factors: &[(u32, Pauli)],
        resolve: impl FnOnce() -> bool,
    ) -> Measured {
        let mut neg = self.load_product(factors);
        let Some(k) = self.sx.iter().position(|&v| v != 0) else {
            return Measured {
                outcome: neg,
                random: false,
            };
        };
        let k = k * 64 + self.sx[k].trailing_zeros() as usize;
        let mut sx = std::mem::take(&mut self.sx);
        let mut sz = std::mem::take(&mut self.sz);
        // Clear the other X support with CX from the pivot, then the Z support with CZ, then a
        // Z on the pivot itself with S: R becomes ±X_k. All of these fix |0…0>.
        for j in 0..self.n {
            if j != k && bit(&sx, j) {
                self.columns(|x, z, s| col_cx(x, z, s, k, j));
                col_cx(&mut sx, &mut sz, &mut neg, k, j);
            }
        }
        for j in 0..self.n {
            if j != k && bit(&sz, j) {
                self.columns(|x, z, s| col_cz(x, z, s, k, j));
                col_cz(&mut sx, &mut sz, &mut neg, k, j);
            }
        }
        if bit(&sz, k) {
            self.columns(|x, z, s| col_s(x, z, s, k));
            col_s(&mut sx, &mut sz, &mut neg, k);
        }
        // Project qubit k of the initial state onto |+>: prepend H_k; R becomes ±Z_k.
        self.columns(|x, z, s| col_h(x, z, s, k));
        col_h(&mut sx, &mut sz, &mut neg, k);
        // Now R = ±Z_k on the initial side, where qubit k is |0>: prepending X_k flips its sign.
        // Choose the outcome: R = +Z_k for 0, −Z_k for 1.
        let outcome = resolve();
        if neg != outcome {
            self.columns(|x, z, s| col_x(x, z, s, k));
        }
        self.sx = sx;
        self.sz = sz;
        Measured {
            outcome,
            random: true,
        }
    }

    fn columns(&mut self, mut f: impl FnMut(&mut [u64], &mut [u64], &mut bool)) {
        let w = self.w;
        for ((x, z), s) in self
            .x
            .chunks_exact_mut(w)
            .zip(self.z.chunks_exact_mut(w))
            .zip(self.sign.iter_mut())
        {
            f(x, z, s);
        }
    }

    /// Resets a qubit to the +1 eigenstate of `basis`.
    pub fn reset(&mut self, q: u32, basis: Basis) {
        self.reset_resolving(q, basis, || false);
    }

    /// Resets a qubit; when it is entangled, the outcome of the measurement the reset performs
    /// (which decides what happens to the qubits entangled with it) is `resolve()`.
    pub fn reset_resolving(&mut self, q: u32, basis: Basis, resolve: impl FnOnce() -> bool) {
        let m = self.measure_resolving(&[(q, basis.pauli())], resolve);
        if m.outcome {
            // A Pauli anticommuting with the basis Pauli maps the −1 eigenstate to the +1 one.
            let fix = if basis == Basis::X { Gate::Z } else { Gate::X };
            self.apply_gate(fix, &[q]);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use Pauli::{I, X, Y, Z};

    fn prod(ps: &[Pauli]) -> Vec<(u32, Pauli)> {
        ps.iter()
            .enumerate()
            .filter(|(_, &p)| p != I)
            .map(|(q, &p)| (q as u32, p))
            .collect()
    }

    /// A reset of an entangled qubit measures it: after H, CX and a reset of the target, the
    /// control is |0> or |1> with equal chance, so branches must be able to disagree on it.
    #[test]
    fn branches_split_at_the_reset_of_an_entangled_qubit() {
        let text = "qubit a\nqubit b\nh a\ncx a b\nreset z b\nmeasure z a -> m\n";
        let c = crate::ir::load_source(&crate::base::Source::new("t", text), &[]).unwrap();
        assert!(!reference_run(&c).measurements[0]);
        // The only random choice is the reset's; the measurement then follows it.
        let taken = branch_run(&c, || true);
        assert!(taken.measurements[0] && !taken.random[0]);
    }

    /// Bell state (|00> + |11>)/√2 from H and CX: stabilizers +XX, +ZZ, hence YY = −XX·ZZ has
    /// eigenvalue −1; single-qubit Z is random. Nielsen & Chuang, Quantum Computation and Quantum
    /// Information, §10.5.1 (stabilizer of the EPR state).
    #[test]
    fn bell_stabilizers() {
        let mut t = Tableau::new(2);
        t.apply_gate(Gate::H, &[0]);
        t.apply_gate(Gate::Cx, &[0, 1]);
        assert_eq!(t.peek(&prod(&[X, X])), Some(false));
        assert_eq!(t.peek(&prod(&[Z, Z])), Some(false));
        assert_eq!(t.peek(&prod(&[Y, Y])), Some(true));
        assert_eq!(t.peek(&prod(&[Z, I])), None);
        assert_eq!(t.peek(&prod(&[X, I])), None);
        // Measuring one half collapses the other: the partner agrees (N&C §2.6 / §10.5.1).
        let m = t.measure(&prod(&[Z, I]));
        assert!(m.random);
        assert_eq!(t.peek(&prod(&[I, Z])), Some(m.outcome));
        assert_eq!(t.peek(&prod(&[X, X])), None);
    }

    /// GHZ state (|000> + |111>)/√2: stabilizers XXX, ZZI, IZZ; XYY has eigenvalue −1.
    /// Nielsen & Chuang §10.5.1; PRA 70, 052328 (2004) uses the same example family.
    #[test]
    fn ghz_stabilizers() {
        let mut t = Tableau::new(3);
        t.apply_gate(Gate::H, &[0]);
        t.apply_gate(Gate::Cx, &[0, 1]);
        t.apply_gate(Gate::Cx, &[1, 2]);
        assert_eq!(t.peek(&prod(&[X, X, X])), Some(false));
        assert_eq!(t.peek(&prod(&[Z, Z, I])), Some(false));
        assert_eq!(t.peek(&prod(&[I, Z, Z])), Some(false));
        assert_eq!(t.peek(&prod(&[X, Y, Y])), Some(true));
        assert_eq!(t.peek(&prod(&[Y, Y, X])), Some(true));
        assert_eq!(t.peek(&prod(&[Z, I, I])), None);
    }

    /// Textbook determinism: |0> measured in Z gives 0; H|0> = |+> gives X = +1 and random Z;
    /// X|0> = |1> gives Z = 1; S H|0> = |+i> gives Y = +1 (N&C §10.5.3, measurement of a
    /// stabilizer element is deterministic, of an anticommuting Pauli uniformly random).
    #[test]
    fn single_qubit_determinism() {
        let mut t = Tableau::new(1);
        assert_eq!(t.peek(&[(0, Z)]), Some(false));
        t.apply_gate(Gate::X, &[0]);
        assert_eq!(t.peek(&[(0, Z)]), Some(true));
        let mut t = Tableau::new(1);
        t.apply_gate(Gate::H, &[0]);
        assert_eq!(t.peek(&[(0, X)]), Some(false));
        assert_eq!(t.peek(&[(0, Z)]), None);
        t.apply_gate(Gate::S, &[0]);
        assert_eq!(t.peek(&[(0, Y)]), Some(false));
        t.apply_gate(Gate::Sdg, &[0]);
        t.apply_gate(Gate::Sdg, &[0]);
        assert_eq!(t.peek(&[(0, Y)]), Some(true));
        // Sx|0> = |−i>: Y = −1 (Sx = H S H).
        let mut t = Tableau::new(1);
        t.apply_gate(Gate::Sx, &[0]);
        assert_eq!(t.peek(&[(0, Y)]), Some(true));
        t.apply_gate(Gate::Sxdg, &[0]);
        t.apply_gate(Gate::Sxdg, &[0]);
        assert_eq!(t.peek(&[(0, Y)]), Some(false));
    }

    /// After a random measurement the result repeats (PRA 70, 052328 (2004), §III: a second
    /// measurement of the same observable is deterministic).
    #[test]
    fn repeated_measurement_is_deterministic() {
        let mut t = Tableau::new(3);
        t.apply_gate(Gate::H, &[0]);
        t.apply_gate(Gate::Cx, &[0, 1]);
        t.apply_gate(Gate::Sx, &[2]);
        let q = prod(&[X, Z, Y]);
        let first = t.measure(&q);
        assert!(first.random);
        assert_eq!(
            t.measure(&q),
            Measured {
                outcome: false,
                random: false
            }
        );
    }

    /// Either branch of a random measurement collapses consistently: in a Bell pair
    /// (|00> + |11>)/√2 the Z results of the two qubits are equal, whichever the first was, and
    /// a repeated measurement repeats it (N&C §10.5.3; PRA 70, 052328 (2004), §III).
    #[test]
    fn chosen_branches_collapse_consistently() {
        for first in [false, true] {
            let mut t = Tableau::new(2);
            t.apply_gate(Gate::H, &[0]);
            t.apply_gate(Gate::Cx, &[0, 1]);
            let m = t.measure_resolving(&[(0, Z)], || first);
            assert_eq!(
                m,
                Measured {
                    outcome: first,
                    random: true
                }
            );
            assert_eq!(t.peek(&[(1, Z)]), Some(first));
            assert_eq!(t.peek(&[(0, Z)]), Some(first));
            // X⊗X is no longer a stabilizer: its result is random.
            assert_eq!(t.peek(&[(0, X), (1, X)]), None);
        }
    }

    #[test]
    fn resets_prepare_eigenstates() {
        for basis in [Basis::X, Basis::Y, Basis::Z] {
            let mut t = Tableau::new(2);
            t.apply_gate(Gate::H, &[0]);
            t.apply_gate(Gate::Cx, &[0, 1]);
            t.apply_gate(Gate::Y, &[1]);
            t.reset(1, basis);
            assert_eq!(t.peek(&[(1, basis.pauli())]), Some(false), "{basis:?}");
        }
    }

    /// Gate rows must agree with `ir::clifford` up to sign: `T(P)` after the gate, for a fresh
    /// tableau, is `G† P G`, whose Pauli part is the same as `G P G†`.
    #[test]
    fn gates_agree_with_clifford_table() {
        for g in Gate::ALL {
            let k = g.arity();
            let h = g.heisenberg();
            let mut t = Tableau::new(2);
            t.apply_gate(g, &[0, 1][..k]);
            for (row, image) in h.iter().enumerate().take(2 * k) {
                let w = t.w;
                let x = &t.x[row * w..(row + 1) * w];
                let z = &t.z[row * w..(row + 1) * w];
                for (q, &want) in image.iter().enumerate() {
                    let got = Pauli::from_bits(bit(x, q), bit(z, q));
                    assert_eq!(got, want, "{g:?} row {row} qubit {q}");
                }
            }
        }
    }
}
