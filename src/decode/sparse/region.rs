//! Regions (the dual variables) and compressed edges (the tight paths between them).
//!
//! A region is either *trivial* (grown around one detection event) or a *blossom* (an odd
//! cycle of regions that grows as a whole). Its radius `y(t) = base + slope · t` is the dual
//! variable of the odd set of events it contains; `slope` is `+1` while it grows (an outer
//! node of an alternating tree), `-1` while it shrinks (inner node) and `0` otherwise (matched
//! and out of every tree, or a child inside a blossom).
//!
//! Only *top* regions (not inside a blossom) take part in the alternating trees and own the
//! `kind`, tree and match fields; a blossom child keeps its radius frozen and its place in the
//! parent's cycle.

/// "No region / no node".
pub(crate) const NONE: u32 = u32::MAX;
/// The boundary as a match partner or compressed-edge endpoint.
pub(crate) const BOUNDARY: u32 = u32::MAX - 1;

/// A path between two detection events (or an event and the boundary) that was tight when it
/// was found, reduced to what the matcher needs: its ends (as the events' trivial regions),
/// length and observable mask.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) struct Edge {
    /// The trivial region of the event at this end (inside the region storing the edge).
    pub a: u32,
    /// The trivial region of the event at the far end, or [`BOUNDARY`].
    pub b: u32,
    /// Doubled integer length of the path.
    pub len: i64,
    /// Observable mask (one 64-bit window) of the path.
    pub mask: u64,
}

impl Edge {
    /// An edge with no meaning, for cleared fields.
    pub const EMPTY: Edge = Edge {
        a: NONE,
        b: NONE,
        len: 0,
        mask: 0,
    };

    /// The same path seen from the other end.
    #[inline]
    pub fn rev(self) -> Edge {
        Edge {
            a: self.b,
            b: self.a,
            ..self
        }
    }

    /// The path `self` followed by `next` (which must start where `self` ends).
    #[inline]
    pub fn then(self, next: Edge) -> Edge {
        debug_assert_eq!(self.b, next.a);
        Edge {
            a: self.a,
            b: next.b,
            len: self.len + next.len,
            mask: self.mask ^ next.mask,
        }
    }
}

/// The role of a top region in the matcher.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Kind {
    /// Matched (to a region or the boundary) and in no tree: frozen.
    Free,
    /// Inner node of an alternating tree: shrinking.
    Inner,
    /// Outer node of an alternating tree (a root is outer): growing.
    Outer,
}

/// The radius of a region as a linear function of time; kept apart from [`Region`] in a
/// compact array because the flooder reads it for every neighbouring region it meets.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub(crate) struct Radius {
    /// Radius at time 0 of the current linear piece.
    pub base: i64,
    /// Radius change per unit time.
    pub slope: i64,
}

impl Radius {
    /// The radius at time `t`.
    #[inline]
    pub fn at(self, t: i64) -> i64 {
        self.base + self.slope * t
    }

    /// Changes the slope at time `t`, keeping the radius continuous.
    #[inline]
    pub fn set_slope(&mut self, slope: i64, t: i64) {
        let y = self.at(t);
        self.slope = slope;
        self.base = y - slope * t;
    }
}

/// One region; fields other than the parent and area only mean something for the region's
/// current role.
#[derive(Clone, Debug)]
pub(crate) struct Region {
    /// The blossom this region is a child of ([`NONE`] for a top region).
    pub blossom_parent: u32,
    /// The event a trivial region grew from ([`NONE`] for a blossom).
    pub event: u32,
    /// Nodes this region itself reached, in order of arrival (its own source excluded).
    pub shell: Vec<u32>,
    /// Blossom children in cycle order, each with the edge to the next child.
    pub cycle: Vec<(u32, Edge)>,
    /// Role in the matcher (top regions).
    pub kind: Kind,
    /// Match partner: a region, [`BOUNDARY`], or [`NONE`] (a tree root).
    pub mate: u32,
    /// The matched edge, `a` inside this region.
    pub mate_edge: Edge,
    /// Parent in the alternating tree ([`NONE`] for a root or a free region).
    pub tree_parent: u32,
    /// The tree edge to the parent, `a` inside this region.
    pub parent_edge: Edge,
    /// Tree children as a doubly linked list through the siblings.
    pub first_child: u32,
    /// Next sibling in the parent's child list.
    pub next_sibling: u32,
    /// Previous sibling in the parent's child list.
    pub prev_sibling: u32,
    /// Time of this region's pending shrink event (`i64::MAX`: none).
    pub shrink_at: i64,
    /// Scratch stamp for tree walks.
    pub mark: u32,
    /// False once a blossom has been shattered.
    pub alive: bool,
}

impl Region {
    /// A region with no role yet (keeps nothing from a previous use except allocations).
    pub fn fresh() -> Region {
        Region {
            blossom_parent: NONE,
            event: NONE,
            shell: Vec::new(),
            cycle: Vec::new(),
            kind: Kind::Free,
            mate: NONE,
            mate_edge: Edge::EMPTY,
            tree_parent: NONE,
            parent_edge: Edge::EMPTY,
            first_child: NONE,
            next_sibling: NONE,
            prev_sibling: NONE,
            shrink_at: i64::MAX,
            mark: 0,
            alive: true,
        }
    }

    /// Clears every field for reuse, keeping the capacity of the lists.
    pub fn reset(&mut self) {
        let mut shell = std::mem::take(&mut self.shell);
        let mut cycle = std::mem::take(&mut self.cycle);
        shell.clear();
        cycle.clear();
        *self = Region {
            shell,
            cycle,
            ..Region::fresh()
        };
    }

    /// True for a region that is not inside a blossom and still exists.
    #[inline]
    pub fn is_top(&self) -> bool {
        self.alive && self.blossom_parent == NONE
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn radius_is_continuous_across_slope_changes() {
        let mut r = Radius::default();
        r.set_slope(1, 0);
        assert_eq!(r.at(10), 10);
        r.set_slope(-1, 10);
        assert_eq!(r.at(14), 6);
        r.set_slope(0, 14);
        assert_eq!(r.at(100), 6);
    }

    #[test]
    fn edges_reverse_and_compose() {
        let e = Edge {
            a: 1,
            b: 2,
            len: 4,
            mask: 1,
        };
        let f = Edge {
            a: 2,
            b: 7,
            len: 6,
            mask: 3,
        };
        assert_eq!(e.rev().rev(), e);
        assert_eq!(
            e.then(f),
            Edge {
                a: 1,
                b: 7,
                len: 10,
                mask: 2
            }
        );
    }
}
