//! Lower bounds on the count distance when hyperedges keep the graph search from being exact:
//! projection onto a partition of the detectors, and the splits' fractional costs.

use std::collections::HashMap;

use crate::analysis::distance::search::{graph_edges, shortest_odd_cycle, Edge};
use crate::base::xor_sets;
use crate::faults::{ClassSet, FaultGraph};

/// The larger of the two lower bounds (1 when neither applies), capped at `value`; the
/// projection bound is cheaper and usually tight, so the other runs only when it falls short.
pub(super) fn best_lower_bound(
    graph: &FaultGraph,
    allow: &dyn Fn(ClassSet) -> bool,
    value: u32,
) -> u32 {
    let b = projected_bound(graph, allow).flatten().unwrap_or(1);
    if b >= value {
        return value;
    }
    let a = lower_bound(graph, allow).unwrap_or(1);
    a.max(b).clamp(1, value)
}

/// Lower bound on the count distance by projection onto a partition of the detectors.
///
/// For *any* partition in which every edge has at most two detectors in each class, and any
/// split of each edge's observables among its classes, project a logical error onto each
/// class: every detector keeps even degree, and since the split observables XOR to the whole,
/// some class sees odd parity of some observable. Each edge puts at most one part into a
/// class, so the error has at least as many edges as the shortest odd cycle among the parts
/// (each costing 1). The partition used: components of the detector graph joined by the
/// two-detector edges that cannot be split into two existing one-detector edges and by
/// the parts of split hyperedges. In a CSS memory this separates X-type from Z-type
/// detectors (a Y fault at the boundary splits into its X and Z halves), which makes the bound
/// tight for circuit-level depolarizing noise.
/// Outer `None`: the partition does not apply; inner `None`: no logical error exists at all.
pub(super) fn projected_bound(
    graph: &FaultGraph,
    allow: &dyn Fn(ClassSet) -> bool,
) -> Option<Option<u32>> {
    let boundary = graph.detectors.len() as u32;
    let mut one_det: HashMap<u32, Vec<&[u32]>> = HashMap::new();
    for m in &graph.edges {
        if let [a] = *m.detectors.as_slice() {
            one_det.entry(a).or_default().push(&m.observables);
        }
    }
    // Observables for the `a` half of a split of (a, b, obs) into existing one-detector halves.
    let split = |a: u32, b: u32, obs: &[u32]| -> Option<Vec<u32>> {
        let (la, lb) = (one_det.get(&a)?, one_det.get(&b)?);
        la.iter()
            .find(|oa| lb.iter().any(|ob| xor_sets(oa, ob) == obs))
            .map(|oa| oa.to_vec())
    };
    let mut uf: Vec<u32> = (0..boundary).collect();
    fn find(uf: &mut [u32], mut x: u32) -> u32 {
        while uf[x as usize] != x {
            uf[x as usize] = uf[uf[x as usize] as usize];
            x = uf[x as usize];
        }
        x
    }
    let join = |uf: &mut Vec<u32>, a: u32, b: u32| {
        let (ra, rb) = (find(uf, a), find(uf, b));
        uf[ra as usize] = rb;
    };
    let mut split_of: HashMap<u32, usize> = HashMap::new();
    for (i, d) in graph.splits.iter().enumerate() {
        split_of.insert(d.edge, i);
        for (dets, _) in graph.parts(d) {
            if let [a, b] = *dets {
                join(&mut uf, a, b);
            }
        }
    }
    for (k, m) in graph.edges.iter().enumerate() {
        match *m.detectors.as_slice() {
            [a, b] if split(a, b, &m.observables).is_none() => join(&mut uf, a, b),
            [_, _] | [] | [_] => {}
            ref dets if !split_of.contains_key(&(k as u32)) => {
                for w in dets.windows(2) {
                    join(&mut uf, w[0], w[1]);
                }
            }
            _ => {}
        }
    }
    let mut edges: Vec<Edge<u32>> = Vec::new();
    let push = |dets: &[u32], obs: Vec<u32>, edges: &mut Vec<Edge<u32>>| -> bool {
        let (a, b) = match *dets {
            [] if obs.is_empty() => return true,
            [] => (boundary, boundary),
            [a] => (a, boundary),
            [a, b] => (a, b),
            _ => return false,
        };
        edges.push(Edge {
            a,
            b,
            obs,
            cost: 1,
            mech: u32::MAX,
        });
        true
    };
    for (k, m) in graph.edges.iter().enumerate() {
        if !allow(m.classes) {
            continue;
        }
        // Group the detectors by class, with the observables split among the classes.
        let mut groups: Vec<(u32, Vec<u32>, Vec<u32>)> = Vec::new();
        let mut add =
            |root: u32, dets: &[u32], obs: &[u32]| match groups.iter_mut().find(|g| g.0 == root) {
                Some(g) => {
                    g.1 = xor_sets(&g.1, dets);
                    g.2 = xor_sets(&g.2, obs);
                }
                None => groups.push((root, dets.to_vec(), obs.to_vec())),
            };
        match *m.detectors.as_slice() {
            [a, b] if find(&mut uf, a) != find(&mut uf, b) => {
                let oa = split(a, b, &m.observables).unwrap_or_else(|| m.observables.clone());
                let ob = xor_sets(&oa, &m.observables);
                add(find(&mut uf, a), &[a], &oa);
                add(find(&mut uf, b), &[b], &ob);
            }
            ref dets if dets.len() > 2 && split_of.contains_key(&(k as u32)) => {
                for (pd, po) in graph.parts(&graph.splits[split_of[&(k as u32)]]) {
                    let root = pd.first().map_or(u32::MAX, |&x| find(&mut uf, x));
                    add(root, pd, po);
                }
            }
            ref dets => {
                let root = dets.first().map_or(u32::MAX, |&x| find(&mut uf, x));
                add(root, dets, &m.observables);
            }
        }
        for (_, dets, obs) in groups {
            if !push(&dets, obs, &mut edges) {
                return None;
            }
        }
    }
    Some(
        shortest_odd_cycle(graph.detectors.len() + 1, graph.observables.len(), &edges)
            .map(|(c, _)| c),
    )
}

/// Lower bound on the count distance from the hyperedges' splits.
///
/// Detectors are grouped into components joined by matchable edges and split parts (the
/// boundary joins nothing). Project a logical error onto one component: each edge becomes
/// its parts there, every detector of the component keeps even degree, and since the parts'
/// observables XOR to the whole, some component sees odd observable parity. So the error costs at
/// least the shortest odd cycle in which each part of a hyperedge with `k` parts in the part's
/// component costs `1/k` (costs scaled by 840, divisible by every `k ≤ 8`). In a CSS circuit a
/// Y fault has one part among the X-type and one among the Z-type detectors, so each costs 1
/// and the bound is usually tight.
pub(super) fn lower_bound(graph: &FaultGraph, allow: &dyn Fn(ClassSet) -> bool) -> Option<u32> {
    const SCALE: u32 = 840;
    let mut edges = graph_edges(graph, allow, |_| SCALE);
    let boundary = graph.detectors.len() as u32;
    let mut uf: Vec<u32> = (0..=boundary).collect();
    fn find(uf: &mut [u32], mut x: u32) -> u32 {
        while uf[x as usize] != x {
            uf[x as usize] = uf[uf[x as usize] as usize];
            x = uf[x as usize];
        }
        x
    }
    let join = |uf: &mut Vec<u32>, dets: &[u32]| {
        if let [a, b] = *dets {
            let (ra, rb) = (find(uf, a), find(uf, b));
            uf[ra as usize] = rb;
        }
    };
    for e in &edges {
        if e.a != boundary && e.b != boundary {
            join(&mut uf, &[e.a, e.b]);
        }
    }
    for d in &graph.splits {
        for (dets, _) in graph.parts(d) {
            join(&mut uf, dets);
        }
    }
    for d in &graph.splits {
        let m = &graph.edges[d.edge as usize];
        if !allow(m.classes) {
            continue;
        }
        // Component of each part (`boundary` for a part with no detectors).
        let comps: Vec<u32> = graph
            .parts(d)
            .map(|(dets, _)| dets.first().map_or(boundary, |&x| find(&mut uf, x)))
            .collect();
        for (i, (dets, obs)) in graph.parts(d).enumerate() {
            let k = comps.iter().filter(|&&c| c == comps[i]).count().max(1) as u32;
            let (a, b) = match *dets {
                [] => (boundary, boundary),
                [a] => (a, boundary),
                [a, b] => (a, b),
                _ => continue,
            };
            edges.push(Edge {
                a,
                b,
                obs: obs.to_vec(),
                cost: SCALE / k,
                mech: u32::MAX,
            });
        }
    }
    let mut split = vec![false; graph.edges.len()];
    for d in &graph.splits {
        split[d.edge as usize] = true;
    }
    if graph
        .edges
        .iter()
        .zip(&split)
        .any(|(m, &split)| m.detectors.len() > 2 && allow(m.classes) && !split)
    {
        // An unsplit hyperedge could shorten anything: no bound beyond the trivial one.
        return Some(1);
    }
    shortest_odd_cycle(graph.detectors.len() + 1, graph.observables.len(), &edges)
        .map(|(c, _)| c.div_ceil(SCALE))
}
