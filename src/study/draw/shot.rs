//! One sampled shot and how the decoder matches its detection events.
//!
//! The shot is the first one `slant shots --seed SEED` gives (shot 0 of batch 0: a batch is
//! always simulated whole, so the shot does not depend on how many are asked for). Its events are
//! matched by [`match_events`], the one place that names the decoder.

use std::cmp::Reverse;
use std::collections::BinaryHeap;

use crate::base::{Diagnostic, Pauli};
use crate::decode::{MatchingGraph, Mwpm};
use crate::faults::{ExtractOptions, FaultGraph};
use crate::sim::Outputs;
use crate::study::Pipeline;

use super::model::{Layout, Point, ShotOverlay, Timeline};
use super::overlay::detector_mark;
use super::DrawError;

/// How many seeds after the asked one are tried for a suggestion when a shot has no events.
const LOOK_AHEAD: u64 = 32;

/// A decoder's matching of one shot: pairs of events (`None`: the boundary) and the
/// observables it predicts flipped.
pub(super) struct Matched {
    pub pairs: Vec<(u32, Option<u32>)>,
    pub observables: Vec<u32>,
}

/// Matches detection events on `graph` with minimum-weight perfect matching.
pub(super) fn match_events(graph: &MatchingGraph, events: &[u32]) -> Result<Matched, DrawError> {
    let m = Mwpm::new(graph).map_err(|e| {
        DrawError::Internal(format!(
            "the extracted matching graph is not decodable: {e}"
        ))
    })?;
    let r = m.decode_matching(events);
    Ok(Matched {
        pairs: r.pairs,
        observables: r.decoded.observables,
    })
}

/// Detection events and observable flips of the first shot of `seed`.
fn sample(p: &Pipeline, seed: u64) -> Result<(Vec<u32>, Vec<u32>), DrawError> {
    let b = p.sampler()?.run_batch(0, 1, seed, Outputs::syndromes());
    let set = |table, n: usize| -> Vec<u32> {
        (0..n)
            .filter(|&i| b.get(table, i, 0))
            .map(|i| i as u32)
            .collect()
    };
    Ok((
        set(&b.detectors, p.noisy().detectors.len()),
        set(&b.observables, p.noisy().observables.len()),
    ))
}

/// The shot overlay for `seed`.
pub(super) fn shot(
    p: &Pipeline,
    tl: &Timeline,
    layout: &Layout,
    seed: u64,
) -> Result<ShotOverlay, DrawError> {
    let (graph, _) = p.matching_graph();
    if graph.edges.is_empty() {
        return Err(no_noise().into());
    }
    let (events, flipped) = sample(p, seed)?;
    if events.is_empty() {
        let next = (1..=LOOK_AHEAD)
            .map(|k| seed.wrapping_add(k))
            .find(|&s| sample(p, s).is_ok_and(|(e, _)| !e.is_empty()));
        let hint = match next {
            Some(s) => format!("seed {s} gives a shot with detection events: `--show shot:{s}`"),
            None => format!(
                "none of the next {LOOK_AHEAD} seeds does either; raise the noise to see events"
            ),
        };
        return Err(Diagnostic::bare(format!(
            "the shot with seed {seed} has no detection events, so there is nothing to match"
        ))
        .with_hint(hint)
        .into());
    }
    let m = match_events(&graph, &events)?;
    let faults = p.graph(&ExtractOptions::default());
    let boundary = m
        .pairs
        .iter()
        .filter(|(_, b)| b.is_none())
        .map(|&(a, _)| (a, boundary_place(&graph, &faults, layout, a)))
        .collect();
    let c = p.noisy();
    let events: Vec<_> = events
        .iter()
        .map(|&d| detector_mark(c, tl, layout, d))
        .collect();
    let mut slices: Vec<f64> = events.iter().map(|e| e.time).collect();
    slices.sort_by(f64::total_cmp);
    slices.dedup();
    let names = |v: &[u32]| -> Vec<String> {
        v.iter()
            .map(|&o| c.observables[o as usize].name.clone())
            .collect()
    };
    Ok(ShotOverlay {
        seed,
        events,
        pairs: m.pairs,
        boundary,
        predicted: names(&m.observables),
        flipped: names(&flipped),
        slices,
    })
}

/// Where the boundary is for an event matched to it: past the data qubits of the boundary edge
/// that ends the lightest path from the event to the boundary (the path a matching decoder
/// takes), by half a spacing from the event's side; `None` when no path reaches the boundary.
fn boundary_place(g: &MatchingGraph, faults: &FaultGraph, l: &Layout, event: u32) -> Option<Point> {
    let n = g.num_detectors;
    let mut adj: Vec<Vec<(usize, f64)>> = vec![Vec::new(); n + 1];
    for e in &g.edges {
        let w = e.weight().max(0.0);
        let b = e.b.map_or(n, |b| b as usize);
        adj[e.a as usize].push((b, w));
        adj[b].push((e.a as usize, w));
    }
    // Dijkstra from the event; the boundary is node `n` and is never passed through.
    let mut dist = vec![f64::INFINITY; n + 1];
    let mut prev = vec![usize::MAX; n + 1];
    let mut heap = BinaryHeap::new();
    dist[event as usize] = 0.0;
    heap.push(Reverse((Ordered(0.0), event as usize)));
    while let Some(Reverse((Ordered(d), v))) = heap.pop() {
        if d > dist[v] || v == n {
            continue;
        }
        for &(u, w) in &adj[v] {
            if d + w < dist[u] {
                dist[u] = d + w;
                prev[u] = v;
                heap.push(Reverse((Ordered(d + w), u)));
            }
        }
    }
    let last = prev[n];
    if last == usize::MAX {
        return None;
    }
    // The data qubits of the boundary edge's most likely circuit fault.
    let k = *faults.find_by_detectors(&[last as u32]).first()?;
    let best = faults
        .contributors(k)
        .iter()
        .max_by(|a, b| a.probability.total_cmp(&b.probability))?;
    let data: Vec<Point> = best
        .qubits
        .iter()
        .zip(best.term.iter())
        .filter(|&(&q, &p)| p != Pauli::I && l.qubits[q as usize].role == super::Role::Data)
        .map(|(&q, _)| l.qubits[q as usize].at)
        .collect();
    if data.is_empty() {
        return None;
    }
    let m = data.len() as f64;
    let at = data
        .iter()
        .fold((0.0, 0.0), |a, p| (a.0 + p.0 / m, a.1 + p.1 / m));
    let from = super::overlay::detector_place(faults, last as u32)?;
    let (dx, dy) = (at.0 - from.0, at.1 - from.1);
    let len = (dx * dx + dy * dy).sqrt();
    if len < 1e-9 {
        return Some(at);
    }
    let step = 0.5 * l.spacing;
    Some((at.0 + dx / len * step, at.1 + dy / len * step))
}

/// A total order on path lengths for the heap (they are never NaN).
#[derive(Clone, Copy, PartialEq)]
struct Ordered(f64);

impl Eq for Ordered {}

impl PartialOrd for Ordered {
    fn partial_cmp(&self, o: &Self) -> Option<std::cmp::Ordering> {
        Some(self.cmp(o))
    }
}

impl Ord for Ordered {
    fn cmp(&self, o: &Self) -> std::cmp::Ordering {
        self.0.total_cmp(&o.0)
    }
}

/// The error for an overlay that needs faults on a circuit without noise.
pub(super) fn no_noise() -> Diagnostic {
    Diagnostic::bare("the circuit has no noise, so there are no faults to draw")
        .with_hint("give a noise model, e.g. `--noise 'circuit p=0.001'`")
}
