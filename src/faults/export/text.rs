//! Plain-text export: a header, then one line per edge (`h` for a hyperedge), stable for diffs.
//!
//! ```text
//! # slant fault graph of t.slant: 4 detectors, 1 observable, 7 edges, 0 hyperedges (0 split), 2 silent faults, 0 inexact channels
//! e 0 p=1.000000e-3 w=6.906755 class=low dets=0 obs=- faults=2
//! ```
//!
//! For the matchable view: `e A B|boundary p=… w=… obs=…`.

use std::fmt::Write;

use crate::base::count;
use crate::faults::export::View;

fn ids(v: &[u32]) -> String {
    if v.is_empty() {
        "-".into()
    } else {
        v.iter().map(u32::to_string).collect::<Vec<_>>().join(",")
    }
}

/// Renders a view as text.
pub fn render(view: &View<'_>) -> String {
    let mut s = String::new();
    match view {
        View::Full(g) => {
            let _ = writeln!(
                s,
                "# slant fault graph of {}: {}, {}, {}, {} ({} split), {}, {}",
                g.source.name,
                count(g.detectors.len(), "detector"),
                count(g.observables.len(), "observable"),
                count(g.edges.len(), "edge"),
                count(g.hyperedges.hyperedges, "hyperedge"),
                g.hyperedges.split,
                count(g.silent.count, "silent fault"),
                count(g.inexact_channels, "inexact channel"),
            );
            for (k, m) in g.edges.iter().enumerate() {
                let _ = writeln!(
                    s,
                    "{} {k} p={:.6e} w={:.6} class={} dets={} obs={} faults={}",
                    if m.detectors.len() > 2 { "h" } else { "e" },
                    m.probability,
                    m.weight(),
                    m.classes.name(),
                    ids(&m.detectors),
                    ids(&m.observables),
                    m.provenance.len(),
                );
            }
        }
        View::Matching(g, mg, st) => {
            let _ = writeln!(
                s,
                "# slant matching graph of {}: {}, {}, {}, {} split, {} unsplit, {}, {}",
                g.source.name,
                count(mg.num_detectors, "detector"),
                count(mg.num_observables, "observable"),
                count(mg.edges.len(), "edge"),
                count(st.split, "hyperedge"),
                st.unsplit.len(),
                count(st.silent_logical.len(), "silent logical error"),
                count(st.observable_conflicts, "observable conflict"),
            );
            for e in &mg.edges {
                let b = e.b.map_or("boundary".to_string(), |b| b.to_string());
                let _ = writeln!(
                    s,
                    "e {} {b} p={:.6e} w={:.6} obs={}",
                    e.a,
                    e.p,
                    e.weight(),
                    ids(&e.observables)
                );
            }
        }
    }
    s
}
