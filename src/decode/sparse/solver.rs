//! Per-shot state of the sparse matcher and its main loop.
//!
//! The state is split by concept over several files that all extend [`Solver`]:
//! `flooder.rs` grows and shrinks regions on the graph and turns contacts into matcher calls,
//! `matcher.rs` keeps the alternating trees, blossoms and matches, and `extract.rs` reads the
//! final matching out of the region structure. This file holds the shared state, the event
//! loop and the reset between shots.
//!
//! Every array indexed by node is sized once for the graph and restored after each shot
//! through the list of touched nodes, so a shot costs time proportional to the area its
//! regions covered, not to the graph.

use super::region::{Edge, Kind, Radius, Region, NONE};
use crate::decode::radix_heap::RadixHeap;
use crate::decode::sparse_graph::SparseGraph;

/// Time value meaning "never".
pub(crate) const NEVER: i64 = i64::MAX;
/// Queue items with this bit set are region shrink events; others are node events.
pub(crate) const REGION_EVENT: u32 = 1 << 31;

/// What the flooder knows about one node reached by a region (its top region is kept apart, in
/// [`Solver::top`], because scans read it for every neighbour). 32 bytes, aligned, so that a
/// node never straddles two cache lines.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[repr(align(32))]
pub(crate) struct NodeState {
    /// Sum of the radii of the regions between the source and `top` (excluded), minus the
    /// length of the path by which the node was reached: the node's *local radius* is
    /// `wrapped + radius(top)`, how far the area extends beyond the node.
    pub wrapped: i64,
    /// Time of the node's pending event ([`NEVER`]: none).
    pub next: i64,
    /// Observable mask of the path from the source.
    pub mask: u64,
    /// Trivial region of the detection event the node was reached from.
    pub source: u32,
    /// Position in the node's adjacency of the edge that set `next`.
    pub hint: u32,
}

/// A node no region has reached.
pub(crate) const FRESH: NodeState = NodeState {
    wrapped: 0,
    next: NEVER,
    mask: 0,
    source: NONE,
    hint: 0,
};

/// The matching found for one shot in one observable window.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub(crate) struct Outcome {
    /// Matched pairs of events (detector ids); the second is [`super::region::BOUNDARY`] for
    /// the boundary.
    pub pairs: Vec<(u32, u32)>,
    /// Sum of the doubled lengths of the matched paths.
    pub len: i64,
    /// XOR of the observable masks of the matched paths.
    pub mask: u64,
    /// Events left without a partner (one per odd component without boundary).
    pub unmatched: u32,
    /// Sum of all region radii at the end: the dual objective (doubled units).
    pub dual: i64,
}

/// Scratch space for decoding shots on one graph; reused from shot to shot.
#[derive(Debug)]
pub(crate) struct Solver {
    /// The top region whose area holds each node ([`NONE`]: not reached; always for the
    /// boundary node). Apart from the rest of the node state because scanning a node's edges
    /// reads it for every neighbour.
    pub top: Vec<u32>,
    pub nodes: Vec<NodeState>,
    /// Nodes whose state must be restored after the shot (may repeat).
    pub touched: Vec<u32>,
    /// Region arena; `regions[..live]` are in use.
    pub regions: Vec<Region>,
    /// Radius of each region (same indices).
    pub rad: Vec<Radius>,
    pub live: usize,
    pub queue: RadixHeap,
    /// Current time.
    pub t: i64,
    /// Stamp for region marks.
    pub stamp: u32,
    /// Which 64-observable window of the edge masks this run tracks.
    pub window: usize,
    /// Scratch lists for area walks and tree walks.
    pub area: Vec<u32>,
    pub stack: Vec<u32>,
    pub path_a: Vec<u32>,
    pub path_b: Vec<u32>,
    /// The even path through a shattered blossom: regions and edges to their tree parents.
    pub path_edges: Vec<(u32, Edge)>,
    pub expand: Vec<(u32, u32)>,
    /// The shot's normalised events.
    pub events: Vec<u32>,
    /// Per-component event parity scratch (see [`SparseGraph::drop_unpairable`]).
    pub component_count: Vec<u32>,
    pub outcome: Outcome,
}

impl Solver {
    /// Scratch space for `g`.
    pub fn new(g: &SparseGraph) -> Solver {
        let n = g.n();
        Solver {
            top: vec![NONE; n + 1],
            nodes: vec![FRESH; n + 1],
            touched: Vec::new(),
            regions: Vec::new(),
            rad: Vec::new(),
            live: 0,
            queue: RadixHeap::new(),
            t: 0,
            stamp: 0,
            window: 0,
            area: Vec::new(),
            stack: Vec::new(),
            path_a: Vec::new(),
            path_b: Vec::new(),
            path_edges: Vec::new(),
            expand: Vec::new(),
            events: Vec::new(),
            component_count: vec![0; g.closed.len()],
            outcome: Outcome::default(),
        }
    }

    /// Allocates a fresh region and returns its index.
    pub fn new_region(&mut self) -> u32 {
        if self.live == self.regions.len() {
            self.regions.push(Region::fresh());
            self.rad.push(Radius::default());
        } else {
            self.regions[self.live].reset();
            self.rad[self.live] = Radius::default();
        }
        self.live += 1;
        (self.live - 1) as u32
    }

    /// The region `r`.
    #[inline]
    pub fn reg(&self, r: u32) -> &Region {
        &self.regions[r as usize]
    }

    /// The radius of region `r` now.
    #[inline]
    pub fn radius(&self, r: u32) -> i64 {
        self.rad[r as usize].at(self.t)
    }

    /// Changes the slope of region `r` now.
    #[inline]
    pub fn set_slope(&mut self, r: u32, slope: i64) {
        let t = self.t;
        self.rad[r as usize].set_slope(slope, t);
    }

    /// The slope of region `r`.
    #[inline]
    pub fn slope(&self, r: u32) -> i64 {
        self.rad[r as usize].slope
    }

    /// The region `r`, mutably.
    #[inline]
    pub fn reg_mut(&mut self, r: u32) -> &mut Region {
        &mut self.regions[r as usize]
    }

    /// Finds a minimum-weight matching of `events` (sorted, distinct, in range) tracking
    /// observable window `window`; the result is left in `self.outcome`.
    pub fn solve(&mut self, g: &SparseGraph, events: &[u32], window: usize) {
        self.reset();
        self.window = window;
        for &s in events {
            let r = self.new_region();
            let reg = self.reg_mut(r);
            reg.event = s;
            reg.kind = Kind::Outer;
            self.rad[r as usize].slope = 1;
            self.top[s as usize] = r;
            self.nodes[s as usize] = NodeState { source: r, ..FRESH };
            self.touched.push(s);
        }
        for &s in events {
            self.look_at(g, s);
        }
        while let Some((time, item)) = self.queue.pop() {
            self.t = time as i64;
            if item & REGION_EVENT != 0 {
                self.shrink_event(g, item & !REGION_EVENT);
            } else {
                self.node_event(g, item);
            }
        }
        self.extract();
    }

    /// Restores the state left by the previous shot.
    fn reset(&mut self) {
        for &v in &self.touched {
            self.top[v as usize] = NONE;
            self.nodes[v as usize] = FRESH;
        }
        self.touched.clear();
        self.live = 0;
        self.queue.clear();
        self.t = 0;
        self.outcome.pairs.clear();
        self.outcome.len = 0;
        self.outcome.mask = 0;
        self.outcome.unmatched = 0;
        self.outcome.dual = 0;
    }

    /// Puts the nodes of the area of region `r` (its own shell and source, and those of every
    /// region nested inside it) into `out`.
    pub fn collect_area(&mut self, r: u32, out: &mut Vec<u32>) {
        let mut stack = std::mem::take(&mut self.stack);
        stack.clear();
        stack.push(r);
        while let Some(x) = stack.pop() {
            let reg = &self.regions[x as usize];
            if reg.event != NONE {
                out.push(reg.event);
            }
            out.extend_from_slice(&reg.shell);
            stack.extend(reg.cycle.iter().map(|&(c, _)| c));
        }
        self.stack = stack;
    }
}
