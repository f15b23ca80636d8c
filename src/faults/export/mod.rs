//! Exports of the fault graph: JSON, Matrix Market + NumPy, Graphviz and plain text.
//!
//! In: a [`FaultGraph`] (or its [`crate::faults::MatchingGraph`] view with `matchable`). Out:
//! bytes; the CLI writes them atomically. Every format is parsed back by the tests into the same
//! graph. Schemas:
//! - [`json`]: `format = "slant-fault-graph"` or `"slant-matching-graph"`, `version = 1`;
//! - [`mtx`]: `H.mtx` (detectors × columns), `L.mtx` (observables × columns) in Matrix Market
//!   coordinate integer general format, `priors.npy` (float64, NumPy format 1.0); a column is a
//!   edge, or an edge of the matching graph with `matchable`;
//! - [`dot`]: Graphviz `graph`, detectors pinned at their first two coordinates;
//! - [`text`]: one line per edge or edge.

mod dot;
mod json;
mod mtx;
mod text;

use crate::faults::graph::{FaultGraph, MatchingGraph, MatchingStats};

/// An output format of `slant graph`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum Format {
    /// Graphviz.
    Dot,
    /// JSON with the documented schema.
    Json,
    /// Directory with `H.mtx`, `L.mtx` and `priors.npy`.
    Mtx,
    /// Compact listing.
    Text,
}

/// What to export: every edge, or the matchable view.
pub enum View<'g> {
    /// Every edge of the graph, hyperedges included.
    Full(&'g FaultGraph),
    /// The matching graph built from it, with the stats of building it.
    Matching(&'g FaultGraph, &'g MatchingGraph, &'g MatchingStats),
}

/// Files of an export: `(name, bytes)`; a single unnamed entry for one-file formats.
pub type Files = Vec<(String, Vec<u8>)>;

/// Streams a one-file format (everything but `mtx`) into `w`; JSON is written piece by piece,
/// the small formats are rendered first. Returns `false` for `mtx`, which is a directory.
pub fn write_one(
    view: &View<'_>,
    format: Format,
    w: &mut impl std::io::Write,
) -> std::io::Result<bool> {
    match format {
        Format::Json => json::write(view, w)?,
        Format::Dot => w.write_all(dot::render(view).as_bytes())?,
        Format::Text => w.write_all(text::render(view).as_bytes())?,
        Format::Mtx => return Ok(false),
    }
    Ok(true)
}

/// Renders a view in a format.
pub fn render(view: &View<'_>, format: Format) -> Files {
    match format {
        Format::Dot => vec![(String::new(), dot::render(view).into_bytes())],
        Format::Json => vec![(String::new(), json::render(view))],
        Format::Mtx => mtx::render(view),
        Format::Text => vec![(String::new(), text::render(view).into_bytes())],
    }
}
