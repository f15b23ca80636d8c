//! The exhaustive meet-in-the-middle search for small logical errors made of any edges,
//! hyperedges included.

use std::collections::HashMap;

use crate::base::xor_sets;
use crate::faults::{ClassSet, FaultGraph};

/// Outcome of the exhaustive search.
pub(super) enum Exhaustive {
    /// A logical error with at most `limit` edges.
    Found(Vec<u32>),
    /// No logical error with at most `limit` edges exists.
    NoneUpTo,
    /// The state cap was reached first.
    Capped,
}

/// Meet-in-the-middle search for a logical error of at most `limit` edges (any number of
/// detectors). Symptoms reachable with `t` edges are stored level by level; two stored
/// symptoms with equal detectors and different observables give a logical error of the sum of
/// their levels, so levels up to `⌈limit/2⌉` suffice.
pub(super) fn exhaustive(
    graph: &FaultGraph,
    allow: &dyn Fn(ClassSet) -> bool,
    limit: u32,
    max_states: usize,
) -> Exhaustive {
    let mechs: Vec<u32> = (0..graph.edges.len() as u32)
        .filter(|&k| allow(graph.edges[k as usize].classes))
        .collect();
    // State: (detectors, observables, parent state, edge, level).
    struct State {
        dets: Vec<u32>,
        obs: Vec<u32>,
        parent: u32,
        mech: u32,
        level: u32,
    }
    let mut states = vec![State {
        dets: Vec::new(),
        obs: Vec::new(),
        parent: u32::MAX,
        mech: u32::MAX,
        level: 0,
    }];
    let mut by_dets: HashMap<Vec<u32>, Vec<u32>> = HashMap::new();
    by_dets.insert(Vec::new(), vec![0]);
    let path = |states: &Vec<State>, mut s: u32| {
        let mut out = Vec::new();
        while states[s as usize].parent != u32::MAX {
            out.push(states[s as usize].mech);
            s = states[s as usize].parent;
        }
        out
    };
    let mut best: Option<(u32, Vec<u32>)> = None;
    let mut frontier: Vec<u32> = vec![0];
    let half = limit.div_ceil(2);
    for level in 1..=half {
        if best.as_ref().is_some_and(|b| b.0 <= level) {
            break;
        }
        let mut next = Vec::new();
        for &s in &frontier {
            for &m in &mechs {
                let mm = &graph.edges[m as usize];
                let dets = xor_sets(&states[s as usize].dets, &mm.detectors);
                let obs = xor_sets(&states[s as usize].obs, &mm.observables);
                let list = by_dets.entry(dets.clone()).or_default();
                if list.iter().any(|&t| states[t as usize].obs == obs) {
                    continue;
                }
                let id = states.len() as u32;
                for &t in list.iter() {
                    let w = level + states[t as usize].level;
                    if w <= limit && best.as_ref().is_none_or(|b| w < b.0) {
                        let mut e = path(&states, s);
                        e.push(m);
                        e.extend(path(&states, t));
                        best = Some((w, e));
                    }
                }
                list.push(id);
                states.push(State {
                    dets,
                    obs,
                    parent: s,
                    mech: m,
                    level,
                });
                next.push(id);
                if states.len() > max_states {
                    return match best {
                        // A found error is only known least when no smaller one can remain.
                        Some((w, e)) if w <= level => Exhaustive::Found(e),
                        _ => Exhaustive::Capped,
                    };
                }
            }
        }
        frontier = next;
    }
    match best {
        Some((_, e)) => Exhaustive::Found(e),
        None => Exhaustive::NoneUpTo,
    }
}
