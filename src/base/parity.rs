//! Sets of ids with parity: a parity of results, a symptom, a shot's detection events. An id
//! listed twice cancels, so a set is the ids occurring an odd number of times, kept sorted.

/// The ids occurring an odd number of times in `ids`, sorted.
pub fn odd_parity(mut ids: Vec<u32>) -> Vec<u32> {
    odd_parity_in_place(&mut ids);
    ids
}

/// Keeps the ids occurring an odd number of times, sorted, in the vector's own buffer.
pub fn odd_parity_in_place(ids: &mut Vec<u32>) {
    ids.sort_unstable();
    let mut kept = 0;
    let mut i = 0;
    while i < ids.len() {
        let mut j = i;
        while j < ids.len() && ids[j] == ids[i] {
            j += 1;
        }
        if (j - i) % 2 == 1 {
            ids[kept] = ids[i];
            kept += 1;
        }
        i = j;
    }
    ids.truncate(kept);
}

/// XOR of two sorted sets.
pub fn xor_sets(a: &[u32], b: &[u32]) -> Vec<u32> {
    let mut out = Vec::with_capacity(a.len() + b.len());
    xor_into(a, b, &mut out);
    out
}

/// XOR of two sorted sets into `out` (cleared first), so a caller can reuse one buffer and
/// allocate nothing in steady state.
pub fn xor_into(a: &[u32], b: &[u32], out: &mut Vec<u32>) {
    out.clear();
    let (mut i, mut j) = (0, 0);
    while i < a.len() && j < b.len() {
        let (x, y) = (a[i], b[j]);
        if x < y {
            out.push(x);
            i += 1;
        } else if y < x {
            out.push(y);
            j += 1;
        } else {
            i += 1;
            j += 1;
        }
    }
    out.extend_from_slice(&a[i..]);
    out.extend_from_slice(&b[j..]);
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn odd_parity_keeps_odd_counts() {
        assert_eq!(odd_parity(vec![3, 1, 3, 2, 3, 1]), vec![2, 3]);
        assert_eq!(odd_parity(vec![]), Vec::<u32>::new());
        assert_eq!(odd_parity(vec![5, 5]), Vec::<u32>::new());
    }

    #[test]
    fn xor_of_sorted_sets() {
        assert_eq!(xor_sets(&[1, 3, 5], &[2, 3, 6]), vec![1, 2, 5, 6]);
        assert_eq!(xor_sets(&[], &[4]), vec![4]);
        assert_eq!(xor_sets(&[4], &[4]), Vec::<u32>::new());
        // XOR agrees with the parity of the concatenation.
        assert_eq!(
            xor_sets(&[1, 3, 5], &[2, 3, 6]),
            odd_parity(vec![1, 3, 5, 2, 3, 6])
        );
    }
}
