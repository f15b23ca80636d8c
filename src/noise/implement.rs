//! Gate implementations and the faults that strike during a gate.
//!
//! In: a [`Gate`], an [`Implementation`] and the Pauli channel the noise model puts on the gate.
//! Out: the gate's *effective* channel, written after the ideal gate, with the faults that
//! happen mid-gate transformed by the rest of the gate.
//!
//! - [`Implementation::Ideal`]: the channel is applied after the gate as it is.
//! - [`Implementation::Rotation`]: the gate is `U = exp(iθG)` with `G` a Pauli polynomial
//!   ([`Generator::default_for`] gives one for every Clifford gate, equal to the gate up to a
//!   global phase). A fault `F` striking at time `s ∈ [0, 1]` (uniform) is followed by the rest
//!   of the rotation, so the gate acts as `(V F V†) U` with `V = exp(i(1−s)θG)`. `V F V†` is
//!   expanded in Paulis, `Σ c_P P`, and Pauli-twirled: only the diagonal of the Pauli transfer
//!   matrix is kept, i.e. `P` with probability `|c_P|²` (these sum to 1 because `V F V†` is
//!   unitary and Hermitian-traceless-normalised: `Σ|c_P|² = Tr(F'F'†)/2^n = 1`). The
//!   probabilities are integrated over `s` with composite Simpson's rule
//!   ([`RESOLUTION`] panels; the integrand is a trigonometric polynomial in `s`, so the error is
//!   far below 1e-12).
//! - [`Implementation::BiasPreserving`]: the CX of stabilised cat qubits. A Z on the target
//!   during the gate leaves as `Z_t` or `Z_c Z_t` with equal weight, a Z on the control stays
//!   `Z_c` ("Repetition cat qubits for fault-tolerant quantum computation", PRX 9, 041053 (2019);
//!   "Bias-preserving gates with stabilized cat qubits", Sci. Adv. 6, eaay5901 (2020); the equal
//!   split is recalled from memory). Gates other than `cx` keep Z faults as Z faults under this
//!   implementation if they commute with Z (`cz`, `s`, `z`, ...); for the rest the Z fault is
//!   placed after the gate as written, since the papers above define no other bias-preserving
//!   gate.
//!
//! Which part of a channel happens mid-gate: its **dephasing part**, the terms with only Z and I
//! factors (`Z`; `ZI`, `IZ`, `ZZ`). Terms with an X or Y factor (the low-rate bit flips) stay
//! after the gate. This matches the hardware picture of the papers above, where phase flips
//! accrue continuously during the gate and bit flips are rare events.
//!
//! Convention: the Pauli on the gate's first target is the left factor, `ZY` = Z on the control
//! and Y on the target of a `cx`.

use crate::ir::{Channel, Gate, Pauli};

/// Number of Simpson panels used to integrate over the fault time (even).
pub const RESOLUTION: usize = 256;

/// How a gate is carried out in hardware.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Implementation {
    /// Cat-qubit gates that keep Z faults Z-type.
    BiasPreserving,
    /// Only the after-gate channel.
    Ideal,
    /// A rotation `exp(iθG)`; Z faults during it are propagated through the rest of it.
    Rotation,
}

impl Implementation {
    /// Every implementation, for name lookup and suggestions.
    pub const ALL: [Implementation; 3] = [
        Implementation::Ideal,
        Implementation::Rotation,
        Implementation::BiasPreserving,
    ];

    /// The name used in model files and presets.
    pub fn name(self) -> &'static str {
        match self {
            Implementation::BiasPreserving => "bias-preserving",
            Implementation::Ideal => "ideal",
            Implementation::Rotation => "rotation",
        }
    }

    /// Looks an implementation up by name.
    pub fn from_name(name: &str) -> Option<Implementation> {
        Implementation::ALL.into_iter().find(|i| i.name() == name)
    }
}

/// A complex number, just enough for 4×4 matrices.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
struct C(f64, f64);

impl C {
    fn add(self, o: C) -> C {
        C(self.0 + o.0, self.1 + o.1)
    }
    fn mul(self, o: C) -> C {
        C(self.0 * o.0 - self.1 * o.1, self.0 * o.1 + self.1 * o.0)
    }
    fn scale(self, k: f64) -> C {
        C(self.0 * k, self.1 * k)
    }
    fn conj(self) -> C {
        C(self.0, -self.1)
    }
    fn norm2(self) -> f64 {
        self.0 * self.0 + self.1 * self.1
    }
}

/// A 4×4 complex matrix on two qubits, basis `|q0 q1⟩` with q0 the more significant bit. One-qubit
/// operators act on q0 tensored with the identity.
type M = [[C; 4]; 4];

fn zero() -> M {
    [[C::default(); 4]; 4]
}

fn identity() -> M {
    let mut m = zero();
    for (k, row) in m.iter_mut().enumerate() {
        row[k] = C(1.0, 0.0);
    }
    m
}

fn matmul(a: &M, b: &M) -> M {
    let mut m = zero();
    for i in 0..4 {
        for j in 0..4 {
            let mut s = C::default();
            for k in 0..4 {
                s = s.add(a[i][k].mul(b[k][j]));
            }
            m[i][j] = s;
        }
    }
    m
}

fn dagger(a: &M) -> M {
    let mut m = zero();
    for i in 0..4 {
        for j in 0..4 {
            m[i][j] = a[j][i].conj();
        }
    }
    m
}

fn pauli_2x2(p: Pauli) -> [[C; 2]; 2] {
    let (o, z, i) = (C(1.0, 0.0), C(0.0, 0.0), C(0.0, 1.0));
    match p {
        Pauli::I => [[o, z], [z, o]],
        Pauli::X => [[z, o], [o, z]],
        Pauli::Y => [[z, i.scale(-1.0)], [i, z]],
        Pauli::Z => [[o, z], [z, o.scale(-1.0)]],
    }
}

/// `P0 ⊗ P1` as a 4×4 matrix.
fn pauli_matrix(ps: [Pauli; 2]) -> M {
    let (a, b) = (pauli_2x2(ps[0]), pauli_2x2(ps[1]));
    let mut m = zero();
    for i in 0..4 {
        for j in 0..4 {
            m[i][j] = a[i >> 1][j >> 1].mul(b[i & 1][j & 1]);
        }
    }
    m
}

/// `exp(A)` by scaling and squaring with a Taylor series: fine for the small, well-conditioned
/// (anti-Hermitian) matrices here.
fn expm(a: &M) -> M {
    let norm: f64 = a.iter().flatten().map(|c| c.norm2().sqrt()).sum();
    let mut squarings = 0;
    let mut scale = 1.0;
    while norm * scale > 0.5 {
        scale *= 0.5;
        squarings += 1;
    }
    let mut x = *a;
    for v in x.iter_mut().flatten() {
        *v = v.scale(scale);
    }
    let mut result = identity();
    let mut term = identity();
    for k in 1..=20 {
        term = matmul(&term, &x);
        for v in term.iter_mut().flatten() {
            *v = v.scale(1.0 / k as f64);
        }
        for i in 0..4 {
            for j in 0..4 {
                result[i][j] = result[i][j].add(term[i][j]);
            }
        }
    }
    for _ in 0..squarings {
        result = matmul(&result, &result);
    }
    result
}

/// The 16 two-qubit Paulis in the order of [`Pauli::pair_from_index`].
fn all_pairs() -> impl Iterator<Item = [Pauli; 2]> {
    (0..16).map(|k| {
        let v = Pauli::pair_from_index(k);
        [v[0], v[1]]
    })
}

/// A rotation generator: `G = Σ c_k P_k` (real coefficients, so `G` is Hermitian) and an angle.
#[derive(Clone, Debug, PartialEq)]
pub struct Generator {
    /// Terms `(coefficient, Pauli on the gate's targets)`.
    pub terms: Vec<(f64, [Pauli; 2])>,
    /// The rotation angle θ in `exp(iθG)`.
    pub theta: f64,
}

impl Generator {
    /// A generator whose rotation equals `gate` up to a global phase.
    ///
    /// Derivations (each checked against [`Gate::heisenberg`] in the unit tests):
    /// `cx`: `(I−Z_c)(I−X_t)/4 = |1⟩⟨1|⊗|−⟩⟨−|`, a projector Π, and `exp(iπΠ) = I − 2Π = CX`,
    /// so `G = (I − ZI − IX + ZX)`, `θ = π/4`; likewise `cy`, `cz` with Y and Z;
    /// `swap`: the singlet projector `(I − XX − YY − ZZ)/4`, `θ = π`;
    /// `h`: `exp(iπ/2·(X+Z)/√2) = i·H`; `x`, `y`, `z`: `exp(iπ/2·P) = i·P`;
    /// `s`: `exp(−iπ/4·Z) ∝ diag(1, i)`; `sx`: `exp(−iπ/4·X) ∝ √X`; inverses flip the sign;
    /// `i`: the zero generator.
    pub fn default_for(gate: Gate) -> Generator {
        use Pauli::{I, X, Y, Z};
        let q = std::f64::consts::FRAC_PI_4;
        let controlled = |t: Pauli| Generator {
            terms: vec![(1.0, [I, I]), (-1.0, [Z, I]), (-1.0, [I, t]), (1.0, [Z, t])],
            theta: q,
        };
        let single = |c: f64, p: Pauli, theta: f64| Generator {
            terms: vec![(c, [p, I])],
            theta,
        };
        match gate {
            Gate::Cx => controlled(X),
            Gate::Cy => controlled(Y),
            Gate::Cz => controlled(Z),
            Gate::Swap => Generator {
                terms: vec![
                    (0.25, [I, I]),
                    (-0.25, [X, X]),
                    (-0.25, [Y, Y]),
                    (-0.25, [Z, Z]),
                ],
                theta: std::f64::consts::PI,
            },
            Gate::H => {
                let r = std::f64::consts::FRAC_1_SQRT_2;
                Generator {
                    terms: vec![(r, [X, I]), (r, [Z, I])],
                    theta: 2.0 * q,
                }
            }
            Gate::X => single(1.0, X, 2.0 * q),
            Gate::Y => single(1.0, Y, 2.0 * q),
            Gate::Z => single(1.0, Z, 2.0 * q),
            Gate::S => single(-1.0, Z, q),
            Gate::Sdg => single(1.0, Z, q),
            Gate::Sx => single(-1.0, X, q),
            Gate::Sxdg => single(1.0, X, q),
            Gate::I => Generator {
                terms: Vec::new(),
                theta: 0.0,
            },
        }
    }

    /// `exp(i·angle·G)` as a 4×4 matrix.
    fn unitary(&self, angle: f64) -> M {
        let mut a = zero();
        for &(c, ps) in &self.terms {
            let p = pauli_matrix(ps);
            for i in 0..4 {
                for j in 0..4 {
                    a[i][j] = a[i][j].add(p[i][j].mul(C(0.0, angle * c)));
                }
            }
        }
        expm(&a)
    }

    /// The Pauli-twirled probabilities of `V F V†` with `V = exp(i·angle·G)`, in the order of
    /// [`Pauli::pair_from_index`].
    fn twirled(&self, fault: [Pauli; 2], angle: f64) -> [f64; 16] {
        let v = self.unitary(angle);
        let f = matmul(&matmul(&v, &pauli_matrix(fault)), &dagger(&v));
        let mut out = [0.0; 16];
        for (k, p) in all_pairs().enumerate() {
            // c_P = Tr(P F') / 4 (P Hermitian).
            let pm = pauli_matrix(p);
            let mut tr = C::default();
            for i in 0..4 {
                for j in 0..4 {
                    tr = tr.add(pm[i][j].mul(f[j][i]));
                }
            }
            out[k] = tr.scale(0.25).norm2();
        }
        out
    }

    /// The distribution of the Pauli that leaves the gate when `fault` strikes at a uniformly
    /// random time during it, after twirling: `∫₀¹ |c_P(s)|² ds` for each of the 16 Paulis.
    pub fn mid_gate(&self, fault: [Pauli; 2]) -> [f64; 16] {
        let n = RESOLUTION;
        let h = 1.0 / n as f64;
        let mut acc = [0.0; 16];
        for k in 0..=n {
            let s = k as f64 * h;
            let w = if k == 0 || k == n {
                1.0
            } else if k % 2 == 1 {
                4.0
            } else {
                2.0
            };
            let t = self.twirled(fault, (1.0 - s) * self.theta);
            for (a, v) in acc.iter_mut().zip(t) {
                *a += w * v * h / 3.0;
            }
        }
        acc
    }

    /// Conjugation by the full rotation, as a Pauli (for checking the generator against the
    /// gate table): returns the Pauli with the largest coefficient and that coefficient's
    /// squared magnitude.
    pub fn conjugate(&self, p: [Pauli; 2]) -> ([Pauli; 2], f64) {
        let t = self.twirled(p, self.theta);
        let (k, v) = t
            .iter()
            .enumerate()
            .fold((0, 0.0), |b, (k, &v)| if v > b.1 { (k, v) } else { b });
        let v2 = Pauli::pair_from_index(k);
        ([v2[0], v2[1]], v)
    }
}

/// Where a Pauli fault that strikes during `gate` leaves it, as a distribution over the 16
/// two-qubit Paulis (index as in [`Pauli::pair_from_index`]; one-qubit gates use the first
/// factor only). `fault` must have only Z and I factors for the non-ideal implementations to
/// transform it; anything else is returned unchanged (it is an after-gate fault).
pub fn mid_gate_fault(gate: Gate, implementation: Implementation, fault: [Pauli; 2]) -> [f64; 16] {
    let mut out = [0.0; 16];
    let index = |p: [Pauli; 2]| Pauli::pair_index(&format!("{}{}", p[0].letter(), p[1].letter()));
    let z_type = fault.iter().all(|p| !p.has_x());
    match implementation {
        Implementation::Rotation if z_type => Generator::default_for(gate).mid_gate(fault),
        Implementation::BiasPreserving if z_type && gate == Gate::Cx => {
            // Control Z commutes with the gate; a target Z leaves as Z_t or Z_c Z_t, 1/2 each.
            if fault[1] == Pauli::Z {
                let other = [fault[0].times(Pauli::Z), Pauli::Z];
                out[index(fault).unwrap_or(0)] += 0.5;
                out[index(other).unwrap_or(0)] += 0.5;
            } else {
                out[index(fault).unwrap_or(0)] = 1.0;
            }
            out
        }
        _ => {
            out[index(fault).unwrap_or(0)] = 1.0;
            out
        }
    }
}

/// The effective channel of `gate` under `implementation` when the noise model puts `channel`
/// on it: the Z-type terms are moved through the rest of the gate ([`mid_gate_fault`]), the
/// others stay. Returns a one-qubit `pauli` channel for one-qubit gates and a `pauli2` channel
/// for two-qubit gates; terms below 1e-15 (integration noise) are dropped. Under
/// [`Implementation::Ideal`] the channel is returned unchanged.
pub fn effective_channel(gate: Gate, implementation: Implementation, channel: &Channel) -> Channel {
    if implementation == Implementation::Ideal {
        return channel.clone();
    }
    let mut probs = [0.0; 16];
    for (p, paulis) in channel.terms() {
        let fault = [paulis[0], paulis.get(1).copied().unwrap_or(Pauli::I)];
        for (k, w) in mid_gate_fault(gate, implementation, fault)
            .iter()
            .enumerate()
        {
            probs[k] += p * w;
        }
    }
    for v in &mut probs {
        if *v < 1e-15 {
            *v = 0.0;
        }
    }
    if gate.arity() == 1 {
        // Index 4a for a one-qubit Pauli a on the first factor: X=4, Y=8, Z=12.
        Channel::Pauli1 {
            px: probs[4],
            py: probs[8],
            pz: probs[12],
        }
    } else {
        let mut two = [0.0; 15];
        two.copy_from_slice(&probs[1..]);
        Channel::Pauli2(Box::new(two))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Each default generator reproduces the gate's Heisenberg images (up to sign).
    #[test]
    fn generators_match_gate_table() {
        use Pauli::{I, X, Z};
        for g in Gate::ALL {
            let gen = Generator::default_for(g);
            let inputs: Vec<[Pauli; 2]> = if g.arity() == 2 {
                vec![[X, I], [Z, I], [I, X], [I, Z]]
            } else {
                vec![[X, I], [Z, I]]
            };
            for p in inputs {
                let (img, w) = gen.conjugate(p);
                assert!((w - 1.0).abs() < 1e-9, "{g:?} {p:?}: not a Pauli ({w})");
                assert_eq!(img, g.conjugate(p), "{g:?} {p:?}");
            }
        }
    }

    #[test]
    fn ideal_keeps_channel() {
        let ch = Channel::Pauli1 {
            px: 0.1,
            py: 0.0,
            pz: 0.2,
        };
        assert_eq!(effective_channel(Gate::H, Implementation::Ideal, &ch), ch);
    }
}
