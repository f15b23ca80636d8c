//! Split of hyperedges for matching decoders.
//!
//! In: a [`crate::faults::FaultGraph`] whose edges may flip more than two detectors, and for each such
//! edge the *atoms* of a few contributors: the symptoms of the X and Z parts of each factor
//! of its Pauli term. Out: the graph's `splits` and `hyperedges`.
//!
//! A hyperedge is split into parts that are each *existing* matchable edges — one or two
//! detectors with exactly the observables of a edge that has those detectors — so the
//! matching graph gains no edge that the circuit cannot produce on its own. XOR over the parts
//! is the whole symptom, observables included, so the observables split consistently.
//!
//! Two strategies, in order:
//! 1. **By Pauli structure**: group the atoms of a contributor (e.g. a Y fault into its X part
//!    and its Z part; a two-qubit `XZ` into X on one qubit and Z on the other). Every grouping
//!    of up to [`MAX_ATOMS`] atoms is tried and the finest valid one wins. In a CSS code this
//!    splits every circuit-level fault of a memory experiment (common practice).
//! 2. **By detectors**: cover the detectors by existing one- and two-detector edges whose
//!    observables XOR to the whole (searched exhaustively for up to [`MAX_SEARCH`] detectors).
//!
//! Hyperedges neither strategy splits are listed in [`HyperedgeStats::unsplit`].

use crate::faults::extract::Extracted;
use crate::faults::graph::{HyperedgeStats, Split};
use crate::faults::intern::FxMap;

/// Largest number of atoms whose groupings are enumerated (Bell number 203 at 6).
pub const MAX_ATOMS: usize = 6;
/// Largest number of detectors covered by the detector search.
pub const MAX_SEARCH: usize = 8;

/// Existing matchable edges: detector set → (observables, edge index) of each.
type Index = FxMap<Vec<u32>, Vec<(Vec<u32>, u32)>>;

/// Fills in the splits of every hyperedge of the extracted graph.
pub(crate) fn split_hyperedges(ex: &mut Extracted) {
    let graph = &ex.graph;
    let mut old_of = vec![0u32; ex.rank.len()];
    for (old, &r) in ex.rank.iter().enumerate() {
        old_of[r as usize] = old as u32;
    }
    // An atom is a matchable part iff its whole symptom (detectors and observables) is that of
    // a edge with one or two detectors: one lookup in the extractor's symptom table.
    let lookup = |sym: &[u32]| -> Option<u32> {
        let r = ex.rank[ex.symptoms.find(sym)? as usize];
        (1..=2)
            .contains(&graph.edges[r as usize].detectors.len())
            .then_some(r)
    };
    // Only built if some hyperedge needs the detector search.
    let mut index: Option<Index> = None;
    let mut stats = HyperedgeStats::default();
    let mut out = Vec::new();
    for (k, m) in graph.edges.iter().enumerate() {
        if m.detectors.len() <= 2 {
            continue;
        }
        stats.hyperedges += 1;
        let by_atoms = ex
            .candidates(old_of[k])
            .filter(|c| c.len as usize <= MAX_ATOMS)
            .find_map(|c| {
                let mut atoms: [&[u32]; MAX_ATOMS] = [&[]; MAX_ATOMS];
                for (slot, a) in atoms.iter_mut().zip(c.first..c.first + c.len) {
                    *slot = ex.atoms.atom(a);
                }
                split_by_atoms(&atoms[..c.len as usize], &lookup)
            });
        let parts = by_atoms.or_else(|| {
            if m.detectors.len() > MAX_SEARCH {
                return None;
            }
            let index = index.get_or_insert_with(|| {
                let mut ix = Index::default();
                for (r, m) in graph.edges.iter().enumerate() {
                    if (1..=2).contains(&m.detectors.len()) {
                        ix.entry(m.detectors.clone())
                            .or_default()
                            .push((m.observables.clone(), r as u32));
                    }
                }
                ix
            });
            split_by_detectors(&m.detectors, &m.observables, index)
        });
        match parts {
            Some(parts) => {
                stats.split += 1;
                out.push(Split {
                    edge: k as u32,
                    parts,
                });
            }
            None => stats.unsplit.push(k as u32),
        }
    }
    ex.graph.splits = out;
    ex.graph.hyperedges = stats;
}

fn xor(a: &[u32], b: &[u32]) -> Vec<u32> {
    crate::base::xor_sets(a, b)
}

/// Finest grouping of the atoms whose blocks are all matchable edges (as found by
/// `lookup`, which maps a whole symptom to a edge index); returns the parts' indices.
fn split_by_atoms(atoms: &[&[u32]], lookup: &dyn Fn(&[u32]) -> Option<u32>) -> Option<Vec<u32>> {
    let n = atoms.len();
    if n < 2 {
        return None;
    }
    // The finest grouping (every atom alone) is the usual answer; try it before enumerating.
    let singles: Option<Vec<u32>> = atoms.iter().map(|s| lookup(s)).collect();
    if singles.is_some() {
        return singles;
    }
    let mut best: Option<Vec<u32>> = None;
    // Restricted growth strings enumerate each set partition once.
    let mut rgs = vec![0usize; n];
    loop {
        let blocks = rgs.iter().copied().max().map_or(0, |m| m + 1);
        if best.as_ref().is_none_or(|b| blocks > b.len()) {
            let mut sym = vec![Vec::new(); blocks];
            for (i, &b) in rgs.iter().enumerate() {
                sym[b] = xor(&sym[b], atoms[i]);
            }
            let parts: Option<Vec<u32>> = sym
                .iter()
                .filter(|s| !s.is_empty())
                .map(|s| lookup(s))
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

/// Covers `dets` exactly by existing one- and two-detector edges whose observables XOR to
/// `obs`; returns the edges' indices. The lowest uncovered detector is always covered
/// next, so each cover is tried once.
fn split_by_detectors(dets: &[u32], obs: &[u32], index: &Index) -> Option<Vec<u32>> {
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
        for (o, r) in obs_sets {
            if let Some(mut parts) = split_by_detectors(&remaining, &xor(obs, o), index) {
                parts.insert(0, *r);
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
        for (r, (d, o)) in entries.iter().enumerate() {
            ix.entry(d.to_vec())
                .or_default()
                .push((o.to_vec(), r as u32));
        }
        ix
    }

    #[test]
    fn y_splits_into_x_and_z_parts() {
        // Detectors 0..4, observable id 4 (observable 0). X part flips {0,1}+obs, Z part {2,3}.
        let known: Vec<Vec<u32>> = vec![vec![0, 1, 4], vec![2, 3]];
        let lookup = |s: &[u32]| known.iter().position(|k| k == s).map(|i| i as u32);
        let atoms: [&[u32]; 2] = [&[0, 1, 4], &[2, 3]];
        assert_eq!(split_by_atoms(&atoms, &lookup), Some(vec![0, 1]));
        // With the observable on the wrong part, the split does not exist.
        let known2: Vec<Vec<u32>> = vec![vec![0, 1], vec![2, 3, 4]];
        let lookup2 = |s: &[u32]| known2.iter().position(|k| k == s).map(|i| i as u32);
        assert!(split_by_atoms(&atoms, &lookup2).is_none());
    }

    #[test]
    fn coarser_grouping_when_atoms_alone_do_not_exist() {
        // Atoms {0},{1},{2,3}: {0} and {1} are not edges, but {0,1} is.
        let known: Vec<Vec<u32>> = vec![vec![0, 1], vec![2, 3]];
        let lookup = |s: &[u32]| known.iter().position(|k| k == s).map(|i| i as u32);
        let atoms: [&[u32]; 3] = [&[0], &[1], &[2, 3]];
        assert_eq!(split_by_atoms(&atoms, &lookup), Some(vec![0, 1]));
    }

    #[test]
    fn detector_cover_tracks_observables() {
        let ix = index(&[(&[0], &[]), (&[1, 2], &[0]), (&[0, 1], &[]), (&[2], &[])]);
        // Entry 0 is {0} without observables, entry 1 is {1, 2} with observable 0.
        let parts = split_by_detectors(&[0, 1, 2], &[0], &ix).unwrap();
        assert_eq!(parts, vec![0, 1]);
        assert!(split_by_detectors(&[0, 1, 2, 3], &[], &ix).is_none());
    }
}
