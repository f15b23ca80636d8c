//! Decomposition of hyperedges for matching decoders.
//!
//! In: a [`FaultGraph`] whose mechanisms may flip more than two detectors, and for each such
//! mechanism the *atoms* of a few contributors: the symptoms of the X and Z parts of each factor
//! of its Pauli term. Out: [`FaultGraph::decompositions`] and [`FaultGraph::hyperedges`].
//!
//! A hyperedge is split into parts that are each *existing* graphlike mechanisms — one or two
//! detectors with exactly the observables of a mechanism that has those detectors — so the
//! matching graph gains no edge that the circuit cannot produce on its own. XOR over the parts
//! is the whole symptom, observables included, so the observables split consistently.
//!
//! Two strategies, in order:
//! 1. **By Pauli structure**: group the atoms of a contributor (e.g. a Y fault into its X part
//!    and its Z part; a two-qubit `XZ` into X on one qubit and Z on the other). Every grouping
//!    of up to [`MAX_ATOMS`] atoms is tried and the finest valid one wins. In a CSS code this
//!    splits every circuit-level fault of a memory experiment (common practice).
//! 2. **By detectors**: cover the detectors by existing one- and two-detector mechanisms whose
//!    observables XOR to the whole (searched exhaustively for up to [`MAX_SEARCH`] detectors).
//!
//! Hyperedges neither strategy splits are listed in [`HyperedgeStats::undecomposed`].

use crate::faults::extract::{Atoms, FxMap};
use crate::faults::graph::{Decomposition, FaultGraph, HyperedgeStats};

/// Largest number of atoms whose groupings are enumerated (Bell number 203 at 6).
pub const MAX_ATOMS: usize = 6;
/// Largest number of detectors covered by the detector search.
pub const MAX_SEARCH: usize = 8;

/// Existing graphlike mechanisms: detector set → observable sets seen with it.
type Index = FxMap<Vec<u32>, Vec<Vec<u32>>>;

/// Fills in the decompositions of every hyperedge of `graph`.
pub(crate) fn decompose(graph: &mut FaultGraph, atoms: &[(u32, Atoms)]) {
    let d = graph.detectors.len() as u32;
    let mut index: Index = FxMap::default();
    for m in &graph.mechanisms {
        if (1..=2).contains(&m.detectors.len()) {
            index
                .entry(m.detectors.clone())
                .or_default()
                .push(m.observables.clone());
        }
    }
    let mut by_mech: FxMap<u32, Vec<&Atoms>> = FxMap::default();
    for (k, a) in atoms {
        by_mech.entry(*k).or_default().push(a);
    }
    let mut stats = HyperedgeStats::default();
    let mut out = Vec::new();
    for (k, m) in graph.mechanisms.iter().enumerate() {
        if m.detectors.len() <= 2 {
            continue;
        }
        stats.hyperedges += 1;
        let by_atoms = by_mech.get(&(k as u32)).and_then(|list| {
            list.iter()
                .filter(|a| a.len() <= MAX_ATOMS)
                .find_map(|a| split_by_atoms(a, d, &index))
        });
        let parts = by_atoms.or_else(|| {
            (m.detectors.len() <= MAX_SEARCH)
                .then(|| split_by_detectors(&m.detectors, &m.observables, &index))
                .flatten()
        });
        match parts {
            Some(parts) => {
                stats.decomposed += 1;
                out.push(Decomposition {
                    mechanism: k as u32,
                    parts,
                });
            }
            None => stats.undecomposed.push(k as u32),
        }
    }
    graph.decompositions = out;
    graph.hyperedges = stats;
}

fn xor(a: &[u32], b: &[u32]) -> Vec<u32> {
    crate::ir::sensitivity::xor_sets(a, b)
}

/// Splits combined symptom ids into (detectors, observables).
fn split_ids(s: &[u32], d: u32) -> (Vec<u32>, Vec<u32>) {
    let k = s.iter().take_while(|&&x| x < d).count();
    (s[..k].to_vec(), s[k..].iter().map(|&x| x - d).collect())
}

fn exists(index: &Index, dets: &[u32], obs: &[u32]) -> bool {
    index
        .get(dets)
        .is_some_and(|list| list.iter().any(|o| o == obs))
}

/// Finest grouping of the atoms whose blocks are all existing graphlike mechanisms.
fn split_by_atoms(atoms: &Atoms, d: u32, index: &Index) -> Option<Vec<(Vec<u32>, Vec<u32>)>> {
    let n = atoms.len();
    // The finest grouping (every atom alone) is the usual answer; try it before enumerating.
    let singles: Option<Vec<_>> = atoms
        .iter()
        .map(|s| {
            let (dets, obs) = split_ids(s, d);
            exists(index, &dets, &obs).then_some((dets, obs))
        })
        .collect();
    if let Some(parts) = singles.filter(|p| p.len() >= 2) {
        return Some(parts);
    }
    let mut best: Option<Vec<(Vec<u32>, Vec<u32>)>> = None;
    // Restricted growth strings enumerate each set partition once.
    let mut rgs = vec![0usize; n];
    loop {
        let blocks = rgs.iter().copied().max().map_or(0, |m| m + 1);
        if best.as_ref().is_none_or(|b| blocks > b.len()) {
            let mut sym = vec![Vec::new(); blocks];
            for (i, &b) in rgs.iter().enumerate() {
                sym[b] = xor(&sym[b], &atoms[i]);
            }
            let parts: Option<Vec<_>> = sym
                .iter()
                .filter(|s| !s.is_empty())
                .map(|s| {
                    let (dets, obs) = split_ids(s, d);
                    exists(index, &dets, &obs).then_some((dets, obs))
                })
                .collect();
            if let Some(parts) = parts {
                if parts.len() >= 2 && best.as_ref().is_none_or(|b| parts.len() > b.len()) {
                    best = Some(parts);
                }
            }
        }
        // Next restricted growth string.
        let mut i = n;
        loop {
            if i <= 1 {
                return best;
            }
            i -= 1;
            let max_prefix = rgs[..i].iter().copied().max().unwrap_or(0);
            if rgs[i] <= max_prefix {
                rgs[i] += 1;
                for r in rgs.iter_mut().skip(i + 1) {
                    *r = 0;
                }
                break;
            }
        }
    }
}

/// Covers `dets` exactly by existing one- and two-detector mechanisms whose observables XOR to
/// `obs`. The lowest uncovered detector is always covered next, so each cover is tried once.
fn split_by_detectors(
    dets: &[u32],
    obs: &[u32],
    index: &Index,
) -> Option<Vec<(Vec<u32>, Vec<u32>)>> {
    if dets.is_empty() {
        return obs.is_empty().then(Vec::new);
    }
    let first = dets[0];
    let rest = &dets[1..];
    let mut candidates: Vec<(Vec<u32>, Vec<u32>)> = vec![(vec![first], rest.to_vec())];
    for (j, &other) in rest.iter().enumerate() {
        let mut remaining = rest.to_vec();
        remaining.remove(j);
        candidates.push((vec![first, other], remaining));
    }
    for (edge, remaining) in candidates {
        let Some(obs_sets) = index.get(&edge) else {
            continue;
        };
        for o in obs_sets {
            if let Some(mut parts) = split_by_detectors(&remaining, &xor(obs, o), index) {
                parts.insert(0, (edge.clone(), o.clone()));
                return Some(parts);
            }
        }
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;

    fn index(entries: &[(&[u32], &[u32])]) -> Index {
        let mut ix = Index::default();
        for (d, o) in entries {
            ix.entry(d.to_vec()).or_default().push(o.to_vec());
        }
        ix
    }

    #[test]
    fn y_splits_into_x_and_z_parts() {
        // Detectors 0..4, observable id 4 → observable 0. X part flips {0,1}+obs, Z part {2,3}.
        let ix = index(&[(&[0, 1], &[0]), (&[2, 3], &[])]);
        let atoms = vec![vec![0, 1, 4], vec![2, 3]];
        let parts = split_by_atoms(&atoms, 4, &ix).unwrap();
        assert_eq!(parts, vec![(vec![0, 1], vec![0]), (vec![2, 3], vec![])]);
        // With the observable on the wrong part, the split does not exist.
        let ix2 = index(&[(&[0, 1], &[]), (&[2, 3], &[0])]);
        assert!(split_by_atoms(&atoms, 4, &ix2).is_none());
    }

    #[test]
    fn detector_cover_tracks_observables() {
        let ix = index(&[(&[0], &[]), (&[1, 2], &[0]), (&[0, 1], &[]), (&[2], &[])]);
        let parts = split_by_detectors(&[0, 1, 2], &[0], &ix).unwrap();
        assert_eq!(parts, vec![(vec![0], vec![]), (vec![1, 2], vec![0])]);
        assert!(split_by_detectors(&[0, 1, 2, 3], &[], &ix).is_none());
    }
}
