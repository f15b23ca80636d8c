//! Reading the final matching out of the regions.
//!
//! When the queue runs dry every top region is matched (to a region or the boundary) or is the
//! lone root of a tree that covers a whole boundary-free component. The event-level pairs follow
//! from the blossom cycles: a blossom whose outside edge enters child `c_j` pairs the other
//! children along the cycle as `(c_{j+1}, c_{j+2}), (c_{j+3}, c_{j+4}), …`, recursively inside
//! each child from the event its own edge enters.
//!
//! A root left unmatched would hold an odd number of events with no boundary to absorb one;
//! the caller removes one event from every such component beforehand
//! (`SparseGraph::drop_unpairable`), so it does not happen. Should it, the root
//! is counted unmatched and paired inside from its first child, the tree root it grew from.

use super::region::{Edge, BOUNDARY, NONE};
use super::solver::Solver;

impl Solver {
    fn emit(&mut self, e: Edge) {
        let b = if e.b == BOUNDARY {
            BOUNDARY
        } else {
            self.reg(e.b).event
        };
        self.outcome.pairs.push((self.reg(e.a).event, b));
        self.outcome.len += e.len;
        self.outcome.mask ^= e.mask;
    }

    /// The trivial region reached from `r` through the first child at every level.
    fn first_trivial(&self, mut r: u32) -> u32 {
        while self.reg(r).event == NONE {
            r = self.reg(r).cycle[0].0;
        }
        r
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
                expand.push((r, self.first_trivial(r)));
            } else if r < mate {
                self.emit(e);
                expand.push((r, e.a));
                expand.push((mate, e.b));
            }
        }
        while let Some((x, base)) = expand.pop() {
            if self.reg(x).event != NONE {
                debug_assert_eq!(x, base);
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
