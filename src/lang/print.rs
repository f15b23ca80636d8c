//! Canonical printer (in progress).
