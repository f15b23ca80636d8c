//! The detector graph in the form the sparse decoders walk ([`crate::decode::Mwpm`] and
//! [`crate::decode::UnionFind`]): integer weights, compact adjacency and observable masks.
//!
//! In: a [`Prepared`] graph (boundary node `n`, non-negative `f64` weights, flipped and dropped
//! edges already handled). Out: a [`SparseGraph`] whose edge lengths are even integers.
//!
//! Weights are quantised once per graph: `q(e) = round(w(e) · 2^20 / w_max)`, so the heaviest
//! edge is `2^20` units long and one unit is `w_max / 2^20` (the *quantum*). The matcher then
//! works with `2 q(e)`: with every length even, two regions growing towards each other always
//! meet after a whole number of time units (see the module docs of `decode/sparse`), so every
//! radius and every event time is an exact integer.

use crate::decode::Prepared;

/// Bits of resolution: the heaviest edge is `2^RESOLUTION_BITS` units long.
pub const RESOLUTION_BITS: u32 = 20;

/// Flag in [`Adj::tagged_len`]: the edge flips some observable.
const FLIPS: u32 = 1 << 31;

/// One adjacency entry: the neighbour and the doubled integer length (8 bytes, so that a
/// node's edges share few cache lines; the edge index is in [`SparseGraph::adj_edge`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) struct Adj {
    /// Neighbouring node (`n` is the boundary).
    pub node: u32,
    /// Twice the quantised weight of the edge, with the top bit set when the edge flips an
    /// observable (most edges flip none, and their masks need not be looked up).
    pub tagged_len: u32,
}

impl Adj {
    /// Twice the quantised weight of the edge.
    #[inline]
    pub fn len(self) -> i64 {
        i64::from(self.tagged_len & !FLIPS)
    }

    /// Whether the edge flips some observable.
    #[inline]
    pub fn flips(self) -> bool {
        self.tagged_len & FLIPS != 0
    }
}

/// The matcher's view of a graph; immutable and shared by every shot.
#[derive(Debug)]
pub(crate) struct SparseGraph {
    /// The validated graph (events are normalised through it).
    pub prepared: Prepared,
    /// `adj[adj_start[v]..adj_start[v + 1]]` are the edges of node `v` (`v <= n`).
    pub adj_start: Vec<u32>,
    /// Adjacency entries.
    pub adj: Vec<Adj>,
    /// Edge index (in [`Prepared::ends`]) of each adjacency entry.
    pub adj_edge: Vec<u32>,
    /// Quantised weight of each edge (not doubled); read by the tests.
    #[cfg_attr(not(test), allow(dead_code))]
    pub weight: Vec<u32>,
    /// Observable masks: word `k` of edge `e` is `masks[e * words + k]` (observables
    /// `64k..64k + 64`).
    pub masks: Vec<u64>,
    /// Mask words per edge (at least 1).
    pub words: usize,
    /// The real weight of one integer unit.
    pub quantum: f64,
    /// Connected component of each detector (edges between detectors only).
    pub component: Vec<u32>,
    /// Per component: no edge leads from it to the boundary.
    pub closed: Vec<bool>,
    /// Some component is closed.
    pub any_closed: bool,
}

impl SparseGraph {
    /// Quantises the weights of `prepared` so that the heaviest edge is `2^bits` units long
    /// (`bits <= 20`) and builds the adjacency.
    pub fn new(prepared: Prepared, num_observables: usize, bits: u32) -> SparseGraph {
        let w_max = prepared.weight.iter().copied().fold(0.0, f64::max);
        let top = f64::from(1u32 << bits.min(RESOLUTION_BITS));
        let scale = if w_max > 0.0 { top / w_max } else { 1.0 };
        let weight: Vec<u32> = prepared
            .weight
            .iter()
            .map(|&w| (w * scale).round().clamp(0.0, top) as u32)
            .collect();
        let words = num_observables.div_ceil(64).max(1);
        let edges = prepared.ends.len();
        let mut masks = vec![0u64; edges * words];
        for e in 0..edges {
            for &o in prepared.edge_observables(e) {
                masks[e * words + o as usize / 64] ^= 1 << (o % 64);
            }
        }
        let adj = prepared
            .adj
            .iter()
            .map(|&(node, edge)| Adj {
                node,
                tagged_len: (2 * weight[edge as usize])
                    | if prepared.edge_observables(edge as usize).is_empty() {
                        0
                    } else {
                        FLIPS
                    },
            })
            .collect();
        let adj_edge = prepared.adj.iter().map(|&(_, edge)| edge).collect();
        let (component, closed) = components(&prepared);
        SparseGraph {
            adj_start: prepared.adj_start.clone(),
            adj,
            adj_edge,
            weight,
            masks,
            words,
            quantum: 1.0 / scale,
            any_closed: closed.iter().any(|&c| c),
            component,
            closed,
            prepared,
        }
    }

    /// Leaves out one event (the highest-numbered) of every boundary-free component holding
    /// an odd number of events, since no matching can pair them all; returns how many were
    /// left out. `count` is scratch space of one zero entry per component, left zeroed.
    ///
    /// Which event stays unpaired is a cheap fixed choice: finding the one whose removal
    /// leaves the lightest matching would mean growing regions over the whole component.
    pub fn drop_unpairable(&self, events: &mut Vec<u32>, count: &mut [u32]) -> u32 {
        if !self.any_closed {
            return 0;
        }
        for &e in events.iter() {
            let c = self.component[e as usize] as usize;
            if self.closed[c] {
                count[c] ^= 1;
            }
        }
        let mut dropped = 0;
        for k in (0..events.len()).rev() {
            let c = self.component[events[k] as usize] as usize;
            if self.closed[c] && count[c] == 1 {
                count[c] = 2;
                events[k] = u32::MAX;
                dropped += 1;
            }
        }
        if dropped > 0 {
            events.retain(|&e| e != u32::MAX);
        }
        for &e in events.iter() {
            count[self.component[e as usize] as usize] = 0;
        }
        if dropped > 0 {
            // The dropped events' components are also closed and odd; clear them too.
            for c in count.iter_mut().filter(|c| **c == 2) {
                *c = 0;
            }
        }
        dropped
    }

    /// Number of detectors; node `n` is the boundary.
    #[inline]
    pub fn n(&self) -> usize {
        self.prepared.n
    }

    /// The edges of node `v`.
    #[inline]
    pub fn neighbours(&self, v: u32) -> &[Adj] {
        let v = v as usize;
        &self.adj[self.adj_start[v] as usize..self.adj_start[v + 1] as usize]
    }

    /// Edge index of entry `i` of node `v`'s adjacency.
    #[inline]
    pub fn edge_at(&self, v: u32, i: usize) -> u32 {
        self.adj_edge[self.adj_start[v as usize] as usize + i]
    }

    /// Word `window` of the observable mask of edge `e`.
    #[inline]
    pub fn mask(&self, e: u32, window: usize) -> u64 {
        self.masks[e as usize * self.words + window]
    }
}

/// Connected components of the detectors through detector–detector edges, and which of them
/// have no boundary edge.
fn components(p: &Prepared) -> (Vec<u32>, Vec<bool>) {
    let n = p.n;
    let mut parent: Vec<u32> = (0..n as u32).collect();
    fn find(parent: &mut [u32], mut x: u32) -> u32 {
        while parent[x as usize] != x {
            let up = parent[parent[x as usize] as usize];
            parent[x as usize] = up;
            x = up;
        }
        x
    }
    for &(a, b) in &p.ends {
        if (b as usize) < n {
            let (ra, rb) = (find(&mut parent, a), find(&mut parent, b));
            if ra != rb {
                parent[ra as usize] = rb;
            }
        }
    }
    let mut id = vec![u32::MAX; n];
    let mut component = vec![0u32; n];
    let mut count = 0u32;
    for v in 0..n as u32 {
        let r = find(&mut parent, v) as usize;
        if id[r] == u32::MAX {
            id[r] = count;
            count += 1;
        }
        component[v as usize] = id[r];
    }
    let mut closed = vec![true; count as usize];
    for &(a, b) in &p.ends {
        if b as usize == n {
            closed[component[a as usize] as usize] = false;
        }
    }
    (component, closed)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::decode::{MatchingEdge, MatchingGraph};

    #[test]
    fn heaviest_edge_maps_to_full_resolution() {
        let g = MatchingGraph {
            num_detectors: 2,
            num_observables: 70,
            edges: vec![
                MatchingEdge {
                    a: 0,
                    b: Some(1),
                    p: 0.01,
                    observables: vec![3, 69],
                },
                MatchingEdge {
                    a: 1,
                    b: None,
                    p: 0.1,
                    observables: vec![],
                },
                MatchingEdge {
                    a: 0,
                    b: None,
                    p: 0.5,
                    observables: vec![],
                },
            ],
        };
        let s = SparseGraph::new(
            Prepared::new(&g).unwrap(),
            g.num_observables,
            RESOLUTION_BITS,
        );
        // Edges sorted by endpoints: (0,1), (0,2=boundary), (1,2).
        assert_eq!(s.weight[0], 1 << RESOLUTION_BITS);
        assert_eq!(s.weight[1], 0);
        let want = (9f64.ln() / 99f64.ln() * f64::from(1 << RESOLUTION_BITS)).round() as u32;
        assert_eq!(s.weight[2], want);
        assert!((s.quantum * f64::from(1u32 << RESOLUTION_BITS) - 99f64.ln()).abs() < 1e-12);
        assert_eq!(s.words, 2);
        assert_eq!((s.mask(0, 0), s.mask(0, 1)), (1 << 3, 1 << 5));
        assert_eq!(s.neighbours(0)[0].len(), 2 << RESOLUTION_BITS);
        assert!(s.neighbours(0)[0].flips() && !s.neighbours(1)[1].flips());
    }

    #[test]
    fn one_event_per_odd_closed_component_is_left_out() {
        let e = |a, b| MatchingEdge {
            a,
            b,
            p: 0.1,
            observables: vec![],
        };
        // Components {0, 1, 2} (closed), {3, 4} (boundary at 4), {5} (closed, no edges).
        let g = MatchingGraph {
            num_detectors: 6,
            num_observables: 1,
            edges: vec![e(0, Some(1)), e(1, Some(2)), e(3, Some(4)), e(4, None)],
        };
        let s = SparseGraph::new(Prepared::new(&g).unwrap(), 1, RESOLUTION_BITS);
        assert_eq!(s.closed.len(), 3);
        let mut count = vec![0; 3];
        let mut events = vec![0, 1, 2, 3, 5];
        assert_eq!(s.drop_unpairable(&mut events, &mut count), 2);
        assert_eq!(events, vec![0, 1, 3]);
        let mut events = vec![0, 2, 3];
        assert_eq!(s.drop_unpairable(&mut events, &mut count), 0);
        assert_eq!(events, vec![0, 2, 3]);
        assert_eq!(count, vec![0, 0, 0]);
    }
}
