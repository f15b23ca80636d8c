//! Source files and byte spans.
//!
//! A [`Span`] is a byte range into one [`Source`]. Spans are plain `Copy` data so that every AST
//! node and every IR operation can keep one without borrowing the text; line and column are
//! computed only when a diagnostic is rendered.

use std::sync::Arc;

/// A byte range `[start, end)` in a source file.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct Span {
    /// First byte.
    pub start: u32,
    /// One past the last byte.
    pub end: u32,
}

impl Span {
    /// Builds a span from byte offsets.
    pub fn new(start: usize, end: usize) -> Span {
        Span {
            start: start as u32,
            end: end.max(start) as u32,
        }
    }

    /// The smallest span covering both.
    pub fn join(self, other: Span) -> Span {
        Span {
            start: self.start.min(other.start),
            end: self.end.max(other.end),
        }
    }
}

/// The UTF-8 byte-order mark, which some editors write at the start of a file.
pub const BOM: char = '\u{feff}';

/// A named text, shared by the AST, the IR and diagnostics.
#[derive(Debug, PartialEq, Eq)]
pub struct Source {
    /// Path as given by the user (`-` for standard input).
    pub name: String,
    /// Full text, without a leading byte-order mark.
    pub text: String,
    line_starts: Vec<u32>,
    bom: bool,
}

impl Source {
    /// Wraps a text under a display name. A leading byte-order mark is dropped (and remembered,
    /// see [`Source::had_bom`]): it says nothing about the circuit, and dropping it keeps byte
    /// offsets, lines and columns those of the text an editor shows.
    pub fn new(name: impl Into<String>, text: impl Into<String>) -> Arc<Source> {
        let mut text = text.into();
        let bom = text.starts_with(BOM);
        if bom {
            text.drain(..BOM.len_utf8());
        }
        let mut line_starts = vec![0];
        for (i, b) in text.bytes().enumerate() {
            if b == b'\n' {
                line_starts.push(i as u32 + 1);
            }
        }
        Arc::new(Source {
            name: name.into(),
            text,
            line_starts,
            bom,
        })
    }

    /// Whether the text started with a byte-order mark (dropped from [`Source::text`]); `slant
    /// fmt` uses it to treat such a file as not canonical.
    pub fn had_bom(&self) -> bool {
        self.bom
    }

    /// One-based line and column (in characters) of a byte offset.
    pub fn line_col(&self, offset: u32) -> (usize, usize) {
        let offset = offset.min(self.text.len() as u32);
        let line = match self.line_starts.binary_search(&offset) {
            Ok(i) => i,
            Err(i) => i - 1,
        };
        let start = self.line_starts[line] as usize;
        let end = (offset as usize).max(start);
        let col = self
            .text
            .get(start..end)
            .map_or(end - start, |s| s.chars().count());
        (line + 1, col + 1)
    }

    /// The text of a one-based line, without its newline.
    pub fn line_text(&self, line: usize) -> &str {
        let start = self.line_starts[line - 1] as usize;
        let end = self
            .line_starts
            .get(line)
            .map_or(self.text.len(), |&e| e as usize);
        self.text[start..end].trim_end_matches(['\n', '\r'])
    }

    /// The text a span covers.
    pub fn slice(&self, span: Span) -> &str {
        self.text
            .get(span.start as usize..span.end as usize)
            .unwrap_or("")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn line_and_column() {
        let s = Source::new("t", "ab\ncd\n\nxyz");
        assert_eq!(s.line_col(0), (1, 1));
        assert_eq!(s.line_col(4), (2, 2));
        assert_eq!(s.line_col(7), (4, 1));
        assert_eq!(s.line_text(2), "cd");
        assert_eq!(s.line_text(4), "xyz");
    }

    #[test]
    fn byte_order_mark_is_dropped() {
        let s = Source::new("t", "\u{feff}ab\ncd");
        assert!(s.had_bom());
        assert_eq!(s.text, "ab\ncd");
        assert_eq!(s.line_col(3), (2, 1));
        assert!(!Source::new("t", "ab").had_bom());
    }
}
