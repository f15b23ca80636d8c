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
//! A node keeps at most one *pending* event in the queue: the earliest such time over its
//! edges. The time is stored on the node; a popped event whose time no longer matches is stale
//! and is dropped, so events never need to be removed from the queue. When a region's slope
//! goes up (it starts growing, or stops shrinking), some contacts come earlier, so every node of
//! its area is looked at again; when a slope goes down, events only get later, and the stale
//! early events simply re-scan their node when they fire.

use super::graph::{Adj, SparseGraph};
use super::region::{Edge, BOUNDARY, NONE};
use super::solver::{Solver, NEVER, REGION_EVENT};

impl Solver {
    /// The earliest time at which node `v` (owned) interacts along one of its edges, and the
    /// first edge (in adjacency order) doing so at that time.
    #[inline]
    fn scan(&self, g: &SparseGraph, v: u32) -> (i64, Adj) {
        let boundary = g.n() as u32;
        let t = self.t;
        let s = &self.nodes[v as usize];
        let top = s.top;
        let reg = &self.regions[top as usize];
        let slope = reg.slope;
        let rv = s.wrapped + reg.radius(t);
        let mut best = NEVER;
        let mut which = Adj {
            node: NONE,
            len: 0,
            edge: NONE,
        };
        for &a in g.neighbours(v) {
            let u = a.node;
            let w = i64::from(a.len);
            let when = if u == boundary {
                if slope <= 0 {
                    continue;
                }
                t + w - rv
            } else {
                let su = &self.nodes[u as usize];
                if su.top == NONE {
                    if slope <= 0 {
                        continue;
                    }
                    t + w - rv
                } else if su.top == top {
                    continue;
                } else {
                    let other = &self.regions[su.top as usize];
                    let ss = slope + other.slope;
                    if ss <= 0 {
                        continue;
                    }
                    let gap = w - rv - (su.wrapped + other.radius(t));
                    debug_assert!(gap >= 0, "regions overlap on edge {}", a.edge);
                    // Two growing regions meet halfway; lengths being even keeps this exact.
                    debug_assert!(gap % ss == 0, "odd gap {gap} between growing regions");
                    t + (gap >> (ss - 1))
                }
            };
            if when < best {
                best = when;
                which = a;
            }
        }
        (best, which)
    }

    /// Recomputes and schedules the pending event of owned node `v`.
    #[inline]
    pub fn look_at(&mut self, g: &SparseGraph, v: u32) {
        let (best, _) = self.scan(g, v);
        let s = &mut self.nodes[v as usize];
        if best != s.next {
            s.next = best;
            if best != NEVER {
                self.queue.push(best as u64, v);
            }
        }
    }

    /// Handles a popped node event: every interaction of `v` due now, one at a time.
    pub fn node_event(&mut self, g: &SparseGraph, v: u32) {
        if self.nodes[v as usize].next != self.t {
            return;
        }
        self.nodes[v as usize].next = NEVER;
        loop {
            let top = self.nodes[v as usize].top;
            if top == NONE {
                return;
            }
            let (best, a) = self.scan(g, v);
            if best != self.t {
                if best != NEVER {
                    self.nodes[v as usize].next = best;
                    self.queue.push(best as u64, v);
                }
                return;
            }
            let s = self.nodes[v as usize];
            let mask = s.mask ^ g.mask(a.edge, self.window);
            let w = i64::from(a.len);
            if a.node == g.n() as u32 {
                let edge = Edge {
                    a: s.source,
                    b: BOUNDARY,
                    len: s.dist + w,
                    mask,
                };
                self.hit_boundary(g, top, edge);
                break;
            }
            let su = self.nodes[a.node as usize];
            if su.top == NONE {
                self.claim(g, v, a);
                continue;
            }
            let edge = Edge {
                a: s.source,
                b: su.source,
                len: s.dist + w + su.dist,
                mask: mask ^ su.mask,
            };
            self.collide(g, top, su.top, edge);
            break;
        }
        if self.nodes[v as usize].top != NONE {
            self.look_at(g, v);
        }
    }

    /// The region of `v` reaches the empty node `a.node` along edge `a`.
    fn claim(&mut self, g: &SparseGraph, v: u32, a: Adj) {
        let s = self.nodes[v as usize];
        let w = i64::from(a.len);
        let u = a.node;
        let su = &mut self.nodes[u as usize];
        su.top = s.top;
        su.source = s.source;
        su.wrapped = s.wrapped - w;
        su.dist = s.dist + w;
        su.mask = s.mask ^ g.mask(a.edge, self.window);
        self.regions[s.top as usize].shell.push(u);
        self.touched.push(u);
        self.look_at(g, u);
    }

    /// A shrinking region gives node `v` back; growing neighbours may now move in.
    fn release(&mut self, g: &SparseGraph, v: u32) {
        let s = &mut self.nodes[v as usize];
        s.top = NONE;
        s.next = NEVER;
        let boundary = g.n() as u32;
        for &a in g.neighbours(v) {
            if a.node == boundary {
                continue;
            }
            let top = self.nodes[a.node as usize].top;
            if top != NONE && self.regions[top as usize].slope > 0 {
                self.look_at(g, a.node);
            }
        }
    }

    /// Schedules the next shrink event of shrinking top region `r`: its outermost own node
    /// leaving, or its radius reaching zero.
    pub fn schedule_shrink(&mut self, r: u32) {
        let t = self.t;
        let reg = &self.regions[r as usize];
        let y = reg.radius(t);
        let when = match reg.shell.last() {
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
        let t = self.t;
        if self.reg(r).shrink_at != t {
            return;
        }
        self.reg_mut(r).shrink_at = NEVER;
        debug_assert!(self.reg(r).is_top() && self.reg(r).slope < 0);
        let y = self.reg(r).radius(t);
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
            let s = &mut self.nodes[v as usize];
            s.top = top;
            s.wrapped += delta;
        }
        self.area = area;
    }

    /// Looks again at every node in the area of `r` (after its slope went up).
    pub fn reschedule(&mut self, g: &SparseGraph, r: u32) {
        let mut area = std::mem::take(&mut self.area);
        area.clear();
        self.collect_area(r, &mut area);
        for &v in &area {
            self.look_at(g, v);
        }
        self.area = area;
    }
}
