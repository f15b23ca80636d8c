//! The kinds of noise channel the language writes: their keywords and parameter keys, the one
//! table that the parser, the expander and the printers share.
//!
//! `pauli` is one keyword for two kinds: its keys decide the arity (`x= y= z=` act on one qubit,
//! the two-letter names `ix= … zz=` on a pair), so [`ChannelKind::resolve`] reads them.

/// A kind of noise channel, as named in a `noise` statement.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum ChannelKind {
    /// `bitflip p=`: X on each target.
    BitFlip,
    /// `dephasing p=`: Z on each target.
    Dephasing,
    /// `depolarizing p=`: X, Y, Z with `p/3` each on each target.
    Depolarizing,
    /// `joint p=`: one Pauli product over its own qubits, as one fault.
    Joint,
    /// `pair_depolarizing p=`: the 15 non-identity two-qubit Paulis with `p/15` each on each pair.
    PairDepolarizing,
    /// `pauli ix= … zz=`: a two-qubit Pauli channel with named terms.
    PairPauli,
    /// `pauli x= y= z=`: a single-qubit Pauli channel.
    Pauli,
}

/// How the keys of a `pauli` channel decide its arity.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Arity {
    /// No key read yet, or a kind whose arity does not follow its keys.
    Open,
    /// One-qubit keys (`x= y= z=`).
    One,
    /// Two-qubit keys (`ix= … zz=`).
    Two,
}

impl ChannelKind {
    /// Every kind, in keyword order (the order suggestions are searched in).
    pub const ALL: [ChannelKind; 7] = [
        ChannelKind::BitFlip,
        ChannelKind::Dephasing,
        ChannelKind::Depolarizing,
        ChannelKind::Joint,
        ChannelKind::PairDepolarizing,
        ChannelKind::PairPauli,
        ChannelKind::Pauli,
    ];

    /// The distinct keywords, in order.
    pub const KEYWORDS: [&'static str; 6] = [
        "bitflip",
        "dephasing",
        "depolarizing",
        "joint",
        "pair_depolarizing",
        "pauli",
    ];

    /// The keyword of the `noise` statement.
    pub fn name(self) -> &'static str {
        match self {
            ChannelKind::BitFlip => "bitflip",
            ChannelKind::Dephasing => "dephasing",
            ChannelKind::Depolarizing => "depolarizing",
            ChannelKind::Joint => "joint",
            ChannelKind::PairDepolarizing => "pair_depolarizing",
            ChannelKind::PairPauli | ChannelKind::Pauli => "pauli",
        }
    }

    /// Looks a kind up by its keyword; `pauli` gives [`ChannelKind::Pauli`] until its keys say
    /// otherwise (see [`ChannelKind::resolve`]).
    pub fn from_name(name: &str) -> Option<ChannelKind> {
        if name == "pauli" {
            return Some(ChannelKind::Pauli);
        }
        ChannelKind::ALL.into_iter().find(|k| k.name() == name)
    }

    /// The kind of a `noise NAME KEYS…` statement: `pauli` with two-letter keys is the pair
    /// channel. Mixed keys resolve by the first; the parser refuses the clash at its key.
    pub fn resolve<'k>(name: &str, keys: impl IntoIterator<Item = &'k str>) -> Option<ChannelKind> {
        let kind = ChannelKind::from_name(name)?;
        if kind != ChannelKind::Pauli {
            return Some(kind);
        }
        let first = keys.into_iter().map(key_arity).find(|a| *a != Arity::Open);
        Some(match first {
            Some(Arity::Two) => ChannelKind::PairPauli,
            _ => ChannelKind::Pauli,
        })
    }

    /// The parameter keys the channel takes. [`ChannelKind::PairPauli`] lists none here: its keys
    /// are the fifteen two-letter Pauli names (see [`ChannelKind::takes`]).
    pub fn keys(self) -> &'static [&'static str] {
        match self {
            ChannelKind::Pauli => &["x", "y", "z"],
            ChannelKind::PairPauli => &[],
            _ => &["p"],
        }
    }

    /// Whether `key` is a parameter of the channel.
    pub fn takes(self, key: &str) -> bool {
        match self {
            ChannelKind::PairPauli => key_arity(key) == Arity::Two,
            _ => self.keys().contains(&key),
        }
    }

    /// Whether the targets are one Pauli product (`x a * z b`) rather than groups of qubits.
    pub fn takes_product(self) -> bool {
        self == ChannelKind::Joint
    }

    /// Qubits per application for the kinds applied to groups: 1 or 2 (`None` for
    /// [`ChannelKind::Joint`], whose product sets its own).
    pub fn group_size(self) -> Option<usize> {
        match self {
            ChannelKind::Joint => None,
            ChannelKind::PairDepolarizing | ChannelKind::PairPauli => Some(2),
            _ => Some(1),
        }
    }
}

/// The arity a `pauli` key asks for: `x`, `y`, `z` one qubit; a two-letter Pauli name other than
/// `ii` a pair; anything else [`Arity::Open`].
pub fn key_arity(key: &str) -> Arity {
    if matches!(key, "x" | "y" | "z") {
        Arity::One
    } else if key.len() == 2 && crate::base::Pauli::pair_index(key).is_some_and(|k| k > 0) {
        Arity::Two
    } else {
        Arity::Open
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_round_trip_and_keys() {
        for k in ChannelKind::ALL {
            let keys: &[&str] = if k == ChannelKind::PairPauli {
                &["zz"]
            } else {
                &[]
            };
            assert_eq!(
                ChannelKind::resolve(k.name(), keys.iter().copied()),
                Some(k)
            );
        }
        assert_eq!(ChannelKind::from_name("depolarising"), None);
        assert!(ChannelKind::PairPauli.takes("zz") && !ChannelKind::PairPauli.takes("ii"));
        assert!(ChannelKind::Pauli.takes("y") && !ChannelKind::Pauli.takes("p"));
        assert!(ChannelKind::Dephasing.takes("p") && !ChannelKind::Dephasing.takes("q"));
        assert_eq!(
            ChannelKind::resolve("pauli", ["ix", "z"]),
            Some(ChannelKind::PairPauli)
        );
        assert_eq!(ChannelKind::resolve("pauli", []), Some(ChannelKind::Pauli));
    }
}
