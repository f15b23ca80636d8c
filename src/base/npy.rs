//! The NumPy `.npy` format, version 1.0: the one writer behind every `.npy` file slant writes.
//!
//! Layout (NumPy Enhancement Proposal 1, "A simple file format for NumPy arrays", and NumPy's
//! `format.py` documentation): the magic `\x93NUMPY`, the version bytes `1 0`, a little-endian
//! `u16` header length, then an ASCII Python dict literal padded with spaces and ended by `\n` so
//! that the data start at a multiple of 64 bytes. The data follow in C order (row-major).

/// The header of a C-order array of dtype `descr` (e.g. `<f8`, `|u1`) and the given shape.
pub fn npy_header(descr: &str, shape: &[u64]) -> Vec<u8> {
    let dims = match shape {
        [n] => format!("{n},"),
        _ => shape
            .iter()
            .map(u64::to_string)
            .collect::<Vec<_>>()
            .join(", "),
    };
    let dict = format!("{{'descr': '{descr}', 'fortran_order': False, 'shape': ({dims}), }}");
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

/// A whole `.npy` file holding `values` as dtype `<f8` and shape `(len,)`.
pub fn npy_f64_vector(values: &[f64]) -> Vec<u8> {
    let mut out = npy_header("<f8", &[values.len() as u64]);
    out.reserve(8 * values.len());
    for v in values {
        out.extend_from_slice(&v.to_le_bytes());
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn header_is_aligned_and_well_formed() {
        let h = npy_header("|u1", &[1000, 24]);
        assert_eq!(h.len() % 64, 0);
        assert_eq!(&h[..8], b"\x93NUMPY\x01\x00");
        let len = u16::from_le_bytes([h[8], h[9]]) as usize;
        assert_eq!(len + 10, h.len());
        let text = std::str::from_utf8(&h[10..]).unwrap();
        assert!(text.starts_with("{'descr': '|u1', 'fortran_order': False, 'shape': (1000, 24), }"));
        assert!(text.ends_with('\n'));
    }

    #[test]
    fn vector_file_holds_the_values() {
        let b = npy_f64_vector(&[0.5, 0.25]);
        assert_eq!(&b[..8], b"\x93NUMPY\x01\x00");
        let hl = u16::from_le_bytes([b[8], b[9]]) as usize;
        assert_eq!((10 + hl) % 64, 0);
        assert_eq!(b.len(), 10 + hl + 16);
        let text = std::str::from_utf8(&b[10..10 + hl]).unwrap();
        // A one-dimensional shape is written as a Python 1-tuple.
        assert!(text.contains("'shape': (2,)"), "{text}");
        assert_eq!(
            f64::from_le_bytes(b[10 + hl..18 + hl].try_into().unwrap()),
            0.5
        );
    }
}
