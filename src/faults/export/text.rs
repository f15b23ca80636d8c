//! Plain-text export: a header, then one line per mechanism (or edge), stable for diffs.
//!
//! ```text
//! # slant fault graph of t.slant: 4 detectors, 1 observables, 7 mechanisms, 0 hyperedges (0 decomposed), 2 silent faults
//! m 0 p=1.000000e-3 w=6.906755 class=low dets=0 obs=- faults=2
//! ```
//!
//! For the graphlike view: `e A B|boundary p=… w=… obs=…`.

use std::fmt::Write;

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
                "# slant fault graph of {}: {} detectors, {} observables, {} mechanisms, {} hyperedges ({} decomposed), {} silent faults, {} inexact channels",
                g.source.name,
                g.detectors.len(),
                g.observables.len(),
                g.mechanisms.len(),
                g.hyperedges.hyperedges,
                g.hyperedges.decomposed,
                g.silent.count,
                g.inexact_channels,
            );
            for (k, m) in g.mechanisms.iter().enumerate() {
                let _ = writeln!(
                    s,
                    "m {k} p={:.6e} w={:.6} class={} dets={} obs={} faults={}",
                    m.probability,
                    m.weight(),
                    m.classes.name(),
                    ids(&m.detectors),
                    ids(&m.observables),
                    m.provenance.len(),
                );
            }
        }
        View::Graphlike(g, mg, st) => {
            let _ = writeln!(
                s,
                "# slant matching graph of {}: {} detectors, {} observables, {} edges, {} hyperedges decomposed, {} not decomposable, {} undetectable logical, {} observable conflicts",
                g.source.name,
                mg.num_detectors,
                mg.num_observables,
                mg.edges.len(),
                st.decomposed,
                st.undecomposed.len(),
                st.undetectable_logical.len(),
                st.observable_conflicts,
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
