//! Gate implementations and the faults that strike during a gate.
//!
//! In: a [`Gate`], an [`Implementation`] and the Pauli channel the noise model puts on the gate.
//! Out: the gate's *effective* channel, written after the ideal gate, with the faults that
//! happen mid-gate transformed by the rest of the gate.
//!
//! - [`Implementation::Ideal`]: the channel is applied after the gate as it is.
//! - [`Implementation::Rotation`]: the gate is `U = exp(iθG)` with `G` a Pauli polynomial
//!   ([`Generator::default_for`] gives one for every Clifford gate, equal to the gate up to a
//!   global phase; a model file may give its own, written as text ([`parse_polynomial`],
//!   [`parse_angle`]) and accepted only if its rotation is the gate up to a global phase,
//!   [`Generator::deviation_from`]). A fault `F` striking at time `s ∈ [0, 1]` (uniform) is
//!   followed by the rest of the rotation, so the gate acts as `(V F V†) U` with
//!   `V = exp(i(1−s)θG)`. `V F V†` is
//!   expanded in Paulis, `Σ c_P P`, and Pauli-twirled: only the diagonal of the Pauli transfer
//!   matrix is kept, i.e. `P` with probability `|c_P|²` (these sum to 1 because `V F V†` is
//!   unitary and Hermitian-traceless-normalised: `Σ|c_P|² = Tr(F'F'†)/2^n = 1`). The
//!   probabilities are integrated over `s` with composite Simpson's rule
//!   ([`RESOLUTION`] panels for every default generator; the integrand is a trigonometric
//!   polynomial in `s`, so the error is far below 1e-12). A generator that winds further
//!   (`|θ|·Σ|c_k| > π`) gets proportionally more panels, so its panels cover no more phase than
//!   the default `cx`'s do.
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

use crate::base::{Gate, Pauli};
use crate::ir::Channel;

/// Number of Simpson panels used to integrate over the fault time (even), per π of winding
/// (see [`Generator::winding`]).
pub const RESOLUTION: usize = 256;

/// How far `exp(iθG)` may be from its gate (largest matrix entry, up to a global phase; see
/// [`Generator::deviation_from`]) and still implement it. Coefficients written to eight
/// significant digits (`0.70710678` for 1/√2) stay well inside; distinct Clifford gates differ
/// by order-one entries.
pub const GATE_TOLERANCE: f64 = 1e-6;

/// The largest [`Generator::winding`] accepted from a model file: a Clifford gate needs a few π
/// at most, and the integration cost grows with the winding.
pub const MAX_WINDING: f64 = 16.0;

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

/// The textbook matrix of `gate` ("Quantum Computation and Quantum Information", Nielsen &
/// Chuang, §4.2–4.3; `sx` = √X = ((1+i)I + (1−i)X)/2), on the basis of [`M`]: one-qubit gates
/// act on q0, the control of a controlled gate is q0. Written independently of the generators so
/// that each checks the other.
fn gate_matrix(gate: Gate) -> M {
    let (o, z, i) = (C(1.0, 0.0), C(0.0, 0.0), C(0.0, 1.0));
    let r = std::f64::consts::FRAC_1_SQRT_2;
    let (a, b) = (C(0.5, 0.5), C(0.5, -0.5));
    let one = |u: [[C; 2]; 2]| {
        let mut m = zero();
        for row in 0..4 {
            for col in 0..4 {
                if row & 1 == col & 1 {
                    m[row][col] = u[row >> 1][col >> 1];
                }
            }
        }
        m
    };
    let controlled = |u: [[C; 2]; 2]| {
        let mut m = identity();
        for row in 0..2 {
            for col in 0..2 {
                m[2 + row][2 + col] = u[row][col];
            }
        }
        m
    };
    match gate {
        Gate::I => identity(),
        Gate::X => one(pauli_2x2(Pauli::X)),
        Gate::Y => one(pauli_2x2(Pauli::Y)),
        Gate::Z => one(pauli_2x2(Pauli::Z)),
        Gate::H => one([[C(r, 0.0), C(r, 0.0)], [C(r, 0.0), C(-r, 0.0)]]),
        Gate::S => one([[o, z], [z, i]]),
        Gate::Sdg => one([[o, z], [z, i.scale(-1.0)]]),
        Gate::Sx => one([[a, b], [b, a]]),
        Gate::Sxdg => one([[b, a], [a, b]]),
        Gate::Cx => controlled(pauli_2x2(Pauli::X)),
        Gate::Cy => controlled(pauli_2x2(Pauli::Y)),
        Gate::Cz => controlled(pauli_2x2(Pauli::Z)),
        Gate::Swap => {
            let mut m = zero();
            for (row, col) in [(0, 0), (1, 2), (2, 1), (3, 3)] {
                m[row][col] = o;
            }
            m
        }
    }
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

/// The terms `(coefficient, Pauli on the gate's targets)` of a generator; one-qubit gates use
/// the first Pauli only (the second is `I`).
pub type Terms = Vec<(f64, [Pauli; 2])>;

/// A rotation generator: `G = Σ c_k P_k` (real coefficients, so `G` is Hermitian) and an angle.
#[derive(Clone, Debug, PartialEq)]
pub struct Generator {
    /// Terms `(coefficient, Pauli on the gate's targets)`.
    pub terms: Terms,
    /// The rotation angle θ in `exp(iθG)`.
    pub theta: f64,
}

impl Generator {
    /// A generator whose rotation equals `gate` up to a global phase.
    ///
    /// Derivations (each checked in the unit tests against [`Gate::heisenberg`] and, signs
    /// included, against the gate's textbook matrix):
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

    /// `|θ|·Σ|c_k| / π`: a bound on how many half-turns the rotation's phases make (the
    /// eigenvalues of `G` lie within `±Σ|c_k|`). It sets the integration panels
    /// ([`RESOLUTION`] per unit, rounded up; every default generator has at most 1).
    pub fn winding(&self) -> f64 {
        let norm: f64 = self.terms.iter().map(|t| t.0.abs()).sum();
        self.theta.abs() * norm / std::f64::consts::PI
    }

    fn panels(&self) -> usize {
        // The slack keeps the default `cx` (exactly one half-turn, up to rounding) at one unit.
        let units = (self.winding() - 1e-9).ceil().max(1.0);
        RESOLUTION * units as usize
    }

    /// How far the rotation `exp(iθG)` is from `gate`, ignoring a global phase: the largest
    /// entry of `U − e^{iφ}·M`, with `M` the gate's matrix and `e^{iφ}` the phase of
    /// `Tr(M†U)` (the best phase when `U` is close to a multiple of `M`). 0 up to rounding
    /// when the generator implements the gate; compare with [`GATE_TOLERANCE`].
    pub fn deviation_from(&self, gate: Gate) -> f64 {
        let u = self.unitary(self.theta);
        let m = gate_matrix(gate);
        let mut tr = C::default();
        for i in 0..4 {
            for j in 0..4 {
                tr = tr.add(m[i][j].conj().mul(u[i][j]));
            }
        }
        let size = tr.norm2().sqrt();
        let phase = if size > 1e-12 {
            tr.scale(1.0 / size)
        } else {
            C(1.0, 0.0)
        };
        let mut worst: f64 = 0.0;
        for i in 0..4 {
            for j in 0..4 {
                let d = u[i][j].add(phase.mul(m[i][j]).scale(-1.0));
                worst = worst.max(d.norm2().sqrt());
            }
        }
        worst
    }

    /// The generator as model-file text for a gate on `arity` qubits, e.g. `II - ZI - IX + ZX`
    /// (the form [`parse_polynomial`] reads).
    pub fn text(&self, arity: usize) -> String {
        let mut s = String::new();
        for (k, &(c, ps)) in self.terms.iter().enumerate() {
            let paulis: String = ps[..arity].iter().map(|p| p.letter()).collect();
            let sign = match (k, c < 0.0) {
                (0, false) => "",
                (0, true) => "-",
                (_, false) => " + ",
                (_, true) => " - ",
            };
            let size = c.abs();
            if size == 1.0 {
                s.push_str(&format!("{sign}{paulis}"));
            } else {
                s.push_str(&format!("{sign}{size} {paulis}"));
            }
        }
        if s.is_empty() {
            // The zero generator (the identity gate): one explicit zero term.
            s = format!("0 {}", "I".repeat(arity));
        }
        s
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
        let n = self.panels();
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

/// An angle in radians as model-file text (the form [`parse_angle`] reads): a multiple of π/4
/// as `pi/4`, `-pi/2`, `3*pi/4`, `2*pi`; anything else as a decimal number.
pub fn angle_text(theta: f64) -> String {
    let quarters = theta / std::f64::consts::FRAC_PI_4;
    if (quarters - quarters.round()).abs() > 1e-12 {
        return format!("{theta}");
    }
    let mut num = quarters.round() as i64;
    let mut den = 4;
    while den > 1 && num % 2 == 0 {
        num /= 2;
        den /= 2;
    }
    let k = match num {
        0 => return "0".into(),
        1 => String::new(),
        -1 => "-".into(),
        n => format!("{n}*"),
    };
    if den == 1 {
        format!("{k}pi")
    } else {
        format!("{k}pi/{den}")
    }
}

/// Parses an angle: a number (radians) or a multiple of π written `pi/4`, `-pi/2`, `3*pi/4`,
/// `3pi/4`, `0.5*pi`, `2 pi` (spaces are ignored, `PI` and `π` also work). `None` when the text
/// is not one or the value is not finite.
pub fn parse_angle(text: &str) -> Option<f64> {
    let t: String = text
        .chars()
        .filter(|c| !c.is_whitespace())
        .collect::<String>()
        .to_ascii_lowercase()
        .replace('π', "pi");
    let value = match t.split_once("pi") {
        None => t.parse::<f64>().ok()?,
        Some((before, after)) => {
            let k = match before.strip_suffix('*').unwrap_or(before) {
                "" | "+" => 1.0,
                "-" => -1.0,
                k => k.parse::<f64>().ok()?,
            };
            let n = match after {
                "" => 1.0,
                a => a.strip_prefix('/')?.parse::<f64>().ok()?,
            };
            k * std::f64::consts::PI / n
        }
    };
    value.is_finite().then_some(value)
}

/// Parses a generator written as a Pauli polynomial for a gate on `arity` qubits: terms
/// `[COEFFICIENT[*]]PAULIS` joined by `+` or `-`, a leading sign allowed, e.g. `II - ZI - IX +
/// ZX`, `0.25 II - 0.25 XX - 0.25 YY - 0.25 ZZ`, `0.7071067811865476*X + 0.7071067811865476*Z`.
/// A missing coefficient is 1; coefficients are finite decimals (real, so the generator is
/// Hermitian); `PAULIS` has one letter of `I X Y Z` (either case) per qubit, the first for the
/// gate's first target. Repeated Pauli strings are summed. An error gives the byte range in
/// `text` and the message.
pub fn parse_polynomial(
    text: &str,
    arity: usize,
) -> Result<Terms, (std::ops::Range<usize>, String)> {
    let cs: Vec<(usize, char)> = text.char_indices().collect();
    let at = |k: usize| cs.get(k).map_or(text.len(), |c| c.0);
    let skip = |k: &mut usize| {
        while cs.get(*k).is_some_and(|c| c.1.is_whitespace()) {
            *k += 1;
        }
    };
    let mut terms: Terms = Vec::new();
    let mut k = 0;
    skip(&mut k);
    if k == cs.len() {
        return Err((0..text.len(), "the generator is empty".into()));
    }
    while k < cs.len() {
        let mut sign = 1.0;
        match cs[k].1 {
            '+' | '-' => {
                sign = if cs[k].1 == '-' { -1.0 } else { 1.0 };
                k += 1;
                skip(&mut k);
            }
            _ if !terms.is_empty() => {
                return Err((at(k)..at(k + 1), "expected `+` or `-` between terms".into()));
            }
            _ => {}
        }
        // Coefficient: digits and a point, then an exponent only when digits follow the `e`.
        let start = k;
        while cs
            .get(k)
            .is_some_and(|c| c.1.is_ascii_digit() || c.1 == '.')
        {
            k += 1;
        }
        if k > start && cs.get(k).is_some_and(|c| c.1 == 'e' || c.1 == 'E') {
            let mut e = k + 1;
            if cs.get(e).is_some_and(|c| c.1 == '+' || c.1 == '-') {
                e += 1;
            }
            if cs.get(e).is_some_and(|c| c.1.is_ascii_digit()) {
                k = e;
                while cs.get(k).is_some_and(|c| c.1.is_ascii_digit()) {
                    k += 1;
                }
            }
        }
        let coefficient = if k > start {
            let written = &text[at(start)..at(k)];
            let v: f64 = written
                .parse()
                .map_err(|_| (at(start)..at(k), format!("`{written}` is not a number")))?;
            if !v.is_finite() {
                return Err((
                    at(start)..at(k),
                    format!("coefficient `{written}` is not finite"),
                ));
            }
            skip(&mut k);
            if cs.get(k).is_some_and(|c| c.1 == '*') {
                k += 1;
                skip(&mut k);
            }
            v
        } else {
            1.0
        };
        let first = k;
        while cs.get(k).is_some_and(|c| c.1.is_alphabetic()) {
            k += 1;
        }
        if k == first {
            return Err((
                at(first)..at(first + 1),
                format!(
                    "expected a Pauli string of {arity} letter{} (I, X, Y, Z)",
                    if arity == 1 { "" } else { "s" }
                ),
            ));
        }
        let mut ps = [Pauli::I; 2];
        for (n, &(offset, c)) in cs[first..k].iter().enumerate() {
            let p = Pauli::from_letter(c).ok_or_else(|| {
                (
                    offset..offset + c.len_utf8(),
                    format!("`{c}` is not a Pauli (I, X, Y or Z)"),
                )
            })?;
            if n < 2 {
                ps[n] = p;
            }
        }
        if k - first != arity {
            let written = &text[at(first)..at(k)];
            return Err((
                at(first)..at(k),
                format!(
                    "`{written}` has {} letters, but the gate acts on {arity} qubit{}",
                    k - first,
                    if arity == 1 { "" } else { "s" }
                ),
            ));
        }
        let c = sign * coefficient;
        match terms.iter_mut().find(|t| t.1 == ps) {
            Some(t) => t.0 += c,
            None => terms.push((c, ps)),
        }
        skip(&mut k);
    }
    Ok(terms)
}

/// Where a Pauli fault that strikes during `gate` leaves it, as a distribution over the 16
/// two-qubit Paulis (index as in [`Pauli::pair_from_index`]; one-qubit gates use the first
/// factor only). `fault` must have only Z and I factors for the non-ideal implementations to
/// transform it; anything else is returned unchanged (it is an after-gate fault).
pub fn mid_gate_fault(gate: Gate, implementation: Implementation, fault: [Pauli; 2]) -> [f64; 16] {
    mid_gate_fault_with(gate, implementation, None, fault)
}

/// [`mid_gate_fault`] with the rotation's generator given (`None`: [`Generator::default_for`]).
/// The generator is used only by [`Implementation::Rotation`] and must implement `gate`.
pub fn mid_gate_fault_with(
    gate: Gate,
    implementation: Implementation,
    generator: Option<&Generator>,
    fault: [Pauli; 2],
) -> [f64; 16] {
    let mut out = [0.0; 16];
    let index = |p: [Pauli; 2]| Pauli::pair_index(&format!("{}{}", p[0].letter(), p[1].letter()));
    let z_type = fault.iter().all(|p| !p.has_x());
    match implementation {
        Implementation::Rotation if z_type => rotation_cached(gate, generator, fault),
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

/// Key of a rotation's mid-gate distribution: the gate, the generator's terms and angle as
/// exact bits (`None`: the gate's default generator) and the fault.
type RotationKey = (Gate, Option<Vec<(u64, [Pauli; 2])>>, u64, [Pauli; 2]);

thread_local! {
    /// Mid-gate distributions of rotations already integrated. Integrating one takes about two
    /// milliseconds, and a circuit applies the same few gates (with the same generator) to the
    /// same few faults over and over: compiling a model onto 5,000 rounds once integrated every
    /// CX anew.
    static ROTATIONS: std::cell::RefCell<std::collections::HashMap<RotationKey, [f64; 16]>> =
        std::cell::RefCell::new(std::collections::HashMap::new());
}

#[cfg(test)]
thread_local! {
    /// Rotations integrated by this thread (the cache's misses), for the tests.
    static INTEGRATIONS: std::cell::Cell<u64> = const { std::cell::Cell::new(0) };
}

/// [`Generator::mid_gate`] of `generator` (or of the gate's default one), integrated once per
/// thread for each distinct gate, generator and fault.
fn rotation_cached(gate: Gate, generator: Option<&Generator>, fault: [Pauli; 2]) -> [f64; 16] {
    let key: RotationKey = (
        gate,
        generator.map(|g| g.terms.iter().map(|(c, p)| (c.to_bits(), *p)).collect()),
        generator.map_or(0, |g| g.theta.to_bits()),
        fault,
    );
    if let Some(hit) = ROTATIONS.with(|m| m.borrow().get(&key).copied()) {
        return hit;
    }
    #[cfg(test)]
    INTEGRATIONS.with(|n| n.set(n.get() + 1));
    let out = match generator {
        Some(g) => g.mid_gate(fault),
        None => Generator::default_for(gate).mid_gate(fault),
    };
    ROTATIONS.with(|m| {
        let mut m = m.borrow_mut();
        // A bound so that a fuzzer's endless fresh generators cannot grow the cache forever.
        if m.len() > 4096 {
            m.clear();
        }
        m.insert(key, out);
    });
    out
}

/// The effective channel of `gate` under `implementation` when the noise model puts `channel`
/// on it: the Z-type terms are moved through the rest of the gate ([`mid_gate_fault`]), the
/// others stay. Returns a one-qubit `pauli` channel for one-qubit gates and a two-qubit `pauli`
/// channel for two-qubit gates; terms below 1e-15 (integration noise) are dropped. Under
/// [`Implementation::Ideal`] the channel is returned unchanged.
pub fn effective_channel(gate: Gate, implementation: Implementation, channel: &Channel) -> Channel {
    effective_channel_with(gate, implementation, None, channel)
}

/// [`effective_channel`] with the rotation's generator given (`None`: the default one).
pub fn effective_channel_with(
    gate: Gate,
    implementation: Implementation,
    generator: Option<&Generator>,
    channel: &Channel,
) -> Channel {
    if implementation == Implementation::Ideal {
        return channel.clone();
    }
    let mut probs = [0.0; 16];
    for (p, paulis) in channel.terms() {
        let fault = [paulis[0], paulis.get(1).copied().unwrap_or(Pauli::I)];
        for (k, w) in mid_gate_fault_with(gate, implementation, generator, fault)
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
        Channel::Pauli {
            px: probs[4],
            py: probs[8],
            pz: probs[12],
        }
    } else {
        let mut two = [0.0; 15];
        two.copy_from_slice(&probs[1..]);
        Channel::PairPauli(Box::new(two))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Compiling `cx=rotation` onto a long circuit integrated every CX's rotation anew (about
    /// 2 ms each: 96 s for `bias` on 5,000 rounds of the distance-3 repetition code). Each
    /// distinct gate, generator and fault is integrated once now, with the same result.
    #[test]
    fn rotations_are_integrated_once_per_gate_and_fault() {
        use Pauli::{I, Z};
        let before = INTEGRATIONS.with(|n| n.get());
        let first = mid_gate_fault(Gate::Cx, Implementation::Rotation, [I, Z]);
        for _ in 0..1000 {
            assert_eq!(
                mid_gate_fault(Gate::Cx, Implementation::Rotation, [I, Z]),
                first
            );
        }
        assert_eq!(INTEGRATIONS.with(|n| n.get()) - before, 1);
        // The cached value is the integral itself.
        assert_eq!(first, Generator::default_for(Gate::Cx).mid_gate([I, Z]));
        // A different generator for the same gate is its own entry.
        let mut g = Generator::default_for(Gate::Cx);
        g.terms.reverse();
        mid_gate_fault_with(Gate::Cx, Implementation::Rotation, Some(&g), [I, Z]);
        assert_eq!(INTEGRATIONS.with(|n| n.get()) - before, 2);
    }

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

    /// Each default generator's rotation is its gate's textbook matrix up to a global phase
    /// (signs included, which the Heisenberg table above cannot see), and no other gate's.
    #[test]
    fn generators_match_gate_matrices() {
        for g in Gate::ALL {
            let gen = Generator::default_for(g);
            assert!(
                gen.deviation_from(g) < 1e-12,
                "{g:?}: {}",
                gen.deviation_from(g)
            );
            assert!(gen.winding() <= 1.0 + 1e-9, "{g:?}");
            for other in Gate::ALL {
                if other != g && other.arity() == g.arity() {
                    assert!(gen.deviation_from(other) > 0.1, "{g:?} vs {other:?}");
                }
            }
        }
    }

    /// The text form reads back as the same generator, for every default.
    #[test]
    fn generator_text_round_trips() {
        for g in Gate::ALL {
            let gen = Generator::default_for(g);
            let text = gen.text(g.arity());
            let mut terms = parse_polynomial(&text, g.arity()).unwrap();
            // The identity's zero generator is written as one zero term.
            terms.retain(|t| t.0 != 0.0);
            assert_eq!(terms, gen.terms, "{g:?}: {text}");
            let angle = angle_text(gen.theta);
            assert_eq!(parse_angle(&angle), Some(gen.theta), "{g:?}: {angle}");
        }
        assert_eq!(
            Generator::default_for(Gate::Cx).text(2),
            "II - ZI - IX + ZX"
        );
        assert_eq!(angle_text(std::f64::consts::FRAC_PI_4), "pi/4");
        assert_eq!(angle_text(-3.0 * std::f64::consts::FRAC_PI_4), "-3*pi/4");
        assert_eq!(angle_text(2.0 * std::f64::consts::PI), "2*pi");
    }

    #[test]
    fn polynomials_parse_and_errors_are_placed() {
        use Pauli::{I, X, Z};
        assert_eq!(
            parse_polynomial(" -0.5*zx+ 2e-1 IX - XX + XX", 2).unwrap(),
            vec![(-0.5, [Z, X]), (0.2, [I, X]), (0.0, [X, X])]
        );
        assert_eq!(parse_polynomial("Z", 1).unwrap(), vec![(1.0, [Z, I])]);
        let cases: &[(&str, usize, std::ops::Range<usize>, &str)] = &[
            ("", 2, 0..0, "empty"),
            ("II ZI", 2, 3..4, "expected `+` or `-`"),
            ("II - ZIX", 2, 5..8, "has 3 letters"),
            ("II - ZQ", 2, 6..7, "`Q` is not a Pauli"),
            ("II - 0.5", 2, 8..8, "expected a Pauli string"),
            ("1..2 X", 1, 0..4, "is not a number"),
            ("1e999 X", 1, 0..5, "not finite"),
            ("X +", 1, 3..3, "expected a Pauli string of 1 letter"),
        ];
        for (text, arity, range, msg) in cases {
            let (r, m) = parse_polynomial(text, *arity).expect_err(text);
            assert_eq!(&r, range, "{text}: {m}");
            assert!(m.contains(msg), "{text}: {m}");
        }
    }

    #[test]
    fn angles_parse() {
        let pi = std::f64::consts::PI;
        for (text, v) in [
            ("pi/4", pi / 4.0),
            ("-pi/2", -pi / 2.0),
            ("3*pi/4", 3.0 * pi / 4.0),
            ("3pi/4", 3.0 * pi / 4.0),
            ("0.5 * PI", 0.5 * pi),
            ("2 π", 2.0 * pi),
            ("0.785", 0.785),
            ("pi", pi),
        ] {
            assert_eq!(parse_angle(text), Some(v), "{text}");
        }
        for bad in ["", "pi/", "pi/x", "tau", "inf", "NaN", "pi*2", "1e999"] {
            assert_eq!(parse_angle(bad), None, "{bad}");
        }
    }

    #[test]
    fn ideal_keeps_channel() {
        let ch = Channel::Pauli {
            px: 0.1,
            py: 0.0,
            pz: 0.2,
        };
        assert_eq!(effective_channel(Gate::H, Implementation::Ideal, &ch), ch);
    }
}
