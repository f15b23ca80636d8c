//! Single-qubit Paulis as two bits (x, z), the encoding every simulator in slant uses.

/// A single-qubit Pauli up to phase: bit 0 is the X part, bit 1 the Z part.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Pauli {
    /// Identity.
    I = 0,
    /// X.
    X = 1,
    /// Z.
    Z = 2,
    /// Y = iXZ.
    Y = 3,
}

impl Pauli {
    /// Builds from the X and Z bits.
    pub fn from_bits(x: bool, z: bool) -> Pauli {
        match (x, z) {
            (false, false) => Pauli::I,
            (true, false) => Pauli::X,
            (false, true) => Pauli::Z,
            (true, true) => Pauli::Y,
        }
    }

    /// Whether the X bit is set (X or Y).
    pub fn has_x(self) -> bool {
        self as u8 & 1 != 0
    }

    /// Whether the Z bit is set (Z or Y).
    pub fn has_z(self) -> bool {
        self as u8 & 2 != 0
    }

    /// Whether two Paulis anticommute.
    pub fn anticommutes(self, other: Pauli) -> bool {
        (self.has_x() && other.has_z()) != (self.has_z() && other.has_x())
    }

    /// Product up to phase.
    pub fn times(self, other: Pauli) -> Pauli {
        Pauli::from_bits(self.has_x() != other.has_x(), self.has_z() != other.has_z())
    }

    /// Upper-case letter, as in `ZZ` or `IY`.
    pub fn letter(self) -> char {
        ['I', 'X', 'Z', 'Y'][self as usize]
    }

    /// Parses one of `I X Y Z` (either case).
    pub fn from_letter(c: char) -> Option<Pauli> {
        match c.to_ascii_uppercase() {
            'I' => Some(Pauli::I),
            'X' => Some(Pauli::X),
            'Y' => Some(Pauli::Y),
            'Z' => Some(Pauli::Z),
            _ => None,
        }
    }

    /// The pair with index `k = 4*a + b` in the order `I=0, X=1, Y=2, Z=3` (k in 0..16), the
    /// order of the two-qubit Pauli channel (`pauli` with two-letter keys).
    pub fn pair_from_index(k: usize) -> Vec<Pauli> {
        const ORDER: [Pauli; 4] = [Pauli::I, Pauli::X, Pauli::Y, Pauli::Z];
        vec![ORDER[k / 4], ORDER[k % 4]]
    }

    /// Inverse of [`Pauli::pair_from_index`] for a two-letter name such as `zy`.
    pub fn pair_index(name: &str) -> Option<usize> {
        let order = |p: Pauli| match p {
            Pauli::I => 0,
            Pauli::X => 1,
            Pauli::Y => 2,
            Pauli::Z => 3,
        };
        let mut cs = name.chars();
        let a = Pauli::from_letter(cs.next()?)?;
        let b = Pauli::from_letter(cs.next()?)?;
        if cs.next().is_some() {
            return None;
        }
        Some(4 * order(a) + order(b))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn algebra() {
        assert!(Pauli::X.anticommutes(Pauli::Z));
        assert!(Pauli::Y.anticommutes(Pauli::Z));
        assert!(!Pauli::Y.anticommutes(Pauli::Y));
        assert_eq!(Pauli::X.times(Pauli::Z), Pauli::Y);
        assert_eq!(Pauli::pair_index("zz"), Some(15));
        assert_eq!(Pauli::pair_from_index(15), vec![Pauli::Z, Pauli::Z]);
        assert_eq!(Pauli::pair_index("ix"), Some(1));
        assert_eq!(Pauli::pair_index("ii"), Some(0));
    }
}
