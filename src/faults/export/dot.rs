//! Graphviz export.
//!
//! Detectors are nodes pinned at their first two coordinates (`pos="x,y!"`, for `neato -n` or
//! `fdp`); when a detector has a third coordinate (the round), its x is shifted by
//! `round × (width of the layout + 2)` so rounds sit side by side instead of on top of each
//! other. Node ids are `det0`, `det1`, … and `boundary`; every edge has the id `edgeK` (`K` its
//! index in the view's list) and its weight `ln((1−p)/p)` as label. In the full view a hyperedge
//! is drawn as a small point node `edgeK` joined to each of its detectors.

use std::fmt::Write;

use crate::faults::export::View;
use crate::faults::graph::FaultGraph;

fn layout(g: &FaultGraph) -> Vec<(f64, f64)> {
    let xs = g.detectors.iter().filter_map(|d| d.coords.first().copied());
    let (lo, hi) = xs.fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), x| {
        (lo.min(x), hi.max(x))
    });
    let width = if lo.is_finite() { hi - lo } else { 0.0 };
    g.detectors
        .iter()
        .enumerate()
        .map(|(i, d)| {
            let x = d.coords.first().copied().unwrap_or(i as f64);
            let y = d.coords.get(1).copied().unwrap_or(0.0);
            let round = d.coords.get(2).copied().unwrap_or(0.0);
            (x + round * (width + 2.0), y)
        })
        .collect()
}

/// Renders a view as a Graphviz `graph`.
pub fn render(view: &View<'_>) -> String {
    let g = match view {
        View::Full(g) | View::Matching(g, _, _) => g,
    };
    let mut s = String::new();
    s.push_str("graph faults {\n  node [shape=circle, fontsize=8];\n");
    let pos = layout(g);
    let min_x = pos.iter().map(|p| p.0).fold(0.0f64, f64::min);
    for (i, (d, (x, y))) in g.detectors.iter().zip(&pos).enumerate() {
        let _ = writeln!(
            s,
            "  det{i} [label=\"{}\", pos=\"{x},{y}!\"];",
            d.name.replace('"', "'")
        );
    }
    let _ = writeln!(
        s,
        "  boundary [label=\"boundary\", shape=box, pos=\"{},0!\"];",
        min_x - 2.0
    );
    let edge = |s: &mut String, k: usize, a: u32, b: Option<u32>, p: f64, obs: &[u32]| {
        let to = b.map_or("boundary".to_string(), |b| format!("det{b}"));
        let style = if obs.is_empty() { "" } else { ", color=red" };
        let w = crate::faults::graph::weight_of(p);
        let _ = writeln!(
            s,
            "  det{a} -- {to} [id=\"edge{k}\", label=\"{w:.2}\"{style}];"
        );
    };
    match view {
        View::Full(g) => {
            for (k, m) in g.edges.iter().enumerate() {
                match m.detectors[..] {
                    [] => {}
                    [a] => edge(&mut s, k, a, None, m.probability, &m.observables),
                    [a, b] => edge(&mut s, k, a, Some(b), m.probability, &m.observables),
                    _ => {
                        let _ = writeln!(
                            s,
                            "  edge{k} [shape=point, label=\"\", xlabel=\"{:.2}\"];",
                            m.weight()
                        );
                        for d in &m.detectors {
                            let _ = writeln!(s, "  edge{k} -- det{d} [style=dashed];");
                        }
                    }
                }
            }
        }
        View::Matching(_, mg, _) => {
            for (k, e) in mg.edges.iter().enumerate() {
                edge(&mut s, k, e.a, e.b, e.p, &e.observables);
            }
        }
    }
    s.push_str("}\n");
    s
}
