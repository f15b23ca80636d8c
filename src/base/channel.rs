//! The kinds of noise channel the language writes: their keywords and parameter keys, the one
//! table that the parser, the expander and the printers share.

/// A kind of noise channel, as named in a `noise` statement.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum ChannelKind {
    /// `bitflip p=`: X on each target.
    BitFlip,
    /// `correlated p=`: one Pauli product over its own qubits.
    Correlated,
    /// `dephasing p=`: Z on each target.
    Dephasing,
    /// `depolarizing p=`: X, Y, Z with `p/3` each on each target.
    Depolarizing1,
    /// `depolarizing2 p=`: the 15 non-identity two-qubit Paulis with `p/15` each on each pair.
    Depolarizing2,
    /// `pauli x= y= z=`: a single-qubit Pauli channel.
    Pauli1,
    /// `pauli2 ix= … zz=`: a two-qubit Pauli channel with named terms.
    Pauli2,
}

impl ChannelKind {
    /// Every kind, in keyword order (the order suggestions are searched in).
    pub const ALL: [ChannelKind; 7] = [
        ChannelKind::BitFlip,
        ChannelKind::Correlated,
        ChannelKind::Dephasing,
        ChannelKind::Depolarizing1,
        ChannelKind::Depolarizing2,
        ChannelKind::Pauli1,
        ChannelKind::Pauli2,
    ];

    /// The keyword of the `noise` statement.
    pub fn name(self) -> &'static str {
        match self {
            ChannelKind::BitFlip => "bitflip",
            ChannelKind::Correlated => "correlated",
            ChannelKind::Dephasing => "dephasing",
            ChannelKind::Depolarizing1 => "depolarizing",
            ChannelKind::Depolarizing2 => "depolarizing2",
            ChannelKind::Pauli1 => "pauli",
            ChannelKind::Pauli2 => "pauli2",
        }
    }

    /// Looks a kind up by its keyword.
    pub fn from_name(name: &str) -> Option<ChannelKind> {
        ChannelKind::ALL.into_iter().find(|k| k.name() == name)
    }

    /// The parameter keys the channel takes. [`ChannelKind::Pauli2`] lists none here: its keys
    /// are the fifteen two-letter Pauli names (see [`ChannelKind::takes`]).
    pub fn keys(self) -> &'static [&'static str] {
        match self {
            ChannelKind::Pauli1 => &["x", "y", "z"],
            ChannelKind::Pauli2 => &[],
            _ => &["p"],
        }
    }

    /// Whether `key` is a parameter of the channel.
    pub fn takes(self, key: &str) -> bool {
        match self {
            ChannelKind::Pauli2 => {
                key.len() == 2 && crate::base::Pauli::pair_index(key).is_some_and(|k| k > 0)
            }
            _ => self.keys().contains(&key),
        }
    }

    /// Whether the targets are one Pauli product (`x a * z b`) rather than groups of qubits.
    pub fn takes_product(self) -> bool {
        self == ChannelKind::Correlated
    }

    /// Qubits per application for the kinds applied to groups: 1 or 2 (`None` for
    /// [`ChannelKind::Correlated`], whose product sets its own).
    pub fn group_size(self) -> Option<usize> {
        match self {
            ChannelKind::Correlated => None,
            ChannelKind::Depolarizing2 | ChannelKind::Pauli2 => Some(2),
            _ => Some(1),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_round_trip_and_keys() {
        for k in ChannelKind::ALL {
            assert_eq!(ChannelKind::from_name(k.name()), Some(k));
        }
        assert_eq!(ChannelKind::from_name("depolarising"), None);
        assert!(ChannelKind::Pauli2.takes("zz") && !ChannelKind::Pauli2.takes("ii"));
        assert!(ChannelKind::Pauli1.takes("y") && !ChannelKind::Pauli1.takes("p"));
        assert!(ChannelKind::Dephasing.takes("p") && !ChannelKind::Dephasing.takes("q"));
    }
}
