//! Expansion: [`Ast`] + parameter overrides → [`Circuit`].
//!
//! Loops are unrolled, parameters and loop variables substituted, names resolved to indices and
//! layers assembled. Structural rules are enforced here because the AST spans are at hand: a
//! layer touches each qubit at most once (noise excepted), names are declared once, results are
//! measured before they are used, probabilities lie in `[0, 1]`.
//!
//! Size bombs: the guard counts *items*, the things the expanded circuit stores, weighted by
//! what they cost (see [`cost`]): qubits, layers, operations and each of their targets,
//! measurement results, detectors and observables and each of their parity terms, coordinates
//! and roles. It also counts *steps* (statements executed, loop iterations, and expression
//! terms evaluated, a few to a step), which cost time but no memory, so that
//! `for i in 0..10^12 {}` is refused too. Both are bounded by [`Limits::max_items`].
//!
//! Before expanding, `Expander::estimate` counts both without building anything. The count is
//! exact, not a guess: a loop whose body's count cannot change with the loop variable (the
//! variable appears in no loop bound, condition or range inside it) is counted once and
//! multiplied by its trip count; a loop whose body depends on the variable only through
//! conditions made of comparisons and remainders (the generated families' guards) is counted
//! one period per stretch between the conditions' turning points (`shape.rs`); any other loop
//! is walked iteration by iteration with the variable set, which costs about as much time per
//! step counted as expanding does, and stops as soon as the limit is passed. A loop whose count depends on no variable outside it is counted
//! once however often an enclosing loop is walked. A circuit past the limit is refused at the
//! loop or statement that passes it, before any memory is spent. The same counts are kept while
//! expanding, as a backstop.
//!
//! Conventions: names of indexed things print as `base[i,j]`; ranges `a..b` are half-open and
//! expand in row-major order; integer `/` and `%` use Euclidean division so negative indices
//! behave predictably.
//!
//! Files: this one holds the expander's state and the final assembly of the [`Circuit`];
//! `eval.rs` evaluates expressions, `names.rs` expands references into names, `layers.rs` builds
//! layers, `lower.rs` executes each statement into the circuit, `budget.rs` is the size
//! budget (costs, the up-front count and the running count) and `shape.rs` finds how a loop
//! body's count moves with the loop variable.

mod budget;
mod eval;
mod layers;
mod lower;
mod names;
mod shape;
#[cfg(test)]
mod tests;

use std::collections::{HashMap, HashSet};
use std::sync::Arc;

use crate::base::{did_you_mean, odd_parity, Diagnostic, Source, Span};
use crate::ir::{Circuit, Detector, Layer, Observable, Qubit, Record};
use crate::lang::{Ast, Stmt};

pub use budget::cost;

/// Items and steps of some part of a circuit.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
struct Tally {
    items: u64,
    steps: u64,
}

impl Tally {
    const STEP: Tally = Tally { items: 0, steps: 1 };

    fn items(items: u64) -> Tally {
        Tally { items, steps: 0 }
    }

    fn plus(self, o: Tally) -> Tally {
        Tally {
            items: self.items.saturating_add(o.items),
            steps: self.steps.saturating_add(o.steps),
        }
    }

    fn times(self, n: u64) -> Tally {
        Tally {
            items: self.items.saturating_mul(n),
            steps: self.steps.saturating_mul(n),
        }
    }

    fn max(self, o: Tally) -> Tally {
        Tally {
            items: self.items.max(o.items),
            steps: self.steps.max(o.steps),
        }
    }
}

/// Size limits for expansion.
#[derive(Clone, Debug)]
pub struct Limits {
    /// Maximum number of expanded items (weighted as in [`cost`]), and of steps.
    pub max_items: u64,
}

impl Default for Limits {
    fn default() -> Self {
        // The budget is 1.4 GB at 70 bytes an item; bench/memory.sh loads and checks circuits
        // of one item kind each just under this limit, and none passes 0.9 of the budget. A
        // distance-25, 25-round surface-code memory is about 6e5 items.
        Limits {
            max_items: 20_000_000,
        }
    }
}

impl Limits {
    /// Bytes of memory each item of the budget stands for. Measured by bench/memory.sh on
    /// circuits of one item kind loaded and checked at the limit: from 9 bytes an item (gates
    /// of many targets in layers) to 64 (measurements in layers); the weights of
    /// [`cost`] were set so that every kind stays under this figure.
    pub const BYTES_PER_ITEM: u64 = 70;

    /// The memory budget: what a study may hold at once (source text, expanded circuit,
    /// tableau, sampler batches), `max_items` × [`Limits::BYTES_PER_ITEM`] (1.4 GB by default).
    /// Whatever would pass it is refused before it is allocated.
    pub fn memory_bytes(&self) -> u64 {
        self.max_items.saturating_mul(Self::BYTES_PER_ITEM)
    }

    /// The largest source file read: half a byte per item of the budget (10 MB by default),
    /// but never less than 256 KiB, so small limits still read ordinary files. The parser's
    /// peak memory grows with the text (a 50 MB file once peaked at 9.6 GB before any limit
    /// applied), so a file past this is refused before it is read whole.
    pub fn max_source_bytes(&self) -> u64 {
        (self.max_items / 2).max(256 << 10)
    }
}

/// Expands an AST with `--set` overrides.
pub fn expand(
    ast: &Ast,
    overrides: &[(String, i64)],
    limits: &Limits,
) -> Result<Circuit, Vec<Diagnostic>> {
    let mut x = Expander::new(ast.source.clone(), overrides, limits.max_items);
    if let Err(d) = x.check_estimate(&ast.stmts) {
        return Err(vec![d]);
    }
    x.block(&ast.stmts);
    x.finish(&ast.stmts)
}

struct OpenLayer {
    layer: Layer,
}

struct Expander {
    src: Arc<Source>,
    overrides: Vec<(String, i64, bool)>,
    params: Vec<(String, i64)>,
    vars: Vec<(String, i64)>,
    qubits: Vec<Qubit>,
    qubit_ids: HashMap<String, u32>,
    qubit_bases: HashMap<String, Vec<u32>>,
    records: Vec<Record>,
    record_ids: HashMap<String, u32>,
    detectors: Vec<Detector>,
    detector_names: HashMap<String, Span>,
    observables: Vec<Observable>,
    observable_ids: HashMap<String, usize>,
    /// Per `for` statement (by address), for the up-front count: whether its body's count
    /// depends on its variable, and the names its count depends on.
    loop_vars: HashMap<usize, (bool, Vec<String>)>,
    /// Up-front counts of `for` statements whose count depends on no loop variable outside
    /// them: each is counted once however often an outer loop is walked.
    loop_counts: HashMap<usize, Tally>,
    layers: Vec<Layer>,
    open: Option<OpenLayer>,
    /// Serial number of the open layer (0: none yet).
    layer_serial: u32,
    /// Per qubit: the serial of the last layer that used it and where, to refuse a second use
    /// in one layer without a table per layer.
    last_use: Vec<(u32, Span)>,
    round: Option<u32>,
    rounds: u32,
    /// Items and steps spent so far.
    used: Tally,
    max_items: u64,
    /// Set once the size limit is passed: nothing more is expanded.
    halted: bool,
    errors: Vec<Diagnostic>,
    /// Results used before being measured: (name, use span). Resolved at the end to tell
    /// "measured later" from "never measured".
    pending: Vec<(String, Span)>,
    /// Base names of results measured by statements that were refused: their uses are not
    /// reported again as undefined.
    refused: HashSet<String>,
    depth_loop: usize,
    /// Loop iterations the up-front count evaluated one at a time (walked, or sampled in a
    /// stretch): what its time grows with.
    evaluated: u64,
}

type R<T> = Result<T, Diagnostic>;

const MAX_ERRORS: usize = 20;

impl Expander {
    fn new(src: Arc<Source>, overrides: &[(String, i64)], max_items: u64) -> Expander {
        Expander {
            src,
            overrides: overrides
                .iter()
                .map(|(k, v)| (k.clone(), *v, false))
                .collect(),
            params: Vec::new(),
            vars: Vec::new(),
            qubits: Vec::new(),
            qubit_ids: HashMap::new(),
            qubit_bases: HashMap::new(),
            records: Vec::new(),
            record_ids: HashMap::new(),
            detectors: Vec::new(),
            detector_names: HashMap::new(),
            observables: Vec::new(),
            observable_ids: HashMap::new(),
            loop_vars: HashMap::new(),
            loop_counts: HashMap::new(),
            layers: Vec::new(),
            open: None,
            layer_serial: 0,
            last_use: Vec::new(),
            round: None,
            rounds: 0,
            used: Tally::default(),
            max_items,
            halted: false,
            errors: Vec::new(),
            pending: Vec::new(),
            refused: HashSet::new(),
            depth_loop: 0,
            evaluated: 0,
        }
    }

    fn err(&self, span: Span, msg: impl Into<String>) -> Diagnostic {
        Diagnostic::error(&self.src, span, msg)
    }

    fn report(&mut self, d: Diagnostic) {
        if self.errors.len() < MAX_ERRORS {
            self.errors.push(d);
        }
    }
    // ---- the end ----------------------------------------------------------------------------

    fn finish(mut self, stmts: &[Stmt]) -> Result<Circuit, Vec<Diagnostic>> {
        for (name, span) in std::mem::take(&mut self.pending) {
            let base = name.split('[').next().unwrap_or(&name);
            if self.refused.contains(base) && !self.record_ids.contains_key(&name) {
                continue;
            }
            let d = if let Some(&id) = self.record_ids.get(&name) {
                let rec = &self.records[id as usize];
                self.err(
                    span,
                    format!("result `{name}` is used before it is measured"),
                )
                .with_label(&self.src, rec.span, "it is measured later, here")
                .with_hint("a detector or observable can only use results measured before it")
            } else {
                let base = name.split('[').next().unwrap_or(&name).to_string();
                let mut d = self.err(span, format!("undefined result `{name}`"));
                let bases: Vec<String> = self
                    .record_ids
                    .keys()
                    .map(|k| k.split('[').next().unwrap_or(k).to_string())
                    .collect();
                if bases.contains(&base) {
                    d = d.with_hint(format!("no measurement writes `{name}`; check the index"));
                } else if let Some(s) = did_you_mean(&base, bases.iter().map(String::as_str)) {
                    d = d.with_hint(format!("did you mean `{s}`?"));
                }
                d
            };
            self.report(d);
        }
        for (name, value, used) in &self.overrides {
            if !used {
                let mut d = Diagnostic::bare(format!(
                    "`--set {name}=...` names no parameter of this circuit"
                ));
                let names = self.params.iter().map(|(n, _)| n.as_str());
                let has = |p: &str| self.params.iter().any(|(n, _)| n == p);
                if let Some(s) = did_you_mean(&name.to_lowercase(), names) {
                    d = d.with_hint(format!("did you mean `{s}`?"));
                } else if did_you_mean(&name.to_lowercase(), ["distance"]).is_some()
                    && has("dx")
                    && has("dz")
                {
                    // Rotated patches generated by `slant new` take the two distances apart;
                    // `distance` is the generator's option, not a parameter of its output.
                    d = d.with_hint(format!(
                        "did you mean `dx` and `dz`? this circuit takes its two distances \
                         separately: `--set dx={value} --set dz={value}`"
                    ));
                } else if self.params.is_empty() {
                    d = d.with_hint("this circuit declares no parameters");
                } else {
                    d = d.with_hint(format!(
                        "parameters: {}",
                        self.params
                            .iter()
                            .map(|(n, _)| format!("`{n}`"))
                            .collect::<Vec<_>>()
                            .join(", ")
                    ));
                }
                self.errors.push(d);
            }
        }
        if self.errors.is_empty() && self.qubits.is_empty() {
            let end = stmts.first().map_or(0, |s| s.span.start as usize);
            self.errors.push(
                self.err(Span::new(end, end), "the circuit declares no qubits")
                    .with_hint("an empty circuit is almost always a mistake (e.g. a failed generator in a pipe); declare qubits with `qubit q`"),
            );
        }
        if !self.errors.is_empty() {
            return Err(self.errors);
        }
        for o in &mut self.observables {
            o.records = odd_parity(std::mem::take(&mut o.records));
        }
        Ok(Circuit {
            source: self.src,
            params: self.params,
            qubits: self.qubits,
            layers: self.layers,
            records: self.records,
            detectors: self.detectors,
            observables: self.observables,
            rounds: self.rounds,
            items: self.used.items,
        })
    }
}
