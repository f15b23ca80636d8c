//! The NumPy `.npy` format: the one writer behind every `.npy` file slant writes (version 1.0)
//! and the one header reader behind every `.npy` file it reads (versions 1.0, 2.0 and 3.0).
//!
//! Layout (NumPy Enhancement Proposal 1, "A simple file format for NumPy arrays", and NumPy's
//! `format.py` documentation): the magic `\x93NUMPY`, the version bytes `1 0`, a little-endian
//! `u16` header length, then an ASCII Python dict literal padded with spaces and ended by `\n` so
//! that the data start at a multiple of 64 bytes. The data follow in C order (row-major).
//! Versions 2.0 and 3.0 differ only in a `u32` header length (3.0: the dict may be UTF-8).

use std::io::Read;

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

/// The header of a `.npy` file as read back: what the dict says and where the data start.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct NpyHeader {
    /// The dtype string, e.g. `|u1` or `<f8`.
    pub descr: String,
    /// Whether the data are in Fortran (column-major) order.
    pub fortran_order: bool,
    /// The shape; empty for a scalar.
    pub shape: Vec<u64>,
    /// Bytes before the data (magic, version, length and dict).
    pub data_offset: u64,
}

/// Reads the header of a `.npy` file from `r`, leaving `r` at the first data byte. The error
/// says what is wrong, without the file's name (the caller adds it).
pub fn read_npy_header(r: &mut impl Read) -> Result<NpyHeader, String> {
    let mut start = [0u8; 8];
    r.read_exact(&mut start).map_err(|_| {
        "is not a NumPy .npy file (it is shorter than the magic string)".to_string()
    })?;
    if &start[..6] != b"\x93NUMPY" {
        return Err(
            "is not a NumPy .npy file (it does not start with the .npy magic string)".into(),
        );
    }
    let (major, minor) = (start[6], start[7]);
    let len_bytes = match major {
        1 => 2,
        2 | 3 => 4,
        _ => {
            return Err(format!(
                "has .npy format version {major}.{minor}; versions 1.0 to 3.0 are read"
            ))
        }
    };
    let mut len = [0u8; 4];
    r.read_exact(&mut len[..len_bytes])
        .map_err(|_| "is truncated inside its .npy header".to_string())?;
    let len = u32::from_le_bytes(len) as usize;
    let mut dict = vec![0u8; len];
    r.read_exact(&mut dict)
        .map_err(|_| "is truncated inside its .npy header".to_string())?;
    let dict =
        std::str::from_utf8(&dict).map_err(|_| "has a .npy header that is not text".to_string())?;
    let mut header = parse_dict(dict)
        .map_err(|e| format!("has a malformed .npy header ({e}): `{}`", dict.trim_end()))?;
    header.data_offset = (8 + len_bytes + len) as u64;
    Ok(header)
}

/// Parses the header dict: a Python literal with the keys `descr` (a string), `fortran_order`
/// (`True`/`False`) and `shape` (a tuple of integers), in any order.
fn parse_dict(text: &str) -> Result<NpyHeader, String> {
    let body = text
        .trim()
        .strip_prefix('{')
        .and_then(|t| t.strip_suffix('}'))
        .ok_or("not a dict")?;
    let mut rest = body.trim_start();
    let (mut descr, mut fortran, mut shape) = (None, None, None);
    while !rest.is_empty() {
        let (key, after) = quoted(rest).ok_or("expected a quoted key")?;
        let after = after
            .trim_start()
            .strip_prefix(':')
            .ok_or("expected `:` after a key")?;
        let after = after.trim_start();
        rest = match key {
            "descr" => {
                let (v, after) = quoted(after).ok_or("`descr` is not a string")?;
                descr = Some(v.to_string());
                after
            }
            "fortran_order" => {
                if let Some(a) = after.strip_prefix("True") {
                    fortran = Some(true);
                    a
                } else if let Some(a) = after.strip_prefix("False") {
                    fortran = Some(false);
                    a
                } else {
                    return Err("`fortran_order` is not True or False".into());
                }
            }
            "shape" => {
                let inner = after.strip_prefix('(').ok_or("`shape` is not a tuple")?;
                let close = inner.find(')').ok_or("`shape` is not a tuple")?;
                let dims = inner[..close]
                    .split(',')
                    .map(str::trim)
                    .filter(|d| !d.is_empty())
                    .map(|d| d.trim_end_matches('L').parse::<u64>())
                    .collect::<Result<Vec<u64>, _>>()
                    .map_err(|_| "`shape` holds something other than integers")?;
                shape = Some(dims);
                &inner[close + 1..]
            }
            other => return Err(format!("unknown key `{other}`")),
        };
        rest = rest.trim_start();
        rest = rest.strip_prefix(',').unwrap_or(rest).trim_start();
    }
    Ok(NpyHeader {
        descr: descr.ok_or("no `descr`")?,
        fortran_order: fortran.ok_or("no `fortran_order`")?,
        shape: shape.ok_or("no `shape`")?,
        data_offset: 0,
    })
}

/// A string literal in single or double quotes at the start of `s`, and what follows it.
fn quoted(s: &str) -> Option<(&str, &str)> {
    let q = s.chars().next().filter(|&c| c == '\'' || c == '"')?;
    let end = s[1..].find(q)? + 1;
    Some((&s[1..end], &s[end + 1..]))
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

    #[test]
    fn headers_read_back_what_the_writer_wrote() {
        for shape in [vec![1000u64, 24], vec![7], vec![0, 0]] {
            let bytes = npy_header("|u1", &shape);
            let h = read_npy_header(&mut &bytes[..]).unwrap();
            assert_eq!(h.descr, "|u1");
            assert!(!h.fortran_order);
            assert_eq!(h.shape, shape);
            assert_eq!(h.data_offset, bytes.len() as u64);
        }
    }

    /// Headers as NumPy's `format.py` writes them for other arrays (version 2.0 length field,
    /// keys in another order, Fortran order) are read; broken ones are refused with a reason.
    #[test]
    fn other_headers_and_broken_ones() {
        let dict = "{'shape': (3, 2), 'fortran_order': True, 'descr': '<f8'}\n";
        let mut v2 = b"\x93NUMPY\x02\x00".to_vec();
        v2.extend_from_slice(&(dict.len() as u32).to_le_bytes());
        v2.extend_from_slice(dict.as_bytes());
        let h = read_npy_header(&mut &v2[..]).unwrap();
        assert_eq!((h.descr.as_str(), h.fortran_order), ("<f8", true));
        assert_eq!(h.shape, vec![3, 2]);
        assert_eq!(h.data_offset, v2.len() as u64);
        let err = |b: &[u8]| read_npy_header(&mut &b[..]).unwrap_err();
        assert!(err(b"0 1 1\n").contains("not a NumPy .npy file"));
        assert!(err(b"\x93NUMPY\x09\x00").contains("version 9.0"));
        let full = npy_header("|u1", &[4, 4]);
        assert!(err(&full[..30]).contains("truncated"));
        let mut bad = full.clone();
        let at = bad.windows(5).position(|w| w == b"shape").unwrap();
        bad[at..at + 5].copy_from_slice(b"shope");
        assert!(err(&bad).contains("unknown key `shope`"));
    }
}
