//! The circuit language: source text in, [`Ast`] or located [`Diagnostic`]s out.
//!
//! The grammar is in `grammar/slant.ebnf`; the guided tour in `grammar/reference.md`.

mod ast;
mod parser;
mod print;

use std::sync::Arc;

use crate::base::{Diagnostic, Source};

pub use ast::{
    Ast, BinOp, Expr, ExprKind, Ident, Index, NoiseTargets, Outcome, Ref, Stmt, StmtKind,
};
pub use print::print;

/// Parses a whole file. On failure returns every independent error found (at most a few dozen).
pub fn parse(source: &Arc<Source>) -> Result<Ast, Vec<Diagnostic>> {
    parser::parse(source)
}
