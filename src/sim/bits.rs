//! Bit-table helpers: turning the sampler's item-major bit-packed tables into shot-major rows.
//!
//! The sampler stores each item (detector, observable, record) as a run of words over the shots
//! of a batch, which is what the word-level loops want. Files want one row per shot. The
//! conversion walks the set bits only, so sparse detection events cost little.

/// Appends one row per shot of a batch to `out`.
///
/// `table` holds `items` runs of `words` words (bit `s % 64` of word `s / 64` is shot `s`).
/// Unpacked rows are `items` bytes of 0 or 1. Packed rows are `items.div_ceil(8)` bytes with item
/// `k` at bit `k % 8` of byte `k / 8` (little-endian bit order, as numpy's
/// `unpackbits(..., bitorder='little')` reads it).
pub fn append_shot_rows(
    table: &[u64],
    items: usize,
    words: usize,
    shots: usize,
    packed: bool,
    out: &mut Vec<u8>,
) {
    let row = row_bytes(items, packed);
    let base = out.len();
    out.resize(base + row * shots, 0);
    let rows = &mut out[base..];
    for item in 0..items {
        for (wi, &word) in table[item * words..(item + 1) * words].iter().enumerate() {
            let mut bits = word;
            while bits != 0 {
                let s = wi * 64 + bits.trailing_zeros() as usize;
                bits &= bits - 1;
                if s >= shots {
                    break;
                }
                if packed {
                    rows[s * row + item / 8] |= 1 << (item % 8);
                } else {
                    rows[s * row + item] = 1;
                }
            }
        }
    }
}

/// Bytes per shot row for `items` items.
pub fn row_bytes(items: usize, packed: bool) -> usize {
    if packed {
        items.div_ceil(8)
    } else {
        items
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rows_unpacked_and_packed() {
        // 3 items, 70 shots (2 words): item 0 fires in shot 0, item 2 in shots 1 and 69.
        let table = vec![1, 0, 0, 0, 2, 1 << 5];
        let mut out = Vec::new();
        append_shot_rows(&table, 3, 2, 70, false, &mut out);
        assert_eq!(out.len(), 210);
        assert_eq!(&out[0..6], &[1, 0, 0, 0, 0, 1]);
        assert_eq!(&out[207..210], &[0, 0, 1]);
        let mut packed = Vec::new();
        append_shot_rows(&table, 3, 2, 70, true, &mut packed);
        assert_eq!(packed.len(), 70);
        assert_eq!(packed[0], 0b001);
        assert_eq!(packed[1], 0b100);
        assert_eq!(packed[69], 0b100);
    }
}
