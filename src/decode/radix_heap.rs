//! The event queue: a radix heap over integer times.
//!
//! Region growth only ever schedules events at or after the current time, so the queue is
//! monotone: every key pushed is at least the last key popped. A radix heap exploits that. Entry
//! `k` lives in bucket `b = bit length of (k XOR last)`; bucket 0 holds the keys equal to
//! `last`. Popping from an empty bucket 0 finds the lowest non-empty bucket, makes its minimum
//! the new `last` and redistributes that bucket into lower ones. Each entry moves down at most
//! 64 times, so push is O(1) and pop is amortised O(log of the time span).
//!
//! Entries with equal keys come out in a fixed order that depends only on the sequence of
//! pushes, so the matcher is deterministic.

/// A monotone min-queue of `(time, item)` pairs.
#[derive(Debug, Default)]
pub(crate) struct RadixHeap {
    buckets: Vec<Vec<(u64, u32)>>,
    /// The last key popped; every key in the heap is at least this.
    last: u64,
    len: usize,
}

impl RadixHeap {
    /// An empty heap.
    pub fn new() -> RadixHeap {
        RadixHeap {
            buckets: (0..65).map(|_| Vec::new()).collect(),
            last: 0,
            len: 0,
        }
    }

    /// Empties the heap and sets the current time back to 0, keeping the allocations.
    pub fn clear(&mut self) {
        if self.len > 0 {
            for b in &mut self.buckets {
                b.clear();
            }
        }
        self.last = 0;
        self.len = 0;
    }

    #[inline]
    fn bucket(&self, key: u64) -> usize {
        (64 - (key ^ self.last).leading_zeros()) as usize
    }

    /// Adds `item` at time `key`, which must not be earlier than the last key popped.
    #[inline]
    pub fn push(&mut self, key: u64, item: u32) {
        debug_assert!(key >= self.last, "radix heap: {key} < {}", self.last);
        let b = self.bucket(key);
        self.buckets[b].push((key, item));
        self.len += 1;
    }

    /// Removes an entry with the smallest key.
    #[inline]
    pub fn pop(&mut self) -> Option<(u64, u32)> {
        if self.buckets[0].is_empty() {
            if self.len == 0 {
                return None;
            }
            let i = (1..65).find(|&i| !self.buckets[i].is_empty())?;
            let mut moved = std::mem::take(&mut self.buckets[i]);
            self.last = moved.iter().map(|&(k, _)| k).min()?;
            for &(k, item) in &moved {
                let b = self.bucket(k);
                self.buckets[b].push((k, item));
            }
            moved.clear();
            self.buckets[i] = moved;
        }
        self.len -= 1;
        self.buckets[0].pop()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::{Rng, SeedableRng};
    use rand_xoshiro::Xoshiro256PlusPlus;

    /// Against a sorted reference: interleaved pushes (never below the current minimum) and
    /// pops return keys in non-decreasing order and lose nothing.
    #[test]
    fn pops_in_key_order() {
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(3);
        let mut h = RadixHeap::new();
        let mut reference: Vec<u64> = Vec::new();
        let mut now = 0u64;
        for step in 0..20_000u32 {
            if rng.gen_bool(0.55) {
                let k = now + [0, 1, 2, 1000, 1 << 40][rng.gen_range(0..5)];
                h.push(k, step);
                reference.push(k);
            } else if let Some((k, _)) = h.pop() {
                reference.sort_unstable_by(|a, b| b.cmp(a));
                assert_eq!(Some(k), reference.pop());
                assert!(k >= now);
                now = k;
            } else {
                assert!(reference.is_empty());
            }
        }
        h.clear();
        assert_eq!(h.pop(), None);
        h.push(5, 1);
        assert_eq!(h.pop(), Some((5, 1)));
    }
}
