//! NumPy `.npy` format 1.0 writer for one-dimensional float64 arrays.
//!
//! Layout (NumPy Enhancement Proposal 1, "A simple file format for NumPy arrays"): the magic
//! `\x93NUMPY`, version bytes `1 0`, a little-endian u16 header length, an ASCII Python dict
//! literal padded with spaces and a newline so the data starts at a multiple of 64 bytes, then
//! the raw little-endian values.

/// Encodes `values` as a `.npy` file of dtype `<f8` and shape `(len,)`.
pub fn f64_vector(values: &[f64]) -> Vec<u8> {
    let dict = format!(
        "{{'descr': '<f8', 'fortran_order': False, 'shape': ({},), }}",
        values.len()
    );
    let unpadded = 10 + dict.len() + 1;
    let pad = (64 - unpadded % 64) % 64;
    let header = format!("{dict}{}\n", " ".repeat(pad));
    let mut out = Vec::with_capacity(10 + header.len() + 8 * values.len());
    out.extend_from_slice(b"\x93NUMPY\x01\x00");
    out.extend_from_slice(&(header.len() as u16).to_le_bytes());
    out.extend_from_slice(header.as_bytes());
    for v in values {
        out.extend_from_slice(&v.to_le_bytes());
    }
    out
}

#[cfg(test)]
mod tests {
    #[test]
    fn header_is_aligned() {
        let b = super::f64_vector(&[0.5, 0.25]);
        assert_eq!(&b[..8], b"\x93NUMPY\x01\x00");
        let hl = u16::from_le_bytes([b[8], b[9]]) as usize;
        assert_eq!((10 + hl) % 64, 0);
        assert_eq!(b.len(), 10 + hl + 16);
        assert_eq!(
            f64::from_le_bytes(b[10 + hl..18 + hl].try_into().unwrap()),
            0.5
        );
    }
}
