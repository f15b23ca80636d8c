//! Weighted union-find decoding with a peeling step.
//!
//! In: a [`MatchingGraph`]. Out: a [`UnionFind`] decoder, the fast alternative to
//! [`super::Mwpm`]. The algorithm is that of Delfosse and Nickerson, "Almost-linear time decoding
//! algorithm for topological codes", Quantum 5, 595 (2021), with weighted growth as in Huang,
//! Newman and Brown, "Fault-tolerant weighted union-find decoding on the toric code", PRA 102,
//! 012419 (2020) (citation recalled from memory):
//!
//! 1. Every detection event starts an odd cluster. A cluster is *active* while it holds an odd
//!    number of events and does not contain the boundary node.
//! 2. Growth: every active cluster grows along each edge leaving it; an edge of weight `w` is
//!    fully grown once the clusters at its two ends have together grown `w` along it (an edge
//!    between two active clusters grows from both sides, twice as fast). Instead of fixed unit
//!    steps, each round advances by exactly the amount that completes the next edge, so weights
//!    are used as real numbers with no rounding.
//! 3. Every fully grown edge joining two different clusters merges them (union by size, path
//!    halving) and is recorded; the recorded edges form a spanning forest of the clusters.
//! 4. When no cluster is active, the peeling decoder ("Linear-time maximum likelihood decoding
//!    of surface codes over the quantum erasure channel", Delfosse and Zémor, Phys. Rev. Research
//!    2, 033042 (2020); citation recalled from memory) removes leaves of the forest: a leaf
//!    holding an event puts its tree edge in the correction and moves the event to its parent.
//!    Trees containing the boundary are rooted at it, so leftover parity is absorbed there.
//!
//! An active cluster with no edge left to grow (a whole boundary-free component with an odd
//! number of events) stops growing; its leftover event is counted in [`Decoded::unmatched`].

use super::{odd_parity, BuildError, Decoded, Decoder, MatchingGraph, Pool, Prepared};

const NONE: u32 = u32::MAX;

/// A weighted union-find decoder, built once per graph.
#[derive(Debug)]
pub struct UnionFind {
    g: Prepared,
    pool: Pool<Scratch>,
}

impl UnionFind {
    /// Builds the decoder.
    pub fn new(graph: &MatchingGraph) -> Result<UnionFind, BuildError> {
        Ok(UnionFind {
            g: Prepared::new(graph)?,
            pool: Pool::new(),
        })
    }
}

impl Decoder for UnionFind {
    fn decode(&self, events: &[u32]) -> Decoded {
        let (events, bad) = self.g.normalize_events(events);
        let nodes = self.g.n + 1;
        let edges = self.g.ends.len();
        self.pool.with(
            || Scratch::new(nodes, edges),
            |s| {
                let mut d = s.run(&self.g, &events);
                d.unmatched += bad;
                s.reset();
                d
            },
        )
    }
}

/// Per-call state over all nodes and edges, reset through the touched lists.
#[derive(Debug)]
struct Scratch {
    // Per node.
    parent: Vec<u32>,
    size: Vec<u32>,
    odd: Vec<bool>,
    boundary: Vec<bool>,
    stuck: Vec<bool>,
    /// Nodes of a cluster (kept at its root) that may still have edges to grow.
    frontier: Vec<Vec<u32>>,
    /// Event parity carried during peeling.
    mark: Vec<bool>,
    touched: Vec<u32>,
    // Per edge.
    grown: Vec<f64>,
    full: Vec<bool>,
    rate: Vec<u8>,
    touched_edges: Vec<u32>,
    // Per round.
    active: Vec<u32>,
    candidates: Vec<u32>,
    tree: Vec<u32>,
    // Peeling.
    tree_head: Vec<u32>,
    tree_next: Vec<(u32, u32)>,
    order: Vec<(u32, u32)>,
    seen: Vec<bool>,
}

impl Scratch {
    fn new(nodes: usize, edges: usize) -> Scratch {
        Scratch {
            parent: vec![NONE; nodes],
            size: vec![0; nodes],
            odd: vec![false; nodes],
            boundary: vec![false; nodes],
            stuck: vec![false; nodes],
            frontier: vec![Vec::new(); nodes],
            mark: vec![false; nodes],
            touched: Vec::new(),
            grown: vec![0.0; edges],
            full: vec![false; edges],
            rate: vec![0; edges],
            touched_edges: Vec::new(),
            active: Vec::new(),
            candidates: Vec::new(),
            tree: Vec::new(),
            tree_head: vec![NONE; nodes],
            tree_next: Vec::new(),
            order: Vec::new(),
            seen: vec![false; nodes],
        }
    }

    fn reset(&mut self) {
        for &v in &self.touched {
            let v = v as usize;
            self.parent[v] = NONE;
            self.size[v] = 0;
            self.odd[v] = false;
            self.boundary[v] = false;
            self.stuck[v] = false;
            self.frontier[v].clear();
            self.mark[v] = false;
            self.tree_head[v] = NONE;
            self.seen[v] = false;
        }
        self.touched.clear();
        for &e in &self.touched_edges {
            self.grown[e as usize] = 0.0;
            self.full[e as usize] = false;
            self.rate[e as usize] = 0;
        }
        self.touched_edges.clear();
        self.active.clear();
        self.candidates.clear();
        self.tree.clear();
        self.tree_next.clear();
        self.order.clear();
    }

    /// Makes `v` a singleton cluster if it is in none yet.
    fn touch(&mut self, v: u32, boundary_node: u32) {
        let vu = v as usize;
        if self.parent[vu] != NONE {
            return;
        }
        self.parent[vu] = v;
        self.size[vu] = 1;
        self.touched.push(v);
        if v == boundary_node {
            // The boundary never grows, so it is never a frontier node.
            self.boundary[vu] = true;
        } else {
            self.frontier[vu].push(v);
        }
    }

    fn find(&mut self, mut x: u32) -> u32 {
        while self.parent[x as usize] != x {
            let gp = self.parent[self.parent[x as usize] as usize];
            self.parent[x as usize] = gp;
            x = gp;
        }
        x
    }

    /// Merges the clusters of roots `a != b`; returns the new root.
    fn union(&mut self, a: u32, b: u32) -> u32 {
        let (big, small) = if self.size[a as usize] >= self.size[b as usize] {
            (a, b)
        } else {
            (b, a)
        };
        let (bu, su) = (big as usize, small as usize);
        self.parent[su] = big;
        self.size[bu] += self.size[su];
        self.odd[bu] ^= self.odd[su];
        self.boundary[bu] |= self.boundary[su];
        self.stuck[bu] = false;
        let moved = std::mem::take(&mut self.frontier[su]);
        self.frontier[bu].extend_from_slice(&moved);
        self.frontier[su] = moved;
        self.frontier[su].clear();
        big
    }

    fn is_active(&self, root: u32) -> bool {
        let r = root as usize;
        self.odd[r] && !self.boundary[r] && !self.stuck[r]
    }

    fn run(&mut self, g: &Prepared, events: &[u32]) -> Decoded {
        let boundary_node = g.n as u32;
        for &e in events {
            self.touch(e, boundary_node);
            self.odd[e as usize] = true;
            self.mark[e as usize] = true;
            self.active.push(e);
        }
        let mut unmatched = 0u32;
        loop {
            // Current active roots, without repeats.
            let mut roots = std::mem::take(&mut self.active);
            for r in roots.iter_mut() {
                *r = self.find(*r);
            }
            roots.sort_unstable();
            roots.dedup();
            roots.retain(|&r| self.is_active(r));
            if roots.is_empty() {
                self.active = roots;
                break;
            }

            // Frontier edges of active clusters and their growth rates (1 or 2 sides).
            self.candidates.clear();
            for &r in &roots {
                let mut list = std::mem::take(&mut self.frontier[r as usize]);
                let mut i = 0;
                let mut any = false;
                while i < list.len() {
                    let v = list[i] as usize;
                    let mut live = false;
                    for &(u, e) in g.neighbours(v) {
                        let eu = e as usize;
                        if self.full[eu] {
                            continue;
                        }
                        if self.parent[u as usize] != NONE && self.find(u) == r {
                            continue;
                        }
                        live = true;
                        if self.rate[eu] == 0 {
                            self.candidates.push(e);
                            if self.grown[eu] == 0.0 {
                                self.touched_edges.push(e);
                            }
                        }
                        self.rate[eu] += 1;
                    }
                    if live {
                        i += 1;
                    } else {
                        list.swap_remove(i);
                    }
                    any |= live;
                }
                self.frontier[r as usize] = list;
                if !any {
                    self.stuck[r as usize] = true;
                    unmatched += 1;
                }
            }
            if self.candidates.is_empty() {
                self.active = roots;
                continue;
            }

            // Advance to the next completion.
            let mut step = f64::INFINITY;
            for &e in &self.candidates {
                let eu = e as usize;
                step = step.min((g.weight[eu] - self.grown[eu]) / f64::from(self.rate[eu]));
            }
            let step = step.max(0.0);
            let mut fused = Vec::new();
            for &e in &self.candidates {
                let eu = e as usize;
                let w = g.weight[eu];
                self.grown[eu] += step * f64::from(self.rate[eu]);
                self.rate[eu] = 0;
                // A relative tolerance so the edge that set the step is complete despite
                // rounding; mark a barely-touched edge touched so reset clears it.
                if self.grown[eu] >= w - 1e-12 * w.max(1.0) {
                    self.full[eu] = true;
                    fused.push(e);
                } else if self.grown[eu] == 0.0 {
                    self.grown[eu] = f64::MIN_POSITIVE;
                }
            }
            for &e in &fused {
                let (a, b) = g.ends[e as usize];
                self.touch(a, boundary_node);
                self.touch(b, boundary_node);
                let (ra, rb) = (self.find(a), self.find(b));
                if ra != rb {
                    self.union(ra, rb);
                    self.tree.push(e);
                }
            }
            self.active = roots;
        }

        self.peel(g, unmatched)
    }

    /// Peels the spanning forest from the leaves towards the roots.
    fn peel(&mut self, g: &Prepared, unmatched: u32) -> Decoded {
        let boundary_node = g.n as u32;
        for i in 0..self.tree.len() {
            let e = self.tree[i];
            let (a, b) = g.ends[e as usize];
            for v in [a, b] {
                self.tree_next.push((e, self.tree_head[v as usize]));
                self.tree_head[v as usize] = (self.tree_next.len() - 1) as u32;
            }
        }
        // Breadth-first order with parent edges; boundary first so it roots its tree.
        let mut roots: Vec<u32> = Vec::with_capacity(self.touched.len() + 1);
        if self.parent[boundary_node as usize] != NONE {
            roots.push(boundary_node);
        }
        roots.extend(self.touched.iter().copied().filter(|&v| v != boundary_node));
        for root in roots {
            if self.seen[root as usize] {
                continue;
            }
            self.seen[root as usize] = true;
            let start = self.order.len();
            self.order.push((root, NONE));
            let mut at = start;
            while at < self.order.len() {
                let v = self.order[at].0;
                let mut link = self.tree_head[v as usize];
                while link != NONE {
                    let (e, next) = self.tree_next[link as usize];
                    let u = g.other(e as usize, v);
                    if !self.seen[u as usize] {
                        self.seen[u as usize] = true;
                        self.order.push((u, e));
                    }
                    link = next;
                }
                at += 1;
            }
        }
        let mut toggles: Vec<u32> = g.fixed_observables.clone();
        for idx in (0..self.order.len()).rev() {
            let (v, e) = self.order[idx];
            if e == NONE || !self.mark[v as usize] {
                continue;
            }
            self.mark[v as usize] = false;
            toggles.extend_from_slice(g.edge_observables(e as usize));
            let p = g.other(e as usize, v);
            self.mark[p as usize] ^= true;
        }
        Decoded {
            observables: odd_parity(toggles),
            unmatched,
        }
    }
}
