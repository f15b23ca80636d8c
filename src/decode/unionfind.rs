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
//! 2. Growth: every active cluster grows along each edge leaving it; an edge of length `L` is
//!    fully grown once the clusters at its two ends have together grown `L` units along it (an
//!    edge between two active clusters grows from both sides, twice as fast). Lengths are the
//!    weights rounded to integers in units of `median weight / resolution`
//!    ([`UnionFindOptions::resolution`]; at least 1 for a positive weight). With the default
//!    resolution 2 a typical edge is two units long: the half-edge growth of Delfosse and
//!    Nickerson, with heavier or lighter edges taking proportionally longer or shorter. Each
//!    round advances by the smallest whole number of units that completes some edge.
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

use super::{odd_parity_in_place, BuildError, Decoded, Decoder, MatchingGraph, Pool, Prepared};

const NONE: u32 = u32::MAX;

/// Tuning knobs of [`UnionFind`].
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct UnionFindOptions {
    /// Growth units per median edge weight: higher follows the weights more closely and runs
    /// more growth rounds. At least 1.
    pub resolution: u32,
}

impl Default for UnionFindOptions {
    fn default() -> Self {
        UnionFindOptions { resolution: 2 }
    }
}

/// A weighted union-find decoder, built once per graph.
#[derive(Debug)]
pub struct UnionFind {
    g: Prepared,
    /// Integer length of each edge in growth units.
    length: Vec<u32>,
    pool: Pool<Scratch>,
}

impl UnionFind {
    /// Builds the decoder with default options.
    pub fn new(graph: &MatchingGraph) -> Result<UnionFind, BuildError> {
        UnionFind::with_options(graph, UnionFindOptions::default())
    }

    /// Builds the decoder with the given options.
    pub fn with_options(
        graph: &MatchingGraph,
        options: UnionFindOptions,
    ) -> Result<UnionFind, BuildError> {
        let g = Prepared::new(graph)?;
        let mut positive: Vec<f64> = g.weight.iter().copied().filter(|&w| w > 0.0).collect();
        positive.sort_by(f64::total_cmp);
        let median = positive.get(positive.len() / 2).copied().unwrap_or(1.0);
        let unit = median / f64::from(options.resolution.max(1));
        let length = g
            .weight
            .iter()
            .map(|&w| {
                if w > 0.0 {
                    ((w / unit).round() as u32).max(1)
                } else {
                    0
                }
            })
            .collect();
        Ok(UnionFind {
            g,
            length,
            pool: Pool::new(),
        })
    }
}

impl Decoder for UnionFind {
    fn decode(&self, events: &[u32]) -> Decoded {
        let nodes = self.g.n + 1;
        let edges = self.g.ends.len();
        self.pool.with(
            || Scratch::new(nodes, edges),
            |s| {
                let mut list = std::mem::take(&mut s.events);
                let bad = self.g.normalize_into(events, &mut list);
                let mut d = s.run(&self.g, &self.length, &list);
                s.events = list;
                d.unmatched += bad;
                s.reset();
                d
            },
        )
    }
}

/// Per-node state of one call. Kept in one record so that touching a node costs one cache line.
#[derive(Clone, Copy, Debug)]
struct Node {
    /// Union-find parent (`NONE`: not in any cluster yet).
    parent: u32,
    /// Cluster size, valid at roots.
    size: u32,
    /// Head of the node's list of forest edges in `Scratch::tree_next`.
    tree_head: u32,
    /// Next node in the same cluster's frontier list.
    fnext: u32,
    /// First and last node of the cluster's frontier list (valid at roots): nodes that may
    /// still have edges to grow. A linked list through the nodes, so merging is O(1).
    fhead: u32,
    ftail: u32,
    /// `ODD`, `BOUNDARY`, `STUCK` (valid at roots), `MARK`, `SEEN`.
    flags: u8,
}

const ODD: u8 = 1;
const BOUNDARY: u8 = 2;
const STUCK: u8 = 4;
const MARK: u8 = 8;
const SEEN: u8 = 16;

const FRESH: Node = Node {
    parent: NONE,
    size: 0,
    tree_head: NONE,
    fnext: NONE,
    fhead: NONE,
    ftail: NONE,
    flags: 0,
};

/// Per-edge state of one call.
#[derive(Clone, Copy, Debug, Default)]
struct EdgeState {
    /// Units grown so far (both sides together).
    grown: u32,
    /// Number of active sides in the current round.
    rate: u16,
    /// Fully grown.
    full: bool,
}

/// Per-call state over all nodes and edges, reset through the touched lists.
#[derive(Debug)]
struct Scratch {
    node: Vec<Node>,
    touched: Vec<u32>,
    edge: Vec<EdgeState>,
    touched_edges: Vec<u32>,
    active: Vec<u32>,
    candidates: Vec<u32>,
    fused: Vec<u32>,
    /// Edges that merged two clusters: the spanning forest.
    tree: Vec<u32>,
    tree_next: Vec<(u32, u32)>,
    order: Vec<(u32, u32)>,
    toggles: Vec<u32>,
    /// The shot's normalised detection events.
    events: Vec<u32>,
}

impl Scratch {
    fn new(nodes: usize, edges: usize) -> Scratch {
        Scratch {
            node: vec![FRESH; nodes],
            touched: Vec::new(),
            edge: vec![EdgeState::default(); edges],
            touched_edges: Vec::new(),
            active: Vec::new(),
            candidates: Vec::new(),
            fused: Vec::new(),
            tree: Vec::new(),
            tree_next: Vec::new(),
            order: Vec::new(),
            toggles: Vec::new(),
            events: Vec::new(),
        }
    }

    fn reset(&mut self) {
        for &v in &self.touched {
            self.node[v as usize] = FRESH;
        }
        self.touched.clear();
        for &e in &self.touched_edges {
            self.edge[e as usize] = EdgeState::default();
        }
        self.touched_edges.clear();
        self.active.clear();
        self.candidates.clear();
        self.fused.clear();
        self.tree.clear();
        self.tree_next.clear();
        self.order.clear();
        self.toggles.clear();
    }

    /// Makes `v` a singleton cluster if it is in none yet.
    #[inline]
    fn touch(&mut self, v: u32, boundary_node: u32) {
        let n = &mut self.node[v as usize];
        if n.parent != NONE {
            return;
        }
        n.parent = v;
        n.size = 1;
        self.touched.push(v);
        if v == boundary_node {
            // The boundary never grows, so it is never a frontier node.
            n.flags |= BOUNDARY;
        } else {
            n.fhead = v;
            n.ftail = v;
        }
    }

    #[inline]
    fn find(&mut self, mut x: u32) -> u32 {
        loop {
            let p = self.node[x as usize].parent;
            if p == x {
                return x;
            }
            let gp = self.node[p as usize].parent;
            self.node[x as usize].parent = gp;
            x = gp;
        }
    }

    /// Merges the clusters of roots `a != b`.
    fn union(&mut self, a: u32, b: u32) {
        let (sa, sb) = (self.node[a as usize].size, self.node[b as usize].size);
        let (big, small) = if sa >= sb { (a, b) } else { (b, a) };
        let (bu, su) = (big as usize, small as usize);
        let s = self.node[su];
        self.node[su].parent = big;
        let r = &mut self.node[bu];
        r.size += s.size;
        r.flags ^= s.flags & ODD;
        r.flags |= s.flags & BOUNDARY;
        r.flags &= !STUCK;
        if s.fhead != NONE {
            if r.fhead == NONE {
                r.fhead = s.fhead;
            } else {
                let tail = r.ftail as usize;
                self.node[tail].fnext = s.fhead;
            }
            self.node[bu].ftail = s.ftail;
        }
    }

    #[inline]
    fn is_active(&self, root: u32) -> bool {
        self.node[root as usize].flags & (ODD | BOUNDARY | STUCK) == ODD
    }

    fn run(&mut self, g: &Prepared, length: &[u32], events: &[u32]) -> Decoded {
        let boundary_node = g.n as u32;
        for &e in events {
            self.touch(e, boundary_node);
            self.node[e as usize].flags |= ODD | MARK;
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
                let ru = r as usize;
                let mut any = false;
                let mut prev = NONE;
                let mut at = self.node[ru].fhead;
                while at != NONE {
                    let v = at as usize;
                    let next = self.node[v].fnext;
                    let mut live = false;
                    for &(u, e) in g.neighbours(v) {
                        let eu = e as usize;
                        if self.edge[eu].full {
                            continue;
                        }
                        if self.node[u as usize].parent != NONE && self.find(u) == r {
                            continue;
                        }
                        live = true;
                        let st = &mut self.edge[eu];
                        if st.rate == 0 {
                            self.candidates.push(e);
                            if st.grown == 0 {
                                self.touched_edges.push(e);
                            }
                        }
                        st.rate += 1;
                    }
                    if live {
                        prev = at;
                    } else {
                        // Every edge is grown or internal: drop the node from the frontier.
                        if prev == NONE {
                            self.node[ru].fhead = next;
                        } else {
                            self.node[prev as usize].fnext = next;
                        }
                        if self.node[ru].ftail == at {
                            self.node[ru].ftail = prev;
                        }
                    }
                    any |= live;
                    at = next;
                }
                if !any {
                    self.node[r as usize].flags |= STUCK;
                    unmatched += 1;
                }
            }
            if self.candidates.is_empty() {
                self.active = roots;
                continue;
            }

            // Advance by the smallest whole number of units that completes an edge.
            let mut step = u32::MAX;
            for &e in &self.candidates {
                let st = self.edge[e as usize];
                step = step.min((length[e as usize] - st.grown).div_ceil(u32::from(st.rate)));
            }
            let mut fused = std::mem::take(&mut self.fused);
            for &e in &self.candidates {
                let st = &mut self.edge[e as usize];
                st.grown = st.grown.saturating_add(step * u32::from(st.rate));
                st.rate = 0;
                if st.grown >= length[e as usize] {
                    st.full = true;
                    fused.push(e);
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
            fused.clear();
            self.fused = fused;
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
                self.tree_next.push((e, self.node[v as usize].tree_head));
                self.node[v as usize].tree_head = (self.tree_next.len() - 1) as u32;
            }
        }
        // Breadth-first order with parent edges; the boundary first so it roots its tree.
        let boundary_in = self.node[boundary_node as usize].parent != NONE;
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
                    let (e, next) = self.tree_next[link as usize];
                    let u = g.other(e as usize, v);
                    if self.node[u as usize].flags & SEEN == 0 {
                        self.node[u as usize].flags |= SEEN;
                        self.order.push((u, e));
                    }
                    link = next;
                }
                at += 1;
            }
        }
        self.toggles.extend_from_slice(&g.fixed_observables);
        for idx in (0..self.order.len()).rev() {
            let (v, e) = self.order[idx];
            if e == NONE || self.node[v as usize].flags & MARK == 0 {
                continue;
            }
            self.node[v as usize].flags &= !MARK;
            self.toggles
                .extend_from_slice(g.edge_observables(e as usize));
            let p = g.other(e as usize, v);
            self.node[p as usize].flags ^= MARK;
        }
        Decoded {
            observables: {
                odd_parity_in_place(&mut self.toggles);
                self.toggles.clone()
            },
            unmatched,
        }
    }
}
