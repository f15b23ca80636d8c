//! Reading the final matching out of the regions.
//!
//! When the queue runs dry every top region is matched (to a region or the boundary) or is the
//! lone root of a tree that covers a whole boundary-free component. The event-level pairs follow
//! from the blossom cycles: a blossom whose outside edge enters child `c_j` pairs the other
//! children along the cycle as `(c_{j+1}, c_{j+2}), (c_{j+3}, c_{j+4}), …`, recursively inside
//! each child from the event its own edge enters.
//!
//! A root left unmatched holds an odd number of events with no boundary to absorb one. Letting
//! it keep growing against a virtual boundary at a huge equal distance from every node would
//! first touch that boundary at the node with the largest local radius, which is the event `s`
//! with the largest sum of radii of the regions containing it. So `s` is the event left out,
//! and the rest of the component is then paired at minimum weight (ties: the lowest node id).

use super::region::{Edge, BOUNDARY, NONE};
use super::solver::Solver;

impl Solver {
    fn emit(&mut self, e: Edge) {
        self.outcome.pairs.push((e.a, e.b));
        self.outcome.len += e.len;
        self.outcome.mask ^= e.mask;
    }

    /// The event of top region `r` to leave unmatched (module docs).
    fn best_unmatched(&mut self, r: u32) -> u32 {
        let mut stack = std::mem::take(&mut self.stack);
        stack.clear();
        stack.push(r);
        let mut best = (i64::MIN, NONE);
        while let Some(x) = stack.pop() {
            let reg = self.reg(x);
            stack.extend(reg.cycle.iter().map(|&(c, _)| c));
            if reg.event == NONE {
                continue;
            }
            let mut sum = 0;
            let mut y = x;
            while y != NONE {
                sum += self.radius(y);
                y = self.reg(y).blossom_parent;
            }
            if sum > best.0 || (sum == best.0 && reg.event < best.1) {
                best = (sum, reg.event);
            }
        }
        self.stack = stack;
        best.1
    }

    /// Fills `self.outcome` from the final region structure.
    pub fn extract(&mut self) {
        let mut expand = std::mem::take(&mut self.expand);
        expand.clear();
        for r in 0..self.live as u32 {
            let reg = self.reg(r);
            if !reg.alive {
                continue;
            }
            let (top, mate, e) = (reg.is_top(), reg.mate, reg.mate_edge);
            let y = self.radius(r);
            self.outcome.dual += y;
            if !top {
                continue;
            }
            if mate == BOUNDARY {
                self.emit(e);
                expand.push((r, e.a));
            } else if mate == NONE {
                self.outcome.unmatched += 1;
                let s = self.best_unmatched(r);
                expand.push((r, s));
            } else if r < mate {
                self.emit(e);
                expand.push((r, e.a));
                expand.push((mate, e.b));
            }
        }
        while let Some((x, base)) = expand.pop() {
            if self.reg(x).event != NONE {
                debug_assert_eq!(self.reg(x).event, base);
                continue;
            }
            let cj = self.child_containing(base, x);
            let cycle = std::mem::take(&mut self.reg_mut(x).cycle);
            let len = cycle.len();
            let j = cycle.iter().position(|&(c, _)| c == cj).unwrap_or(0);
            expand.push((cj, base));
            for k in (1..len).step_by(2) {
                let (c, e) = cycle[(j + k) % len];
                let d = cycle[(j + k + 1) % len].0;
                self.emit(e);
                expand.push((c, e.a));
                expand.push((d, e.b));
            }
            self.reg_mut(x).cycle = cycle;
        }
        self.expand = expand;
    }
}
