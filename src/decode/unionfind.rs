//! Weighted union-find decoding with a peeling step.
//!
//! In: a [`MatchingGraph`]. Out: a [`UnionFind`] decoder, the fast alternative to
//! [`super::Mwpm`]. The algorithm is that of Delfosse and Nickerson, "Almost-linear time decoding
//! algorithm for topological codes", Quantum 5, 595 (2021), with weighted growth as in Huang,
//! Newman and Brown, "Fault-tolerant weighted union-find decoding on the toric code", PRA 102,
//! 012419 (2020) (citation recalled from memory):
//!
//! 1. Every detection event starts an odd cluster. A cluster is *active* while it holds an odd
//!    number of events and has not reached the boundary.
//! 2. Growth: every active cluster grows at unit speed along each edge leaving it; an edge is
//!    fully grown once the clusters at its two ends have together grown its length along it (an
//!    edge between two active clusters grows from both sides, twice as fast). Lengths are the
//!    weights on the integer scale of the sparse matcher (heaviest edge `2^20` units, doubled),
//!    so growth is exact and two active clusters meet at a whole time step.
//! 3. A fully grown edge to an empty node adds the node to the cluster; one joining two clusters
//!    merges them (the smaller is relabelled into the larger); one to the boundary marks the
//!    cluster as touching it. These edges are recorded and form a spanning forest.
//! 4. When no cluster is active, the peeling decoder ("Linear-time maximum likelihood decoding
//!    of surface codes over the quantum erasure channel", Delfosse and Zémor, Phys. Rev. Research
//!    2, 033042 (2020); citation recalled from memory) removes leaves of the forest: a leaf
//!    holding an event puts its tree edge in the correction and moves the event to its parent.
//!    Trees containing the boundary are rooted at it, so leftover parity is absorbed there.
//!
//! Growth is event driven, as in the sparse matcher ([`super::sparse`]): each node of an active
//! cluster keeps its local radius (`wrapped` plus the cluster's radius) and one pending event,
//! the earliest time one of its edges completes, in a monotone radix heap. Work is proportional
//! to the area the clusters cover. Only nodes of active clusters keep events; whatever can make
//! an edge complete sooner (a node joining, an inactive cluster becoming active again) looks at
//! the active nodes next to it. Nodes whose neighbours all lie in their own cluster are dropped
//! from its frontier list for good.
//!
//! A boundary-free connected component with an odd number of events cannot be decoded
//! completely: as in [`super::Mwpm`], its highest-numbered event is left out beforehand and
//! counted in [`Decoded::unmatched`], so no cluster ever floods a whole component in vain.

use super::radix_heap::RadixHeap;
use super::sparse_graph::{SparseGraph, RESOLUTION_BITS};
use super::{odd_parity_in_place, BuildError, Decoded, Decoder, MatchingGraph, Pool, Prepared};

const NONE: u32 = u32::MAX;
const NEVER: i64 = i64::MAX;

/// A weighted union-find decoder, built once per graph.
#[derive(Debug)]
pub struct UnionFind {
    g: SparseGraph,
    /// For each adjacency entry (node `v`, position `i`, neighbour `u`): the position of `v`
    /// in `u`'s adjacency, so that an edge found from one end can be named from the other.
    rev: Vec<u16>,
    pool: Pool<Scratch>,
}

impl UnionFind {
    /// Builds the decoder for `graph`.
    pub fn new(graph: &MatchingGraph) -> Result<UnionFind, BuildError> {
        let prepared = Prepared::new(graph)?;
        let g = SparseGraph::new(prepared, graph.num_observables, RESOLUTION_BITS);
        let mut rev = vec![0u16; g.adj.len()];
        for v in 0..=g.n() as u32 {
            let start = g.adj_start[v as usize] as usize;
            for (i, a) in g.neighbours(v).iter().enumerate() {
                // Parallel edges are merged, so `v` appears once among `u`'s neighbours.
                let j = g.neighbours(a.node).iter().position(|b| b.node == v);
                rev[start + i] = j.unwrap_or(0) as u16;
            }
        }
        Ok(UnionFind {
            g,
            rev,
            pool: Pool::new(),
        })
    }
}

impl Decoder for UnionFind {
    fn decode(&self, events: &[u32]) -> Decoded {
        let n = self.g.n();
        self.pool.with(
            || Scratch::new(&self.g),
            |s| {
                let mut list = std::mem::take(&mut s.events);
                let bad = self.g.prepared.normalize_into(events, &mut list)
                    + self.g.drop_unpairable(&mut list, &mut s.component_count);
                s.grow(&self.g, &self.rev, &list);
                let mut d = s.peel(&self.g);
                s.events = list;
                d.unmatched += bad;
                s.reset(n);
                d
            },
        )
    }
}

/// Per-node state of one call.
#[derive(Clone, Copy, Debug)]
struct Node {
    /// Local radius minus the radius of the node's cluster.
    wrapped: i64,
    /// Time of the pending event ([`NEVER`]: none).
    next: i64,
    /// Next node of the same cluster (member list, for relabelling).
    list_next: u32,
    /// Head of the node's list of forest edges in `Scratch::tree_next`.
    tree_head: u32,
    /// Position in the node's adjacency of the edge that set `next`.
    hint: u16,
    /// `MARK` (odd parity while peeling), `SEEN`.
    flags: u8,
}

const MARK: u8 = 1;
const SEEN: u8 = 2;

const FRESH: Node = Node {
    wrapped: 0,
    next: NEVER,
    list_next: NONE,
    tree_head: NONE,
    hint: 0,
    flags: 0,
};

/// One cluster; dead once merged into another.
#[derive(Clone, Debug, Default)]
struct Cluster {
    /// Radius `base + slope · t`; slope 1 while active, 0 otherwise.
    base: i64,
    slope: i64,
    size: u32,
    head: u32,
    tail: u32,
    odd: bool,
    boundary: bool,
    alive: bool,
    /// Members that may still have a neighbour outside the cluster.
    frontier: Vec<u32>,
}

/// Scratch space of one call, reused from call to call.
#[derive(Debug)]
struct Scratch {
    /// Cluster of each node ([`NONE`]: not reached; always for the boundary node).
    cluster: Vec<u32>,
    node: Vec<Node>,
    clusters: Vec<Cluster>,
    live: usize,
    touched: Vec<u32>,
    queue: RadixHeap,
    t: i64,
    /// Recorded edges: both ends and the edge index when the edge flips an observable
    /// ([`NONE`] otherwise, so that peeling needs no look-up for most edges).
    forest: Vec<(u32, u32, u32)>,
    /// Forest adjacency lists: `(other end, forest index, next entry)`.
    tree_next: Vec<(u32, u32, u32)>,
    order: Vec<(u32, u32)>,
    toggles: Vec<u32>,
    /// The shot's normalised detection events.
    events: Vec<u32>,
    /// Per-component event parity scratch (see [`SparseGraph::drop_unpairable`]).
    component_count: Vec<u32>,
}

impl Scratch {
    fn new(g: &SparseGraph) -> Scratch {
        let n = g.n();
        Scratch {
            cluster: vec![NONE; n + 1],
            node: vec![FRESH; n + 1],
            clusters: Vec::new(),
            live: 0,
            touched: Vec::new(),
            queue: RadixHeap::new(),
            t: 0,
            forest: Vec::new(),
            tree_next: Vec::new(),
            order: Vec::new(),
            toggles: Vec::new(),
            events: Vec::new(),
            component_count: vec![0; g.closed.len()],
        }
    }

    fn reset(&mut self, n: usize) {
        for &v in &self.touched {
            self.cluster[v as usize] = NONE;
            self.node[v as usize] = FRESH;
        }
        self.node[n] = FRESH;
        self.touched.clear();
        self.live = 0;
        self.queue.clear();
        self.t = 0;
        self.forest.clear();
        self.tree_next.clear();
        self.order.clear();
        self.toggles.clear();
    }

    #[inline]
    fn radius(&self, c: u32) -> i64 {
        let c = &self.clusters[c as usize];
        c.base + c.slope * self.t
    }

    #[inline]
    fn slope(&self, c: u32) -> i64 {
        self.clusters[c as usize].slope
    }

    fn set_slope(&mut self, c: u32, slope: i64) {
        let y = self.radius(c);
        let cl = &mut self.clusters[c as usize];
        cl.slope = slope;
        cl.base = y - slope * self.t;
    }

    /// Grows clusters from `events` (sorted, distinct, in range) until none is active.
    fn grow(&mut self, g: &SparseGraph, rev: &[u16], events: &[u32]) {
        for &e in events {
            if self.live == self.clusters.len() {
                self.clusters.push(Cluster::default());
            }
            let c = self.live as u32;
            self.live += 1;
            let cl = &mut self.clusters[c as usize];
            cl.frontier.clear();
            cl.frontier.push(e);
            (cl.base, cl.slope, cl.size, cl.head, cl.tail) = (0, 1, 1, e, e);
            (cl.odd, cl.boundary, cl.alive) = (true, false, true);
            self.cluster[e as usize] = c;
            self.node[e as usize].flags = MARK;
            self.touched.push(e);
        }
        for &e in events {
            self.look_at(g, e);
        }
        while let Some((time, v)) = self.queue.pop() {
            self.t = time as i64;
            self.node_event(g, rev, v);
        }
    }

    /// The earliest time an edge of `v` (in an active cluster) completes, the position of the
    /// first such edge in `v`'s adjacency, and whether every neighbour is in `v`'s cluster.
    #[inline]
    fn scan(&self, g: &SparseGraph, v: u32) -> (i64, usize, bool) {
        let t = self.t;
        let c = self.cluster[v as usize];
        let rv = self.node[v as usize].wrapped + self.radius(c);
        let (mut best, mut which, mut interior) = (NEVER, usize::MAX, true);
        for (i, a) in g.neighbours(v).iter().enumerate() {
            let cu = self.cluster[a.node as usize];
            if cu == c {
                continue;
            }
            interior = false;
            let when = if cu == NONE {
                t + a.len() - rv
            } else {
                let ss = 1 + self.slope(cu);
                let gap = a.len() - rv - (self.node[a.node as usize].wrapped + self.radius(cu));
                debug_assert!(gap >= 0 && gap % ss == 0);
                t + (gap >> (ss - 1))
            };
            if when < best {
                best = when;
                which = i;
            }
        }
        (best, which, interior)
    }

    /// Schedules the pending event of `v`; returns true when `v` has no neighbour outside its
    /// cluster.
    #[inline]
    fn look_at(&mut self, g: &SparseGraph, v: u32) -> bool {
        let (best, which, interior) = if self.slope(self.cluster[v as usize]) > 0 {
            self.scan(g, v)
        } else {
            (NEVER, 0, false)
        };
        let s = &mut self.node[v as usize];
        if best != s.next {
            s.next = best;
            s.hint = which as u16;
            if best != NEVER {
                self.queue.push(best as u64, v);
            }
        }
        interior
    }

    /// After `v`'s cluster became active at `v` (a node joined, or the cluster woke up): the
    /// edges from `v` to other active clusters now grow from both ends, so each such
    /// neighbour's pending event is moved earlier when that edge now completes first. Only
    /// that one edge changed, so no scan of the neighbour's other edges is needed; an event
    /// that turns out early later (a cluster stops) just rescans when popped.
    fn wake_around(&mut self, g: &SparseGraph, rev: &[u16], v: u32) {
        let t = self.t;
        let c = self.cluster[v as usize];
        debug_assert!(self.slope(c) > 0);
        let rv = self.node[v as usize].wrapped + self.radius(c);
        let start = g.adj_start[v as usize] as usize;
        for (i, a) in g.neighbours(v).iter().enumerate() {
            let x = a.node;
            let cx = self.cluster[x as usize];
            if cx == NONE || cx == c || self.slope(cx) <= 0 {
                continue;
            }
            let gap = a.len() - rv - (self.node[x as usize].wrapped + self.radius(cx));
            debug_assert!(gap >= 0 && gap % 2 == 0);
            let when = t + (gap >> 1);
            let s = &mut self.node[x as usize];
            if when < s.next {
                s.next = when;
                s.hint = rev[start + i];
                self.queue.push(when as u64, x);
            }
        }
    }

    /// Handles a popped event of `v`: in one pass over its edges, takes every empty neighbour
    /// due now and finds the next completion; then acts on the first other edge due now.
    /// (Shortcut first: the edge that set the event, when it is a contact still due.)
    fn node_event(&mut self, g: &SparseGraph, rev: &[u16], v: u32) {
        let t = self.t;
        if self.node[v as usize].next != t {
            return;
        }
        self.node[v as usize].next = NEVER;
        let c = self.cluster[v as usize];
        if self.slope(c) <= 0 {
            return;
        }
        let rv = self.node[v as usize].wrapped + self.radius(c);
        // Usually the edge found when the event was scheduled is a contact with another
        // cluster that is still due: act on it without scanning the other edges.
        let h = usize::from(self.node[v as usize].hint);
        if let Some(&a) = g.neighbours(v).get(h) {
            let cu = self.cluster[a.node as usize];
            if cu != NONE
                && cu != c
                && a.len() == rv + self.node[a.node as usize].wrapped + self.radius(cu)
            {
                self.record(g, v, h);
                self.merge(g, rev, c, cu);
                self.look_at(g, v);
                return;
            }
        }
        let boundary = g.n() as u32;
        let (mut best, mut which) = (NEVER, usize::MAX);
        for (i, &a) in g.neighbours(v).iter().enumerate() {
            let cu = self.cluster[a.node as usize];
            if cu == c {
                continue;
            }
            let when = if cu == NONE {
                if a.len() == rv && a.node != boundary {
                    self.claim(g, rev, v, i);
                    continue;
                }
                t + a.len() - rv
            } else {
                let ss = 1 + self.slope(cu);
                let gap = a.len() - rv - (self.node[a.node as usize].wrapped + self.radius(cu));
                debug_assert!(gap >= 0 && gap % ss == 0);
                t + (gap >> (ss - 1))
            };
            if when < best {
                best = when;
                which = i;
            }
        }
        if best != t {
            if best != NEVER {
                self.node[v as usize].next = best;
                self.queue.push(best as u64, v);
            }
            return;
        }
        let u = g.neighbours(v)[which].node;
        self.record(g, v, which);
        if u == boundary {
            self.clusters[c as usize].boundary = true;
            self.set_slope(c, 0);
        } else {
            self.merge(g, rev, c, self.cluster[u as usize]);
        }
        self.look_at(g, v);
    }

    /// Records the edge at entry `i` of `v`'s adjacency in the forest.
    #[inline]
    fn record(&mut self, g: &SparseGraph, v: u32, i: usize) {
        let a = g.neighbours(v)[i];
        let e = if a.flips() { g.edge_at(v, i) } else { NONE };
        self.forest.push((v, a.node, e));
    }

    /// The cluster of `v` reaches the empty node at entry `i` of `v`'s adjacency.
    fn claim(&mut self, g: &SparseGraph, rev: &[u16], v: u32, i: usize) {
        let a = g.neighbours(v)[i];
        let u = a.node;
        let c = self.cluster[v as usize];
        self.cluster[u as usize] = c;
        self.node[u as usize].wrapped = self.node[v as usize].wrapped - a.len();
        let cl = &mut self.clusters[c as usize];
        let tail = cl.tail;
        cl.tail = u;
        cl.size += 1;
        cl.frontier.push(u);
        self.node[tail as usize].list_next = u;
        self.record(g, v, i);
        self.touched.push(u);
        self.look_at(g, u);
        self.wake_around(g, rev, u);
    }

    /// Merges clusters `a != b` (one of them active) after an edge between them completed.
    fn merge(&mut self, g: &SparseGraph, rev: &[u16], a: u32, b: u32) {
        let (ca, cb) = (&self.clusters[a as usize], &self.clusters[b as usize]);
        let odd = ca.odd ^ cb.odd;
        let boundary = ca.boundary | cb.boundary;
        let active = odd && !boundary;
        // Only an active cluster meeting an inactive even one stays active; then the inactive
        // part starts growing.
        let waking = if !active {
            NONE
        } else if ca.slope > 0 {
            b
        } else {
            a
        };
        let (big, small) = if ca.size >= cb.size { (a, b) } else { (b, a) };
        let delta = self.radius(small) - self.radius(big);
        let mut x = self.clusters[small as usize].head;
        while x != NONE {
            self.cluster[x as usize] = big;
            self.node[x as usize].wrapped += delta;
            x = self.node[x as usize].list_next;
        }
        let (s_head, s_tail, s_size) = {
            let s = &mut self.clusters[small as usize];
            s.alive = false;
            (s.head, s.tail, s.size)
        };
        let b_tail = self.clusters[big as usize].tail;
        self.node[b_tail as usize].list_next = s_head;
        {
            let cl = &mut self.clusters[big as usize];
            cl.tail = s_tail;
            cl.size += s_size;
            cl.odd = odd;
            cl.boundary = boundary;
        }
        self.set_slope(big, if active { 1 } else { 0 });
        let mut moved = std::mem::take(&mut self.clusters[small as usize].frontier);
        if waking != NONE {
            let mut woken = if waking == small {
                std::mem::take(&mut moved)
            } else {
                std::mem::take(&mut self.clusters[big as usize].frontier)
            };
            woken.retain(|&v| !self.look_at(g, v));
            for &v in &woken {
                self.wake_around(g, rev, v);
            }
            if waking == small {
                moved = woken;
            } else {
                self.clusters[big as usize].frontier = woken;
            }
        }
        self.clusters[big as usize]
            .frontier
            .extend_from_slice(&moved);
        moved.clear();
        self.clusters[small as usize].frontier = moved;
    }

    /// Peels the recorded forest from the leaves towards the roots.
    fn peel(&mut self, g: &SparseGraph) -> Decoded {
        let p = &g.prepared;
        let boundary_node = p.n as u32;
        let unmatched = self.clusters[..self.live]
            .iter()
            .filter(|c| c.alive && c.odd && !c.boundary)
            .count() as u32;
        for (k, &(a, b, _)) in self.forest.iter().enumerate() {
            for (v, other) in [(a, b), (b, a)] {
                let head = &mut self.node[v as usize].tree_head;
                self.tree_next.push((other, k as u32, *head));
                *head = (self.tree_next.len() - 1) as u32;
            }
        }
        // Breadth-first order with the forest index of the parent edge; the boundary first so
        // that it roots its tree.
        let boundary_in = self.node[boundary_node as usize].tree_head != NONE;
        let others = self.touched.len();
        for k in 0..=others {
            let root = if k == 0 {
                if !boundary_in {
                    continue;
                }
                boundary_node
            } else {
                self.touched[k - 1]
            };
            if self.node[root as usize].flags & SEEN != 0 {
                continue;
            }
            self.node[root as usize].flags |= SEEN;
            let mut at = self.order.len();
            self.order.push((root, NONE));
            while at < self.order.len() {
                let v = self.order[at].0;
                let mut link = self.node[v as usize].tree_head;
                while link != NONE {
                    let (u, f, next) = self.tree_next[link as usize];
                    if self.node[u as usize].flags & SEEN == 0 {
                        self.node[u as usize].flags |= SEEN;
                        self.order.push((u, f));
                    }
                    link = next;
                }
                at += 1;
            }
        }
        self.toggles.extend_from_slice(&p.fixed_observables);
        for idx in (0..self.order.len()).rev() {
            let (v, f) = self.order[idx];
            if f == NONE || self.node[v as usize].flags & MARK == 0 {
                continue;
            }
            self.node[v as usize].flags &= !MARK;
            let (a, b, e) = self.forest[f as usize];
            if e != NONE {
                self.toggles
                    .extend_from_slice(p.edge_observables(e as usize));
            }
            let parent = if a == v { b } else { a };
            self.node[parent as usize].flags ^= MARK;
        }
        odd_parity_in_place(&mut self.toggles);
        Decoded {
            observables: self.toggles.clone(),
            unmatched,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::decode::MatchingEdge;
    use rand::{Rng, SeedableRng};
    use rand_xoshiro::Xoshiro256PlusPlus;

    /// On random graphs (isolated detectors, several components, some without boundary): the
    /// number of unmatched events is the number of boundary-free connected components holding
    /// an odd number of events, and repeated calls give the same answer.
    #[test]
    fn unmatched_counts_odd_boundary_free_components() {
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(21);
        for _ in 0..2000 {
            let n = rng.gen_range(1..14usize);
            let mut edges = Vec::new();
            for a in 0..n as u32 {
                if rng.gen_bool(0.15) {
                    edges.push(MatchingEdge {
                        a,
                        b: None,
                        p: rng.gen_range(0.01..0.6),
                        observables: vec![],
                    });
                }
                for b in a + 1..n as u32 {
                    if rng.gen_bool(0.25) {
                        edges.push(MatchingEdge {
                            a,
                            b: Some(b),
                            p: rng.gen_range(0.01..0.5),
                            observables: vec![0],
                        });
                    }
                }
            }
            let g = MatchingGraph {
                num_detectors: n,
                num_observables: 1,
                edges,
            };
            let uf = UnionFind::new(&g).unwrap();
            let p = &uf.g.prepared;
            // Components of the graph without the boundary node, and whether each has a
            // boundary edge.
            let mut comp: Vec<usize> = (0..n).collect();
            fn find(c: &mut [usize], mut x: usize) -> usize {
                while c[x] != x {
                    x = c[x];
                }
                x
            }
            let mut has_boundary = vec![false; n];
            for &(a, b) in &p.ends {
                if b as usize == n {
                    has_boundary[a as usize] = true;
                } else {
                    let (ra, rb) = (find(&mut comp, a as usize), find(&mut comp, b as usize));
                    comp[ra] = rb;
                }
            }
            for v in 0..n {
                if has_boundary[v] {
                    let r = find(&mut comp, v);
                    has_boundary[r] = true;
                }
            }
            for _ in 0..5 {
                let events: Vec<u32> = (0..n as u32).filter(|_| rng.gen_bool(0.4)).collect();
                let (norm, _) = p.normalize_events(&events);
                let mut count = vec![0u32; n];
                for &e in &norm {
                    count[find(&mut comp, e as usize)] += 1;
                }
                let want = (0..n)
                    .filter(|&r| find(&mut comp, r) == r && count[r] % 2 == 1 && !has_boundary[r])
                    .count() as u32;
                let got = uf.decode(&events);
                assert_eq!(got.unmatched, want, "{g:?} {events:?}");
                assert_eq!(got, uf.decode(&events));
            }
        }
    }
}
