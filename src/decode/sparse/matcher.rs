//! Edmonds' primal–dual steps on regions: alternating trees, augmentation, blossoms.
//!
//! The flooder reports three things, and the matcher answers each with one step of Edmonds'
//! blossom algorithm ("Paths, trees, and flowers", Edmonds, 1965):
//! - an outer region touches a *free* (matched, frozen) region: the free region joins the tree
//!   as an inner node and its partner as an outer node ([`Solver::grow_tree`]); if the free
//!   region is matched to the boundary, the path from the tree root through the contact is
//!   augmenting and the boundary simply gives the region up;
//! - an outer region touches an outer region of another tree, or the boundary: augment along
//!   root – … – contact – … – root and dissolve the trees into matched pairs, all frozen;
//! - two outer regions of the same tree touch: the odd cycle through their lowest common
//!   ancestor becomes a blossom, a new outer region ([`Solver::form_blossom`]);
//! - an inner blossom's radius reaches zero: it is shattered back into its children, the
//!   even path through it rejoining the tree and the rest pairing up ([`Solver::shatter`]);
//! - an inner trivial region's radius reaches zero: its tree parent and child now touch at its
//!   node, which forms a blossom of the three ([`Solver::implode`]).
//!
//! Invariants: every tree edge and matched edge stays tight (its path length equals the sum
//! of the radii it crosses) because an inner region shrinks exactly as fast as the outer
//! regions beside it grow; the matched partner of an inner region is its only tree child.
//! Blossoms store only their cycle; which children are paired inside is decided when the
//! blossom is shattered or the final matching is read out, from where its outside edge enters.

use super::region::{Edge, Kind, Radius, BOUNDARY, NONE};
use super::solver::{Solver, NEVER};
use crate::decode::sparse_graph::SparseGraph;

impl Solver {
    fn add_child(&mut self, p: u32, c: u32) {
        let first = self.reg(p).first_child;
        {
            let rc = self.reg_mut(c);
            rc.tree_parent = p;
            rc.prev_sibling = NONE;
            rc.next_sibling = first;
        }
        if first != NONE {
            self.reg_mut(first).prev_sibling = c;
        }
        self.reg_mut(p).first_child = c;
    }

    /// Puts `new` in place of `old` in the child list of `p`.
    fn replace_child(&mut self, p: u32, old: u32, new: u32) {
        let (prev, next) = (self.reg(old).prev_sibling, self.reg(old).next_sibling);
        {
            let rn = self.reg_mut(new);
            rn.tree_parent = p;
            rn.prev_sibling = prev;
            rn.next_sibling = next;
        }
        if prev == NONE {
            self.reg_mut(p).first_child = new;
        } else {
            self.reg_mut(prev).next_sibling = new;
        }
        if next != NONE {
            self.reg_mut(next).prev_sibling = new;
        }
    }

    fn clear_tree_links(&mut self, r: u32) {
        let reg = self.reg_mut(r);
        reg.tree_parent = NONE;
        reg.parent_edge = Edge::EMPTY;
        reg.first_child = NONE;
        reg.next_sibling = NONE;
        reg.prev_sibling = NONE;
    }

    fn root_of(&self, mut r: u32) -> u32 {
        while self.reg(r).tree_parent != NONE {
            r = self.reg(r).tree_parent;
        }
        r
    }

    /// The child of blossom `b` that holds trivial region `r`.
    pub fn child_containing(&self, mut r: u32, b: u32) -> u32 {
        while self.reg(r).blossom_parent != b {
            r = self.reg(r).blossom_parent;
            debug_assert!(r != NONE, "region {r} is not inside region {b}");
        }
        r
    }

    /// Sum of the radii of trivial region `r` and every blossom around it: the length of any
    /// tight path from its event to the edge of the top region's area.
    pub fn chain_radius(&self, mut r: u32) -> i64 {
        let mut sum = 0;
        while r != NONE {
            sum += self.radius(r);
            r = self.reg(r).blossom_parent;
        }
        sum
    }

    /// Outer region `r` touches the boundary along `edge`.
    pub fn hit_boundary(&mut self, g: &SparseGraph, r: u32, edge: Edge) {
        debug_assert_eq!(self.reg(r).kind, Kind::Outer);
        let root = self.root_of(r);
        self.augment_from(r, BOUNDARY, edge);
        self.dissolve(g, root);
    }

    /// Top regions `x` and `y` touch along `edge` (`edge.a` in `x`); one of them is outer.
    pub fn collide(&mut self, g: &SparseGraph, x: u32, y: u32, edge: Edge) {
        let (a, b, e) = if self.reg(x).kind == Kind::Outer {
            (x, y, edge)
        } else {
            (y, x, edge.rev())
        };
        debug_assert_eq!(self.reg(a).kind, Kind::Outer);
        match self.reg(b).kind {
            Kind::Free if self.reg(b).mate == BOUNDARY => {
                let root = self.root_of(a);
                self.augment_from(a, b, e);
                let rb = self.reg_mut(b);
                rb.mate = a;
                rb.mate_edge = e.rev();
                self.dissolve(g, root);
            }
            Kind::Free => self.grow_tree(g, a, b, e),
            Kind::Outer => {
                let (ra, rb) = (self.root_of(a), self.root_of(b));
                if ra == rb {
                    self.form_blossom(g, a, b, e);
                } else {
                    self.augment_from(a, b, e);
                    self.augment_from(b, a, e.rev());
                    self.dissolve(g, ra);
                    self.dissolve(g, rb);
                }
            }
            Kind::Inner => debug_assert!(false, "an outer region cannot reach an inner one"),
        }
    }

    /// Matches outer region `x` to `partner` along `edge` and flips the matching along the
    /// tree path from `x` to its root.
    fn augment_from(&mut self, x: u32, partner: u32, edge: Edge) {
        {
            let rx = self.reg_mut(x);
            rx.mate = partner;
            rx.mate_edge = edge;
        }
        let mut cur = x;
        loop {
            let i = self.reg(cur).tree_parent;
            if i == NONE {
                break;
            }
            let o = self.reg(i).tree_parent;
            let pe = self.reg(i).parent_edge;
            {
                let ri = self.reg_mut(i);
                ri.mate = o;
                ri.mate_edge = pe;
            }
            let ro = self.reg_mut(o);
            ro.mate = i;
            ro.mate_edge = pe.rev();
            cur = o;
        }
    }

    /// Turns every region of the tree rooted at `root` into a frozen matched region.
    fn dissolve(&mut self, g: &SparseGraph, root: u32) {
        let mut stack = std::mem::take(&mut self.path_a);
        let mut stopped = std::mem::take(&mut self.path_b);
        stack.clear();
        stopped.clear();
        stack.push(root);
        while let Some(x) = stack.pop() {
            let mut c = self.reg(x).first_child;
            while c != NONE {
                stack.push(c);
                c = self.reg(c).next_sibling;
            }
            if self.slope(x) < 0 {
                stopped.push(x);
            }
            self.set_slope(x, 0);
            let rx = self.reg_mut(x);
            debug_assert!(rx.mate != NONE);
            rx.kind = Kind::Free;
            rx.shrink_at = NEVER;
            self.clear_tree_links(x);
        }
        // Inner regions stop shrinking: contacts with growing neighbours come earlier.
        for &x in &stopped {
            self.wake_neighbours(g, x);
        }
        self.path_a = stack;
        self.path_b = stopped;
    }

    /// Outer region `a` touches free region `b` (matched to a region): `b` becomes an inner
    /// child of `a`, and `b`'s partner an outer child of `b`.
    fn grow_tree(&mut self, g: &SparseGraph, a: u32, b: u32, e: Edge) {
        let c = self.reg(b).mate;
        debug_assert!(c != NONE && c != BOUNDARY);
        self.add_child(a, b);
        {
            let rb = self.reg_mut(b);
            rb.kind = Kind::Inner;
            rb.parent_edge = e.rev();
        }
        self.set_slope(b, -1);
        self.schedule_shrink(b);
        self.add_child(b, c);
        {
            let rc = self.reg_mut(c);
            rc.kind = Kind::Outer;
            rc.parent_edge = rc.mate_edge;
        }
        self.set_slope(c, 1);
        self.reschedule(g, c);
    }

    /// Outer regions `a` and `b` of one tree touch along `e`: the cycle through their lowest
    /// common ancestor becomes a new outer blossom.
    pub fn form_blossom(&mut self, g: &SparseGraph, a: u32, b: u32, e: Edge) {
        self.stamp = self.stamp.wrapping_add(1);
        let stamp = self.stamp;
        let (mut x, mut y) = (a, b);
        let lca = loop {
            if x != NONE {
                if self.reg(x).mark == stamp {
                    break x;
                }
                self.reg_mut(x).mark = stamp;
                x = self.reg(x).tree_parent;
            }
            if y != NONE {
                if self.reg(y).mark == stamp {
                    break y;
                }
                self.reg_mut(y).mark = stamp;
                y = self.reg(y).tree_parent;
            }
        };
        let mut path_a = std::mem::take(&mut self.path_a);
        let mut path_b = std::mem::take(&mut self.path_b);
        path_a.clear();
        path_b.clear();
        for (start, path) in [(a, &mut path_a), (b, &mut path_b)] {
            let mut x = start;
            while x != lca {
                path.push(x);
                x = self.reg(x).tree_parent;
            }
        }

        let n = self.new_region();
        let mut cycle = std::mem::take(&mut self.reg_mut(n).cycle);
        let mut prev = lca;
        for &x in path_a.iter().rev() {
            cycle.push((prev, self.reg(x).parent_edge.rev()));
            prev = x;
        }
        cycle.push((prev, e));
        for &x in &path_b {
            cycle.push((x, self.reg(x).parent_edge));
        }
        debug_assert!(cycle.len() % 2 == 1);

        let t = self.t;
        let (lp, lpe, lm, lme) = {
            let rl = self.reg(lca);
            (rl.tree_parent, rl.parent_edge, rl.mate, rl.mate_edge)
        };
        {
            let rn = self.reg_mut(n);
            rn.kind = Kind::Outer;
            rn.mate = lm;
            rn.mate_edge = lme;
            rn.parent_edge = lpe;
        }
        self.rad[n as usize] = Radius { base: -t, slope: 1 };
        if lp != NONE {
            self.replace_child(lp, lca, n);
            self.reg_mut(lp).mate = n;
        }
        for &(x, _) in &cycle {
            self.reg_mut(x).blossom_parent = n;
        }
        for &(x, _) in &cycle {
            let mut c = self.reg(x).first_child;
            while c != NONE {
                let next = self.reg(c).next_sibling;
                if self.reg(c).blossom_parent != n {
                    self.add_child(n, c);
                }
                c = next;
            }
        }
        // Nodes of outer members keep their local radius and slope, so their pending events
        // stay valid; only the inner members start growing.
        path_a.clear();
        for &(x, _) in &cycle {
            let y = self.radius(x);
            if self.slope(x) < 0 {
                path_a.push(x);
            }
            self.set_slope(x, 0);
            {
                let rx = self.reg_mut(x);
                rx.shrink_at = NEVER;
                rx.mate = NONE;
                rx.mate_edge = Edge::EMPTY;
                rx.kind = Kind::Free;
            }
            self.clear_tree_links(x);
            self.retop(x, n, y);
        }
        self.reg_mut(n).cycle = cycle;
        for &x in &path_a {
            self.reschedule(g, x);
        }
        self.path_a = path_a;
        self.path_b = path_b;
    }

    /// Inner trivial region `r` has shrunk to radius zero: its tree parent and its child touch
    /// through its node, closing a three-cycle into a blossom.
    pub fn implode(&mut self, g: &SparseGraph, r: u32) {
        let p = self.reg(r).tree_parent;
        let c = self.reg(r).first_child;
        debug_assert!(p != NONE && c != NONE && self.reg(r).mate == c);
        let e = self
            .reg(r)
            .parent_edge
            .rev()
            .then(self.reg(c).parent_edge.rev());
        self.form_blossom(g, p, c, e);
    }

    /// Inner blossom `b` has shrunk to radius zero: its children become top regions again.
    /// The even-length way round the cycle from the child the parent edge enters to the child
    /// matched to `b`'s tree child joins the tree (inner, outer, …, inner); the other children
    /// pair up along the cycle and freeze.
    pub fn shatter(&mut self, g: &SparseGraph, b: u32) {
        let p = self.reg(b).tree_parent;
        let ep = self.reg(b).parent_edge;
        let c = self.reg(b).first_child;
        let ec = self.reg(b).mate_edge;
        debug_assert!(p != NONE && c != NONE && self.reg(b).mate == c);
        let cycle = std::mem::take(&mut self.reg_mut(b).cycle);
        let len = cycle.len();
        let ci = self.child_containing(ep.a, b);
        let cj = self.child_containing(ec.a, b);
        let i = cycle.iter().position(|&(x, _)| x == ci).unwrap_or(0);
        let j = cycle.iter().position(|&(x, _)| x == cj).unwrap_or(0);
        let forward = ((j + len - i) % len).is_multiple_of(2);

        for &(x, _) in &cycle {
            let y = self.radius(x);
            self.reg_mut(x).blossom_parent = NONE;
            self.retop(x, x, -y);
        }

        // The path through the blossom: region and edge towards its tree parent.
        let mut path = std::mem::take(&mut self.path_edges);
        path.clear();
        path.push((cycle[i].0, ep));
        let mut k = i;
        while k != j {
            let (nk, e) = if forward {
                ((k + 1) % len, cycle[k].1.rev())
            } else {
                let nk = (k + len - 1) % len;
                (nk, cycle[nk].1)
            };
            path.push((cycle[nk].0, e));
            k = nk;
        }
        self.replace_child(p, b, path[0].0);
        for idx in 0..path.len() {
            let (x, e) = path[idx];
            if idx > 0 {
                self.add_child(path[idx - 1].0, x);
            }
            let inner = idx % 2 == 0;
            self.set_slope(x, if inner { -1 } else { 1 });
            let rx = self.reg_mut(x);
            rx.parent_edge = e;
            if inner {
                rx.kind = Kind::Inner;
            } else {
                rx.kind = Kind::Outer;
                rx.mate = path[idx - 1].0;
                rx.mate_edge = e;
                let rp = self.reg_mut(path[idx - 1].0);
                rp.mate = x;
                rp.mate_edge = e.rev();
            }
        }
        let last = path[path.len() - 1].0;
        self.add_child(last, c);
        self.reg_mut(c).mate = last;
        {
            let rl = self.reg_mut(last);
            rl.mate = c;
            rl.mate_edge = ec;
        }
        // The rest of the cycle pairs up.
        let start = if forward {
            (j + 1) % len
        } else {
            (i + 1) % len
        };
        let rest = len - path.len();
        for q in (0..rest).step_by(2) {
            let (x, e) = cycle[(start + q) % len];
            let y = cycle[(start + q + 1) % len].0;
            {
                let rx = self.reg_mut(x);
                rx.kind = Kind::Free;
                rx.mate = y;
                rx.mate_edge = e;
            }
            let ry = self.reg_mut(y);
            ry.kind = Kind::Free;
            ry.mate = x;
            ry.mate_edge = e.rev();
        }
        {
            let rb = self.reg_mut(b);
            rb.alive = false;
            rb.tree_parent = NONE;
            rb.mate = NONE;
        }
        for (idx, &(x, _)) in path.iter().enumerate() {
            if idx % 2 == 0 {
                self.schedule_shrink(x);
            } else {
                self.reschedule(g, x);
            }
        }
        for q in 0..rest {
            self.wake_neighbours(g, cycle[(start + q) % len].0);
        }
        self.reg_mut(b).cycle = cycle;
        self.path_edges = path;
    }
}
