//! Gates and bases: the Clifford gates of the language, their names, and their semantics as
//! Heisenberg images (how each gate conjugates X and Z on each of its qubits).
//!
//! [`Gate::heisenberg`] is the single definition of gate semantics. The tableau, the Pauli-frame
//! sampler and the backward sensitivity sweep specialise it for speed, and their tests compare
//! against it. Signs are dropped: frames and sensitivities only need Paulis up to phase.

use crate::base::Pauli;

/// Single-qubit and two-qubit Clifford gates.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Gate {
    /// Controlled-X (first target controls).
    Cx,
    /// Controlled-Y.
    Cy,
    /// Controlled-Z.
    Cz,
    /// Hadamard.
    H,
    /// Identity (an explicit idle slot).
    I,
    /// Phase gate, `diag(1, i)`.
    S,
    /// Inverse phase gate.
    Sdg,
    /// Swap.
    Swap,
    /// Square root of X.
    Sx,
    /// Inverse square root of X.
    Sxdg,
    /// Pauli X.
    X,
    /// Pauli Y.
    Y,
    /// Pauli Z.
    Z,
}

impl Gate {
    /// Every gate, for name lookup and suggestions.
    pub const ALL: [Gate; 13] = [
        Gate::I,
        Gate::X,
        Gate::Y,
        Gate::Z,
        Gate::H,
        Gate::S,
        Gate::Sdg,
        Gate::Sx,
        Gate::Sxdg,
        Gate::Cx,
        Gate::Cy,
        Gate::Cz,
        Gate::Swap,
    ];

    /// The name used in the language.
    pub fn name(self) -> &'static str {
        match self {
            Gate::Cx => "cx",
            Gate::Cy => "cy",
            Gate::Cz => "cz",
            Gate::H => "h",
            Gate::I => "i",
            Gate::S => "s",
            Gate::Sdg => "sdg",
            Gate::Swap => "swap",
            Gate::Sx => "sx",
            Gate::Sxdg => "sxdg",
            Gate::X => "x",
            Gate::Y => "y",
            Gate::Z => "z",
        }
    }

    /// Looks a gate up by its language name.
    pub fn from_name(name: &str) -> Option<Gate> {
        Gate::ALL.into_iter().find(|g| g.name() == name)
    }

    /// The gate that a name common in other notations stands for (`cnot` → `cx`, `hadamard` →
    /// `h`), for suggestions where edit distance finds nothing.
    pub fn from_alias(name: &str) -> Option<Gate> {
        const ALIASES: [(&str, Gate); 8] = [
            ("cnot", Gate::Cx),
            ("cphase", Gate::Cz),
            ("hadamard", Gate::H),
            ("identity", Gate::I),
            ("not", Gate::X),
            ("sdag", Gate::Sdg),
            ("sqrt_x", Gate::Sx),
            ("sqrtx", Gate::Sx),
        ];
        let lower = name.to_ascii_lowercase();
        ALIASES
            .iter()
            .find(|(a, _)| *a == lower)
            .map(|&(_, g)| g)
            .or_else(|| Gate::from_name(&lower))
    }

    /// Number of qubits the gate acts on.
    pub fn arity(self) -> usize {
        match self {
            Gate::Cx | Gate::Cy | Gate::Cz | Gate::Swap => 2,
            _ => 1,
        }
    }
}

/// A single-qubit measurement or reset basis.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Basis {
    /// Eigenbasis of X.
    X,
    /// Eigenbasis of Y.
    Y,
    /// Eigenbasis of Z (computational).
    Z,
}

impl Basis {
    /// The Pauli whose eigenbasis this is.
    pub fn pauli(self) -> Pauli {
        match self {
            Basis::X => Pauli::X,
            Basis::Y => Pauli::Y,
            Basis::Z => Pauli::Z,
        }
    }

    /// The basis of a Pauli (`None` for the identity).
    pub fn of_pauli(p: Pauli) -> Option<Basis> {
        match p {
            Pauli::I => None,
            Pauli::X => Some(Basis::X),
            Pauli::Y => Some(Basis::Y),
            Pauli::Z => Some(Basis::Z),
        }
    }

    /// Every basis, in the order x, y, z.
    pub const ALL: [Basis; 3] = [Basis::X, Basis::Y, Basis::Z];

    /// Lower-case name as written in the language.
    pub fn name(self) -> &'static str {
        match self {
            Basis::X => "x",
            Basis::Y => "y",
            Basis::Z => "z",
        }
    }
}

impl Gate {
    /// Images `G P G†` of `[X on target 0, Z on target 0, X on target 1, Z on target 1]`, each as
    /// the Paulis on the gate's targets. For one-qubit gates only the first two entries matter and
    /// the second Pauli of each is `I`.
    pub fn heisenberg(self) -> [[Pauli; 2]; 4] {
        use Pauli::{I, X, Y, Z};
        match self {
            Gate::I | Gate::X | Gate::Y | Gate::Z => [[X, I], [Z, I], [I, I], [I, I]],
            Gate::H => [[Z, I], [X, I], [I, I], [I, I]],
            Gate::S | Gate::Sdg => [[Y, I], [Z, I], [I, I], [I, I]],
            Gate::Sx | Gate::Sxdg => [[X, I], [Y, I], [I, I], [I, I]],
            Gate::Cx => [[X, X], [Z, I], [I, X], [Z, Z]],
            Gate::Cy => [[X, Y], [Z, I], [Z, X], [Z, Z]],
            Gate::Cz => [[X, Z], [Z, I], [Z, X], [I, Z]],
            Gate::Swap => [[I, X], [I, Z], [X, I], [Z, I]],
        }
    }

    /// Conjugates a Pauli on the gate's targets (up to phase).
    pub fn conjugate(self, input: [Pauli; 2]) -> [Pauli; 2] {
        let h = self.heisenberg();
        let mut out = [Pauli::I, Pauli::I];
        for (k, p) in input.iter().enumerate().take(self.arity()) {
            if p.has_x() {
                out[0] = out[0].times(h[2 * k][0]);
                out[1] = out[1].times(h[2 * k][1]);
            }
            if p.has_z() {
                out[0] = out[0].times(h[2 * k + 1][0]);
                out[1] = out[1].times(h[2 * k + 1][1]);
            }
        }
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Conjugation must preserve commutation relations; a wrong table entry breaks that.
    #[test]
    fn images_preserve_commutation() {
        let all = [Pauli::I, Pauli::X, Pauli::Y, Pauli::Z];
        for g in Gate::ALL {
            for a0 in all {
                for a1 in all {
                    for b0 in all {
                        for b1 in all {
                            let anti = |p: [Pauli; 2], q: [Pauli; 2]| {
                                p[0].anticommutes(q[0]) != p[1].anticommutes(q[1])
                            };
                            let (a, b) = ([a0, a1], [b0, b1]);
                            if g.arity() == 1 && (a1 != Pauli::I || b1 != Pauli::I) {
                                continue;
                            }
                            assert_eq!(anti(a, b), anti(g.conjugate(a), g.conjugate(b)), "{g:?}");
                        }
                    }
                }
            }
        }
    }

    #[test]
    fn cx_textbook_images() {
        // Nielsen & Chuang, Quantum Computation and Quantum Information, Fig. 10.7.
        assert_eq!(
            Gate::Cx.conjugate([Pauli::X, Pauli::I]),
            [Pauli::X, Pauli::X]
        );
        assert_eq!(
            Gate::Cx.conjugate([Pauli::I, Pauli::Z]),
            [Pauli::Z, Pauli::Z]
        );
        assert_eq!(
            Gate::H.conjugate([Pauli::Z, Pauli::I]),
            [Pauli::X, Pauli::I]
        );
    }
}
