//! The front half of every command: text → parse → expand → check → [`Circuit`].

use std::sync::Arc;

use crate::base::{Diagnostic, Source};
use crate::ir::expand::{expand, Limits};
use crate::ir::Circuit;

/// Parses, expands and checks a source with parameter overrides, under the default size limit.
///
/// ```
/// let src = slant::base::Source::new("bell.slant", "qubit a\nqubit b\nh a\ncx a b\n\
///     measure z a -> ma\nmeasure z b -> mb\ndetector = ma ^ mb\n");
/// let circuit = slant::ir::load_source(&src, &[]).unwrap();
/// assert_eq!(circuit.detectors.len(), 1);
/// ```
pub fn load_source(
    source: &Arc<Source>,
    overrides: &[(String, i64)],
) -> Result<Circuit, Vec<Diagnostic>> {
    load_source_with(source, overrides, &Limits::default())
}

/// [`load_source`] with explicit expansion limits.
pub fn load_source_with(
    source: &Arc<Source>,
    overrides: &[(String, i64)],
    limits: &Limits,
) -> Result<Circuit, Vec<Diagnostic>> {
    let ast = crate::lang::parse(source)?;
    let circuit = expand(&ast, overrides, limits)?;
    crate::ir::check::check_within(&circuit, limits)?;
    Ok(circuit)
}
