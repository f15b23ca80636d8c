//! Reading bytes into a [`Source`]: text must be UTF-8, and a file that is not gets a diagnostic
//! at its first bad byte.

use std::sync::Arc;

use crate::base::{Diagnostic, Source, Span, BOM};

/// Builds a [`Source`] from raw bytes, rejecting bytes that are not UTF-8 with the location of the
/// first bad byte.
pub fn source_from_bytes(name: String, bytes: Vec<u8>) -> Result<Arc<Source>, Diagnostic> {
    match String::from_utf8(bytes) {
        Ok(text) => Ok(Source::new(name, text)),
        Err(e) => {
            // `Source::new` drops a byte-order mark, which moves every offset back by its length.
            let bom = e.as_bytes().starts_with(BOM.to_string().as_bytes());
            let at = e.utf8_error().valid_up_to() - if bom { BOM.len_utf8() } else { 0 };
            let lossy = String::from_utf8_lossy(e.as_bytes()).into_owned();
            // Offsets shift in the lossy text only after the bad byte, so `at` is still right.
            let src = Source::new(name, lossy);
            Err(
                Diagnostic::error(&src, Span::new(at, at + 1), "the file is not valid UTF-8")
                    .with_hint(
                        "slant reads UTF-8 text; convert the file, e.g. with `iconv -t UTF-8`",
                    ),
            )
        }
    }
}
