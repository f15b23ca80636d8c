//! NumPy `.npy` (format version 1.0) headers for two-dimensional `uint8` arrays.
//!
//! Layout (NumPy's "format.py" documentation, version 1.0): the magic `\x93NUMPY`, the version
//! bytes `1 0`, a little-endian `u16` header length, then an ASCII Python dict literal padded
//! with spaces and ended by `\n` so that the data starts at a multiple of 64 bytes. The data
//! follow in C order (row-major), one byte per element.

/// The header of a C-order `uint8` array of shape `(rows, cols)`.
pub fn header(rows: u64, cols: u64) -> Vec<u8> {
    let dict = format!("{{'descr': '|u1', 'fortran_order': False, 'shape': ({rows}, {cols}), }}");
    let unpadded = 10 + dict.len() + 1;
    let total = unpadded.div_ceil(64) * 64;
    let mut out = Vec::with_capacity(total);
    out.extend_from_slice(b"\x93NUMPY\x01\x00");
    out.extend_from_slice(&((total - 10) as u16).to_le_bytes());
    out.extend_from_slice(dict.as_bytes());
    out.resize(total - 1, b' ');
    out.push(b'\n');
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn header_is_aligned_and_well_formed() {
        let h = header(1000, 24);
        assert_eq!(h.len() % 64, 0);
        assert_eq!(&h[..8], b"\x93NUMPY\x01\x00");
        let len = u16::from_le_bytes([h[8], h[9]]) as usize;
        assert_eq!(len + 10, h.len());
        let text = std::str::from_utf8(&h[10..]).unwrap();
        assert!(text.starts_with("{'descr': '|u1', 'fortran_order': False, 'shape': (1000, 24), }"));
        assert!(text.ends_with('\n'));
    }
}
