//! One sampled shot and how the decoder matches its detection events.
//!
//! The shot is the first one `slant shots --seed SEED` gives (shot 0 of batch 0: a batch is
//! always simulated whole, so the shot does not depend on how many are asked for). Its events are
//! matched by [`match_events`], the one place that names the decoder.

use crate::base::Diagnostic;
use crate::decode::{MatchingGraph, Mwpm};
use crate::sim::Outputs;
use crate::study::Pipeline;

use super::model::{Layout, ShotOverlay, Timeline};
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
fn sample(p: &Pipeline, seed: u64) -> (Vec<u32>, Vec<u32>) {
    let b = p.sampler().run_batch(0, 1, seed, Outputs::syndromes());
    let set = |table, n: usize| -> Vec<u32> {
        (0..n)
            .filter(|&i| b.get(table, i, 0))
            .map(|i| i as u32)
            .collect()
    };
    (
        set(&b.detectors, p.noisy().detectors.len()),
        set(&b.observables, p.noisy().observables.len()),
    )
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
    let (events, flipped) = sample(p, seed);
    if events.is_empty() {
        let next = (1..=LOOK_AHEAD)
            .map(|k| seed.wrapping_add(k))
            .find(|&s| !sample(p, s).0.is_empty());
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
        predicted: names(&m.observables),
        flipped: names(&flipped),
        slices,
    })
}

/// The error for an overlay that needs faults on a circuit without noise.
pub(super) fn no_noise() -> Diagnostic {
    Diagnostic::bare("the circuit has no noise, so there are no faults to draw")
        .with_hint("give a noise model, e.g. `--noise 'circuit p=0.001'`")
}
