//! Checks of the sparse matcher against two independent exact oracles.
//!
//! 1. The reference decoder ([`ReferenceMwpm`]: shortest paths, then subset dynamic programming
//!    or Edmonds' algorithm on the complete graph of events), given the *same integer weights*,
//!    must find the same total weight and the same number of unmatched events.
//! 2. Exhaustive search: Floyd–Warshall distances with the set of observable masks reachable at
//!    minimum length, then dynamic programming over subsets of events that minimises
//!    (unmatched events, total weight) lexicographically and collects every optimal mask. The
//!    sparse decoder's weight must equal the optimum and its mask must be one of the optimal
//!    masks.
//!
//! Random graphs cover: with and without boundary edges, several components (some without
//! boundary, so odd ones leave an event unmatched), isolated detectors, parallel edges,
//! self-loops, zero-weight (`p = 1/2`) and very heavy (`p ~ 1e-12`) edges, `p > 1/2` and
//! `p = 0` / `p = 1` edges, repeated and out-of-range event ids; at resolutions from 2 bits
//! (many ties) to the decoder's 20.

use rand::{Rng, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;
use rayon::prelude::*;

use super::{Matching, Mwpm, RESOLUTION_BITS};
use crate::decode::matching::{ReferenceMwpm, ReferenceMwpmOptions};
use crate::decode::{Decoder, MatchingEdge, MatchingGraph, Prepared};

const OBS: u32 = 3;

fn random_p(rng: &mut Xoshiro256PlusPlus) -> f64 {
    match rng.gen_range(0..20) {
        0 => 0.5,
        1 => rng.gen_range(1e-13..1e-11),
        2 => rng.gen_range(0.55..0.999),
        3 if rng.gen_bool(0.3) => 0.0,
        4 if rng.gen_bool(0.3) => 1.0,
        _ => rng.gen_range(1e-4..0.45),
    }
}

/// A random graph on up to `max_n` detectors; `density` is the chance of each pair edge.
fn random_graph(rng: &mut Xoshiro256PlusPlus, max_n: usize) -> MatchingGraph {
    let n = rng.gen_range(1..=max_n);
    let density = rng.gen_range(0.05..0.6);
    let boundary = [0.0, 0.1, 0.4][rng.gen_range(0..3)];
    let mut edges = Vec::new();
    let obs = |rng: &mut Xoshiro256PlusPlus| -> Vec<u32> {
        (0..OBS).filter(|_| rng.gen_bool(0.3)).collect()
    };
    for a in 0..n as u32 {
        if rng.gen_bool(boundary) {
            let observables = obs(rng);
            edges.push(MatchingEdge {
                a,
                b: None,
                p: random_p(rng),
                observables,
            });
        }
        for b in a..n as u32 {
            let chance = if a == b { 0.02 } else { density };
            // Up to three parallel copies.
            for _ in 0..rng.gen_range(1..=3) {
                if rng.gen_bool(chance) {
                    let observables = obs(rng);
                    edges.push(MatchingEdge {
                        a,
                        b: Some(b),
                        p: random_p(rng),
                        observables,
                    });
                }
            }
        }
    }
    MatchingGraph {
        num_detectors: n,
        num_observables: OBS as usize,
        edges,
    }
}

/// Random events: a subset, sometimes with repeats and an out-of-range id.
fn random_events(rng: &mut Xoshiro256PlusPlus, n: usize) -> Vec<u32> {
    let mut ev: Vec<u32> = (0..n as u32).filter(|_| rng.gen_bool(0.5)).collect();
    if rng.gen_bool(0.2) && !ev.is_empty() {
        let x = ev[rng.gen_range(0..ev.len())];
        ev.push(x);
        ev.push(rng.gen_range(0..n as u32));
    }
    if rng.gen_bool(0.05) {
        ev.push(n as u32 + 3);
    }
    ev
}

const INF: u64 = u64::MAX / 4;

/// XOR convolution of two sets of 3-bit masks (bit `m` set: mask `m` reachable).
fn conv(a: u8, b: u8) -> u8 {
    let mut out = 0;
    for x in 0..8 {
        for y in 0..8 {
            if a >> x & 1 == 1 && b >> y & 1 == 1 {
                out |= 1 << (x ^ y);
            }
        }
    }
    out
}

/// The exhaustive oracle: (unmatched, weight, set of optimal masks) for the normalised
/// `events` on the prepared graph with integer weights `w`.
fn brute_force(p: &Prepared, w: &[u32], events: &[u32]) -> (u32, u64, u8) {
    let n = p.n;
    let mask_of = |e: usize| p.edge_observables(e).iter().fold(0u8, |m, &o| m ^ (1 << o));
    let mut d = vec![vec![INF; n]; n];
    let mut ms = vec![vec![0u8; n]; n];
    for i in 0..n {
        d[i][i] = 0;
        ms[i][i] = 1;
    }
    for (e, &(a, b)) in p.ends.iter().enumerate() {
        let (a, b) = (a as usize, b as usize);
        if b == n {
            continue;
        }
        let (wt, m) = (u64::from(w[e]), 1u8 << mask_of(e));
        for (x, y) in [(a, b), (b, a)] {
            if wt < d[x][y] {
                d[x][y] = wt;
                ms[x][y] = m;
            } else if wt == d[x][y] {
                ms[x][y] |= m;
            }
        }
    }
    for k in 0..n {
        for i in 0..n {
            for j in 0..n {
                if d[i][k] == INF || d[k][j] == INF {
                    continue;
                }
                let c = d[i][k] + d[k][j];
                let s = conv(ms[i][k], ms[k][j]);
                if c < d[i][j] {
                    d[i][j] = c;
                    ms[i][j] = s;
                } else if c == d[i][j] {
                    ms[i][j] |= s;
                }
            }
        }
    }
    let mut bd = vec![(INF, 0u8); n];
    for (e, &(x, b)) in p.ends.iter().enumerate() {
        if b as usize != n {
            continue;
        }
        for (i, slot) in bd.iter_mut().enumerate() {
            if d[i][x as usize] == INF {
                continue;
            }
            let c = d[i][x as usize] + u64::from(w[e]);
            let s = conv(ms[i][x as usize], 1 << mask_of(e));
            if c < slot.0 {
                *slot = (c, s);
            } else if c == slot.0 {
                slot.1 |= s;
            }
        }
    }
    let k = events.len();
    let ev: Vec<usize> = events.iter().map(|&e| e as usize).collect();
    // best[S] = (unmatched, weight, masks)
    let mut best = vec![(u32::MAX, INF, 0u8); 1 << k];
    best[0] = (0, 0, 1);
    for set in 1usize..1 << k {
        let i = set.trailing_zeros() as usize;
        let rest = set & !(1 << i);
        let mut cur = (u32::MAX, INF, 0u8);
        let mut offer = |u: u32, c: u64, m: u8, prev: (u32, u64, u8)| {
            let cand = (u + prev.0, c + prev.1, conv(m, prev.2));
            if (cand.0, cand.1) < (cur.0, cur.1) {
                cur = cand;
            } else if (cand.0, cand.1) == (cur.0, cur.1) {
                cur.2 |= cand.2;
            }
        };
        offer(1, 0, 1, best[rest]);
        if bd[ev[i]].0 < INF {
            offer(0, bd[ev[i]].0, bd[ev[i]].1, best[rest]);
        }
        let mut r = rest;
        while r != 0 {
            let j = r.trailing_zeros() as usize;
            r &= r - 1;
            if d[ev[i]][ev[j]] < INF {
                offer(0, d[ev[i]][ev[j]], ms[ev[i]][ev[j]], best[rest & !(1 << j)]);
            }
        }
        best[set] = cur;
    }
    best[(1 << k) - 1]
}

fn mask(obs: &[u32]) -> u8 {
    obs.iter().fold(0, |m, &o| m ^ (1 << o))
}

/// Every normalised event is in at most one pair, pairs only name events, and exactly
/// `unmatched` events (out-of-range ids aside) are left out.
fn check_pairs(m: &Matching, events: &[u32], bad: u32) {
    let mut seen: Vec<u32> = Vec::new();
    for &(a, b) in &m.pairs {
        seen.push(a);
        seen.extend(b);
    }
    seen.sort_unstable();
    let before = seen.len();
    seen.dedup();
    assert_eq!(
        before,
        seen.len(),
        "an event is matched twice: {:?}",
        m.pairs
    );
    assert!(seen.iter().all(|e| events.binary_search(e).is_ok()));
    assert_eq!(
        events.len() - seen.len(),
        (m.decoded.unmatched - bad) as usize,
        "{:?}",
        m.pairs
    );
}

/// The normalised events the sparse decoder paired (all but those it left out), and the same
/// set before the fixed toggles of flipped edges, ready to be decoded again.
fn paired_events(m: &Matching, p: &Prepared) -> (Vec<u32>, Vec<u32>) {
    let mut kept: Vec<u32> = m
        .pairs
        .iter()
        .flat_map(|&(a, b)| [Some(a), b])
        .flatten()
        .collect();
    kept.sort_unstable();
    let mut raw = kept.clone();
    raw.extend_from_slice(&p.fixed_events);
    (kept, crate::decode::odd_parity(raw))
}

/// The reference decoder on the same integer weights as `sparse`.
fn reference_on_integer_weights(
    g: &MatchingGraph,
    sparse: &Mwpm,
    options: ReferenceMwpmOptions,
) -> ReferenceMwpm {
    let mut p = Prepared::new(g).unwrap();
    for (w, &q) in p.weight.iter_mut().zip(sparse.integer_weights()) {
        *w = f64::from(q);
    }
    ReferenceMwpm::from_prepared(p, options)
}

/// Against the reference decoder on the same integer weights, at resolutions where the
/// reference's own integer step (2^24 over the largest pair distance) is still exact. Both
/// leave the same number of events unmatched; the sparse decoder leaves a fixed one out of each
/// odd boundary-free component, so its weight is compared with the reference's on the events it
/// paired.
#[test]
fn weight_equals_reference_on_random_graphs() {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(14);
    let options = [
        ReferenceMwpmOptions::default(),
        ReferenceMwpmOptions {
            all_pairs_limit: 0,
            subset_dp_limit: 0,
        },
    ];
    let (mut graphs, mut shots, mut with_unmatched, mut nonzero) = (0, 0, 0, 0);
    for round in 0..3000 {
        let g = random_graph(&mut rng, if round % 10 == 0 { 24 } else { 12 });
        let bits = [2, 4, 10][round % 3];
        let sparse = Mwpm::with_resolution(&g, bits).unwrap();
        let refs: Vec<ReferenceMwpm> = options
            .iter()
            .map(|&o| reference_on_integer_weights(&g, &sparse, o))
            .collect();
        graphs += 1;
        for _ in 0..4 {
            let events = random_events(&mut rng, g.num_detectors);
            let got = sparse.decode_matching(&events);
            let (norm, bad) = sparse.g.prepared.normalize_events(&events);
            check_pairs(&got, &norm, bad);
            let (_, paired) = paired_events(&got, &sparse.g.prepared);
            for r in &refs {
                let want = r.decode_matching(&events);
                assert_eq!(
                    got.decoded.unmatched, want.decoded.unmatched,
                    "{g:?}\nevents {events:?}\nsparse {got:?}\nreference {want:?}"
                );
                let want = r.decode_matching(&paired);
                assert_eq!(
                    (got.weight as f64, want.decoded.unmatched),
                    (want.weight, 0),
                    "{g:?}\nevents {events:?}\nsparse {got:?}\nreference {want:?}"
                );
            }
            assert_eq!(got.decoded, sparse.decode(&events));
            shots += 1;
            with_unmatched += usize::from(got.decoded.unmatched > 0);
            nonzero += usize::from(got.weight > 0);
        }
    }
    assert_eq!((graphs, shots), (3000, 12_000));
    assert!(with_unmatched > 500, "{with_unmatched}");
    assert!(nonzero > 5000, "{nonzero}");
}

/// Against exhaustive search at full and coarse resolution: the number of unmatched events is
/// the optimum's, the weight is the optimum for the events paired, and the observables are
/// those of some optimal matching of them (checked when no weight is zero, where the optimal
/// mask sets are exact).
#[test]
fn weight_and_observables_equal_exhaustive_search() {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(15);
    let (mut checked_masks, mut shots) = (0, 0);
    for round in 0..3000 {
        let g = random_graph(&mut rng, 12);
        let bits = if round % 2 == 0 { RESOLUTION_BITS } else { 3 };
        let sparse = Mwpm::with_resolution(&g, bits).unwrap();
        let p = &sparse.g.prepared;
        let w = sparse.integer_weights();
        let positive = w.iter().all(|&x| x > 0);
        for _ in 0..4 {
            let events = random_events(&mut rng, g.num_detectors);
            let (norm, bad) = p.normalize_events(&events);
            if norm.len() > 14 {
                continue;
            }
            let (unmatched, _, _) = brute_force(p, w, &norm);
            let got = sparse.decode_matching(&events);
            check_pairs(&got, &norm, bad);
            assert_eq!(got.decoded.unmatched - bad, unmatched, "{g:?}\n{events:?}");
            let (kept, _) = paired_events(&got, p);
            let (none, weight, masks) = brute_force(p, w, &kept);
            assert_eq!(
                (none, got.weight),
                (0, weight),
                "{g:?}\nevents {events:?}\n{got:?}"
            );
            if positive {
                let fixed = mask(&p.fixed_observables);
                let m = mask(&got.decoded.observables) ^ fixed;
                assert!(
                    masks >> m & 1 == 1,
                    "mask {m} not optimal ({masks:b}): {g:?}\nevents {events:?}\n{got:?}"
                );
                checked_masks += 1;
            }
            shots += 1;
        }
    }
    assert!(shots > 10_000, "{shots}");
    assert!(checked_masks > 5_000, "{checked_masks}");
}

/// Larger sparse graphs (grids with boundary on two sides, like a code-capacity surface code)
/// with many events, where blossoms nest deeply: the reference must agree.
#[test]
fn weight_equals_reference_on_grids_with_many_events() {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(16);
    for round in 0..60 {
        let side = rng.gen_range(4..12u32);
        let id = |r: u32, c: u32| r * side + c;
        let mut edges = Vec::new();
        let mut edge = |a, b, rng: &mut Xoshiro256PlusPlus| {
            let observables = if rng.gen_bool(0.2) { vec![0] } else { vec![] };
            edges.push(MatchingEdge {
                a,
                b,
                p: rng.gen_range(0.01..0.3),
                observables,
            });
        };
        for r in 0..side {
            edge(id(r, 0), None, &mut rng);
            edge(id(r, side - 1), None, &mut rng);
            for c in 0..side {
                if c + 1 < side {
                    edge(id(r, c), Some(id(r, c + 1)), &mut rng);
                }
                if r + 1 < side {
                    edge(id(r, c), Some(id(r + 1, c)), &mut rng);
                }
                if r + 1 < side && c + 1 < side && rng.gen_bool(0.5) {
                    edge(id(r, c), Some(id(r + 1, c + 1)), &mut rng);
                }
            }
        }
        let g = MatchingGraph {
            num_detectors: (side * side) as usize,
            num_observables: 1,
            edges,
        };
        let bits = [3, 8, 10][round % 3];
        let sparse = Mwpm::with_resolution(&g, bits).unwrap();
        let reference = reference_on_integer_weights(&g, &sparse, ReferenceMwpmOptions::default());
        for _ in 0..20 {
            let density = rng.gen_range(0.05..0.6);
            let events: Vec<u32> = (0..g.num_detectors as u32)
                .filter(|_| rng.gen_bool(density))
                .collect();
            let got = sparse.decode_matching(&events);
            let want = reference.decode_matching(&events);
            assert_eq!(got.weight as f64, want.weight, "{events:?}");
            assert_eq!(got.decoded.unmatched, 0);
        }
    }
}

/// Same results from many threads as from one, and from repeated calls (scratch reuse).
#[test]
fn deterministic_across_threads_and_calls() {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(17);
    let g = random_graph(&mut rng, 40);
    let sparse = Mwpm::new(&g).unwrap();
    let shots: Vec<Vec<u32>> = (0..400)
        .map(|_| random_events(&mut rng, g.num_detectors))
        .collect();
    let serial: Vec<Matching> = shots.iter().map(|e| sparse.decode_matching(e)).collect();
    let parallel: Vec<Matching> = shots
        .par_iter()
        .map(|e| sparse.decode_matching(e))
        .collect();
    let again: Vec<Matching> = shots.iter().map(|e| sparse.decode_matching(e)).collect();
    assert_eq!(serial, parallel);
    assert_eq!(serial, again);
}

/// More than 64 observables: the windows see observables 0, 63, 64 and 130 on one path.
#[test]
fn observables_beyond_64_are_tracked() {
    let g = MatchingGraph {
        num_detectors: 3,
        num_observables: 131,
        edges: vec![
            MatchingEdge {
                a: 0,
                b: Some(1),
                p: 0.1,
                observables: vec![0, 64],
            },
            MatchingEdge {
                a: 1,
                b: Some(2),
                p: 0.1,
                observables: vec![63, 64, 130],
            },
            MatchingEdge {
                a: 2,
                b: None,
                p: 0.01,
                observables: vec![5],
            },
        ],
    };
    let d = Mwpm::new(&g).unwrap();
    assert_eq!(d.decode(&[0, 2]).observables, vec![0, 63, 130]);
    assert_eq!(d.decode(&[2]).observables, vec![5]);
}

/// Small cases with known answers.
#[test]
fn hand_checked_cases() {
    let e = |a, b, p| MatchingEdge {
        a,
        b,
        p,
        observables: vec![],
    };
    // A path 0 - 1 - 2 - 3 with equal weights and a boundary only at 3: events {0, 1, 2}
    // pair (0, 1) and send 2 to the boundary through 3.
    let g = MatchingGraph {
        num_detectors: 4,
        num_observables: 1,
        edges: vec![
            e(0, Some(1), 0.1),
            e(1, Some(2), 0.1),
            e(2, Some(3), 0.1),
            {
                let mut b = e(3, None, 0.1);
                b.observables = vec![0];
                b
            },
        ],
    };
    let d = Mwpm::new(&g).unwrap();
    let m = d.decode_matching(&[0, 1, 2]);
    let mut pairs = m.pairs.clone();
    pairs.sort();
    assert_eq!(pairs, vec![(0, Some(1)), (2, None)]);
    assert_eq!(m.weight, 3 << RESOLUTION_BITS);
    assert_eq!(m.decoded.observables, vec![0]);
    // Empty shot, and a lone event on a detector without edges.
    assert_eq!(d.decode(&[]), crate::decode::Decoded::default());
    let lone = MatchingGraph {
        num_detectors: 2,
        num_observables: 1,
        edges: vec![e(0, None, 0.1)],
    };
    let d = Mwpm::new(&lone).unwrap();
    assert_eq!(d.decode(&[1, 0]).unmatched, 1);
    // A triangle without boundary and three events: the highest-numbered is left out.
    let tri = MatchingGraph {
        num_detectors: 3,
        num_observables: 1,
        edges: vec![e(0, Some(1), 0.2), e(1, Some(2), 0.01), e(0, Some(2), 0.05)],
    };
    let d = Mwpm::new(&tri).unwrap();
    let m = d.decode_matching(&[0, 1, 2]);
    assert_eq!(m.decoded.unmatched, 1);
    assert_eq!(m.pairs, vec![(0, Some(1))]);
}

/// A long randomized run for development, not part of the normal suite:
/// `STRESS_ROUNDS=200000 STRESS_SEED=5 cargo test --lib stress -- --ignored`.
#[test]
#[ignore]
fn stress_against_both_oracles() {
    let seed: u64 = std::env::var("STRESS_SEED")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(1);
    let rounds: usize = std::env::var("STRESS_ROUNDS")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(10);
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
    for round in 0..rounds {
        let g = random_graph(&mut rng, [8, 16, 30][round % 3]);
        let bits = [1, 2, 4, 10, 20][round % 5];
        let sparse = Mwpm::with_resolution(&g, bits).unwrap();
        let r = reference_on_integer_weights(
            &g,
            &sparse,
            ReferenceMwpmOptions {
                all_pairs_limit: 2048,
                subset_dp_limit: if bits > 10 { 16 } else { 0 },
            },
        );
        let p = &sparse.g.prepared;
        for _ in 0..4 {
            let events = random_events(&mut rng, g.num_detectors);
            let got = sparse.decode_matching(&events);
            let (norm, bad) = p.normalize_events(&events);
            check_pairs(&got, &norm, bad);
            let (kept, paired) = paired_events(&got, p);
            if norm.len() <= 12 {
                let (u, _, _) = brute_force(p, sparse.integer_weights(), &norm);
                let (none, w, _) = brute_force(p, sparse.integer_weights(), &kept);
                assert_eq!(
                    (got.decoded.unmatched - bad, none, got.weight),
                    (u, 0, w),
                    "bits {bits} {g:?} {events:?}"
                );
            }
            if bits <= 10 {
                let want = r.decode_matching(&events);
                assert_eq!(got.decoded.unmatched, want.decoded.unmatched);
                let want = r.decode_matching(&paired);
                assert_eq!(
                    (got.weight as f64, want.decoded.unmatched),
                    (want.weight, 0),
                    "bits {bits} {g:?} {events:?}"
                );
            }
        }
    }
}

mod properties {
    use super::*;
    use proptest::prelude::*;

    /// Edges `(a, b, p, observable mask)` over `n` detectors; `b == n` is the boundary and
    /// `a == b` a self-loop, any `p` in `[0, 1]`, parallel edges allowed.
    fn graph_and_events() -> impl Strategy<Value = (MatchingGraph, Vec<u32>)> {
        (1usize..8).prop_flat_map(|n| {
            let edge = (0..n as u32, 0..=n as u32, 0.0f64..=1.0, 0u8..8);
            (
                Just(n),
                proptest::collection::vec(edge, 0..20),
                proptest::collection::vec(0..n as u32 + 2, 0..10),
            )
                .prop_map(|(n, edges, events)| {
                    let edges = edges
                        .into_iter()
                        .map(|(a, b, p, m)| MatchingEdge {
                            a,
                            b: (b < n as u32).then_some(b),
                            p,
                            observables: (0..OBS).filter(|o| m >> o & 1 == 1).collect(),
                        })
                        .collect();
                    let g = MatchingGraph {
                        num_detectors: n,
                        num_observables: OBS as usize,
                        edges,
                    };
                    (g, events)
                })
        })
    }

    proptest! {
        #![proptest_config(ProptestConfig { cases: 2000, .. ProptestConfig::default() })]

        /// Arbitrary small graphs and event lists (repeats, out-of-range ids): the number left
        /// unmatched and the weight of what is paired are optimal by exhaustive search, at full
        /// and at a 2-bit resolution (ties everywhere).
        #[test]
        fn optimal_on_arbitrary_small_graphs((g, events) in graph_and_events(), coarse in any::<bool>()) {
            let bits = if coarse { 2 } else { RESOLUTION_BITS };
            let sparse = Mwpm::with_resolution(&g, bits).unwrap();
            let p = &sparse.g.prepared;
            let w = sparse.integer_weights();
            let (norm, bad) = p.normalize_events(&events);
            let got = sparse.decode_matching(&events);
            check_pairs(&got, &norm, bad);
            let (kept, _) = paired_events(&got, p);
            let (unmatched, _, _) = brute_force(p, w, &norm);
            let (none, weight, _) = brute_force(p, w, &kept);
            prop_assert_eq!(got.decoded.unmatched - bad, unmatched);
            prop_assert_eq!((none, got.weight), (0, weight));
            prop_assert_eq!(&got.decoded, &sparse.decode(&events));
        }
    }
}
