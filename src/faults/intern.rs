//! Symptom interning: every distinct symptom (a sorted list of detector and observable ids)
//! stored once in a flat arena and numbered, found again through a table placed for cache
//! locality in the order the backward sweep produces symptoms.

use std::collections::HashMap;
use std::hash::{BuildHasherDefault, Hasher};

/// FxHash (the rustc hasher): symptoms are short lists of small integers, where SipHash's
/// DoS resistance buys nothing and costs most of the lookup time.
///
/// Not `rustc-hash`'s `FxHasher`: the interner takes a slot from the low bits of the hash and a
/// 32-bit tag from the high bits, and both need the full avalanche of the murmur3 finisher below,
/// which that hasher does not apply.
#[derive(Default)]
pub(crate) struct FxHasher(u64);

impl Hasher for FxHasher {
    fn write(&mut self, bytes: &[u8]) {
        let mut chunks = bytes.chunks_exact(8);
        for c in &mut chunks {
            self.write_u64(u64::from_le_bytes(c.try_into().expect("8 bytes")));
        }
        for &b in chunks.remainder() {
            self.write_u64(u64::from(b));
        }
    }
    fn write_u32(&mut self, v: u32) {
        self.write_u64(u64::from(v));
    }
    fn write_usize(&mut self, v: usize) {
        self.write_u64(v as u64);
    }
    fn write_u64(&mut self, v: u64) {
        self.0 = (self.0.rotate_left(5) ^ v).wrapping_mul(0x51_7c_c1_b7_27_22_0a_95);
    }
    fn finish(&self) -> u64 {
        // The multiply leaves the low bits poorly mixed, and hashbrown picks buckets by the low
        // bits: finish with the murmur3 64-bit mixer so structured keys do not collide.
        let mut x = self.0;
        x ^= x >> 33;
        x = x.wrapping_mul(0xff51_afd7_ed55_8ccd);
        x ^= x >> 33;
        x = x.wrapping_mul(0xc4ce_b9fe_1a85_ec53);
        x ^ (x >> 33)
    }
}

pub(crate) type FxMap<K, V> = HashMap<K, V, BuildHasherDefault<FxHasher>>;

/// 64-bit hash of a symptom.
fn hash_ids(ids: &[u32]) -> u64 {
    let mut h = FxHasher(ids.len() as u64);
    for &x in ids {
        h.write_u32(x);
    }
    h.finish()
}

/// Symptoms stored once each in a flat arena, found through an open-addressing table of ids.
///
/// The table is placed by *first id* rather than by hash alone: detectors are numbered in time
/// order and the backward sweep produces symptoms whose first detector drifts slowly down, so
/// lookups made close together in the sweep touch neighbouring slots and neighbouring arena
/// entries. A plain hash table scatters them over the whole graph, and at a million faults every
/// lookup then misses the cache. A 32-bit tag per slot (more hash bits) keeps mismatches from
/// touching the arena; the arena is compared before any match is accepted, so a collision costs a
/// probe, never a wrong merge. Should the ids cluster badly (say every symptom shares its first
/// detector), the long probes are noticed and the table is rebuilt with plain hash placement.
pub(crate) struct Interner {
    ids: Vec<u32>,
    /// `ids[start[k]..start[k + 1]]` is symptom `k`.
    start: Vec<u32>,
    /// Symptom id + 1 in each slot (0 = empty); length a power of two, at most half full.
    slots: Vec<u32>,
    /// High hash bits of the symptom in each occupied slot.
    tags: Vec<u32>,
    /// Ids are below this (detectors + observables): scales first ids to table positions.
    universe: u64,
    /// Place by first id (true) or by hash (after clustering was detected).
    local: bool,
    /// Probe steps and lookups so far, to detect clustering.
    steps: u64,
    lookups: u64,
}

/// Mean probe length (slots past a symptom's home) above which placement by first id counts as
/// degenerate.
const MAX_MEAN_PROBE: u64 = 8;

impl Interner {
    /// An empty interner for symptoms whose ids are below `universe`, sized for `expected`.
    pub(crate) fn new(universe: u32, expected: usize) -> Interner {
        // At least two slots per id, so that placement by first id never crowds a region while
        // the table as a whole is still mostly empty.
        let cap = (2 * expected.max(universe as usize).max(8)).next_power_of_two();
        Interner {
            ids: Vec::with_capacity(4 * expected),
            start: {
                let mut v = Vec::with_capacity(expected + 1);
                v.push(0);
                v
            },
            slots: vec![0; cap],
            tags: vec![0; cap],
            universe: u64::from(universe.max(1)),
            local: true,
            steps: 0,
            lookups: 0,
        }
    }

    /// Number of symptoms.
    pub(crate) fn len(&self) -> usize {
        self.start.len() - 1
    }

    /// Symptom `k`.
    pub(crate) fn get(&self, k: u32) -> &[u32] {
        &self.ids[self.start[k as usize] as usize..self.start[k as usize + 1] as usize]
    }

    fn home(&self, sym: &[u32], hash: u64) -> usize {
        let cap = self.slots.len();
        if self.local {
            // Spread each first id's symptoms over its whole region (by hash), so equal first
            // ids do not all start probing at one slot.
            let per_id = (cap as u64 / self.universe).max(16) as usize;
            let region = (u64::from(sym[0]) * cap as u64 / self.universe) as usize;
            (region + (hash as usize & (per_id.next_power_of_two() - 1))) & (cap - 1)
        } else {
            hash as usize & (cap - 1)
        }
    }

    /// The id of `sym`, or the empty slot where it would go, and the probe steps taken.
    fn probe(&self, sym: &[u32], hash: u64) -> (Result<u32, usize>, u64) {
        let mask = self.slots.len() - 1;
        let tag = (hash >> 32) as u32;
        let mut i = self.home(sym, hash);
        let mut steps = 0;
        loop {
            let s = self.slots[i];
            if s == 0 {
                return (Err(i), steps);
            }
            if self.tags[i] == tag && self.get(s - 1) == sym {
                return (Ok(s - 1), steps);
            }
            i = (i + 1) & mask;
            steps += 1;
        }
    }

    /// The id of `sym`, if interned.
    pub(crate) fn find(&self, sym: &[u32]) -> Option<u32> {
        if sym.is_empty() {
            return None;
        }
        self.probe(sym, hash_ids(sym)).0.ok()
    }

    /// The id of `sym` (not empty) and whether it is new.
    pub(crate) fn intern(&mut self, sym: &[u32]) -> (u32, bool) {
        let hash = hash_ids(sym);
        let (found, steps) = self.probe(sym, hash);
        self.steps += steps;
        self.lookups += 1;
        let slot = match found {
            Ok(k) => return (k, false),
            Err(slot) => slot,
        };
        let k = self.len() as u32;
        self.ids.extend_from_slice(sym);
        self.start.push(self.ids.len() as u32);
        self.slots[slot] = k + 1;
        self.tags[slot] = (hash >> 32) as u32;
        let full = 2 * self.len() > self.slots.len();
        // The constant keeps a few long probes early on from deciding.
        let clustered = self.local && self.steps > MAX_MEAN_PROBE * self.lookups + 4096;
        if clustered {
            self.local = false;
        }
        if full || clustered {
            self.rebuild(if full { 2 } else { 1 });
        }
        (k, true)
    }

    /// Re-places every symptom in a table `factor` times larger.
    pub(crate) fn rebuild(&mut self, factor: usize) {
        let cap = self.slots.len() * factor;
        self.slots = vec![0; cap];
        self.tags = vec![0; cap];
        for k in 0..self.len() as u32 {
            let sym = self.get(k);
            let hash = hash_ids(sym);
            let Err(slot) = self.probe(sym, hash).0 else {
                unreachable!("symptoms are interned once each")
            };
            self.slots[slot] = k + 1;
            self.tags[slot] = (hash >> 32) as u32;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Interns `syms` twice (second pass in reverse) and checks ids are stable and distinct.
    fn check_interning(int: &mut Interner, syms: &[Vec<u32>]) {
        let ids: Vec<u32> = syms
            .iter()
            .map(|s| {
                let (k, new) = int.intern(s);
                assert!(new, "{s:?} interned twice");
                k
            })
            .collect();
        for (s, &k) in syms.iter().zip(&ids).rev() {
            assert_eq!(int.intern(s), (k, false));
            assert_eq!(int.find(s), Some(k));
            assert_eq!(int.get(k), s.as_slice());
        }
        assert_eq!(int.find(&[u32::MAX - 1]), None);
    }

    #[test]
    fn interner_grows_and_survives_clustered_ids() {
        // Spread first ids (the sweep's usual case), starting from a tiny table so it grows.
        let mut int = Interner::new(3000, 4);
        let spread: Vec<Vec<u32>> = (0..6000u32)
            .map(|i| vec![i % 2990, 2990 + i / 2990, 2995 + i % 5])
            .collect();
        check_interning(&mut int, &spread);
        assert!(
            int.local,
            "spread ids should keep placement by first id: {} steps {} lookups",
            int.steps, int.lookups
        );
        // Every symptom shares its first id: placement by first id degenerates into one long
        // probe run, which must be noticed (plain hash placement) without changing any answer.
        let mut int = Interner::new(3000, 4);
        let clustered: Vec<Vec<u32>> = (0..2000u32).map(|i| vec![0, 1 + i]).collect();
        check_interning(&mut int, &clustered);
        assert!(!int.local, "clustered ids should switch to hash placement");
        check_interning(&mut int, &spread);
    }
}
