//! Parser (in progress).
use std::sync::Arc;

use crate::lang::{Ast, Diagnostic, Source, Span};

pub(crate) fn parse(source: &Arc<Source>) -> Result<Ast, Vec<Diagnostic>> {
    Err(vec![Diagnostic::error(
        source,
        Span::new(0, 0),
        "parser not built yet",
    )])
}
