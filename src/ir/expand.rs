//! Expansion (in progress).
use crate::ir::Circuit;
use crate::lang::{Ast, Diagnostic, Span};

/// Size limits for expansion.
#[derive(Clone, Debug)]
pub struct Limits {
    /// Maximum number of expanded items.
    pub max_items: u64,
}

impl Default for Limits {
    fn default() -> Self {
        Limits {
            max_items: 20_000_000,
        }
    }
}

/// Expands an AST.
pub fn expand(
    ast: &Ast,
    _overrides: &[(String, i64)],
    _limits: &Limits,
) -> Result<Circuit, Vec<Diagnostic>> {
    Err(vec![Diagnostic::error(
        &ast.source,
        Span::new(0, 0),
        "expander not built yet",
    )])
}
