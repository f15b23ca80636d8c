//! Exact minimum-weight perfect matching (MWPM) on a complete graph of events: the reference.
//!
//! The default decoder is the sparse [`super::Mwpm`]; this one is kept as its test oracle and
//! as the baseline of the decoder benchmark (it is much slower near threshold).
//!
//! In: a [`MatchingGraph`]. Out: a [`ReferenceMwpm`] decoder; per shot, the observables flipped along
//! the paths of a minimum-weight matching of the detection events, where each event is matched
//! either to another event (cost: the shortest-path distance between them) or to the boundary
//! (cost: its distance to the nearest boundary edge's far end). This is the decoder of
//! "Topological quantum memory", J. Math. Phys. 43, 4452 (2002).
//!
//! How a shot is decoded:
//! 1. Distances. Built once: the distance and first step from every detector to the boundary
//!    (one Dijkstra run from the boundary node), and, for graphs up to
//!    [`ReferenceMwpmOptions::all_pairs_limit`] detectors, all-pairs distances with a predecessor table
//!    (one Dijkstra per detector). Larger graphs run a Dijkstra per event per shot, stopped once
//!    it passes `d(i, B) + max_j d(j, B)`: a pair farther apart than that is never matched (see 2).
//!    Paths never pass through the boundary node: going through it is the same as matching both
//!    ends to the boundary, which the matching already considers.
//! 2. Pruning and splitting. A pair `i, j` with `d(i, j) >= d(i, B) + d(j, B)` can be replaced by
//!    matching both to the boundary without raising the total, so only "useful" pairs are kept.
//!    The events then fall into connected components of useful pairs, and each component is an
//!    independent matching problem (they interact only through the boundary, which takes any
//!    number of events). At low noise most components have one or two events.
//! 3. Matching a component of `m` events. Up to [`ReferenceMwpmOptions::subset_dp_limit`] events: exact
//!    dynamic programming over subsets in `f64` (`O(2^m m)`). Larger: a perfect matching on the
//!    `m` events (plus one virtual boundary vertex when `m` is odd) with pair weights
//!    `min(d(i, j), d(i, B) + d(j, B))` — equivalent to the usual construction with one boundary
//!    copy per event, at half the vertices — solved with Edmonds' blossom algorithm (crate
//!    `mwmatching`, a port of van Rantwijk's maximum-weight matching, `O(n^3)`) on integer
//!    weights `K − round(w · s)`, with `s` such that the largest weight maps to 2^24 and maximum
//!    cardinality forced. The integer step makes that path exact up to a resolution of
//!    `w_max / 2^24` per edge.
//! 4. Prediction: XOR of the observables of the edges on each matched path.
//!
//! An event in a component without a perfect matching (no boundary reachable and an odd number
//! of events) is left unmatched and counted in [`Decoded::unmatched`].

use std::cmp::Ordering;
use std::collections::BinaryHeap;

use rayon::prelude::*;

use super::{odd_parity, BuildError, Decoded, Decoder, MatchingGraph, Pool, Prepared};

const NONE: u32 = u32::MAX;

/// Tuning knobs of [`ReferenceMwpm`]; the defaults suit graphs of a few thousand detectors.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct ReferenceMwpmOptions {
    /// Precompute all-pairs shortest paths when the graph has at most this many detectors
    /// (memory: 12 bytes per pair).
    pub all_pairs_limit: usize,
    /// Match components of at most this many events by subset dynamic programming; larger
    /// components go to the blossom algorithm. At most 16.
    pub subset_dp_limit: usize,
}

impl Default for ReferenceMwpmOptions {
    fn default() -> Self {
        ReferenceMwpmOptions {
            all_pairs_limit: 2048,
            subset_dp_limit: 8,
        }
    }
}

/// A minimum-weight perfect matching decoder, built once per graph.
#[derive(Debug)]
pub struct ReferenceMwpm {
    g: Prepared,
    /// Distance from each detector to the boundary (`inf` when unreachable).
    bdist: Vec<f64>,
    /// The edge leaving each detector towards the boundary on a shortest path.
    bstep: Vec<u32>,
    all_pairs: Option<AllPairs>,
    options: ReferenceMwpmOptions,
    pool: Pool<Search>,
}

/// Row-major `n × n` distances and the last edge of each shortest path (`pred[s·n + v]` enters
/// `v` on a shortest path from `s`).
#[derive(Debug)]
struct AllPairs {
    dist: Vec<f64>,
    pred: Vec<u32>,
}

/// How one shot was matched: the pairs, their total weight and the prediction.
#[derive(Clone, Debug, PartialEq)]
pub struct MatchingResult {
    /// Matched pairs of detection events; `None` is the boundary. Events are after the fixed
    /// toggles of flipped edges (see the module docs of [`crate::decode`]).
    pub pairs: Vec<(u32, Option<u32>)>,
    /// Total weight of the matched paths.
    pub weight: f64,
    /// The prediction.
    pub decoded: Decoded,
}

impl ReferenceMwpm {
    /// Builds the decoder with default options.
    pub fn new(graph: &MatchingGraph) -> Result<ReferenceMwpm, BuildError> {
        ReferenceMwpm::with_options(graph, ReferenceMwpmOptions::default())
    }

    /// Builds the decoder with the given options.
    pub fn with_options(
        graph: &MatchingGraph,
        options: ReferenceMwpmOptions,
    ) -> Result<ReferenceMwpm, BuildError> {
        Ok(ReferenceMwpm::from_prepared(Prepared::new(graph)?, options))
    }

    /// Builds the decoder from an already prepared graph (tests give it integer weights).
    pub(crate) fn from_prepared(g: Prepared, options: ReferenceMwpmOptions) -> ReferenceMwpm {
        let n = g.n;
        let mut s = Search::new(n + 1);
        dijkstra(&g, &mut s, n as u32, f64::INFINITY, |_, _| false);
        let mut bdist = vec![f64::INFINITY; n];
        let mut bstep = vec![NONE; n];
        for &v in &s.touched {
            if (v as usize) < n {
                bdist[v as usize] = s.dist[v as usize];
                bstep[v as usize] = s.pred[v as usize];
            }
        }
        let all_pairs = (n <= options.all_pairs_limit && n > 0).then(|| {
            let mut dist = vec![f64::INFINITY; n * n];
            let mut pred = vec![NONE; n * n];
            dist.par_chunks_mut(n)
                .zip(pred.par_chunks_mut(n))
                .enumerate()
                .for_each_init(
                    || Search::new(n + 1),
                    |s, (src, (drow, prow))| {
                        dijkstra(&g, s, src as u32, f64::INFINITY, |_, _| false);
                        for &v in &s.touched {
                            if (v as usize) < n {
                                drow[v as usize] = s.dist[v as usize];
                                prow[v as usize] = s.pred[v as usize];
                            }
                        }
                        s.reset();
                    },
                );
            AllPairs { dist, pred }
        });
        let options = ReferenceMwpmOptions {
            subset_dp_limit: options.subset_dp_limit.min(16),
            ..options
        };
        ReferenceMwpm {
            g,
            bdist,
            bstep,
            all_pairs,
            options,
            pool: Pool::new(),
        }
    }

    /// Decodes one shot and reports the matching as well as the prediction.
    pub fn decode_matching(&self, events: &[u32]) -> MatchingResult {
        let (events, bad) = self.g.normalize_events(events);
        let k = events.len();
        let n = self.g.n;
        let bd: Vec<f64> = events.iter().map(|&e| self.bdist[e as usize]).collect();
        let mut dist = vec![f64::INFINITY; k * k];
        self.pool.with(
            || Search::new(n + 1),
            |s| self.pair_distances(s, &events, &bd, &mut dist),
        );

        // Components of useful pairs (module docs, step 2).
        let mut parent: Vec<usize> = (0..k).collect();
        fn find(p: &mut [usize], mut x: usize) -> usize {
            while p[x] != x {
                p[x] = p[p[x]];
                x = p[x];
            }
            x
        }
        for i in 0..k {
            for j in i + 1..k {
                if dist[i * k + j] < bd[i] + bd[j] {
                    let (a, b) = (find(&mut parent, i), find(&mut parent, j));
                    if a != b {
                        parent[a] = b;
                    }
                }
            }
        }
        let mut members: Vec<Vec<usize>> = vec![Vec::new(); k];
        for i in 0..k {
            let r = find(&mut parent, i);
            members[r].push(i);
        }

        let mut pairs: Vec<(usize, Option<usize>)> = Vec::with_capacity(k);
        let mut unmatched = bad;
        for comp in members.iter().filter(|c| !c.is_empty()) {
            unmatched += self.match_component(comp, k, &dist, &bd, &mut pairs);
        }

        let mut toggles: Vec<u32> = self.g.fixed_observables.clone();
        let mut weight = 0.0;
        let mut out_pairs = Vec::with_capacity(pairs.len());
        self.pool.with(
            || Search::new(n + 1),
            |s| {
                for &(i, j) in &pairs {
                    match j {
                        Some(j) => {
                            weight += dist[i * k + j];
                            self.walk_pair(s, events[i], events[j], &mut toggles);
                        }
                        None => {
                            weight += bd[i];
                            self.walk_boundary(events[i], &mut toggles);
                        }
                    }
                    out_pairs.push((events[i], j.map(|j| events[j])));
                }
            },
        );
        MatchingResult {
            pairs: out_pairs,
            weight,
            decoded: Decoded {
                observables: odd_parity(toggles),
                unmatched,
            },
        }
    }

    /// Fills the `k × k` distance matrix between the events.
    fn pair_distances(&self, s: &mut Search, events: &[u32], bd: &[f64], dist: &mut [f64]) {
        let k = events.len();
        let n = self.g.n;
        if let Some(ap) = &self.all_pairs {
            for i in 0..k {
                let row = &ap.dist[events[i] as usize * n..][..n];
                for j in i + 1..k {
                    let d = row[events[j] as usize];
                    dist[i * k + j] = d;
                    dist[j * k + i] = d;
                }
            }
            return;
        }
        let max_bd = bd.iter().cloned().fold(0.0, f64::max);
        for (j, &e) in events.iter().enumerate() {
            s.target[e as usize] = j as u32;
        }
        for i in 0..k {
            let mut left = k - i - 1;
            if left == 0 {
                break;
            }
            let radius = bd[i] + max_bd;
            dijkstra(&self.g, s, events[i], radius, |v, target| {
                let j = target[v as usize];
                if j != NONE && j as usize > i {
                    left -= 1;
                }
                left == 0
            });
            for j in i + 1..k {
                let v = events[j] as usize;
                if s.settled(v) {
                    dist[i * k + j] = s.dist[v];
                    dist[j * k + i] = s.dist[v];
                }
            }
            s.reset();
        }
        for &e in events {
            s.target[e as usize] = NONE;
        }
    }

    /// Matches one component; pushes pairs and returns the number of unmatched events.
    fn match_component(
        &self,
        comp: &[usize],
        k: usize,
        dist: &[f64],
        bd: &[f64],
        pairs: &mut Vec<(usize, Option<usize>)>,
    ) -> u32 {
        let m = comp.len();
        if m == 1 {
            let i = comp[0];
            if bd[i].is_finite() {
                pairs.push((i, None));
                return 0;
            }
            return 1;
        }
        let w = |a: usize, b: usize| dist[comp[a] * k + comp[b]];
        let b = |a: usize| bd[comp[a]];
        if m <= self.options.subset_dp_limit {
            if let Some(local) = subset_dp(m, &w, &b) {
                pairs.extend(
                    local
                        .into_iter()
                        .map(|(x, y)| (comp[x], y.map(|y| comp[y]))),
                );
                return 0;
            }
        }
        let (local, unmatched) = blossom(m, &w, &b);
        pairs.extend(
            local
                .into_iter()
                .map(|(x, y)| (comp[x], y.map(|y| comp[y]))),
        );
        unmatched
    }

    /// Toggles the observables along a shortest path between detectors `a` and `b`.
    fn walk_pair(&self, s: &mut Search, a: u32, b: u32, toggles: &mut Vec<u32>) {
        let n = self.g.n;
        if let Some(ap) = &self.all_pairs {
            let row = &ap.pred[a as usize * n..][..n];
            let mut x = b;
            while x != a {
                let e = row[x as usize] as usize;
                toggles.extend_from_slice(self.g.edge_observables(e));
                x = self.g.other(e, x);
            }
            return;
        }
        dijkstra(&self.g, s, a, f64::INFINITY, |v, _| v == b);
        let mut x = b;
        while x != a {
            let e = s.pred[x as usize] as usize;
            toggles.extend_from_slice(self.g.edge_observables(e));
            x = self.g.other(e, x);
        }
        s.reset();
    }

    /// Toggles the observables along a shortest path from detector `a` to the boundary.
    fn walk_boundary(&self, a: u32, toggles: &mut Vec<u32>) {
        let n = self.g.n as u32;
        let mut x = a;
        while x != n {
            let e = self.bstep[x as usize] as usize;
            toggles.extend_from_slice(self.g.edge_observables(e));
            x = self.g.other(e, x);
        }
    }
}

impl Decoder for ReferenceMwpm {
    fn decode(&self, events: &[u32]) -> Decoded {
        self.decode_matching(events).decoded
    }
}

/// Dijkstra scratch space over `n + 1` nodes, reset by the list of touched nodes.
#[derive(Debug)]
struct Search {
    dist: Vec<f64>,
    pred: Vec<u32>,
    done: Vec<bool>,
    touched: Vec<u32>,
    heap: BinaryHeap<Entry>,
    /// Event index of each detector during a shot (`NONE` otherwise).
    target: Vec<u32>,
}

impl Search {
    fn new(nodes: usize) -> Search {
        Search {
            dist: vec![f64::INFINITY; nodes],
            pred: vec![NONE; nodes],
            done: vec![false; nodes],
            touched: Vec::new(),
            heap: BinaryHeap::new(),
            target: vec![NONE; nodes],
        }
    }

    fn settled(&self, v: usize) -> bool {
        self.done[v]
    }

    fn reset(&mut self) {
        for &v in &self.touched {
            self.dist[v as usize] = f64::INFINITY;
            self.pred[v as usize] = NONE;
            self.done[v as usize] = false;
        }
        self.touched.clear();
        self.heap.clear();
    }
}

/// Heap entry ordered so that `BinaryHeap` pops the smallest distance first.
#[derive(Debug, PartialEq)]
struct Entry(f64, u32);

impl Eq for Entry {}

impl PartialOrd for Entry {
    fn partial_cmp(&self, other: &Self) -> Option<Ordering> {
        Some(self.cmp(other))
    }
}

impl Ord for Entry {
    fn cmp(&self, other: &Self) -> Ordering {
        other
            .0
            .total_cmp(&self.0)
            .then_with(|| other.1.cmp(&self.1))
    }
}

/// Dijkstra from `src` over non-negative weights, not expanding the boundary node (unless it is
/// the source), settling nodes up to distance `radius`, and stopping early once `stop` returns
/// true for a settled node (it also sees the shot's target table). Leaves `s` filled (the caller
/// resets it).
fn dijkstra(
    g: &Prepared,
    s: &mut Search,
    src: u32,
    radius: f64,
    mut stop: impl FnMut(u32, &[u32]) -> bool,
) {
    let boundary = g.n as u32;
    s.dist[src as usize] = 0.0;
    s.touched.push(src);
    s.heap.push(Entry(0.0, src));
    while let Some(Entry(d, v)) = s.heap.pop() {
        let vu = v as usize;
        if s.done[vu] {
            continue;
        }
        if d > radius {
            break;
        }
        s.done[vu] = true;
        if v != src && stop(v, &s.target) {
            break;
        }
        if v == boundary && v != src {
            continue;
        }
        for &(u, e) in g.neighbours(vu) {
            let nd = d + g.weight[e as usize];
            let uu = u as usize;
            if nd < s.dist[uu] {
                if s.dist[uu] == f64::INFINITY {
                    s.touched.push(u);
                }
                s.dist[uu] = nd;
                s.pred[uu] = e;
                s.heap.push(Entry(nd, u));
            }
        }
    }
}

/// Exact minimum-weight matching with boundary of `m <= 16` events by dynamic programming over
/// subsets; `None` when no perfect matching exists (infinite total).
fn subset_dp(
    m: usize,
    w: &impl Fn(usize, usize) -> f64,
    b: &impl Fn(usize) -> f64,
) -> Option<Vec<(usize, Option<usize>)>> {
    let full = (1usize << m) - 1;
    let mut best = vec![f64::INFINITY; full + 1];
    // Partner of the lowest event of each subset in its best matching (`m` = boundary).
    let mut choice = vec![0u8; full + 1];
    best[0] = 0.0;
    for mask in 1..=full {
        let i = mask.trailing_zeros() as usize;
        let rest = mask & !(1 << i);
        let mut v = b(i) + best[rest];
        let mut c = m as u8;
        let mut r = rest;
        while r != 0 {
            let j = r.trailing_zeros() as usize;
            r &= r - 1;
            let cand = w(i, j) + best[rest & !(1 << j)];
            if cand < v {
                v = cand;
                c = j as u8;
            }
        }
        best[mask] = v;
        choice[mask] = c;
    }
    if !best[full].is_finite() {
        return None;
    }
    let mut out = Vec::with_capacity(m);
    let mut mask = full;
    while mask != 0 {
        let i = mask.trailing_zeros() as usize;
        let c = choice[mask] as usize;
        mask &= !(1 << i);
        if c == m {
            out.push((i, None));
        } else {
            mask &= !(1 << c);
            out.push((i, Some(c)));
        }
    }
    Some(out)
}

/// Minimum-weight maximum-cardinality matching with boundary via the blossom algorithm.
/// Returns the pairs and the number of events left unmatched.
///
/// Instead of one boundary copy per event, events are joined pairwise with weight
/// `min(d(i, j), d(i, B) + d(j, B))` (the second meaning "both to the boundary"), plus one
/// virtual boundary vertex joined to every event at `d(i, B)` when `m` is odd. This is exact:
/// events sent to the boundary can be paired up arbitrarily at the same total, with at most one
/// left over for the virtual vertex. It halves the vertex count of the copy construction.
fn blossom(
    m: usize,
    w: &impl Fn(usize, usize) -> f64,
    b: &impl Fn(usize) -> f64,
) -> (Vec<(usize, Option<usize>)>, u32) {
    let mut wmax: f64 = 0.0;
    // (i, j, weight, both-to-boundary)
    let mut raw: Vec<(usize, usize, f64, bool)> = Vec::with_capacity(m * (m + 1) / 2);
    for i in 0..m {
        for j in i + 1..m {
            let (direct, via) = (w(i, j), b(i) + b(j));
            let (d, via_boundary) = if direct < via {
                (direct, false)
            } else {
                (via, true)
            };
            if d.is_finite() {
                raw.push((i, j, d, via_boundary));
                wmax = wmax.max(d);
            }
        }
        if m % 2 == 1 && b(i).is_finite() {
            raw.push((i, m, b(i), true));
            wmax = wmax.max(b(i));
        }
    }
    if raw.is_empty() {
        return (Vec::new(), m as u32);
    }
    const RES: f64 = (1u32 << 24) as f64;
    let scale = if wmax > 0.0 { RES / wmax } else { 1.0 };
    // Even integers, so the blossom algorithm's halved slacks stay integral.
    let big = 2 * (RES as i32) + 2;
    let edges: Vec<(usize, usize, i32)> = raw
        .iter()
        .map(|&(i, j, d, _)| (i, j, big - 2 * ((d * scale).round() as i32)))
        .collect();
    let mate = mwmatching::Matching::new(edges).max_cardinality().solve();
    let mut out = Vec::with_capacity(m);
    let mut unmatched = 0;
    for &(i, j, _, via_boundary) in &raw {
        if mate.get(i) != Some(&j) {
            continue;
        }
        if via_boundary {
            out.push((i, None));
            if j < m {
                out.push((j, None));
            }
        } else {
            out.push((i, Some(j)));
        }
    }
    for i in 0..m {
        if mate.get(i).is_none_or(|&j| j == mwmatching::SENTINEL) {
            unmatched += 1;
        }
    }
    (out, unmatched)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::decode::{MatchingEdge, UnionFind};
    use rand::{Rng, SeedableRng};
    use rand_xoshiro::Xoshiro256PlusPlus;

    /// A random graph with up to `max_n` detectors, random probabilities below 1/2 (so weights
    /// are distinct with probability one) and observables among `0..3`.
    fn random_graph(rng: &mut Xoshiro256PlusPlus, max_n: usize) -> MatchingGraph {
        let n = rng.gen_range(1..=max_n);
        let mut edges = Vec::new();
        let obs = |rng: &mut Xoshiro256PlusPlus| -> Vec<u32> {
            (0..3u32).filter(|_| rng.gen_bool(0.3)).collect()
        };
        for a in 0..n as u32 {
            if rng.gen_bool(0.3) {
                let o = obs(rng);
                edges.push(MatchingEdge {
                    a,
                    b: None,
                    p: rng.gen_range(0.01..0.45),
                    observables: o,
                });
            }
            for b in a + 1..n as u32 {
                if rng.gen_bool(0.45) {
                    let o = obs(rng);
                    let p = rng.gen_range(0.01..0.45);
                    edges.push(MatchingEdge {
                        a,
                        b: Some(b),
                        p,
                        observables: o,
                    });
                }
            }
        }
        MatchingGraph {
            num_detectors: n,
            num_observables: 3,
            edges,
        }
    }

    /// Brute force: Floyd–Warshall distances (with the observable mask of each shortest path,
    /// paths not passing through the boundary), then exhaustive enumeration of every way to
    /// pair the events or send them to the boundary. Returns the minimum weight and the
    /// observable mask of the minimiser, or `None` when no perfect matching exists.
    fn brute_force(g: &MatchingGraph, events: &[u32]) -> Option<(f64, u8)> {
        let n = g.num_detectors;
        let mask_of = |e: &MatchingEdge| e.observables.iter().fold(0u8, |m, &o| m ^ (1 << o));
        let mut d = vec![vec![f64::INFINITY; n]; n];
        let mut m = vec![vec![0u8; n]; n];
        for (i, row) in d.iter_mut().enumerate() {
            row[i] = 0.0;
        }
        for e in &g.edges {
            if let Some(b) = e.b {
                let (a, b) = (e.a as usize, b as usize);
                if e.weight() < d[a][b] {
                    d[a][b] = e.weight();
                    d[b][a] = e.weight();
                    m[a][b] = mask_of(e);
                    m[b][a] = mask_of(e);
                }
            }
        }
        for k in 0..n {
            for i in 0..n {
                for j in 0..n {
                    if d[i][k] + d[k][j] < d[i][j] {
                        d[i][j] = d[i][k] + d[k][j];
                        m[i][j] = m[i][k] ^ m[k][j];
                    }
                }
            }
        }
        let mut bd = vec![(f64::INFINITY, 0u8); n];
        for (i, slot) in bd.iter_mut().enumerate() {
            for e in g.edges.iter().filter(|e| e.b.is_none()) {
                let x = e.a as usize;
                let c = d[i][x] + e.weight();
                if c < slot.0 {
                    *slot = (c, m[i][x] ^ mask_of(e));
                }
            }
        }
        fn rec(left: &[usize], d: &[Vec<f64>], m: &[Vec<u8>], bd: &[(f64, u8)]) -> (f64, u8) {
            let Some((&i, rest)) = left.split_first() else {
                return (0.0, 0);
            };
            let (w, o) = rec(rest, d, m, bd);
            let mut best = (bd[i].0 + w, bd[i].1 ^ o);
            for (idx, &j) in rest.iter().enumerate() {
                let mut r: Vec<usize> = rest.to_vec();
                r.remove(idx);
                let (w, o) = rec(&r, d, m, bd);
                if d[i][j] + w < best.0 {
                    best = (d[i][j] + w, m[i][j] ^ o);
                }
            }
            best
        }
        let ev: Vec<usize> = events.iter().map(|&e| e as usize).collect();
        let (w, o) = rec(&ev, &d, &m, &bd);
        w.is_finite().then_some((w, o))
    }

    fn mask(obs: &[u32]) -> u8 {
        obs.iter().fold(0, |m, &o| m ^ (1 << o))
    }

    /// Common practice for matching decoders: the total weight of the returned matching equals
    /// the minimum over all perfect matchings with boundary, found by exhaustive enumeration,
    /// and (weights being distinct) so does the predicted observable set. Run through every
    /// code path: all-pairs table or per-shot Dijkstra, subset DP or blossom.
    #[test]
    fn matches_brute_force_minimum_on_random_instances() {
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(7);
        let configs = [
            ReferenceMwpmOptions::default(),
            ReferenceMwpmOptions {
                all_pairs_limit: 0,
                subset_dp_limit: 8,
            },
            ReferenceMwpmOptions {
                all_pairs_limit: 2048,
                subset_dp_limit: 0,
            },
            ReferenceMwpmOptions {
                all_pairs_limit: 0,
                subset_dp_limit: 0,
            },
        ];
        let mut perfect = 0;
        for _ in 0..300 {
            let g = random_graph(&mut rng, 9);
            let decoders: Vec<ReferenceMwpm> = configs
                .iter()
                .map(|&o| ReferenceMwpm::with_options(&g, o).unwrap())
                .collect();
            for _ in 0..5 {
                let events: Vec<u32> = (0..g.num_detectors as u32)
                    .filter(|_| rng.gen_bool(0.5))
                    .collect();
                let want = brute_force(&g, &events);
                for dec in &decoders {
                    let got = dec.decode_matching(&events);
                    match want {
                        Some((w, o)) => {
                            assert_eq!(got.decoded.unmatched, 0, "{g:?} {events:?}");
                            assert!(
                                (got.weight - w).abs() < 1e-6 * w.max(1.0),
                                "{g:?} {events:?}"
                            );
                            assert_eq!(mask(&got.decoded.observables), o, "{g:?} {events:?}");
                        }
                        None => assert!(got.decoded.unmatched > 0, "{g:?} {events:?}"),
                    }
                }
                if want.is_some() {
                    perfect += 1;
                }
                let uf = UnionFind::new(&g).unwrap().decode(&events);
                assert_eq!(uf.unmatched == 0, want.is_some(), "{g:?} {events:?}");
            }
        }
        assert!(
            perfect > 500,
            "too few instances with a perfect matching: {perfect}"
        );
    }

    #[test]
    fn subset_dp_and_blossom_agree_on_dense_instances() {
        // Complete instances with 9..=12 events: the DP (limit 16) against the blossom path.
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(11);
        for _ in 0..40 {
            let m = rng.gen_range(9..=12);
            let mut w = vec![0.0; m * m];
            for i in 0..m {
                for j in i + 1..m {
                    let x = rng.gen_range(0.5..20.0);
                    w[i * m + j] = x;
                    w[j * m + i] = x;
                }
            }
            let b: Vec<f64> = (0..m)
                .map(|_| {
                    if rng.gen_bool(0.7) {
                        rng.gen_range(1.0..15.0)
                    } else {
                        f64::INFINITY
                    }
                })
                .collect();
            let wf = |i: usize, j: usize| w[i * m + j];
            let bf = |i: usize| b[i];
            let total = |pairs: &[(usize, Option<usize>)]| -> f64 {
                pairs
                    .iter()
                    .map(|&(i, j)| j.map_or(b[i], |j| w[i * m + j]))
                    .sum()
            };
            let dp = subset_dp(m, &wf, &bf).unwrap();
            let (bl, unmatched) = blossom(m, &wf, &bf);
            assert_eq!(unmatched, 0, "{m} {w:?} {b:?} {bl:?}");
            assert!(
                (total(&dp) - total(&bl)).abs() < 1e-4,
                "{} vs {}",
                total(&dp),
                total(&bl)
            );
        }
    }
}
