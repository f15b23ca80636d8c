//! Decoders on code-capacity graphs of small codes, with exact enumeration instead of sampling.

use rayon::prelude::*;
use slant::decode::{Decoder, DecoderKind, MatchingEdge, MatchingGraph, Mwpm, UnionFind};

const KINDS: [DecoderKind; 2] = [DecoderKind::Mwpm, DecoderKind::UnionFind];

fn edge(a: u32, b: Option<u32>, p: f64, observables: &[u32]) -> MatchingEdge {
    MatchingEdge {
        a,
        b,
        p,
        observables: observables.to_vec(),
    }
}

/// Distance-`d` repetition code under bit flips with probability `p` (code capacity): data bit
/// `k` is the edge between detectors `k − 1` and `k` (detector `k` compares bits `k` and
/// `k + 1`); the end bits are boundary edges; the observable is bit 0.
fn repetition(d: u32, p: f64) -> MatchingGraph {
    let mut edges = vec![edge(0, None, p, &[0])];
    for k in 1..d - 1 {
        edges.push(edge(k - 1, Some(k), p, &[]));
    }
    edges.push(edge(d - 2, None, p, &[]));
    MatchingGraph {
        num_detectors: d as usize - 1,
        num_observables: 1,
        edges,
    }
}

/// Distance-`d` planar surface code, one error type, code capacity: a `d × (d−1)` grid of
/// detectors, rows of `d` horizontal edges ending on the left and right boundaries, `d − 1`
/// rows of vertical edges. The observable counts crossings of the left boundary, so a
/// left-to-right chain of `d` edges is the logical error.
fn planar(d: u32, p: f64) -> MatchingGraph {
    let id = |r: u32, c: u32| r * (d - 1) + c;
    let mut edges = Vec::new();
    for r in 0..d {
        edges.push(edge(id(r, 0), None, p, &[0]));
        for c in 0..d - 2 {
            edges.push(edge(id(r, c), Some(id(r, c + 1)), p, &[]));
        }
        edges.push(edge(id(r, d - 2), None, p, &[]));
    }
    for r in 0..d - 1 {
        for c in 0..d - 1 {
            edges.push(edge(id(r, c), Some(id(r + 1, c)), p, &[]));
        }
    }
    MatchingGraph {
        num_detectors: (d * (d - 1)) as usize,
        num_observables: 1,
        edges,
    }
}

/// Detection events and flipped observables (sorted) of a set of fired edges.
fn syndrome(g: &MatchingGraph, fired: &[usize]) -> (Vec<u32>, Vec<u32>) {
    let mut det = vec![false; g.num_detectors];
    let mut obs = vec![false; g.num_observables];
    for &i in fired {
        let e = &g.edges[i];
        det[e.a as usize] ^= true;
        if let Some(b) = e.b {
            det[b as usize] ^= true;
        }
        for &o in &e.observables {
            obs[o as usize] ^= true;
        }
    }
    let ids = |v: Vec<bool>| (0..v.len() as u32).filter(|&i| v[i as usize]).collect();
    (ids(det), ids(obs))
}

/// Exact logical failure probability: every error pattern weighted by its probability.
fn exact_failure(g: &MatchingGraph, dec: &dyn Decoder) -> f64 {
    let m = g.edges.len();
    let mut total = 0.0;
    for bits in 0u32..(1 << m) {
        let fired: Vec<usize> = (0..m).filter(|&i| bits >> i & 1 == 1).collect();
        let prob: f64 = (0..m)
            .map(|i| {
                if bits >> i & 1 == 1 {
                    g.edges[i].p
                } else {
                    1.0 - g.edges[i].p
                }
            })
            .product();
        let (events, actual) = syndrome(g, &fired);
        let got = dec.decode(&events);
        assert_eq!(got.unmatched, 0);
        if got.observables != actual {
            total += prob;
        }
    }
    total
}

/// Distance-3 repetition code under code capacity fails when two or three of the bits flip:
/// 3p²(1−p) + p³ = 3p² − 2p³ (Nielsen & Chuang, "Quantum Computation and Quantum
/// Information", §10.1).
#[test]
fn repetition_d3_failure_is_3p2_minus_2p3() {
    for &p in &[0.001, 0.01, 0.1, 0.3, 0.45] {
        let g = repetition(3, p);
        for kind in KINDS {
            let dec = kind.build(&g).unwrap();
            let got = exact_failure(&g, dec.as_ref());
            let want = 3.0 * p * p - 2.0 * p * p * p;
            assert!(
                (got - want).abs() < 1e-14,
                "{kind:?} p={p}: {got} vs {want}"
            );
        }
    }
}

/// A distance-d repetition code corrects every pattern of at most (d−1)/2 bit flips (textbook:
/// Nielsen & Chuang §10.1); both decoders must do so.
#[test]
fn repetition_corrects_up_to_half_distance() {
    for d in [3u32, 5, 7, 9, 11] {
        let g = repetition(d, 0.01);
        let t = (d as usize - 1) / 2;
        for kind in KINDS {
            let dec = kind.build(&g).unwrap();
            for bits in 0u32..(1 << d) {
                if bits.count_ones() as usize > t {
                    continue;
                }
                let fired: Vec<usize> = (0..d as usize).filter(|&i| bits >> i & 1 == 1).collect();
                let (events, actual) = syndrome(&g, &fired);
                assert_eq!(
                    dec.decode(&events).observables,
                    actual,
                    "{kind:?} d={d} {fired:?}"
                );
            }
        }
    }
}

/// MWPM corrects every error of weight at most (d−1)/2 on the planar code, and so does
/// union-find (Delfosse & Nickerson, Quantum 5, 595 (2021), Theorem 1: weight up to
/// (d−1)/2 is corrected). Checked for every 1- and 2-edge error at d = 5.
#[test]
fn planar_d5_both_decoders_correct_all_weight_two_errors() {
    let g = planar(5, 0.01);
    let m = g.edges.len();
    let decoders: Vec<Box<dyn Decoder>> = KINDS.iter().map(|k| k.build(&g).unwrap()).collect();
    let mut checked = 0;
    for i in 0..m {
        for j in i..m {
            let fired: Vec<usize> = if i == j { vec![i] } else { vec![i, j] };
            let (events, actual) = syndrome(&g, &fired);
            for (dec, kind) in decoders.iter().zip(KINDS) {
                let got = dec.decode(&events);
                assert_eq!(got.observables, actual, "{kind:?} {fired:?}");
                assert_eq!(got.unmatched, 0);
            }
            checked += 1;
        }
    }
    assert_eq!(checked, m * (m + 1) / 2);
}

/// A logical chain of weight d is not corrected (sanity check that the test can fail): a full
/// row of the planar code is undetectable and flips the observable.
#[test]
fn planar_logical_chain_is_not_corrected() {
    let d = 5;
    let g = planar(d, 0.01);
    let row: Vec<usize> = (0..d as usize).collect();
    let (events, actual) = syndrome(&g, &row);
    assert!(events.is_empty());
    assert_eq!(actual, vec![0]);
    for kind in KINDS {
        assert!(kind
            .build(&g)
            .unwrap()
            .decode(&events)
            .observables
            .is_empty());
    }
}

/// Several observables and boundaries, and a disconnected graph: two repetition codes side by
/// side with observables 0 and 1, plus a third observable on a middle edge of the second.
#[test]
fn several_observables_and_components() {
    let mut edges = vec![
        edge(0, None, 0.05, &[0]),
        edge(0, Some(1), 0.05, &[]),
        edge(1, None, 0.05, &[]),
    ];
    edges.extend([
        edge(2, None, 0.05, &[1]),
        edge(2, Some(3), 0.05, &[2]),
        edge(3, Some(4), 0.05, &[]),
        edge(4, None, 0.05, &[]),
    ]);
    let g = MatchingGraph {
        num_detectors: 5,
        num_observables: 3,
        edges,
    };
    for kind in KINDS {
        let dec = kind.build(&g).unwrap();
        // One error in each code, every combination.
        for i in 0..3 {
            for j in 3..7 {
                let (events, actual) = syndrome(&g, &[i, j]);
                assert_eq!(dec.decode(&events).observables, actual, "{kind:?} {i} {j}");
            }
        }
    }
}

/// A component without boundary edges and an odd number of events cannot be matched: the
/// decoders report it instead of panicking and still decode the rest.
#[test]
fn unmatchable_events_are_reported() {
    let g = MatchingGraph {
        num_detectors: 5,
        num_observables: 1,
        edges: vec![
            edge(0, Some(1), 0.1, &[]),
            edge(1, Some(2), 0.1, &[]),
            edge(3, None, 0.1, &[0]),
            edge(3, Some(4), 0.1, &[]),
        ],
    };
    for kind in KINDS {
        let dec = kind.build(&g).unwrap();
        let got = dec.decode(&[0, 3]);
        assert_eq!(got.unmatched, 1, "{kind:?}");
        assert_eq!(got.observables, vec![0], "{kind:?}");
        // Out-of-range ids are counted, not a panic; repeated ids cancel.
        let got = dec.decode(&[9, 3, 4, 4]);
        assert_eq!((got.unmatched, got.observables), (1, vec![0]), "{kind:?}");
    }
}

/// An edge with p > 1/2 has negative weight: it is assumed fired, so an empty syndrome means
/// it did not fire, and a lit detector means it did.
#[test]
fn likely_edges_are_assumed_fired() {
    let g = MatchingGraph {
        num_detectors: 1,
        num_observables: 1,
        edges: vec![edge(0, None, 0.9, &[0])],
    };
    for kind in KINDS {
        let dec = kind.build(&g).unwrap();
        assert_eq!(dec.decode(&[0]).observables, vec![0], "{kind:?}");
        assert!(dec.decode(&[]).observables.is_empty(), "{kind:?}");
    }
}

/// Decoders agree on easy instances (one or two errors on a distance-7 planar code) and give
/// the same answers from many rayon threads as from one.
#[test]
fn decoders_agree_and_are_thread_safe() {
    let g = planar(7, 0.01);
    let mwpm = Mwpm::new(&g).unwrap();
    let uf = UnionFind::new(&g).unwrap();
    let m = g.edges.len();
    let shots: Vec<Vec<u32>> = (0..m)
        .flat_map(|i| (i..m).step_by(7).map(move |j| (i, j)))
        .map(|(i, j)| syndrome(&g, &if i == j { vec![i] } else { vec![i, j] }).0)
        .collect();
    let serial: Vec<_> = shots.iter().map(|e| mwpm.decode(e)).collect();
    let parallel: Vec<_> = shots.par_iter().map(|e| mwpm.decode(e)).collect();
    let uf_parallel: Vec<_> = shots.par_iter().map(|e| uf.decode(e)).collect();
    assert_eq!(serial, parallel);
    assert_eq!(serial, uf_parallel);
}

#[test]
fn decoder_kind_parses_names() {
    assert_eq!("mwpm".parse::<DecoderKind>(), Ok(DecoderKind::Mwpm));
    assert_eq!("uf".parse::<DecoderKind>(), Ok(DecoderKind::UnionFind));
    assert!("bp".parse::<DecoderKind>().is_err());
    assert_eq!(DecoderKind::UnionFind.name(), "uf");
}
