//! Code-family generators: each writes a circuit in slant's language.
