//! Region growth on the graph: arrivals at empty nodes, contacts between regions, contacts with
//! the boundary, and shrinking regions giving nodes back.
//!
//! Each node reached by a region carries its *local radius* `wrapped + radius(top)`: how far
//! the area extends beyond the node. Along an edge `(v, u)` of doubled length `w`:
//! - `u` empty, `v` growing: the area reaches `u` when `r(v) = w`;
//! - `u` in another top region: the two areas touch when `r(v) + r(u) = w` (a contact the
//!   matcher must handle), which happens only if their slopes add up to more than zero;
//! - `u` the boundary: `v`'s region touches it when `r(v) = w`.
//!
//! Every contact needs a growing side, so only nodes of growing regions keep a *pending*
//! event in the queue: the earliest such time over their edges. The time is stored on the
//! node; a popped event whose time no longer matches is stale and is dropped, so events never
//! need to be removed from the queue. Invariant: every node of a growing region has its pending
//! event no later than its first interaction. Whatever can bring an interaction forward
//! restores it: a region starting to grow looks at its whole area and at the growing nodes
//! next to it; a node being taken or given back, or a shrinking region stopping, looks at the
//! growing nodes next to it. When a slope goes down, events only get later, and the stale
//! early events simply re-scan their node when they fire (or are dropped if it stopped growing).

use super::region::{Edge, BOUNDARY, NONE};
use super::solver::{Solver, NEVER, REGION_EVENT};
use crate::decode::sparse_graph::{Adj, SparseGraph};

impl Solver {
    /// The earliest time at which owned node `v` interacts along one of its edges, and the
    /// position in `v`'s adjacency of the first edge doing so at that time. The boundary node
    /// is never owned, so it looks like an empty node here.
    #[inline]
    fn scan(&self, g: &SparseGraph, v: u32) -> (i64, usize) {
        let t = self.t;
        let top = self.top[v as usize];
        let rad = self.rad[top as usize];
        debug_assert!(rad.slope > 0);
        let rv = self.nodes[v as usize].wrapped + rad.at(t);
        let mut best = NEVER;
        let mut which = usize::MAX;
        for (i, a) in g.neighbours(v).iter().enumerate() {
            let tu = self.top[a.node as usize];
            if tu == top {
                continue;
            }
            let w = a.len();
            let when = if tu == NONE {
                t + w - rv
            } else {
                let other = self.rad[tu as usize];
                let ss = 1 + other.slope;
                if ss <= 0 {
                    continue;
                }
                let gap = w - rv - (self.nodes[a.node as usize].wrapped + other.at(t));
                debug_assert!(gap >= 0, "regions overlap at node {v}");
                // Two growing regions meet halfway; lengths being even keeps this exact.
                debug_assert!(gap % ss == 0, "odd gap {gap} between growing regions");
                t + (gap >> (ss - 1))
            };
            if when < best {
                best = when;
                which = i;
            }
        }
        (best, which)
    }

    /// Recomputes and schedules the pending event of owned node `v`. Only nodes of growing
    /// regions keep events: every contact needs a growing side, and that side finds it.
    #[inline]
    pub fn look_at(&mut self, g: &SparseGraph, v: u32) {
        let (best, which) = if self.rad[self.top[v as usize] as usize].slope > 0 {
            self.scan(g, v)
        } else {
            (NEVER, 0)
        };
        let s = &mut self.nodes[v as usize];
        if best != s.next {
            s.next = best;
            s.hint = which as u32;
            if best != NEVER {
                self.queue.push(best as u64, v);
            }
        }
    }

    /// Handles a popped node event. Shortcut first: when the edge that set the event is a
    /// contact (with a region or the boundary) that is still due, it goes straight to the
    /// matcher. Otherwise one pass over the edges takes every empty neighbour due now, finds
    /// the next interaction, and hands the first contact due now (if any) to the matcher.
    pub fn node_event(&mut self, g: &SparseGraph, v: u32) {
        let t = self.t;
        if self.nodes[v as usize].next != t {
            return;
        }
        self.nodes[v as usize].next = NEVER;
        let top = self.top[v as usize];
        if top == NONE {
            return;
        }
        let rad = self.rad[top as usize];
        if rad.slope <= 0 {
            return;
        }
        let boundary = g.n() as u32;
        let rv = self.nodes[v as usize].wrapped + rad.at(t);
        let adj = g.neighbours(v);
        let h = self.nodes[v as usize].hint as usize;
        let due = |a: &Adj| {
            let tu = self.top[a.node as usize];
            if a.node == boundary {
                a.len() == rv
            } else {
                // A tight edge to a shrinking region is a tree edge, not a contact.
                tu != NONE
                    && tu != top
                    && self.rad[tu as usize].slope >= 0
                    && a.len() == rv + self.nodes[a.node as usize].wrapped + self.radius(tu)
            }
        };
        let which = if adj.get(h).is_some_and(due) {
            h
        } else {
            let (mut best, mut which) = (NEVER, usize::MAX);
            for (i, &a) in adj.iter().enumerate() {
                let tu = self.top[a.node as usize];
                if tu == top {
                    continue;
                }
                let when = if tu == NONE {
                    if a.len() == rv && a.node != boundary {
                        self.claim(g, v, i);
                        continue;
                    }
                    t + a.len() - rv
                } else {
                    let other = self.rad[tu as usize];
                    let ss = 1 + other.slope;
                    if ss <= 0 {
                        continue;
                    }
                    let gap = a.len() - rv - (self.nodes[a.node as usize].wrapped + other.at(t));
                    debug_assert!(gap >= 0 && gap % ss == 0, "bad gap {gap} at node {v}");
                    t + (gap >> (ss - 1))
                };
                if when < best {
                    best = when;
                    which = i;
                }
            }
            if best != t {
                if best != NEVER {
                    self.nodes[v as usize].next = best;
                    self.nodes[v as usize].hint = which as u32;
                    self.queue.push(best as u64, v);
                }
                return;
            }
            which
        };
        // The contact's path is tight: its length is the sum of the radii around its ends.
        let a = adj[which];
        let s = self.nodes[v as usize];
        let mask = s.mask ^ self.edge_mask(g, v, which);
        if a.node == boundary {
            let edge = Edge {
                a: s.source,
                b: BOUNDARY,
                len: self.chain_radius(s.source),
                mask,
            };
            self.hit_boundary(g, top, edge);
        } else {
            let su = self.nodes[a.node as usize];
            let edge = Edge {
                a: s.source,
                b: su.source,
                len: self.chain_radius(s.source) + self.chain_radius(su.source),
                mask: mask ^ su.mask,
            };
            self.collide(g, top, self.top[a.node as usize], edge);
        }
        if self.top[v as usize] != NONE {
            self.look_at(g, v);
        }
    }

    /// The observable mask (current window) of entry `i` of `v`'s adjacency.
    #[inline]
    fn edge_mask(&self, g: &SparseGraph, v: u32, i: usize) -> u64 {
        if g.neighbours(v)[i].flips() {
            g.mask(g.edge_at(v, i), self.window)
        } else {
            0
        }
    }

    /// The region of `v` reaches the empty node at entry `i` of `v`'s adjacency.
    fn claim(&mut self, g: &SparseGraph, v: u32, i: usize) {
        let a = g.neighbours(v)[i];
        let u = a.node;
        let top = self.top[v as usize];
        let s = self.nodes[v as usize];
        self.top[u as usize] = top;
        let mask = s.mask ^ self.edge_mask(g, v, i);
        let su = &mut self.nodes[u as usize];
        su.wrapped = s.wrapped - a.len();
        su.source = s.source;
        su.mask = mask;
        self.regions[top as usize].shell.push(u);
        self.touched.push(u);
        self.look_at(g, u);
        self.wake_around(g, u);
    }

    /// Looks at every neighbour of `v` in another growing region: a contact with `v` may now
    /// come sooner than that neighbour planned.
    fn wake_around(&mut self, g: &SparseGraph, v: u32) {
        let top = self.top[v as usize];
        for a in g.neighbours(v) {
            let tu = self.top[a.node as usize];
            if tu != NONE && tu != top && self.rad[tu as usize].slope > 0 {
                self.look_at(g, a.node);
            }
        }
    }

    /// A shrinking region gives node `v` back; growing neighbours may now move in.
    fn release(&mut self, g: &SparseGraph, v: u32) {
        self.top[v as usize] = NONE;
        self.nodes[v as usize].next = NEVER;
        for a in g.neighbours(v) {
            let top = self.top[a.node as usize];
            if top != NONE && self.rad[top as usize].slope > 0 {
                self.look_at(g, a.node);
            }
        }
    }

    /// Schedules the next shrink event of shrinking top region `r`: its outermost own node
    /// leaving, or its radius reaching zero.
    pub fn schedule_shrink(&mut self, r: u32) {
        let t = self.t;
        let y = self.radius(r);
        let when = match self.reg(r).shell.last() {
            Some(&v) => t + self.nodes[v as usize].wrapped + y,
            None => t + y,
        };
        let reg = &mut self.regions[r as usize];
        if reg.shrink_at != when {
            reg.shrink_at = when;
            self.queue.push(when as u64, REGION_EVENT | r);
        }
    }

    /// Handles a popped shrink event of region `r`.
    pub fn shrink_event(&mut self, g: &SparseGraph, r: u32) {
        if self.reg(r).shrink_at != self.t {
            return;
        }
        self.reg_mut(r).shrink_at = NEVER;
        debug_assert!(self.reg(r).is_top() && self.slope(r) < 0);
        let y = self.radius(r);
        while let Some(&v) = self.reg(r).shell.last() {
            let local = self.nodes[v as usize].wrapped + y;
            debug_assert!(local >= 0);
            if local > 0 {
                break;
            }
            self.reg_mut(r).shell.pop();
            self.release(g, v);
        }
        if !self.reg(r).shell.is_empty() || y > 0 {
            self.schedule_shrink(r);
        } else if self.reg(r).event == NONE {
            self.shatter(g, r);
        } else {
            self.implode(g, r);
        }
    }

    /// Makes `top` the top region of every node in the area of `r`, adding `delta` to their
    /// wrapped radii.
    pub fn retop(&mut self, r: u32, top: u32, delta: i64) {
        let mut area = std::mem::take(&mut self.area);
        area.clear();
        self.collect_area(r, &mut area);
        for &v in &area {
            self.top[v as usize] = top;
            self.nodes[v as usize].wrapped += delta;
        }
        self.area = area;
    }

    /// After region `r` stopped shrinking without starting to grow, its growing neighbours
    /// may touch it sooner than they had planned: looks at every node of another region next to
    /// its area.
    pub fn wake_neighbours(&mut self, g: &SparseGraph, r: u32) {
        let mut area = std::mem::take(&mut self.area);
        area.clear();
        self.collect_area(r, &mut area);
        for &v in &area {
            self.wake_around(g, v);
        }
        self.area = area;
    }

    /// Looks again at every node in the area of `r` after it started growing, and at the
    /// growing neighbours of that area (their contacts with it now come sooner).
    pub fn reschedule(&mut self, g: &SparseGraph, r: u32) {
        let mut area = std::mem::take(&mut self.area);
        area.clear();
        self.collect_area(r, &mut area);
        for &v in &area {
            self.look_at(g, v);
            self.wake_around(g, v);
        }
        self.area = area;
    }
}
