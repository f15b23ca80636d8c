//! Names: references such as `q[0..3, 1]` expanded to the display names they denote, and
//! resolved to qubits and measurement results.

use std::fmt::Write as _;

use crate::base::{did_you_mean, Diagnostic};
use crate::ir::expand::{Expander, R};
use crate::lang::{Index, Ref};

impl Expander {
    // ---- names ------------------------------------------------------------------------------

    /// Calls `f` with the display name of every item a reference names, ranges in row-major
    /// order. The names are written one at a time into a single buffer: a reference to a
    /// million qubits costs no million strings.
    pub(super) fn each_name(&self, r: &Ref, mut f: impl FnMut(&str) -> R<()>) -> R<()> {
        // (first value, number of values) of each index position.
        let mut dims: Vec<(i64, u64)> = Vec::with_capacity(r.index.len());
        let mut total: u64 = 1;
        for ix in &r.index {
            let dim = match ix {
                Index::Single(e) => (self.int(e)?, 1),
                Index::Range(a, b) => {
                    let (a, b) = (self.int(a)?, self.int(b)?);
                    let len = (i128::from(b) - i128::from(a)).max(0) as u64;
                    if len > self.max_items {
                        return Err(self.err(
                            r.span,
                            format!("range `{a}..{b}` is larger than the size limit"),
                        ));
                    }
                    (a, len)
                }
            };
            total = total.saturating_mul(dim.1);
            dims.push(dim);
        }
        if total > self.max_items {
            return Err(self.err(
                r.span,
                format!(
                    "`{}` names {total} items, more than the size limit",
                    r.name.name
                ),
            ));
        }
        let base = &r.name.name;
        if dims.is_empty() {
            return f(base);
        }
        if total == 0 {
            return Ok(());
        }
        let mut offsets = vec![0u64; dims.len()];
        let mut buf = String::with_capacity(base.len() + 12 * dims.len());
        loop {
            buf.clear();
            buf.push_str(base);
            buf.push('[');
            for (k, (&(start, _), &off)) in dims.iter().zip(&offsets).enumerate() {
                if k > 0 {
                    buf.push(',');
                }
                // `off < len <= end - start`, so the sum is a value of the range.
                let _ = write!(buf, "{}", start.wrapping_add(off as i64));
            }
            buf.push(']');
            f(&buf)?;
            // Advance the last index position first (row-major order).
            let mut k = dims.len();
            loop {
                if k == 0 {
                    return Ok(());
                }
                k -= 1;
                offsets[k] += 1;
                if offsets[k] < dims[k].1 {
                    break;
                }
                offsets[k] = 0;
            }
        }
    }

    /// The display names of every item a reference names, ranges in row-major order.
    pub(super) fn names(&self, r: &Ref) -> R<Vec<String>> {
        let mut out = Vec::new();
        self.each_name(r, |n| {
            out.push(n.to_string());
            Ok(())
        })?;
        Ok(out)
    }

    /// How many results a parity names, repeats included.
    pub(super) fn term_count(&self, parity: &[Ref]) -> u64 {
        parity
            .iter()
            .fold(0u64, |n, r| n.saturating_add(self.name_count(r)))
    }

    /// How many names a reference expands to, without expanding it (0 if an index cannot be
    /// evaluated: expansion reports that).
    pub(super) fn name_count(&self, r: &Ref) -> u64 {
        let mut n: u64 = 1;
        for ix in &r.index {
            if let Index::Range(a, b) = ix {
                let (Some(a), Some(b)) = (self.int_value(a), self.int_value(b)) else {
                    return 0;
                };
                n = n.saturating_mul((i128::from(b) - i128::from(a)).max(0) as u64);
            }
        }
        n
    }

    pub(super) fn single_name(&self, r: &Ref, what: &str) -> R<String> {
        let mut names = self.names(r)?;
        if names.len() != 1 {
            return Err(self.err(
                r.span,
                format!("{what} must name exactly one item, not a range"),
            ));
        }
        Ok(names.pop().unwrap_or_default())
    }

    pub(super) fn qubits_of(&self, r: &Ref) -> R<Vec<u32>> {
        let mut out = Vec::new();
        self.each_name(r, |n| match self.qubit_ids.get(n) {
            Some(&q) => {
                out.push(q);
                Ok(())
            }
            None => Err(self.undefined_qubit(r, n)),
        })?;
        Ok(out)
    }

    pub(super) fn undefined_qubit(&self, r: &Ref, name: &str) -> Diagnostic {
        if let Some(ids) = self.qubit_bases.get(&r.name.name) {
            let first = &self.qubits[ids[0] as usize].name;
            let last = &self.qubits[ids[ids.len() - 1] as usize].name;
            let span = r.index.first().map_or(r.span, |_| r.span);
            return self
                .err(
                    span,
                    format!("index out of range: qubit `{name}` is not declared"),
                )
                .with_hint(format!(
                    "`{}` has {} declared qubits, `{first}` .. `{last}`",
                    r.name.name,
                    ids.len()
                ));
        }
        let mut d = self.err(r.name.span, format!("undefined qubit `{}`", r.name.name));
        if let Some(s) = did_you_mean(&r.name.name, self.qubit_bases.keys().map(String::as_str)) {
            d = d.with_hint(format!("did you mean `{s}`?"));
        } else {
            d = d.with_hint("declare it first, e.g. `qubit q`");
        }
        d
    }

    pub(super) fn records_of(&mut self, r: &Ref) -> R<Vec<Option<u32>>> {
        let mut out = Vec::new();
        let mut pending = Vec::new();
        self.each_name(r, |n| {
            let id = self.record_ids.get(n).copied();
            if id.is_none() {
                pending.push((n.to_string(), r.span));
            }
            out.push(id);
            Ok(())
        })?;
        self.pending.extend(pending);
        Ok(out)
    }
}
