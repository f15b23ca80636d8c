//! Circuit-level distances of a fault graph, overall and by fault class.
//!
//! In: a [`FaultGraph`]. Out: a [`DistanceReport`] holding, each with the logical error that
//! attains it (edge ids; provenance through [`FaultGraph::contributors`]):
//!
//! - **distance**: the least number of edges whose detectors cancel and whose observables do
//!   not (an undetected logical error);
//! - **high-rate distance**: the same using only edges that a high-rate fault alone can cause
//!   (`None`: no logical error is made of high-rate faults alone);
//! - **lexicographic**: the least number of low-rate edges any logical error must contain,
//!   and among those errors the least total count. Under bias `eta` each low-rate fault costs a
//!   factor of about `1/eta` ("The XZZX surface code", Nat. Commun. 12, 2172 (2021));
//! - **weighted**: the least total weight `Σ ln((1−p)/p)`, i.e. the most likely logical error
//!   relative to no error ("Topological quantum memory", J. Math. Phys. 43, 4452 (2002)).
//!
//! # Method
//! Edges with one or two detectors are edges of the detector graph (one detector: an edge to
//! a boundary node; no detectors: a loop at the boundary). An undetected logical error flipping
//! observable `o` is an edge set with even degree at every detector and odd `o`-parity; a least
//! one is a cycle, so it is the least over the `o`-flipping edges `e = (u, w)` of `cost(e)` plus
//! a shortest path `w → u` of even `o`-parity, found by Dijkstra on the doubled graph whose states
//! are `(node, parity)`. Cycles through the boundary take one search; the others start at the
//! few edges left odd after re-gauging the parities along a spanning forest (see
//! `shortest_odd_cycle`), and each search stops at the best cost so far. Costs: `1` per
//! edge; `(low, 1)` pairs compared lexicographically; weights.
//! This is exact when every edge has at most two detectors.
//!
//! **Hyperedges** (three or more detectors) do not fit a path. The graph search over the
//! matchable edges then gives an upper bound (its error is real). For the count distance the
//! report adds, in order (the first that closes the gap wins):
//! 1. when every hyperedge was split into matchable parts, a lower bound from projecting
//!    logical errors onto classes of detectors (see `projected_bound` and `lower_bound`);
//! 2. an exhaustive meet-in-the-middle search over symptoms reached with up to `⌈(ub−1)/2⌉`
//!    edges (all edges, hyperedges included), capped at
//!    [`DistanceOptions::max_states`] states: when it finishes, the result is exact;
//! 3. otherwise the report gives both bounds ([`Method::Bounds`]).
//!
//! Class convention: a edge counts as high-rate when *some* contributor is high-rate
//! ([`ClassSet::has_high`]): each contributor alone produces the edge's symptom, so a
//! high-rate fault alone suffices.
//!
//! Every logical error returned is checked here by XOR of its edges' symptoms: empty
//! detectors, some observable flipped. A failed check is an internal error.
//!
//! Files: this one holds the report and the strategy; `search.rs` the graph search (costs,
//! shortest odd cycles), `bounds.rs` the two lower bounds and `exhaustive.rs` the
//! meet-in-the-middle search.

mod bounds;
mod exhaustive;
mod search;

use crate::base::{odd_parity, xor_sets};
use crate::faults::{weight_of, ClassSet, FaultGraph};
use bounds::{best_lower_bound, projected_bound};
use exhaustive::{exhaustive, Exhaustive};
use search::{search, Lex, Weight};

/// Default depth of the exhaustive search when the matchable edges make no logical error
/// at all.
pub const EXHAUSTIVE_DEPTH: u32 = 12;

/// Options of [`distances`].
#[derive(Clone, Debug)]
pub struct DistanceOptions {
    /// Largest number of distinct symptoms the exhaustive hyperedge search may store.
    pub max_states: usize,
    /// Largest logical error (in edges) the exhaustive search looks for when the matchable
    /// edges make none.
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

/// An undetected logical error: a set of edges whose detectors cancel.
#[derive(Clone, Debug, PartialEq)]
pub struct LogicalError {
    /// FaultEdge ids, sorted.
    pub edges: Vec<u32>,
    /// Observables flipped (never empty).
    pub observables: Vec<u32>,
}

/// How far a count can be trusted.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Method {
    /// Shortest cycle on a graph without hyperedges: exact.
    Graph,
    /// Graph search over the matchable edges, matched by the lower bound from the
    /// hyperedges' splits: exact.
    Split,
    /// Exhaustive search over symptoms including hyperedges: exact.
    Exhaustive,
    /// Graph search over the matchable edges only; the true value lies in
    /// `[lower, value]`.
    Bounds,
}

impl Method {
    /// Lower-case label for reports.
    pub fn name(self) -> &'static str {
        match self {
            Method::Graph => "exact (graph)",
            Method::Split => "exact (graph, split bound)",
            Method::Exhaustive => "exact (exhaustive)",
            Method::Bounds => "bounds (hyperedges)",
        }
    }
}

/// A least edge count and the error attaining it.
#[derive(Clone, Debug, PartialEq)]
pub struct Count {
    /// Number of edges of [`Count::error`]: an upper bound, exact when `lower == value`.
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

/// The lexicographic result: fewest low-rate edges, then fewest edges.
#[derive(Clone, Debug, PartialEq)]
pub struct Lexicographic {
    /// Low-rate edges in the error.
    pub low: u32,
    /// All edges in the error.
    pub total: u32,
    /// The logical error found.
    pub error: LogicalError,
}

/// The most likely logical error.
#[derive(Clone, Debug, PartialEq)]
pub struct Weighted {
    /// `Σ ln((1−p)/p)` over the error's edges.
    pub weight: f64,
    /// `Π p` over the error's edges.
    pub probability: f64,
    /// The logical error found.
    pub error: LogicalError,
}

/// Why an absent result is not a proof that no such logical error exists.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Unproven {
    /// The exhaustive search (hyperedges included) finished and found no logical error of at
    /// most this many edges: any logical error is larger.
    AboveDepth(u32),
    /// The exhaustive search stopped at its state cap ([`DistanceOptions::max_states`]).
    Capped,
    /// Only matchable edges were searched and the graph has hyperedges.
    MatchableOnly,
}

impl Unproven {
    /// Short text for a table cell: `> k` or `?`.
    pub fn cell(self) -> String {
        match self {
            Unproven::AboveDepth(k) => format!("> {k}"),
            Unproven::Capped | Unproven::MatchableOnly => "?".into(),
        }
    }

    /// What was and was not searched, for reports.
    pub fn describe(self) -> String {
        match self {
            Unproven::AboveDepth(k) => format!(
                "no logical error of at most {k} edges exists; larger ones were not searched"
            ),
            Unproven::Capped => {
                "unknown: the exhaustive hyperedge search stopped at its state cap".into()
            }
            Unproven::MatchableOnly => {
                "unknown: none among matchable edges; hyperedges were not searched".into()
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
    /// Least number of edges in an undetected logical error.
    pub distance: Option<Count>,
    /// The same, high-rate edges only.
    pub high_rate: Option<Count>,
    /// Fewest low-rate edges, then fewest in total (over matchable edges).
    pub lexicographic: Option<Lexicographic>,
    /// Most likely logical error (over matchable edges).
    pub weighted: Option<Weighted>,
    /// Edges with three or more detectors (left out of the class and weighted searches).
    pub hyperedges: usize,
    /// Which absent results are unproven, and why.
    pub unresolved: Unresolved,
}

/// Computes every distance of `graph`. `Err` carries an internal error (a found error that does
/// not verify), which is a bug.
pub fn distances(graph: &FaultGraph, opts: &DistanceOptions) -> Result<DistanceReport, String> {
    distances_reporting(graph, opts, |_, _| {})
}

/// The searches of [`distances`], in the order they run (names as the report's lines).
pub const DISTANCE_SEARCHES: [&str; 4] = [
    "distance",
    "high-rate distance",
    "low-rate count",
    "weighted distance",
];

/// [`distances`], calling `on_search(i, name)` as search `i` of [`DISTANCE_SEARCHES`] starts
/// (for a progress display: a search on a large graph can take seconds).
pub fn distances_reporting(
    graph: &FaultGraph,
    opts: &DistanceOptions,
    mut on_search: impl FnMut(usize, &'static str),
) -> Result<DistanceReport, String> {
    let all = |_: ClassSet| true;
    let high = |c: ClassSet| c.has_high();
    on_search(0, DISTANCE_SEARCHES[0]);
    let (distance, distance_unproven) = count_distance(graph, &all, opts)?;
    on_search(1, DISTANCE_SEARCHES[1]);
    let (high_rate, high_rate_unproven) = count_distance(graph, &high, opts)?;
    let hyperedges = graph.edges.iter().filter(|m| m.detectors.len() > 2).count();
    // The class and weighted searches see matchable edges only.
    let matchable_only = (hyperedges > 0).then_some(Unproven::MatchableOnly);
    on_search(2, DISTANCE_SEARCHES[2]);
    let lexicographic = match search(graph, &all, |m| {
        Lex(u32::from(!graph.edges[m].classes.has_high()), 1)
    }) {
        Some((Lex(low, total), error)) => Some(Lexicographic {
            low,
            total,
            error: verified(graph, error)?,
        }),
        None => None,
    };
    on_search(3, DISTANCE_SEARCHES[3]);
    let weighted = match search(graph, &all, |m| {
        Weight(weight_of(graph.edges[m].probability).max(0.0))
    }) {
        Some((Weight(weight), error)) => {
            let error = verified(graph, error)?;
            let probability = error
                .edges
                .iter()
                .map(|&m| graph.edges[m as usize].probability)
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
        lexicographic: matchable_only.filter(|_| lexicographic.is_none()),
        weighted: matchable_only.filter(|_| weighted.is_none()),
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

/// The XOR of the symptoms of `edges` as `(detectors, observables)`.
pub fn symptom(graph: &FaultGraph, edges: &[u32]) -> (Vec<u32>, Vec<u32>) {
    let mut dets = Vec::new();
    let mut obs = Vec::new();
    for &m in edges {
        let m = &graph.edges[m as usize];
        dets = xor_sets(&dets, &m.detectors);
        obs = xor_sets(&obs, &m.observables);
    }
    (dets, obs)
}

/// Cancels repeated edges, then checks the symptom is empty and an observable flips.
fn verified(graph: &FaultGraph, mechs: Vec<u32>) -> Result<LogicalError, String> {
    let set = odd_parity(mechs);
    let (dets, obs) = symptom(graph, &set);
    if !dets.is_empty() || obs.is_empty() {
        return Err(format!(
            "distance search returned edges {set:?} with detectors {dets:?} and \
             observables {obs:?}, which is not an undetected logical error"
        ));
    }
    Ok(LogicalError {
        edges: set,
        observables: obs,
    })
}

/// The count distance over the edges whose classes pass `allow`, with hyperedge handling;
/// when none is found, why that is unproven (if it is).
fn count_distance(
    graph: &FaultGraph,
    allow: &dyn Fn(ClassSet) -> bool,
    opts: &DistanceOptions,
) -> Result<(Option<Count>, Option<Unproven>), String> {
    let has_hyper = graph
        .edges
        .iter()
        .any(|m| m.detectors.len() > 2 && allow(m.classes));
    let found = search(graph, allow, |_| 1u32);
    if !has_hyper {
        return match found {
            Some((c, e)) => {
                let error = verified(graph, e)?;
                debug_assert_eq!(error.edges.len() as u32, c);
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
    // The split bound is one more graph search: try it before the exhaustive search.
    if let Some(error) = &upper {
        let value = error.edges.len() as u32;
        let lower = best_lower_bound(graph, allow, value);
        if lower == value {
            return Ok((
                Some(Count {
                    value,
                    lower,
                    method: Method::Split,
                    error: error.clone(),
                }),
                None,
            ));
        }
    }
    // Exhaustive search below the matchable value (or up to a fixed depth when the matchable
    // edges alone make no logical error).
    let limit = upper
        .as_ref()
        .map_or(opts.exhaustive_depth, |e| e.edges.len() as u32 - 1);
    // A logical error the exhaustive search proved least.
    let exact = |error: LogicalError| {
        let n = error.edges.len() as u32;
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
    let value = error.edges.len() as u32;
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::base::Source;
    use crate::faults::ExtractOptions;

    /// A distance-3 bit-flip repetition code: bit flips of probability `p` on the three data
    /// qubits, one perfect round of parity checks, a final readout. Its fault graph is the chain
    /// boundary – q0 – q1 – q2 – boundary, and only all three flips together are undetected
    /// while flipping the logical (the textbook distance-3 repetition code).
    const REPETITION: &str = "qubit q[0..3] role data\nqubit a[0..2] role ancilla\n\
        noise bitflip p=0.01 q[0..3]\nlayer { cx q[0] a[0]; cx q[1] a[1] }\n\
        layer { cx q[1] a[0]; cx q[2] a[1] }\nmeasure z a[0] -> s[0], z a[1] -> s[1]\n\
        measure z q[0] -> m[0], z q[1] -> m[1], z q[2] -> m[2]\ndetector = s[0]\n\
        detector = s[1]\ndetector = s[0] ^ m[0] ^ m[1]\ndetector = s[1] ^ m[1] ^ m[2]\n\
        observable z = m[0]\n";

    fn graph(text: &str) -> FaultGraph {
        let c = crate::ir::load_source(&Source::new("t.slant", text), &[])
            .unwrap_or_else(|d| panic!("{}", d[0].render()));
        crate::faults::extract(&c, &ExtractOptions::default())
    }

    #[test]
    fn repetition_code_has_distance_three_in_every_measure() {
        let g = graph(REPETITION);
        assert_eq!(g.edges.len(), 3);
        let r = distances(&g, &DistanceOptions::default()).unwrap();
        let d = r.distance.as_ref().unwrap();
        assert_eq!((d.value, d.lower, d.method), (3, 3, Method::Graph));
        assert_eq!(d.error.edges, vec![0, 1, 2]);
        assert_eq!(d.error.observables, vec![0]);
        // Bit flips are low-rate: no logical error is made of high-rate faults, and that absence
        // is proven (no unresolved reason).
        assert!(r.high_rate.is_none() && r.unresolved.high_rate.is_none());
        let l = r.lexicographic.as_ref().unwrap();
        assert_eq!((l.low, l.total), (3, 3));
        // Three independent flips of probability 0.01 each: weight 3 ln(0.99/0.01).
        let w = r.weighted.as_ref().unwrap();
        assert!((w.weight - 3.0 * 99f64.ln()).abs() < 1e-9, "{}", w.weight);
        assert!((w.probability - 1e-6).abs() < 1e-15);
    }

    #[test]
    fn logical_errors_are_verified() {
        let g = graph(REPETITION);
        // Repeats cancel before the check: {0, 1, 1, 2} is {0, 2}, which leaves detectors lit.
        assert!(verified(&g, vec![0, 1, 1, 2]).is_err());
        let e = verified(&g, vec![2, 0, 1, 1, 1]).unwrap();
        assert_eq!(e.edges, vec![0, 1, 2]);
        let (dets, obs) = symptom(&g, &[0, 1]);
        assert!(!dets.is_empty() && obs == vec![0]);
    }

    #[test]
    fn without_observables_nothing_is_a_logical_error() {
        let text = REPETITION.replace("observable z = m[0]\n", "");
        let r = distances(&graph(&text), &DistanceOptions::default()).unwrap();
        assert!(r.distance.is_none() && r.unresolved.distance.is_none());
        assert!(r.weighted.is_none());
    }
}
