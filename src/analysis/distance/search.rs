//! The graph search: least-cost undetected logical errors over the matchable edges, as
//! shortest cycles of odd observable parity (see the module docs of the distance report).

use std::cmp::{Ordering, Reverse};
use std::collections::BinaryHeap;
use std::ops::Add;

use crate::faults::{ClassSet, FaultGraph};

/// A cost that adds along paths and orders totally.
pub(super) trait Cost: Copy + Ord + Add<Output = Self> {
    const ZERO: Self;
}

impl Cost for u32 {
    const ZERO: u32 = 0;
}

/// `(low-rate count, total count)`, compared lexicographically.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub(super) struct Lex(pub(super) u32, pub(super) u32);

impl Add for Lex {
    type Output = Lex;
    fn add(self, o: Lex) -> Lex {
        Lex(self.0 + o.0, self.1 + o.1)
    }
}

impl Cost for Lex {
    const ZERO: Lex = Lex(0, 0);
}

/// A non-negative weight with a total order.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(super) struct Weight(pub(super) f64);

impl Eq for Weight {}

impl PartialOrd for Weight {
    fn partial_cmp(&self, o: &Weight) -> Option<Ordering> {
        Some(self.cmp(o))
    }
}

impl Ord for Weight {
    fn cmp(&self, o: &Weight) -> Ordering {
        self.0.total_cmp(&o.0)
    }
}

impl Add for Weight {
    type Output = Weight;
    fn add(self, o: Weight) -> Weight {
        Weight(self.0 + o.0)
    }
}

impl Cost for Weight {
    const ZERO: Weight = Weight(0.0);
}

/// One edge of the search graph. `mech` is a edge id, or `u32::MAX` for a virtual part edge
/// of the lower-bound search.
#[derive(Clone, Debug)]
pub(super) struct Edge<C> {
    pub(super) a: u32,
    pub(super) b: u32,
    pub(super) obs: Vec<u32>,
    pub(super) cost: C,
    pub(super) mech: u32,
}

/// The matchable edges of the edges passing `allow`, the boundary being node `D`.
pub(super) fn graph_edges<C: Cost>(
    graph: &FaultGraph,
    allow: &dyn Fn(ClassSet) -> bool,
    cost: impl Fn(usize) -> C,
) -> Vec<Edge<C>> {
    let boundary = graph.detectors.len() as u32;
    let mut out = Vec::new();
    for (k, m) in graph.edges.iter().enumerate() {
        if !allow(m.classes) {
            continue;
        }
        let (a, b) = match *m.detectors.as_slice() {
            [] => (boundary, boundary),
            [a] => (a, boundary),
            [a, b] => (a, b),
            _ => continue,
        };
        out.push(Edge {
            a,
            b,
            obs: m.observables.clone(),
            cost: cost(k),
            mech: k as u32,
        });
    }
    out
}

/// Least-cost logical error over the matchable edges passing `allow`.
pub(super) fn search<C: Cost>(
    graph: &FaultGraph,
    allow: &dyn Fn(ClassSet) -> bool,
    cost: impl Fn(usize) -> C,
) -> Option<(C, Vec<u32>)> {
    let edges = graph_edges(graph, allow, cost);
    shortest_odd_cycle(graph.detectors.len() + 1, graph.observables.len(), &edges).map(
        |(c, list)| {
            let mechs = list.into_iter().map(|i| edges[i].mech).collect();
            (c, mechs)
        },
    )
}

/// Least-cost cycle with odd parity of some observable; returns its cost and edge indices.
/// Node `nodes − 1` is the boundary.
///
/// Per observable: (1) one Dijkstra search from (boundary, even) to (boundary, odd) covers every
/// cycle through the boundary; (2) without the boundary, parities are re-gauged along a spanning
/// forest (`par'(e) = par(e) ⊕ π(a) ⊕ π(b)`, which leaves every cycle's parity unchanged), so
/// only the few edges with `par' = 1` can start an odd cycle; each is searched once and removed
/// afterwards. In a planar code step (2) finds no such edge and costs one linear pass.
pub(super) fn shortest_odd_cycle<C: Cost>(
    nodes: usize,
    observables: usize,
    edges: &[Edge<C>],
) -> Option<(C, Vec<usize>)> {
    let boundary = nodes - 1;
    // Compressed adjacency: for each node, (neighbour, edge index).
    let mut deg = vec![0usize; nodes + 1];
    for e in edges {
        deg[e.a as usize] += 1;
        if e.b != e.a {
            deg[e.b as usize] += 1;
        }
    }
    let mut start = vec![0usize; nodes + 1];
    for i in 0..nodes {
        start[i + 1] = start[i] + deg[i];
    }
    let mut fill = start.clone();
    let mut adj = vec![(0u32, 0u32); start[nodes]];
    for (i, e) in edges.iter().enumerate() {
        adj[fill[e.a as usize]] = (e.b, i as u32);
        fill[e.a as usize] += 1;
        if e.b != e.a {
            adj[fill[e.b as usize]] = (e.a, i as u32);
            fill[e.b as usize] += 1;
        }
    }
    let g = Adjacency { start, adj };
    let mut ws = Workspace::new(2 * nodes);
    let mut best: Option<(C, Vec<usize>)> = None;
    for o in 0..observables as u32 {
        let flips: Vec<bool> = edges
            .iter()
            .map(|e| e.obs.binary_search(&o).is_ok())
            .collect();
        let mut removed = vec![false; edges.len()];
        // (1) Cycles through the boundary.
        let bound = best.as_ref().map(|b| b.0);
        if let Some((c, list)) = ws.path(
            &g,
            edges,
            &flips,
            &removed,
            2 * boundary,
            2 * boundary + 1,
            C::ZERO,
            bound,
        ) {
            best = Some((c, list));
        }
        // (2) The rest, re-gauged.
        for &(_, e) in &g.adj[g.start[boundary]..g.start[boundary + 1]] {
            removed[e as usize] = true;
        }
        let mut pi: Vec<Option<bool>> = vec![None; nodes];
        let mut stack = Vec::new();
        for root in 0..boundary {
            if pi[root].is_some() {
                continue;
            }
            pi[root] = Some(false);
            stack.push(root);
            while let Some(v) = stack.pop() {
                let pv = pi[v].unwrap_or(false);
                for &(nb, e) in &g.adj[g.start[v]..g.start[v + 1]] {
                    if removed[e as usize] || pi[nb as usize].is_some() {
                        continue;
                    }
                    pi[nb as usize] = Some(pv ^ flips[e as usize]);
                    stack.push(nb as usize);
                }
            }
        }
        let par: Vec<bool> = edges
            .iter()
            .enumerate()
            .map(|(i, e)| {
                !removed[i]
                    && (flips[i]
                        ^ pi[e.a as usize].unwrap_or(false)
                        ^ pi[e.b as usize].unwrap_or(false))
            })
            .collect();
        for (ei, e) in edges.iter().enumerate() {
            if !par[ei] || removed[ei] {
                continue;
            }
            removed[ei] = true;
            let bound = best.as_ref().map(|b| b.0);
            if bound.is_some_and(|b| e.cost >= b) {
                continue;
            }
            // An even path w → u closes the odd cycle with e.
            let (src, dst) = (2 * e.b as usize, 2 * e.a as usize);
            if let Some((c, mut list)) = ws.path(&g, edges, &par, &removed, src, dst, e.cost, bound)
            {
                list.push(ei);
                best = Some((c, list));
            }
        }
    }
    best
}

/// Compressed adjacency lists: neighbours of `v` are `adj[start[v]..start[v + 1]]`.
struct Adjacency {
    start: Vec<usize>,
    adj: Vec<(u32, u32)>,
}

/// Reusable Dijkstra state over `(node, parity)` states `2·node + parity`.
struct Workspace<C> {
    dist: Vec<Option<C>>,
    prev: Vec<u32>,
    touched: Vec<usize>,
}

impl<C: Cost> Workspace<C> {
    fn new(states: usize) -> Workspace<C> {
        Workspace {
            dist: vec![None; states],
            prev: vec![u32::MAX; states],
            touched: Vec::new(),
        }
    }

    /// Cheapest path from state `src` to state `dst` avoiding removed edges, with total cost
    /// `offset + path` below `bound`; returns the total and the path's edges.
    #[allow(clippy::too_many_arguments)]
    fn path(
        &mut self,
        g: &Adjacency,
        edges: &[Edge<C>],
        par: &[bool],
        removed: &[bool],
        src: usize,
        dst: usize,
        offset: C,
        bound: Option<C>,
    ) -> Option<(C, Vec<usize>)> {
        for &t in &self.touched {
            self.dist[t] = None;
            self.prev[t] = u32::MAX;
        }
        self.touched.clear();
        let mut heap = BinaryHeap::new();
        self.dist[src] = Some(C::ZERO);
        self.touched.push(src);
        heap.push(Reverse((C::ZERO, src)));
        let mut reached = None;
        while let Some(Reverse((d, s))) = heap.pop() {
            if self.dist[s] != Some(d) {
                continue;
            }
            if bound.is_some_and(|b| offset + d >= b) {
                break;
            }
            if s == dst {
                reached = Some(d);
                break;
            }
            let (node, p) = (s / 2, s % 2);
            for &(nb, ej) in &g.adj[g.start[node]..g.start[node + 1]] {
                let ej = ej as usize;
                if removed[ej] {
                    continue;
                }
                let t = 2 * nb as usize + (p ^ usize::from(par[ej]));
                let nd = d + edges[ej].cost;
                if self.dist[t].is_none_or(|x| nd < x) {
                    if self.dist[t].is_none() {
                        self.touched.push(t);
                    }
                    self.dist[t] = Some(nd);
                    self.prev[t] = ej as u32;
                    heap.push(Reverse((nd, t)));
                }
            }
        }
        let d = reached?;
        let mut list = Vec::new();
        let mut s = dst;
        while s != src {
            let ej = self.prev[s] as usize;
            list.push(ej);
            let f = &edges[ej];
            let node = (s / 2) as u32;
            let other = if f.a == node { f.b } else { f.a };
            s = 2 * other as usize + ((s % 2) ^ usize::from(par[ej]));
        }
        Some((offset + d, list))
    }
}
