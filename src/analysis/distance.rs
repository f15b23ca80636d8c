//! Circuit-level distances of a fault graph, overall and by fault class.
//!
//! In: a [`FaultGraph`]. Out: a [`DistanceReport`] holding, each with the logical error that
//! attains it (mechanism ids; provenance through [`FaultGraph::contributors`]):
//!
//! - **distance**: the least number of mechanisms whose detectors cancel and whose observables do
//!   not (an undetected logical error);
//! - **high-rate distance**: the same using only mechanisms that a high-rate fault alone can cause
//!   (`None`: no logical error is made of high-rate faults alone);
//! - **lexicographic**: the least number of low-rate mechanisms any logical error must contain,
//!   and among those errors the least total count. Under bias `eta` each low-rate fault costs a
//!   factor of about `1/eta` ("The XZZX surface code", Nat. Commun. 12, 2172 (2021));
//! - **weighted**: the least total weight `Σ ln((1−p)/p)`, i.e. the most likely logical error
//!   relative to no error ("Topological quantum memory", J. Math. Phys. 43, 4452 (2002)).
//!
//! # Method
//! Mechanisms with one or two detectors are edges of the detector graph (one detector: an edge to
//! a boundary node; no detectors: a loop at the boundary). An undetected logical error flipping
//! observable `o` is an edge set with even degree at every detector and odd `o`-parity; a least
//! one is a cycle, so it is the least over the `o`-flipping edges `e = (u, w)` of `cost(e)` plus
//! a shortest path `w → u` of even `o`-parity, found by Dijkstra on the doubled graph whose states
//! are `(node, parity)`. Cycles through the boundary take one search; the others start at the
//! few edges left odd after re-gauging the parities along a spanning forest (see
//! `shortest_odd_cycle`), and each search stops at the best cost so far. Costs: `1` per
//! mechanism; `(low, 1)` pairs compared lexicographically; weights.
//! This is exact when every mechanism has at most two detectors.
//!
//! **Hyperedges** (three or more detectors) do not fit a path. The graph search over the
//! graphlike mechanisms then gives an upper bound (its error is real). For the count distance the
//! report adds, in order (the first that closes the gap wins):
//! 1. when every hyperedge was decomposed into graphlike parts, a lower bound from projecting
//!    logical errors onto classes of detectors (see `projected_bound` and `lower_bound`);
//! 2. an exhaustive meet-in-the-middle search over symptoms reached with up to `⌈(ub−1)/2⌉`
//!    mechanisms (all mechanisms, hyperedges included), capped at
//!    [`DistanceOptions::max_states`] states: when it finishes, the result is exact;
//! 3. otherwise the report gives both bounds ([`Method::Bounds`]).
//!
//! Class convention: a mechanism counts as high-rate when *some* contributor is high-rate
//! ([`ClassSet::has_high`]): each contributor alone produces the mechanism's symptom, so a
//! high-rate fault alone suffices.
//!
//! Every logical error returned is checked here by XOR of its mechanisms' symptoms: empty
//! detectors, some observable flipped. A failed check is an internal error.

use std::cmp::{Ordering, Reverse};
use std::collections::{BinaryHeap, HashMap};
use std::ops::Add;

use crate::base::{odd_parity, xor_sets};
use crate::faults::{weight_of, ClassSet, FaultGraph};

/// Default depth of the exhaustive search when the graphlike mechanisms make no logical error
/// at all.
pub const EXHAUSTIVE_DEPTH: u32 = 12;

/// Options of [`distances`].
#[derive(Clone, Debug)]
pub struct DistanceOptions {
    /// Largest number of distinct symptoms the exhaustive hyperedge search may store.
    pub max_states: usize,
    /// Largest logical error (in mechanisms) the exhaustive search looks for when the graphlike
    /// mechanisms make none.
    pub exhaustive_depth: u32,
}

impl Default for DistanceOptions {
    fn default() -> DistanceOptions {
        DistanceOptions {
            max_states: 2_000_000,
            exhaustive_depth: EXHAUSTIVE_DEPTH,
        }
    }
}

/// An undetected logical error: a set of mechanisms whose detectors cancel.
#[derive(Clone, Debug, PartialEq)]
pub struct LogicalError {
    /// Mechanism ids, sorted.
    pub mechanisms: Vec<u32>,
    /// Observables flipped (never empty).
    pub observables: Vec<u32>,
}

/// How far a count can be trusted.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Method {
    /// Shortest cycle on a graph without hyperedges: exact.
    Graph,
    /// Graph search over the graphlike mechanisms, matched by the lower bound from the
    /// hyperedges' decompositions: exact.
    Decomposition,
    /// Exhaustive search over symptoms including hyperedges: exact.
    Exhaustive,
    /// Graph search over the graphlike mechanisms only; the true value lies in
    /// `[lower, value]`.
    Bounds,
}

impl Method {
    /// Lower-case label for reports.
    pub fn name(self) -> &'static str {
        match self {
            Method::Graph => "exact (graph)",
            Method::Decomposition => "exact (graph, decomposition bound)",
            Method::Exhaustive => "exact (exhaustive)",
            Method::Bounds => "bounds (hyperedges)",
        }
    }
}

/// A least mechanism count and the error attaining it.
#[derive(Clone, Debug, PartialEq)]
pub struct Count {
    /// Number of mechanisms of [`Count::error`]: an upper bound, exact when `lower == value`.
    pub value: u32,
    /// Proven lower bound.
    pub lower: u32,
    /// How it was found.
    pub method: Method,
    /// The logical error found.
    pub error: LogicalError,
}

impl Count {
    /// Whether the value is proven exact.
    pub fn exact(&self) -> bool {
        self.lower == self.value
    }
}

/// The lexicographic result: fewest low-rate mechanisms, then fewest mechanisms.
#[derive(Clone, Debug, PartialEq)]
pub struct Lexicographic {
    /// Low-rate mechanisms in the error.
    pub low: u32,
    /// All mechanisms in the error.
    pub total: u32,
    /// The logical error found.
    pub error: LogicalError,
}

/// The most likely logical error.
#[derive(Clone, Debug, PartialEq)]
pub struct Weighted {
    /// `Σ ln((1−p)/p)` over the error's mechanisms.
    pub weight: f64,
    /// `Π p` over the error's mechanisms.
    pub probability: f64,
    /// The logical error found.
    pub error: LogicalError,
}

/// Why an absent result is not a proof that no such logical error exists.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Unproven {
    /// The exhaustive search (hyperedges included) finished and found no logical error of at
    /// most this many mechanisms: any logical error is larger.
    AboveDepth(u32),
    /// The exhaustive search stopped at its state cap ([`DistanceOptions::max_states`]).
    Capped,
    /// Only graphlike mechanisms were searched and the graph has hyperedges.
    GraphlikeOnly,
}

impl Unproven {
    /// Short text for a table cell: `> k` or `?`.
    pub fn cell(self) -> String {
        match self {
            Unproven::AboveDepth(k) => format!("> {k}"),
            Unproven::Capped | Unproven::GraphlikeOnly => "?".into(),
        }
    }

    /// What was and was not searched, for reports.
    pub fn describe(self) -> String {
        match self {
            Unproven::AboveDepth(k) => format!(
                "no logical error of at most {k} mechanisms exists; larger ones were not searched"
            ),
            Unproven::Capped => {
                "unknown: the exhaustive hyperedge search stopped at its state cap".into()
            }
            Unproven::GraphlikeOnly => {
                "unknown: none among graphlike mechanisms; hyperedges were not searched".into()
            }
        }
    }
}

/// For each result of a [`DistanceReport`] that is `None`, why that is not a proof that no
/// such logical error exists (`None` here: the absence is proven).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Unresolved {
    /// For [`DistanceReport::distance`].
    pub distance: Option<Unproven>,
    /// For [`DistanceReport::high_rate`].
    pub high_rate: Option<Unproven>,
    /// For [`DistanceReport::lexicographic`].
    pub lexicographic: Option<Unproven>,
    /// For [`DistanceReport::weighted`].
    pub weighted: Option<Unproven>,
}

/// All distances of one fault graph. `None` means no such logical error exists, unless
/// [`DistanceReport::unresolved`] says why the search could not prove that.
#[derive(Clone, Debug, PartialEq)]
pub struct DistanceReport {
    /// Least number of mechanisms in an undetected logical error.
    pub distance: Option<Count>,
    /// The same, high-rate mechanisms only.
    pub high_rate: Option<Count>,
    /// Fewest low-rate mechanisms, then fewest in total (over graphlike mechanisms).
    pub lexicographic: Option<Lexicographic>,
    /// Most likely logical error (over graphlike mechanisms).
    pub weighted: Option<Weighted>,
    /// Mechanisms with three or more detectors (left out of the class and weighted searches).
    pub hyperedges: usize,
    /// Which absent results are unproven, and why.
    pub unresolved: Unresolved,
}

/// Computes every distance of `graph`. `Err` carries an internal error (a found error that does
/// not verify), which is a bug.
pub fn distances(graph: &FaultGraph, opts: &DistanceOptions) -> Result<DistanceReport, String> {
    let all = |_: ClassSet| true;
    let high = |c: ClassSet| c.has_high();
    let (distance, distance_unproven) = count_distance(graph, &all, opts)?;
    let (high_rate, high_rate_unproven) = count_distance(graph, &high, opts)?;
    let hyperedges = graph
        .mechanisms
        .iter()
        .filter(|m| m.detectors.len() > 2)
        .count();
    // The class and weighted searches see graphlike mechanisms only.
    let graphlike_only = (hyperedges > 0).then_some(Unproven::GraphlikeOnly);
    let lexicographic = match search(graph, &all, |m| {
        Lex(u32::from(!graph.mechanisms[m].classes.has_high()), 1)
    }) {
        Some((Lex(low, total), error)) => Some(Lexicographic {
            low,
            total,
            error: verified(graph, error)?,
        }),
        None => None,
    };
    let weighted = match search(graph, &all, |m| {
        Weight(weight_of(graph.mechanisms[m].probability).max(0.0))
    }) {
        Some((Weight(weight), error)) => {
            let error = verified(graph, error)?;
            let probability = error
                .mechanisms
                .iter()
                .map(|&m| graph.mechanisms[m as usize].probability)
                .product();
            Some(Weighted {
                weight,
                probability,
                error,
            })
        }
        None => None,
    };
    let unresolved = Unresolved {
        distance: distance_unproven,
        high_rate: high_rate_unproven,
        lexicographic: graphlike_only.filter(|_| lexicographic.is_none()),
        weighted: graphlike_only.filter(|_| weighted.is_none()),
    };
    Ok(DistanceReport {
        distance,
        high_rate,
        lexicographic,
        weighted,
        hyperedges,
        unresolved,
    })
}

/// The XOR of the symptoms of `mechanisms` as `(detectors, observables)`.
pub fn symptom(graph: &FaultGraph, mechanisms: &[u32]) -> (Vec<u32>, Vec<u32>) {
    let mut dets = Vec::new();
    let mut obs = Vec::new();
    for &m in mechanisms {
        let m = &graph.mechanisms[m as usize];
        dets = xor_sets(&dets, &m.detectors);
        obs = xor_sets(&obs, &m.observables);
    }
    (dets, obs)
}

/// Cancels repeated mechanisms, then checks the symptom is empty and an observable flips.
fn verified(graph: &FaultGraph, mechs: Vec<u32>) -> Result<LogicalError, String> {
    let set = odd_parity(mechs);
    let (dets, obs) = symptom(graph, &set);
    if !dets.is_empty() || obs.is_empty() {
        return Err(format!(
            "distance search returned mechanisms {set:?} with detectors {dets:?} and \
             observables {obs:?}, which is not an undetected logical error"
        ));
    }
    Ok(LogicalError {
        mechanisms: set,
        observables: obs,
    })
}

/// The count distance over the mechanisms whose classes pass `allow`, with hyperedge handling;
/// when none is found, why that is unproven (if it is).
fn count_distance(
    graph: &FaultGraph,
    allow: &dyn Fn(ClassSet) -> bool,
    opts: &DistanceOptions,
) -> Result<(Option<Count>, Option<Unproven>), String> {
    let has_hyper = graph
        .mechanisms
        .iter()
        .any(|m| m.detectors.len() > 2 && allow(m.classes));
    let found = search(graph, allow, |_| 1u32);
    if !has_hyper {
        return match found {
            Some((c, e)) => {
                let error = verified(graph, e)?;
                debug_assert_eq!(error.mechanisms.len() as u32, c);
                Ok((
                    Some(Count {
                        value: c,
                        lower: c,
                        method: Method::Graph,
                        error,
                    }),
                    None,
                ))
            }
            None => Ok((None, None)),
        };
    }
    let upper = match found {
        Some((_, e)) => Some(verified(graph, e)?),
        None => None,
    };
    if upper.is_none() && projected_bound(graph, allow) == Some(None) {
        // Not even the relaxation has a logical error: none exists.
        return Ok((None, None));
    }
    // The decomposition bound is one more graph search: try it before the exhaustive search.
    if let Some(error) = &upper {
        let value = error.mechanisms.len() as u32;
        let lower = best_lower_bound(graph, allow, value);
        if lower == value {
            return Ok((
                Some(Count {
                    value,
                    lower,
                    method: Method::Decomposition,
                    error: error.clone(),
                }),
                None,
            ));
        }
    }
    // Exhaustive search below the graphlike value (or up to a fixed depth when the graphlike
    // mechanisms alone make no logical error).
    let limit = upper
        .as_ref()
        .map_or(opts.exhaustive_depth, |e| e.mechanisms.len() as u32 - 1);
    // A logical error the exhaustive search proved least.
    let exact = |error: LogicalError| {
        let n = error.mechanisms.len() as u32;
        Ok((
            Some(Count {
                value: n,
                lower: n,
                method: Method::Exhaustive,
                error,
            }),
            None,
        ))
    };
    match exhaustive(graph, allow, limit, opts.max_states) {
        Exhaustive::Found(e) => return exact(verified(graph, e)?),
        Exhaustive::NoneUpTo => match upper {
            Some(error) => return exact(error),
            None => return Ok((None, Some(Unproven::AboveDepth(limit)))),
        },
        Exhaustive::Capped => {}
    }
    let Some(error) = upper else {
        // Neither the graph search nor the capped exhaustive search found a logical error.
        return Ok((None, Some(Unproven::Capped)));
    };
    let value = error.mechanisms.len() as u32;
    let lower = best_lower_bound(graph, allow, value);
    Ok((
        Some(Count {
            value,
            lower,
            method: Method::Bounds,
            error,
        }),
        None,
    ))
}

/// A cost that adds along paths and orders totally.
trait Cost: Copy + Ord + Add<Output = Self> {
    const ZERO: Self;
}

impl Cost for u32 {
    const ZERO: u32 = 0;
}

/// `(low-rate count, total count)`, compared lexicographically.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
struct Lex(u32, u32);

impl Add for Lex {
    type Output = Lex;
    fn add(self, o: Lex) -> Lex {
        Lex(self.0 + o.0, self.1 + o.1)
    }
}

impl Cost for Lex {
    const ZERO: Lex = Lex(0, 0);
}

/// A non-negative weight with a total order.
#[derive(Clone, Copy, Debug, PartialEq)]
struct Weight(f64);

impl Eq for Weight {}

impl PartialOrd for Weight {
    fn partial_cmp(&self, o: &Weight) -> Option<Ordering> {
        Some(self.cmp(o))
    }
}

impl Ord for Weight {
    fn cmp(&self, o: &Weight) -> Ordering {
        self.0.total_cmp(&o.0)
    }
}

impl Add for Weight {
    type Output = Weight;
    fn add(self, o: Weight) -> Weight {
        Weight(self.0 + o.0)
    }
}

impl Cost for Weight {
    const ZERO: Weight = Weight(0.0);
}

/// One edge of the search graph. `mech` is a mechanism id, or `u32::MAX` for a virtual part edge
/// of the lower-bound search.
#[derive(Clone, Debug)]
struct Edge<C> {
    a: u32,
    b: u32,
    obs: Vec<u32>,
    cost: C,
    mech: u32,
}

/// The graphlike edges of the mechanisms passing `allow`, the boundary being node `D`.
fn graph_edges<C: Cost>(
    graph: &FaultGraph,
    allow: &dyn Fn(ClassSet) -> bool,
    cost: impl Fn(usize) -> C,
) -> Vec<Edge<C>> {
    let boundary = graph.detectors.len() as u32;
    let mut out = Vec::new();
    for (k, m) in graph.mechanisms.iter().enumerate() {
        if !allow(m.classes) {
            continue;
        }
        let (a, b) = match *m.detectors.as_slice() {
            [] => (boundary, boundary),
            [a] => (a, boundary),
            [a, b] => (a, b),
            _ => continue,
        };
        out.push(Edge {
            a,
            b,
            obs: m.observables.clone(),
            cost: cost(k),
            mech: k as u32,
        });
    }
    out
}

/// Least-cost logical error over the graphlike mechanisms passing `allow`.
fn search<C: Cost>(
    graph: &FaultGraph,
    allow: &dyn Fn(ClassSet) -> bool,
    cost: impl Fn(usize) -> C,
) -> Option<(C, Vec<u32>)> {
    let edges = graph_edges(graph, allow, cost);
    shortest_odd_cycle(graph.detectors.len() + 1, graph.observables.len(), &edges).map(
        |(c, list)| {
            let mechs = list.into_iter().map(|i| edges[i].mech).collect();
            (c, mechs)
        },
    )
}

/// Least-cost cycle with odd parity of some observable; returns its cost and edge indices.
/// Node `nodes − 1` is the boundary.
///
/// Per observable: (1) one Dijkstra search from (boundary, even) to (boundary, odd) covers every
/// cycle through the boundary; (2) without the boundary, parities are re-gauged along a spanning
/// forest (`par'(e) = par(e) ⊕ π(a) ⊕ π(b)`, which leaves every cycle's parity unchanged), so
/// only the few edges with `par' = 1` can start an odd cycle; each is searched once and removed
/// afterwards. In a planar code step (2) finds no such edge and costs one linear pass.
fn shortest_odd_cycle<C: Cost>(
    nodes: usize,
    observables: usize,
    edges: &[Edge<C>],
) -> Option<(C, Vec<usize>)> {
    let boundary = nodes - 1;
    // Compressed adjacency: for each node, (neighbour, edge index).
    let mut deg = vec![0usize; nodes + 1];
    for e in edges {
        deg[e.a as usize] += 1;
        if e.b != e.a {
            deg[e.b as usize] += 1;
        }
    }
    let mut start = vec![0usize; nodes + 1];
    for i in 0..nodes {
        start[i + 1] = start[i] + deg[i];
    }
    let mut fill = start.clone();
    let mut adj = vec![(0u32, 0u32); start[nodes]];
    for (i, e) in edges.iter().enumerate() {
        adj[fill[e.a as usize]] = (e.b, i as u32);
        fill[e.a as usize] += 1;
        if e.b != e.a {
            adj[fill[e.b as usize]] = (e.a, i as u32);
            fill[e.b as usize] += 1;
        }
    }
    let g = Adjacency { start, adj };
    let mut ws = Workspace::new(2 * nodes);
    let mut best: Option<(C, Vec<usize>)> = None;
    for o in 0..observables as u32 {
        let flips: Vec<bool> = edges
            .iter()
            .map(|e| e.obs.binary_search(&o).is_ok())
            .collect();
        let mut removed = vec![false; edges.len()];
        // (1) Cycles through the boundary.
        let bound = best.as_ref().map(|b| b.0);
        if let Some((c, list)) = ws.path(
            &g,
            edges,
            &flips,
            &removed,
            2 * boundary,
            2 * boundary + 1,
            C::ZERO,
            bound,
        ) {
            best = Some((c, list));
        }
        // (2) The rest, re-gauged.
        for &(_, e) in &g.adj[g.start[boundary]..g.start[boundary + 1]] {
            removed[e as usize] = true;
        }
        let mut pi: Vec<Option<bool>> = vec![None; nodes];
        let mut stack = Vec::new();
        for root in 0..boundary {
            if pi[root].is_some() {
                continue;
            }
            pi[root] = Some(false);
            stack.push(root);
            while let Some(v) = stack.pop() {
                let pv = pi[v].unwrap_or(false);
                for &(nb, e) in &g.adj[g.start[v]..g.start[v + 1]] {
                    if removed[e as usize] || pi[nb as usize].is_some() {
                        continue;
                    }
                    pi[nb as usize] = Some(pv ^ flips[e as usize]);
                    stack.push(nb as usize);
                }
            }
        }
        let par: Vec<bool> = edges
            .iter()
            .enumerate()
            .map(|(i, e)| {
                !removed[i]
                    && (flips[i]
                        ^ pi[e.a as usize].unwrap_or(false)
                        ^ pi[e.b as usize].unwrap_or(false))
            })
            .collect();
        for (ei, e) in edges.iter().enumerate() {
            if !par[ei] || removed[ei] {
                continue;
            }
            removed[ei] = true;
            let bound = best.as_ref().map(|b| b.0);
            if bound.is_some_and(|b| e.cost >= b) {
                continue;
            }
            // An even path w → u closes the odd cycle with e.
            let (src, dst) = (2 * e.b as usize, 2 * e.a as usize);
            if let Some((c, mut list)) = ws.path(&g, edges, &par, &removed, src, dst, e.cost, bound)
            {
                list.push(ei);
                best = Some((c, list));
            }
        }
    }
    best
}

/// Compressed adjacency lists: neighbours of `v` are `adj[start[v]..start[v + 1]]`.
struct Adjacency {
    start: Vec<usize>,
    adj: Vec<(u32, u32)>,
}

/// Reusable Dijkstra state over `(node, parity)` states `2·node + parity`.
struct Workspace<C> {
    dist: Vec<Option<C>>,
    prev: Vec<u32>,
    touched: Vec<usize>,
}

impl<C: Cost> Workspace<C> {
    fn new(states: usize) -> Workspace<C> {
        Workspace {
            dist: vec![None; states],
            prev: vec![u32::MAX; states],
            touched: Vec::new(),
        }
    }

    /// Cheapest path from state `src` to state `dst` avoiding removed edges, with total cost
    /// `offset + path` below `bound`; returns the total and the path's edges.
    #[allow(clippy::too_many_arguments)]
    fn path(
        &mut self,
        g: &Adjacency,
        edges: &[Edge<C>],
        par: &[bool],
        removed: &[bool],
        src: usize,
        dst: usize,
        offset: C,
        bound: Option<C>,
    ) -> Option<(C, Vec<usize>)> {
        for &t in &self.touched {
            self.dist[t] = None;
            self.prev[t] = u32::MAX;
        }
        self.touched.clear();
        let mut heap = BinaryHeap::new();
        self.dist[src] = Some(C::ZERO);
        self.touched.push(src);
        heap.push(Reverse((C::ZERO, src)));
        let mut reached = None;
        while let Some(Reverse((d, s))) = heap.pop() {
            if self.dist[s] != Some(d) {
                continue;
            }
            if bound.is_some_and(|b| offset + d >= b) {
                break;
            }
            if s == dst {
                reached = Some(d);
                break;
            }
            let (node, p) = (s / 2, s % 2);
            for &(nb, ej) in &g.adj[g.start[node]..g.start[node + 1]] {
                let ej = ej as usize;
                if removed[ej] {
                    continue;
                }
                let t = 2 * nb as usize + (p ^ usize::from(par[ej]));
                let nd = d + edges[ej].cost;
                if self.dist[t].is_none_or(|x| nd < x) {
                    if self.dist[t].is_none() {
                        self.touched.push(t);
                    }
                    self.dist[t] = Some(nd);
                    self.prev[t] = ej as u32;
                    heap.push(Reverse((nd, t)));
                }
            }
        }
        let d = reached?;
        let mut list = Vec::new();
        let mut s = dst;
        while s != src {
            let ej = self.prev[s] as usize;
            list.push(ej);
            let f = &edges[ej];
            let node = (s / 2) as u32;
            let other = if f.a == node { f.b } else { f.a };
            s = 2 * other as usize + ((s % 2) ^ usize::from(par[ej]));
        }
        Some((offset + d, list))
    }
}

/// The larger of the two lower bounds (1 when neither applies), capped at `value`; the
/// projection bound is cheaper and usually tight, so the other runs only when it falls short.
fn best_lower_bound(graph: &FaultGraph, allow: &dyn Fn(ClassSet) -> bool, value: u32) -> u32 {
    let b = projected_bound(graph, allow).flatten().unwrap_or(1);
    if b >= value {
        return value;
    }
    let a = lower_bound(graph, allow).unwrap_or(1);
    a.max(b).clamp(1, value)
}

/// Lower bound on the count distance by projection onto a partition of the detectors.
///
/// For *any* partition in which every mechanism has at most two detectors in each class, and any
/// split of each mechanism's observables among its classes, project a logical error onto each
/// class: every detector keeps even degree, and since the split observables XOR to the whole,
/// some class sees odd parity of some observable. Each mechanism puts at most one part into a
/// class, so the error has at least as many mechanisms as the shortest odd cycle among the parts
/// (each costing 1). The partition used: components of the detector graph joined by the
/// two-detector mechanisms that cannot be split into two existing one-detector mechanisms and by
/// the parts of decomposed hyperedges. In a CSS memory this separates X-type from Z-type
/// detectors (a Y fault at the boundary splits into its X and Z halves), which makes the bound
/// tight for circuit-level depolarizing noise.
/// Outer `None`: the partition does not apply; inner `None`: no logical error exists at all.
fn projected_bound(graph: &FaultGraph, allow: &dyn Fn(ClassSet) -> bool) -> Option<Option<u32>> {
    let boundary = graph.detectors.len() as u32;
    let mut one_det: HashMap<u32, Vec<&[u32]>> = HashMap::new();
    for m in &graph.mechanisms {
        if let [a] = *m.detectors.as_slice() {
            one_det.entry(a).or_default().push(&m.observables);
        }
    }
    // Observables for the `a` half of a split of (a, b, obs) into existing one-detector halves.
    let split = |a: u32, b: u32, obs: &[u32]| -> Option<Vec<u32>> {
        let (la, lb) = (one_det.get(&a)?, one_det.get(&b)?);
        la.iter()
            .find(|oa| lb.iter().any(|ob| xor_sets(oa, ob) == obs))
            .map(|oa| oa.to_vec())
    };
    let mut uf: Vec<u32> = (0..boundary).collect();
    fn find(uf: &mut [u32], mut x: u32) -> u32 {
        while uf[x as usize] != x {
            uf[x as usize] = uf[uf[x as usize] as usize];
            x = uf[x as usize];
        }
        x
    }
    let join = |uf: &mut Vec<u32>, a: u32, b: u32| {
        let (ra, rb) = (find(uf, a), find(uf, b));
        uf[ra as usize] = rb;
    };
    let mut decomposition: HashMap<u32, usize> = HashMap::new();
    for (i, d) in graph.decompositions.iter().enumerate() {
        decomposition.insert(d.mechanism, i);
        for (dets, _) in graph.parts(d) {
            if let [a, b] = *dets {
                join(&mut uf, a, b);
            }
        }
    }
    for (k, m) in graph.mechanisms.iter().enumerate() {
        match *m.detectors.as_slice() {
            [a, b] if split(a, b, &m.observables).is_none() => join(&mut uf, a, b),
            [_, _] | [] | [_] => {}
            ref dets if !decomposition.contains_key(&(k as u32)) => {
                for w in dets.windows(2) {
                    join(&mut uf, w[0], w[1]);
                }
            }
            _ => {}
        }
    }
    let mut edges: Vec<Edge<u32>> = Vec::new();
    let push = |dets: &[u32], obs: Vec<u32>, edges: &mut Vec<Edge<u32>>| -> bool {
        let (a, b) = match *dets {
            [] if obs.is_empty() => return true,
            [] => (boundary, boundary),
            [a] => (a, boundary),
            [a, b] => (a, b),
            _ => return false,
        };
        edges.push(Edge {
            a,
            b,
            obs,
            cost: 1,
            mech: u32::MAX,
        });
        true
    };
    for (k, m) in graph.mechanisms.iter().enumerate() {
        if !allow(m.classes) {
            continue;
        }
        // Group the detectors by class, with the observables split among the classes.
        let mut groups: Vec<(u32, Vec<u32>, Vec<u32>)> = Vec::new();
        let mut add =
            |root: u32, dets: &[u32], obs: &[u32]| match groups.iter_mut().find(|g| g.0 == root) {
                Some(g) => {
                    g.1 = xor_sets(&g.1, dets);
                    g.2 = xor_sets(&g.2, obs);
                }
                None => groups.push((root, dets.to_vec(), obs.to_vec())),
            };
        match *m.detectors.as_slice() {
            [a, b] if find(&mut uf, a) != find(&mut uf, b) => {
                let oa = split(a, b, &m.observables).unwrap_or_else(|| m.observables.clone());
                let ob = xor_sets(&oa, &m.observables);
                add(find(&mut uf, a), &[a], &oa);
                add(find(&mut uf, b), &[b], &ob);
            }
            ref dets if dets.len() > 2 && decomposition.contains_key(&(k as u32)) => {
                for (pd, po) in graph.parts(&graph.decompositions[decomposition[&(k as u32)]]) {
                    let root = pd.first().map_or(u32::MAX, |&x| find(&mut uf, x));
                    add(root, pd, po);
                }
            }
            ref dets => {
                let root = dets.first().map_or(u32::MAX, |&x| find(&mut uf, x));
                add(root, dets, &m.observables);
            }
        }
        for (_, dets, obs) in groups {
            if !push(&dets, obs, &mut edges) {
                return None;
            }
        }
    }
    Some(
        shortest_odd_cycle(graph.detectors.len() + 1, graph.observables.len(), &edges)
            .map(|(c, _)| c),
    )
}

/// Lower bound on the count distance from the hyperedges' decompositions.
///
/// Detectors are grouped into components joined by graphlike edges and decomposition parts (the
/// boundary joins nothing). Project a logical error onto one component: each mechanism becomes
/// its parts there, every detector of the component keeps even degree, and since the parts'
/// observables XOR to the whole, some component sees odd observable parity. So the error costs at
/// least the shortest odd cycle in which each part of a hyperedge with `k` parts in the part's
/// component costs `1/k` (costs scaled by 840, divisible by every `k ≤ 8`). In a CSS circuit a
/// Y fault has one part among the X-type and one among the Z-type detectors, so each costs 1
/// and the bound is usually tight.
fn lower_bound(graph: &FaultGraph, allow: &dyn Fn(ClassSet) -> bool) -> Option<u32> {
    const SCALE: u32 = 840;
    let mut edges = graph_edges(graph, allow, |_| SCALE);
    let boundary = graph.detectors.len() as u32;
    let mut uf: Vec<u32> = (0..=boundary).collect();
    fn find(uf: &mut [u32], mut x: u32) -> u32 {
        while uf[x as usize] != x {
            uf[x as usize] = uf[uf[x as usize] as usize];
            x = uf[x as usize];
        }
        x
    }
    let join = |uf: &mut Vec<u32>, dets: &[u32]| {
        if let [a, b] = *dets {
            let (ra, rb) = (find(uf, a), find(uf, b));
            uf[ra as usize] = rb;
        }
    };
    for e in &edges {
        if e.a != boundary && e.b != boundary {
            join(&mut uf, &[e.a, e.b]);
        }
    }
    for d in &graph.decompositions {
        for (dets, _) in graph.parts(d) {
            join(&mut uf, dets);
        }
    }
    for d in &graph.decompositions {
        let m = &graph.mechanisms[d.mechanism as usize];
        if !allow(m.classes) {
            continue;
        }
        // Component of each part (`boundary` for a part with no detectors).
        let comps: Vec<u32> = graph
            .parts(d)
            .map(|(dets, _)| dets.first().map_or(boundary, |&x| find(&mut uf, x)))
            .collect();
        for (i, (dets, obs)) in graph.parts(d).enumerate() {
            let k = comps.iter().filter(|&&c| c == comps[i]).count().max(1) as u32;
            let (a, b) = match *dets {
                [] => (boundary, boundary),
                [a] => (a, boundary),
                [a, b] => (a, b),
                _ => continue,
            };
            edges.push(Edge {
                a,
                b,
                obs: obs.to_vec(),
                cost: SCALE / k,
                mech: u32::MAX,
            });
        }
    }
    let mut split = vec![false; graph.mechanisms.len()];
    for d in &graph.decompositions {
        split[d.mechanism as usize] = true;
    }
    if graph
        .mechanisms
        .iter()
        .zip(&split)
        .any(|(m, &split)| m.detectors.len() > 2 && allow(m.classes) && !split)
    {
        // An undecomposed hyperedge could shorten anything: no bound beyond the trivial one.
        return Some(1);
    }
    shortest_odd_cycle(graph.detectors.len() + 1, graph.observables.len(), &edges)
        .map(|(c, _)| c.div_ceil(SCALE))
}

/// Outcome of the exhaustive search.
enum Exhaustive {
    /// A logical error with at most `limit` mechanisms.
    Found(Vec<u32>),
    /// No logical error with at most `limit` mechanisms exists.
    NoneUpTo,
    /// The state cap was reached first.
    Capped,
}

/// Meet-in-the-middle search for a logical error of at most `limit` mechanisms (any number of
/// detectors). Symptoms reachable with `t` mechanisms are stored level by level; two stored
/// symptoms with equal detectors and different observables give a logical error of the sum of
/// their levels, so levels up to `⌈limit/2⌉` suffice.
fn exhaustive(
    graph: &FaultGraph,
    allow: &dyn Fn(ClassSet) -> bool,
    limit: u32,
    max_states: usize,
) -> Exhaustive {
    let mechs: Vec<u32> = (0..graph.mechanisms.len() as u32)
        .filter(|&k| allow(graph.mechanisms[k as usize].classes))
        .collect();
    // State: (detectors, observables, parent state, mechanism, level).
    struct State {
        dets: Vec<u32>,
        obs: Vec<u32>,
        parent: u32,
        mech: u32,
        level: u32,
    }
    let mut states = vec![State {
        dets: Vec::new(),
        obs: Vec::new(),
        parent: u32::MAX,
        mech: u32::MAX,
        level: 0,
    }];
    let mut by_dets: HashMap<Vec<u32>, Vec<u32>> = HashMap::new();
    by_dets.insert(Vec::new(), vec![0]);
    let path = |states: &Vec<State>, mut s: u32| {
        let mut out = Vec::new();
        while states[s as usize].parent != u32::MAX {
            out.push(states[s as usize].mech);
            s = states[s as usize].parent;
        }
        out
    };
    let mut best: Option<(u32, Vec<u32>)> = None;
    let mut frontier: Vec<u32> = vec![0];
    let half = limit.div_ceil(2);
    for level in 1..=half {
        if best.as_ref().is_some_and(|b| b.0 <= level) {
            break;
        }
        let mut next = Vec::new();
        for &s in &frontier {
            for &m in &mechs {
                let mm = &graph.mechanisms[m as usize];
                let dets = xor_sets(&states[s as usize].dets, &mm.detectors);
                let obs = xor_sets(&states[s as usize].obs, &mm.observables);
                let list = by_dets.entry(dets.clone()).or_default();
                if list.iter().any(|&t| states[t as usize].obs == obs) {
                    continue;
                }
                let id = states.len() as u32;
                for &t in list.iter() {
                    let w = level + states[t as usize].level;
                    if w <= limit && best.as_ref().is_none_or(|b| w < b.0) {
                        let mut e = path(&states, s);
                        e.push(m);
                        e.extend(path(&states, t));
                        best = Some((w, e));
                    }
                }
                list.push(id);
                states.push(State {
                    dets,
                    obs,
                    parent: s,
                    mech: m,
                    level,
                });
                next.push(id);
                if states.len() > max_states {
                    return match best {
                        // A found error is only known least when no smaller one can remain.
                        Some((w, e)) if w <= level => Exhaustive::Found(e),
                        _ => Exhaustive::Capped,
                    };
                }
            }
        }
        frontier = next;
    }
    match best {
        Some((_, e)) => Exhaustive::Found(e),
        None => Exhaustive::NoneUpTo,
    }
}
