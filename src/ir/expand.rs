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
//! multiplied by its trip count; any other loop is walked iteration by iteration with the
//! variable set, which costs about as much time per step counted as expanding does, and stops as
//! soon as the limit is passed. A loop whose count depends on no variable outside it is counted
//! once however often an enclosing loop is walked. A circuit past the limit is refused at the
//! loop or statement that passes it, before any memory is spent. The same counts are kept while
//! expanding, as a backstop.
//!
//! Conventions: names of indexed things print as `base[i,j]`; ranges `a..b` are half-open and
//! expand in row-major order; integer `/` and `%` use Euclidean division so negative indices
//! behave predictably.

use std::collections::HashMap;
use std::fmt::Write as _;
use std::sync::Arc;

use crate::base::{did_you_mean, odd_parity, ChannelKind, Diagnostic, Gate, Pauli, Source, Span};
use crate::ir::{Channel, Circuit, Detector, Layer, Observable, Op, OpKind, Qubit, Record};
use crate::lang::Ast;
use crate::lang::{BinOp, Expr, ExprKind, Index, NoiseTargets, Ref, Stmt, StmtKind};

/// Size limits for expansion.
#[derive(Clone, Debug)]
pub struct Limits {
    /// Maximum number of expanded items (weighted as in [`cost`]), and of steps.
    pub max_items: u64,
}

impl Default for Limits {
    fn default() -> Self {
        // With the weights of `cost` (at most ~70 bytes an item), circuits at the limit loaded
        // and checked in at most 1.4 GB (but see the gap noted there). A distance-25, 25-round
        // surface-code memory is about 5e5 items.
        Limits {
            max_items: 20_000_000,
        }
    }
}

/// How much each expanded thing counts against [`Limits::max_items`].
///
/// The weights follow memory. Loading and checking circuits made of nothing but one kind of
/// thing (qubits; lone operations; operations in layers; measurements, alone or in layers;
/// detectors, observables and their terms), one item stood for at most about 70 bytes of peak
/// memory, all stages together: the expanded circuit, the expander's name tables and the
/// determinism check's tables. The dearest things are measurements (the result's name is kept
/// twice, in the record list and in the lookup table) and qubits (likewise).
///
/// Not covered: the determinism check keeps, per qubit, the set of detectors an error there
/// would flip. In circuits where a qubit is measured many times without a reset and many other
/// qubits are entangled with it first, those sets hold qubits × detectors ids, which no count
/// of items bounds (1000 qubits fanned into one that is measured 200 000 times took 0.9 GB).
pub mod cost {
    /// A qubit.
    pub const QUBIT: u64 = 4;
    /// A coordinate of a qubit or detector, or a role of a qubit.
    pub const COORD: u64 = 1;
    /// A layer (a `layer` block, or an operation statement outside one).
    pub const LAYER: u64 = 1;
    /// An operation.
    pub const OP: u64 = 2;
    /// One target qubit of an operation.
    pub const TARGET: u64 = 1;
    /// A measurement result, on top of its measurement operation.
    pub const RECORD: u64 = 2;
    /// A detector or observable.
    pub const DETECTOR: u64 = 3;
    /// A result named in a detector's or observable's parity.
    pub const TERM: u64 = 1;
}

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

/// An evaluated expression.
#[derive(Clone, Copy, Debug, PartialEq)]
enum Value {
    Int(i64),
    Float(f64),
}

impl Value {
    fn as_f64(self) -> f64 {
        match self {
            Value::Int(v) => v as f64,
            Value::Float(v) => v,
        }
    }
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
    depth_loop: usize,
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
            depth_loop: 0,
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

    // ---- expressions ------------------------------------------------------------------------

    fn lookup(&self, name: &str) -> Option<i64> {
        self.vars
            .iter()
            .rev()
            .find(|(n, _)| n == name)
            .or_else(|| self.params.iter().find(|(n, _)| n == name))
            .map(|(_, v)| *v)
    }

    /// Evaluates an expression.
    fn eval(&self, e: &Expr) -> R<Value> {
        match self.value(e) {
            Some(v) => Ok(v),
            None => self.eval_diagnosed(e),
        }
    }

    /// Evaluates an expression, `None` on any error. This is the path nearly every evaluation
    /// takes, and it is several times faster than building `Result`s that carry diagnostics up
    /// every level; [`Expander::eval`] goes back for the diagnostic when it fails.
    fn value(&self, e: &Expr) -> Option<Value> {
        Some(match &e.kind {
            ExprKind::Int(v) => Value::Int(*v),
            ExprKind::Float(v) => Value::Float(*v),
            ExprKind::Var(name) => Value::Int(self.lookup(name)?),
            ExprKind::Neg(a) => match self.value(a)? {
                Value::Int(v) => Value::Int(v.checked_neg()?),
                Value::Float(v) => Value::Float(-v),
            },
            ExprKind::Not(a) => Value::Int(i64::from(!self.truth_value(a)?)),
            ExprKind::Binary(op, a, b) => {
                if matches!(op, BinOp::And | BinOp::Or) {
                    let l = self.truth_value(a)?;
                    let r = if *op == BinOp::And {
                        l && self.truth_value(b)?
                    } else {
                        l || self.truth_value(b)?
                    };
                    return Some(Value::Int(i64::from(r)));
                }
                arith(*op, self.value(a)?, self.value(b)?)?
            }
        })
    }

    /// [`Expander::value`] of an integer expression.
    fn int_value(&self, e: &Expr) -> Option<i64> {
        match self.value(e)? {
            Value::Int(v) => Some(v),
            Value::Float(_) => None,
        }
    }

    fn truth_value(&self, e: &Expr) -> Option<bool> {
        match self.value(e)? {
            Value::Int(v) => Some(v != 0),
            Value::Float(_) => None,
        }
    }

    /// [`Expander::eval`] for an expression that fails, to say why and where.
    fn eval_diagnosed(&self, e: &Expr) -> R<Value> {
        Ok(match &e.kind {
            ExprKind::Int(v) => Value::Int(*v),
            ExprKind::Float(v) => Value::Float(*v),
            ExprKind::Var(name) => match self.lookup(name) {
                Some(v) => Value::Int(v),
                None => {
                    let names = self
                        .vars
                        .iter()
                        .chain(&self.params)
                        .map(|(n, _)| n.as_str());
                    let mut d = self.err(e.span, format!("unknown name `{name}`"));
                    if let Some(s) = did_you_mean(name, names) {
                        d = d.with_hint(format!("did you mean `{s}`?"));
                    } else {
                        d = d.with_hint(
                            "names in expressions are parameters (`param`) or loop variables",
                        );
                    }
                    return Err(d);
                }
            },
            ExprKind::Neg(a) => match self.eval(a)? {
                Value::Int(v) => Value::Int(
                    v.checked_neg()
                        .ok_or_else(|| self.err(e.span, "arithmetic overflow"))?,
                ),
                Value::Float(v) => Value::Float(-v),
            },
            ExprKind::Not(a) => Value::Int(i64::from(!self.truth(a)?)),
            ExprKind::Binary(op, a, b) => {
                if matches!(op, BinOp::And | BinOp::Or) {
                    let l = self.truth(a)?;
                    let r = if *op == BinOp::And {
                        l && self.truth(b)?
                    } else {
                        l || self.truth(b)?
                    };
                    return Ok(Value::Int(i64::from(r)));
                }
                let (l, r) = (self.eval(a)?, self.eval(b)?);
                self.binary(*op, l, r, e.span, b.span)?
            }
        })
    }

    fn binary(&self, op: BinOp, l: Value, r: Value, span: Span, rspan: Span) -> R<Value> {
        arith(op, l, r).ok_or_else(|| {
            let both_int = matches!((l, r), (Value::Int(_), Value::Int(_)));
            let zero = match r {
                Value::Int(b) => b == 0,
                Value::Float(b) => b == 0.0,
            };
            if zero && (op == BinOp::Div || (op == BinOp::Rem && both_int)) {
                self.err(rspan, "division by zero")
            } else if op == BinOp::Rem && !both_int {
                self.err(span, "`%` needs integers")
            } else {
                self.err(span, "arithmetic overflow")
            }
        })
    }

    fn int(&self, e: &Expr) -> R<i64> {
        match self.eval(e)? {
            Value::Int(v) => Ok(v),
            Value::Float(v) => Err(self.err(e.span, format!("expected an integer, found `{v}`"))),
        }
    }

    fn truth(&self, e: &Expr) -> R<bool> {
        Ok(self.int(e)? != 0)
    }

    fn probability(&self, e: &Expr) -> R<f64> {
        let v = self.eval(e)?.as_f64();
        if !(0.0..=1.0).contains(&v) {
            return Err(self
                .err(e.span, format!("probability `{v}` is outside [0, 1]"))
                .with_hint("probabilities are written as plain numbers, e.g. `0.001`"));
        }
        Ok(v)
    }

    // ---- names ------------------------------------------------------------------------------

    /// Calls `f` with the display name of every item a reference names, ranges in row-major
    /// order. The names are written one at a time into a single buffer: a reference to a
    /// million qubits costs no million strings.
    fn each_name(&self, r: &Ref, mut f: impl FnMut(&str) -> R<()>) -> R<()> {
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
    fn names(&self, r: &Ref) -> R<Vec<String>> {
        let mut out = Vec::new();
        self.each_name(r, |n| {
            out.push(n.to_string());
            Ok(())
        })?;
        Ok(out)
    }

    /// How many results a parity names, repeats included.
    fn term_count(&self, parity: &[Ref]) -> u64 {
        parity
            .iter()
            .fold(0u64, |n, r| n.saturating_add(self.name_count(r)))
    }

    /// How many names a reference expands to, without expanding it (0 if an index cannot be
    /// evaluated: expansion reports that).
    fn name_count(&self, r: &Ref) -> u64 {
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

    fn single_name(&self, r: &Ref, what: &str) -> R<String> {
        let mut names = self.names(r)?;
        if names.len() != 1 {
            return Err(self.err(
                r.span,
                format!("{what} must name exactly one item, not a range"),
            ));
        }
        Ok(names.pop().unwrap_or_default())
    }

    fn qubits_of(&self, r: &Ref) -> R<Vec<u32>> {
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

    fn undefined_qubit(&self, r: &Ref, name: &str) -> Diagnostic {
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

    fn records_of(&mut self, r: &Ref) -> R<Vec<Option<u32>>> {
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

    // ---- layers -----------------------------------------------------------------------------

    /// Spends `t` of the budget; past the limit, refuses at `span` and halts the expansion.
    fn spend(&mut self, t: Tally, span: Span) -> R<()> {
        self.used = self.used.plus(t);
        let what = if self.used.items > self.max_items {
            format!(
                "the circuit expands past the size limit of {} items",
                self.max_items
            )
        } else if self.used.steps > self.max_items {
            format!(
                "the circuit runs past the limit of {} steps (statements, loop iterations and \
                 expression terms)",
                self.max_items
            )
        } else {
            return Ok(());
        };
        self.halted = true;
        Err(self
            .err(span, what)
            .with_hint("shrink the parameters, or raise the limit with `--max-items`"))
    }

    /// Adds an op to the open layer, or to a layer of its own outside `layer` blocks.
    fn push_op(&mut self, op: Op, target_spans: &[Span]) -> R<()> {
        self.spend(
            Tally::items(cost::OP + cost::TARGET * op.targets.len() as u64),
            op.span,
        )?;
        let exclusive = !matches!(op.kind, OpKind::Noise(_));
        let Some(open) = self.open.as_mut() else {
            return Err(Diagnostic::error(
                &self.src,
                op.span,
                "internal error: operation outside a layer; please report",
            ));
        };
        let mut result = Ok(());
        if exclusive {
            if self.last_use.len() < self.qubits.len() {
                self.last_use
                    .resize(self.qubits.len(), (0, Span::default()));
            }
            for (k, &q) in op.targets.iter().enumerate() {
                let span = target_spans.get(k).copied().unwrap_or(op.span);
                let slot = &mut self.last_use[q as usize];
                if slot.0 == self.layer_serial {
                    let name = &self.qubits[q as usize].name;
                    result = Err(Diagnostic::error(&self.src, span, format!("qubit `{name}` is used twice in one layer"))
                        .with_label(&self.src, slot.1, "first used here")
                        .with_hint("operations in one layer act on disjoint qubits; move one into the next `layer`"));
                    break;
                }
                *slot = (self.layer_serial, span);
            }
        }
        open.layer.ops.push(op);
        result
    }

    fn open_layer(&mut self, span: Span) -> R<()> {
        self.spend(Tally::items(cost::LAYER), span)?;
        self.layer_serial += 1;
        self.open = Some(OpenLayer {
            layer: Layer {
                ops: Vec::new(),
                round: self.round,
                span,
            },
        });
        Ok(())
    }

    fn close_layer(&mut self) {
        if let Some(mut open) = self.open.take() {
            // Most layers are built by pushing ops one at a time; without this a lone operation
            // would keep room for four.
            open.layer.ops.shrink_to_fit();
            self.layers.push(open.layer);
        }
    }

    // ---- statements -------------------------------------------------------------------------

    fn block(&mut self, stmts: &[Stmt]) {
        for st in stmts {
            if self.errors.len() >= MAX_ERRORS || self.halted {
                return;
            }
            let result = self
                .spend(stmt_steps(st), st.span)
                .and_then(|()| self.stmt(st));
            if let Err(d) = result {
                self.report(d);
            }
        }
    }

    fn stmt(&mut self, st: &Stmt) -> R<()> {
        let is_op = matches!(
            st.kind,
            StmtKind::Gate { .. }
                | StmtKind::Reset { .. }
                | StmtKind::Measure { .. }
                | StmtKind::Noise { .. }
        );
        if is_op && self.open.is_none() {
            // A lone operation statement outside `layer { }` is a layer of its own.
            self.open_layer(st.span)?;
            let result = self.stmt_inner(st);
            self.close_layer();
            return result;
        }
        self.stmt_inner(st)
    }

    fn stmt_inner(&mut self, st: &Stmt) -> R<()> {
        match &st.kind {
            StmtKind::Blank | StmtKind::Comment(_) => {}
            StmtKind::Param { name, value } => self.param(st, name, value)?,
            StmtKind::Qubit {
                target,
                coords,
                roles,
            } => {
                // Paid for before the names are built, so a huge range is refused first.
                let per_qubit = cost::QUBIT
                    + cost::COORD * (coords.as_ref().map_or(0, Vec::len) + roles.len()) as u64;
                self.spend(
                    Tally::items(self.name_count(target).saturating_mul(per_qubit)),
                    st.span,
                )?;
                let names = self.names(target)?;
                if names.len() != 1 && coords.is_some() {
                    return Err(self
                        .err(target.span, "coordinates need one qubit per declaration")
                        .with_hint("declare the qubits in a loop, e.g. `for k in 0..5 { qubit q[k] at (k, 0) }`"));
                }
                let coords = match coords {
                    Some(cs) => cs
                        .iter()
                        .map(|c| self.eval(c).map(Value::as_f64))
                        .collect::<R<Vec<_>>>()?,
                    None => Vec::new(),
                };
                let roles: Vec<String> = roles.iter().map(|r| r.name.clone()).collect();
                for name in names {
                    if let Some(&q) = self.qubit_ids.get(&name) {
                        let first = self.qubits[q as usize].span;
                        return Err(self
                            .err(target.span, format!("qubit `{name}` is declared twice"))
                            .with_label(&self.src, first, "first declared here"));
                    }
                    let id = self.qubits.len() as u32;
                    self.qubit_ids.insert(name.clone(), id);
                    self.qubit_bases
                        .entry(target.name.name.clone())
                        .or_default()
                        .push(id);
                    self.qubits.push(Qubit {
                        name,
                        coords: coords.clone(),
                        roles: roles.clone(),
                        span: target.span,
                    });
                }
            }
            StmtKind::Layer(body) => {
                if self.open.is_some() {
                    return Err(self.err(st.span, "a `layer` cannot contain another `layer`"));
                }
                self.open_layer(st.span)?;
                self.block(body);
                self.close_layer();
            }
            StmtKind::Round(body) => {
                if self.open.is_some() {
                    return Err(self
                        .err(st.span, "a `round` cannot sit inside a `layer`")
                        .with_hint("put the `layer` blocks inside the `round`"));
                }
                if self.round.is_some() {
                    return Err(self.err(st.span, "a `round` cannot contain another `round`"));
                }
                self.round = Some(self.rounds);
                self.rounds += 1;
                self.block(body);
                self.round = None;
            }
            StmtKind::For {
                var,
                start,
                end,
                step,
                body,
            } => {
                if self.lookup(&var.name).is_some() {
                    return Err(self.err(
                        var.span,
                        format!(
                            "loop variable `{}` hides a parameter or outer loop variable",
                            var.name
                        ),
                    ));
                }
                let (a, b) = (self.int(start)?, self.int(end)?);
                let s = match step {
                    Some(e) => {
                        let s = self.int(e)?;
                        if s <= 0 {
                            return Err(self.err(e.span, "the loop step must be positive"));
                        }
                        s
                    }
                    None => 1,
                };
                self.depth_loop += 1;
                let mut v = a;
                while v < b {
                    if let Err(d) = self.spend(Tally::STEP, st.span) {
                        self.depth_loop -= 1;
                        return Err(d);
                    }
                    self.vars.push((var.name.clone(), v));
                    let before = self.errors.len();
                    self.block(body);
                    self.vars.pop();
                    // One error per loop body is enough; repeating it per iteration is noise.
                    if self.errors.len() > before {
                        break;
                    }
                    v = match v.checked_add(s) {
                        Some(v) => v,
                        None => break,
                    };
                }
                self.depth_loop -= 1;
            }
            StmtKind::If {
                cond,
                then,
                otherwise,
            } => {
                if self.truth(cond)? {
                    self.block(then);
                } else {
                    self.block(otherwise);
                }
            }
            StmtKind::Gate { gate, groups } => self.gate(st, gate, groups)?,
            StmtKind::Reset { basis, targets } => {
                for t in targets {
                    let qs = self.qubits_of(t)?;
                    let spans = vec![t.span; qs.len()];
                    self.push_op(
                        Op {
                            kind: OpKind::Reset(*basis),
                            targets: qs,
                            paulis: Vec::new(),
                            span: st.span,
                        },
                        &spans,
                    )?;
                }
            }
            StmtKind::Measure { outcomes, flip } => {
                let flip = match flip {
                    Some(e) => self.probability(e)?,
                    None => 0.0,
                };
                for o in outcomes {
                    self.measure(st, o, flip)?;
                }
            }
            StmtKind::Noise {
                channel,
                args,
                targets,
            } => self.noise(st, &channel.name, args, targets)?,
            StmtKind::Detector {
                name,
                coords,
                parity,
            } => {
                let terms = self.term_count(parity);
                self.spend(
                    Tally::items(
                        cost::DETECTOR
                            + cost::COORD * coords.as_ref().map_or(0, Vec::len) as u64
                            + cost::TERM.saturating_mul(terms),
                    ),
                    st.span,
                )?;
                let records = self.parity(parity)?;
                let name = match name {
                    Some(r) => {
                        let n = self.single_name(r, "a detector name")?;
                        if let Some(&first) = self.detector_names.get(&n) {
                            return Err(self
                                .err(r.span, format!("detector `{n}` is declared twice"))
                                .with_label(&self.src, first, "first declared here"));
                        }
                        self.detector_names.insert(n.clone(), r.span);
                        n
                    }
                    None => format!("detector#{}", self.detectors.len()),
                };
                let coords = match coords {
                    Some(cs) => cs
                        .iter()
                        .map(|c| self.eval(c).map(Value::as_f64))
                        .collect::<R<Vec<_>>>()?,
                    None => Vec::new(),
                };
                if let Some(records) = records {
                    self.detectors.push(Detector {
                        name,
                        coords,
                        records,
                        span: st.span,
                    });
                }
            }
            StmtKind::Observable {
                name,
                extend,
                parity,
            } => {
                let n = self.single_name(name, "an observable name")?;
                let terms = self.term_count(parity);
                let own = if *extend { 0 } else { cost::DETECTOR };
                self.spend(
                    Tally::items(own + cost::TERM.saturating_mul(terms)),
                    st.span,
                )?;
                // Kept unsorted with repeats until `finish`: merging sorted lists at every `^=`
                // would cost time quadratic in the number of extensions.
                let records = self.parity_terms(parity)?;
                let existing = self.observable_ids.get(&n).copied();
                match (existing, extend) {
                    (Some(k), false) => {
                        return Err(self
                            .err(name.span, format!("observable `{n}` is declared twice"))
                            .with_label(&self.src, self.observables[k].span, "first declared here")
                            .with_hint(format!(
                                "use `observable {n} ^= ...` to add results to it"
                            )));
                    }
                    (None, true) => {
                        return Err(self
                            .err(
                                name.span,
                                format!("observable `{n}` is extended before it is declared"),
                            )
                            .with_hint(format!("declare it with `observable {n} = ...` first")));
                    }
                    (Some(k), true) => {
                        if let Some(records) = records {
                            self.observables[k].records.extend(records);
                        }
                    }
                    (None, false) => {
                        self.observable_ids
                            .insert(n.clone(), self.observables.len());
                        self.observables.push(Observable {
                            name: n,
                            records: records.unwrap_or_default(),
                            span: st.span,
                        });
                    }
                }
            }
        }
        Ok(())
    }

    fn param(&mut self, st: &Stmt, name: &crate::lang::Ident, value: &Expr) -> R<()> {
        if self.depth_loop > 0 || self.open.is_some() || self.round.is_some() {
            return Err(self.err(st.span, "parameters are declared at the top level only"));
        }
        if self.params.iter().any(|(n, _)| *n == name.name) {
            return Err(self.err(
                name.span,
                format!("parameter `{}` is declared twice", name.name),
            ));
        }
        let mut v = self.int(value)?;
        if let Some(o) = self.overrides.iter_mut().find(|o| o.0 == name.name) {
            v = o.1;
            o.2 = true;
        }
        self.params.push((name.name.clone(), v));
        Ok(())
    }

    fn gate(&mut self, st: &Stmt, gate: &crate::lang::Ident, groups: &[Vec<Ref>]) -> R<()> {
        let Some(g) = Gate::from_name(&gate.name) else {
            return Err(self.err(gate.span, format!("unknown gate `{}`", gate.name)));
        };
        for group in groups {
            let span = group[0].span.join(group[group.len() - 1].span);
            if group.len() != g.arity() {
                let hint = if g.arity() == 1 {
                    format!("separate targets with commas: `{} a, b`", g.name())
                } else {
                    format!("`{}` takes qubit pairs: `{} a b, c d`", g.name(), g.name())
                };
                return Err(self
                    .err(
                        span,
                        format!(
                            "`{}` acts on {} qubit{} but this group has {}",
                            g.name(),
                            g.arity(),
                            if g.arity() == 1 { "" } else { "s" },
                            group.len()
                        ),
                    )
                    .with_hint(hint));
            }
            let lists = group
                .iter()
                .map(|r| self.qubits_of(r))
                .collect::<R<Vec<_>>>()?;
            let len = lists[0].len();
            if lists.iter().any(|l| l.len() != len) {
                return Err(self
                    .err(
                        span,
                        format!(
                            "the ranges of this group have different lengths ({})",
                            lists
                                .iter()
                                .map(|l| l.len().to_string())
                                .collect::<Vec<_>>()
                                .join(" and ")
                        ),
                    )
                    .with_hint(
                        "ranges in one group are zipped pairwise and must be equally long",
                    ));
            }
            let mut targets = Vec::with_capacity(len * g.arity());
            let mut spans = Vec::with_capacity(len * g.arity());
            for k in 0..len {
                for (r, list) in group.iter().zip(&lists) {
                    targets.push(list[k]);
                    spans.push(r.span);
                }
            }
            self.push_op(
                Op {
                    kind: OpKind::Gate(g),
                    targets,
                    paulis: Vec::new(),
                    span: st.span,
                },
                &spans,
            )?;
        }
        Ok(())
    }

    fn measure(&mut self, st: &Stmt, o: &crate::lang::Outcome, flip: f64) -> R<()> {
        let lists = o
            .product
            .iter()
            .map(|(_, r)| self.qubits_of(r))
            .collect::<R<Vec<_>>>()?;
        self.spend(
            Tally::items(self.name_count(&o.result).saturating_mul(cost::RECORD)),
            st.span,
        )?;
        let results = self.names(&o.result)?;
        let len = results.len();
        if lists.iter().any(|l| l.len() != len) {
            return Err(self
                .err(
                    o.result.span,
                    format!(
                        "{} result name(s) for {} measurement(s)",
                        len,
                        lists.iter().map(Vec::len).max().unwrap_or(0)
                    ),
                )
                .with_hint("ranges are zipped: `measure z q[0..3] -> m[0..3]`"));
        }
        for (k, result) in results.into_iter().enumerate() {
            let targets: Vec<u32> = lists.iter().map(|l| l[k]).collect();
            let paulis: Vec<Pauli> = o.product.iter().map(|(p, _)| *p).collect();
            let spans: Vec<Span> = o.product.iter().map(|(_, r)| r.span).collect();
            self.check_distinct(&targets, &spans)?;
            if let Some(&first) = self.record_ids.get(&result) {
                return Err(self
                    .err(
                        o.result.span,
                        format!("result `{result}` is measured twice"),
                    )
                    .with_label(
                        &self.src,
                        self.records[first as usize].span,
                        "first measured here",
                    )
                    .with_hint(
                        "give every measurement its own result name, e.g. index it by the round",
                    ));
            }
            let record = self.records.len() as u32;
            self.record_ids.insert(result.clone(), record);
            let layer = self.layers.len() as u32;
            self.records.push(Record {
                name: result,
                layer,
                span: o.result.span,
            });
            self.push_op(
                Op {
                    kind: OpKind::Measure { record, flip },
                    targets,
                    paulis,
                    span: st.span,
                },
                &spans,
            )?;
        }
        Ok(())
    }

    fn check_distinct(&self, targets: &[u32], spans: &[Span]) -> R<()> {
        for (k, q) in targets.iter().enumerate() {
            if let Some(j) = targets[..k].iter().position(|p| p == q) {
                return Err(self
                    .err(
                        spans[k],
                        format!(
                            "qubit `{}` appears twice in one operation",
                            self.qubits[*q as usize].name
                        ),
                    )
                    .with_label(&self.src, spans[j], "first here"));
            }
        }
        Ok(())
    }

    fn noise(
        &mut self,
        st: &Stmt,
        channel: &str,
        args: &[(crate::lang::Ident, Expr)],
        targets: &NoiseTargets,
    ) -> R<()> {
        let arg = |key: &str| args.iter().find(|(k, _)| k.name == key);
        let required = |key: &str| -> R<f64> {
            match arg(key) {
                Some((_, e)) => self.probability(e),
                None => Err(self
                    .err(st.span, format!("`noise {channel}` needs `{key}=`"))
                    .with_hint(format!("e.g. `noise {channel} {key}=0.001 q`"))),
            }
        };
        let optional =
            |key: &str| -> R<f64> { arg(key).map_or(Ok(0.0), |(_, e)| self.probability(e)) };
        let Some(kind) = ChannelKind::from_name(channel) else {
            return Err(self.err(st.span, format!("unknown noise channel `{channel}`")));
        };
        let ch = match kind {
            ChannelKind::BitFlip => Channel::BitFlip(required("p")?),
            ChannelKind::Dephasing => Channel::Dephasing(required("p")?),
            ChannelKind::Depolarizing1 => Channel::Depolarizing1(required("p")?),
            ChannelKind::Depolarizing2 => Channel::Depolarizing2(required("p")?),
            ChannelKind::Pauli1 => Channel::Pauli1 {
                px: optional("x")?,
                py: optional("y")?,
                pz: optional("z")?,
            },
            ChannelKind::Pauli2 => {
                let mut probs = [0.0; 15];
                for (k, e) in args {
                    if let Some(ix) = Pauli::pair_index(&k.name) {
                        probs[ix - 1] = self.probability(e)?;
                    }
                }
                Channel::Pauli2(Box::new(probs))
            }
            ChannelKind::Correlated => {
                let NoiseTargets::Product(product) = targets else {
                    return Err(self.err(
                        st.span,
                        "`correlated` takes a Pauli product, e.g. `x a * z b`",
                    ));
                };
                Channel::Correlated {
                    p: required("p")?,
                    paulis: product.iter().map(|(p, _)| *p).collect(),
                }
            }
        };
        let total = ch.total();
        if total > 1.0 + 1e-12 {
            return Err(self
                .err(st.span, format!("the probabilities of this channel sum to {total}, above 1"))
                .with_hint("terms of one channel are mutually exclusive; their sum is the chance that any fires"));
        }
        match targets {
            NoiseTargets::Product(product) => {
                let mut qs = Vec::new();
                let mut spans = Vec::new();
                for (_, r) in product {
                    let q = self.qubits_of(r)?;
                    if q.len() != 1 {
                        return Err(
                            self.err(r.span, "each factor of a correlated fault names one qubit")
                        );
                    }
                    qs.push(q[0]);
                    spans.push(r.span);
                }
                self.check_distinct(&qs, &spans)?;
                self.push_op(
                    Op {
                        kind: OpKind::Noise(ch),
                        targets: qs,
                        paulis: Vec::new(),
                        span: st.span,
                    },
                    &spans,
                )
            }
            NoiseTargets::Groups(groups) => {
                let arity = ch.arity();
                let mut all = Vec::new();
                for group in groups {
                    let span = group[0].span.join(group[group.len() - 1].span);
                    if group.len() != arity {
                        return Err(self
                            .err(span, format!("`{channel}` acts on {arity} qubit{} per group but this group has {}", if arity == 1 { "" } else { "s" }, group.len()))
                            .with_hint(if arity == 1 { "separate targets with commas" } else { "give qubit pairs: `a b, c d`" }));
                    }
                    let lists = group
                        .iter()
                        .map(|r| self.qubits_of(r))
                        .collect::<R<Vec<_>>>()?;
                    let len = lists[0].len();
                    if lists.iter().any(|l| l.len() != len) {
                        return Err(
                            self.err(span, "the ranges of this group have different lengths")
                        );
                    }
                    for k in 0..len {
                        let pair: Vec<u32> = lists.iter().map(|l| l[k]).collect();
                        let spans: Vec<Span> = group.iter().map(|r| r.span).collect();
                        self.check_distinct(&pair, &spans)?;
                        all.extend(pair);
                    }
                }
                self.push_op(
                    Op {
                        kind: OpKind::Noise(ch),
                        targets: all,
                        paulis: Vec::new(),
                        span: st.span,
                    },
                    &[],
                )
            }
        }
    }

    /// Resolves a parity to sorted record indices (repeats cancel). `None` if some result is not
    /// measured yet (reported at the end, once it is known whether it is measured later).
    fn parity(&mut self, refs: &[Ref]) -> R<Option<Vec<u32>>> {
        Ok(self.parity_terms(refs)?.map(odd_parity))
    }

    /// The record indices a parity names, in the order written, repeats kept. `None` as for
    /// [`Expander::parity`].
    fn parity_terms(&mut self, refs: &[Ref]) -> R<Option<Vec<u32>>> {
        let mut out = Vec::new();
        let mut complete = true;
        for r in refs {
            for id in self.records_of(r)? {
                match id {
                    Some(id) => out.push(id),
                    None => complete = false,
                }
            }
        }
        Ok(complete.then_some(out))
    }

    // ---- size estimate ----------------------------------------------------------------------

    fn check_estimate(&mut self, stmts: &[Stmt]) -> R<Tally> {
        // Parameters are needed for loop bounds: evaluate them here in a scratch copy.
        let mut params = Vec::new();
        for st in stmts {
            if let StmtKind::Param { name, value } = &st.kind {
                let saved = std::mem::take(&mut self.params);
                self.params = params.clone();
                let v = self
                    .overrides
                    .iter()
                    .find(|o| o.0 == name.name)
                    .map(|o| o.1)
                    .or_else(|| self.int(value).ok());
                self.params = saved;
                if let Some(v) = v {
                    params.push((name.name.clone(), v));
                }
            }
        }
        let saved = std::mem::replace(&mut self.params, params);
        let result = self.estimate(stmts, false, true);
        self.params = saved;
        result
    }

    /// The refusal for a count `t` past the limit, if it is. `what` says what `t` counts:
    /// "this loop", "this statement" or "the circuit" (everything up to `span`); `partial`, that
    /// counting stopped early, so `t` is a lower bound.
    fn past_limit(&self, t: Tally, span: Span, what: &str, partial: bool) -> Option<Diagnostic> {
        let max = self.max_items;
        let about = if partial { "at least" } else { "about" };
        let msg = if t.items > max {
            format!(
                "{what} would expand to {about} {} items, past the limit of {max}",
                t.items
            )
        } else if t.steps > max {
            format!(
                "{what} would run {about} {} steps (statements, loop iterations and expression \
                 terms), past the limit of {max}",
                t.steps
            )
        } else {
            return None;
        };
        let hint = if what == "this loop" {
            "shrink the loop bounds or parameters, or raise the limit with `--max-items`"
        } else {
            "shrink the ranges or parameters, or raise the limit with `--max-items`"
        };
        Some(self.err(span, msg).with_hint(hint))
    }

    /// Counts the items and steps `block` will spend on `stmts` (see the module docs), refusing
    /// at the loop or statement that passes the limit, or at the top-level statement where the
    /// circuit's running total does (`top`). `in_layer`: inside a `layer` block, where
    /// operations do not open layers of their own.
    fn estimate(&mut self, stmts: &[Stmt], in_layer: bool, top: bool) -> R<Tally> {
        let mut total = Tally::default();
        for st in stmts {
            let t = self.estimate_stmt(st, in_layer)?.plus(stmt_steps(st));
            let what = if matches!(st.kind, StmtKind::For { .. }) {
                "this loop"
            } else {
                "this statement"
            };
            if let Some(d) = self.past_limit(t, st.span, what, false) {
                return Err(d);
            }
            total = total.plus(t);
            if top {
                if let Some(d) = self.past_limit(total, st.span, "the circuit", false) {
                    return Err(d);
                }
            }
        }
        Ok(total)
    }

    fn estimate_stmt(&mut self, st: &Stmt, in_layer: bool) -> R<Tally> {
        let n = |x: &Expander, r: &Ref| x.name_count(r);
        // An operation statement outside `layer { }` opens a layer of its own.
        let lone = if in_layer { 0 } else { cost::LAYER };
        let items = match &st.kind {
            StmtKind::Blank | StmtKind::Comment(_) | StmtKind::Param { .. } => 0,
            StmtKind::Qubit {
                target,
                coords,
                roles,
            } => {
                let per_qubit = cost::QUBIT
                    + cost::COORD * (coords.as_ref().map_or(0, Vec::len) + roles.len()) as u64;
                n(self, target).saturating_mul(per_qubit)
            }
            StmtKind::Layer(body) => {
                return Ok(Tally::items(cost::LAYER).plus(self.estimate(body, true, false)?))
            }
            StmtKind::Round(body) => return self.estimate(body, in_layer, false),
            StmtKind::If {
                cond,
                then,
                otherwise,
            } => {
                return match self.truth_value(cond) {
                    Some(true) => self.estimate(then, in_layer, false),
                    Some(false) => self.estimate(otherwise, in_layer, false),
                    // Expansion reports the condition; either branch is a safe count till then.
                    None => Ok(self
                        .estimate(then, in_layer, false)?
                        .max(self.estimate(otherwise, in_layer, false)?)),
                };
            }
            StmtKind::For {
                var,
                start,
                end,
                step,
                body,
            } => {
                let key = st as *const Stmt as usize;
                if let Some(&t) = self.loop_counts.get(&key) {
                    return Ok(t);
                }
                let (walk, vars) = self.loop_vars.entry(key).or_insert_with(|| {
                    let mut free = Vec::new();
                    count_vars(std::slice::from_ref(st), &mut Vec::new(), &mut free);
                    (counts_depend_on(body, &var.name), free)
                });
                let walk = *walk;
                let closed = !vars.iter().any(|n| self.vars.iter().any(|(v, _)| v == n));
                let t =
                    self.estimate_loop(st, var, (start, end, step.as_ref()), body, walk, in_layer)?;
                if closed {
                    self.loop_counts.insert(key, t);
                }
                return Ok(t);
            }
            StmtKind::Gate { groups, .. } => groups.iter().fold(lone, |acc, g| {
                let targets = g.iter().fold(0u64, |t, r| t.saturating_add(n(self, r)));
                acc.saturating_add(cost::OP)
                    .saturating_add(cost::TARGET.saturating_mul(targets))
            }),
            StmtKind::Reset { targets, .. } => targets.iter().fold(lone, |acc, r| {
                acc.saturating_add(cost::OP)
                    .saturating_add(cost::TARGET.saturating_mul(n(self, r)))
            }),
            StmtKind::Measure { outcomes, .. } => outcomes.iter().fold(lone, |acc, o| {
                let per_result = cost::OP + cost::RECORD + cost::TARGET * o.product.len() as u64;
                acc.saturating_add(n(self, &o.result).saturating_mul(per_result))
            }),
            StmtKind::Noise { targets, .. } => {
                let count = match targets {
                    NoiseTargets::Groups(groups) => groups
                        .iter()
                        .flatten()
                        .fold(0u64, |t, r| t.saturating_add(n(self, r))),
                    NoiseTargets::Product(product) => product.len() as u64,
                };
                lone.saturating_add(cost::OP)
                    .saturating_add(cost::TARGET.saturating_mul(count))
            }
            StmtKind::Detector { coords, parity, .. } => (cost::DETECTOR
                + cost::COORD * coords.as_ref().map_or(0, Vec::len) as u64)
                .saturating_add(cost::TERM.saturating_mul(self.term_count(parity))),
            StmtKind::Observable { extend, parity, .. } => {
                let own = if *extend { 0 } else { cost::DETECTOR };
                own.saturating_add(cost::TERM.saturating_mul(self.term_count(parity)))
            }
        };
        Ok(Tally::items(items))
    }

    /// Counts a `for` loop: once, times the trip count, when the loop variable cannot change
    /// what the body counts; otherwise (`walk`) iteration by iteration, stopping at the limit.
    fn estimate_loop(
        &mut self,
        st: &Stmt,
        var: &crate::lang::Ident,
        (start, end, step): (&Expr, &Expr, Option<&Expr>),
        body: &[Stmt],
        walk: bool,
        in_layer: bool,
    ) -> R<Tally> {
        // Bounds that do not evaluate are reported by the expansion, which then stops.
        let (Some(a), Some(b)) = (self.int_value(start), self.int_value(end)) else {
            return Ok(Tally::default());
        };
        let s = match step.map(|e| self.int_value(e)) {
            None => 1,
            Some(Some(s)) if s > 0 => s,
            Some(_) => return Ok(Tally::default()),
        };
        if b <= a {
            return Ok(Tally::default());
        }
        let trips = ((i128::from(b) - i128::from(a) + i128::from(s) - 1) / i128::from(s)) as u64;
        self.vars.push((var.name.clone(), a));
        let result = if walk {
            let mut total = Tally::default();
            let mut v = a;
            loop {
                if let Some(slot) = self.vars.last_mut() {
                    slot.1 = v;
                }
                match self.estimate(body, in_layer, false) {
                    Ok(t) => total = total.plus(t).plus(Tally::STEP),
                    Err(d) => break Err(d),
                }
                if let Some(d) = self.past_limit(total, st.span, "this loop", true) {
                    break Err(d);
                }
                match v.checked_add(s) {
                    Some(next) if next < b => v = next,
                    _ => break Ok(total),
                }
            }
        } else {
            self.estimate(body, in_layer, false)
                .map(|t| t.plus(Tally::STEP).times(trips))
        };
        self.vars.pop();
        let total = result?;
        match self.past_limit(total, st.span, "this loop", false) {
            Some(d) => Err(d),
            None => Ok(total),
        }
    }

    // ---- the end ----------------------------------------------------------------------------

    fn finish(mut self, stmts: &[Stmt]) -> Result<Circuit, Vec<Diagnostic>> {
        for (name, span) in std::mem::take(&mut self.pending) {
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
        })
    }
}

/// The steps one execution of a statement costs: one, plus one per [`NODES_PER_STEP`] nodes
/// (numbers, names and operators) of the expressions written in it, not in the blocks it
/// contains. So a long expression evaluated in a hot loop counts for the time it takes.
fn stmt_steps(st: &Stmt) -> Tally {
    let mut nodes: u64 = 0;
    let mut e = |x: &Expr| nodes += expr_nodes(x);
    let r = |x: &Ref, e: &mut dyn FnMut(&Expr)| {
        for ix in &x.index {
            match ix {
                Index::Single(a) => e(a),
                Index::Range(a, b) => {
                    e(a);
                    e(b);
                }
            }
        }
    };
    match &st.kind {
        StmtKind::Blank | StmtKind::Comment(_) | StmtKind::Layer(_) | StmtKind::Round(_) => {}
        StmtKind::Param { value, .. } => e(value),
        StmtKind::For {
            start, end, step, ..
        } => {
            e(start);
            e(end);
            if let Some(s) = step {
                e(s);
            }
        }
        StmtKind::If { cond, .. } => e(cond),
        StmtKind::Qubit { target, coords, .. } => {
            r(target, &mut e);
            coords.iter().flatten().for_each(&mut e);
        }
        StmtKind::Gate { groups, .. } => groups.iter().flatten().for_each(|x| r(x, &mut e)),
        StmtKind::Reset { targets, .. } => targets.iter().for_each(|x| r(x, &mut e)),
        StmtKind::Measure { outcomes, flip } => {
            for o in outcomes {
                r(&o.result, &mut e);
                o.product.iter().for_each(|(_, x)| r(x, &mut e));
            }
            if let Some(f) = flip {
                e(f);
            }
        }
        StmtKind::Noise { args, targets, .. } => {
            args.iter().for_each(|(_, a)| e(a));
            match targets {
                NoiseTargets::Groups(groups) => groups.iter().flatten().for_each(|x| r(x, &mut e)),
                NoiseTargets::Product(product) => product.iter().for_each(|(_, x)| r(x, &mut e)),
            }
        }
        StmtKind::Detector {
            name,
            coords,
            parity,
        } => {
            if let Some(n) = name {
                r(n, &mut e);
            }
            coords.iter().flatten().for_each(&mut e);
            parity.iter().for_each(|x| r(x, &mut e));
        }
        StmtKind::Observable { name, parity, .. } => {
            r(name, &mut e);
            parity.iter().for_each(|x| r(x, &mut e));
        }
    }
    Tally {
        items: 0,
        steps: 1 + nodes / NODES_PER_STEP,
    }
}

/// Expression nodes that cost as much time as a step: evaluating one takes a fraction of the
/// time a statement or loop iteration does, and typical statements (a condition on the loop
/// variables, a couple of indices) have a few of them.
const NODES_PER_STEP: u64 = 4;

/// Number of nodes of an expression.
fn expr_nodes(e: &Expr) -> u64 {
    let mut n = 0;
    let mut stack = vec![e];
    while let Some(e) = stack.pop() {
        n += 1;
        match &e.kind {
            ExprKind::Var(_) | ExprKind::Int(_) | ExprKind::Float(_) => {}
            ExprKind::Neg(a) | ExprKind::Not(a) => stack.push(a),
            ExprKind::Binary(_, a, b) => {
                stack.push(a);
                stack.push(b);
            }
        }
    }
    n
}

/// Whether what `stmts` count (see `Expander::estimate`) can depend on the variable `name`.
fn counts_depend_on(stmts: &[Stmt], name: &str) -> bool {
    let mut free = Vec::new();
    count_vars(stmts, &mut Vec::new(), &mut free);
    free.iter().any(|n| n == name)
}

/// Collects into `free` the names that what `stmts` count can depend on: those in loop bounds
/// and steps, conditions and ranges of references, less those bound by loops inside (`bound`
/// holds the loop variables in scope). Index values, coordinates and probabilities change what
/// is built, not how much.
fn count_vars(stmts: &[Stmt], bound: &mut Vec<String>, free: &mut Vec<String>) {
    fn expr(e: &Expr, bound: &[String], free: &mut Vec<String>) {
        // An explicit stack: expressions may be a thousand operators long.
        let mut stack = vec![e];
        while let Some(e) = stack.pop() {
            match &e.kind {
                ExprKind::Var(v) => {
                    if !bound.contains(v) && !free.contains(v) {
                        free.push(v.clone());
                    }
                }
                ExprKind::Int(_) | ExprKind::Float(_) => {}
                ExprKind::Neg(a) | ExprKind::Not(a) => stack.push(a),
                ExprKind::Binary(_, a, b) => {
                    stack.push(a);
                    stack.push(b);
                }
            }
        }
    }
    fn range(r: &Ref, bound: &[String], free: &mut Vec<String>) {
        for ix in &r.index {
            if let Index::Range(a, b) = ix {
                expr(a, bound, free);
                expr(b, bound, free);
            }
        }
    }
    for st in stmts {
        match &st.kind {
            StmtKind::Blank | StmtKind::Comment(_) | StmtKind::Param { .. } => {}
            StmtKind::For {
                var,
                start,
                end,
                step,
                body,
            } => {
                expr(start, bound, free);
                expr(end, bound, free);
                if let Some(s) = step {
                    expr(s, bound, free);
                }
                bound.push(var.name.clone());
                count_vars(body, bound, free);
                bound.pop();
            }
            StmtKind::If {
                cond,
                then,
                otherwise,
            } => {
                expr(cond, bound, free);
                count_vars(then, bound, free);
                count_vars(otherwise, bound, free);
            }
            StmtKind::Layer(body) | StmtKind::Round(body) => count_vars(body, bound, free),
            StmtKind::Qubit { target, .. } => range(target, bound, free),
            StmtKind::Gate { groups, .. } => {
                groups.iter().flatten().for_each(|r| range(r, bound, free))
            }
            StmtKind::Reset { targets, .. } => targets.iter().for_each(|r| range(r, bound, free)),
            StmtKind::Measure { outcomes, .. } => {
                for o in outcomes {
                    range(&o.result, bound, free);
                    o.product.iter().for_each(|(_, r)| range(r, bound, free));
                }
            }
            StmtKind::Noise { targets, .. } => match targets {
                NoiseTargets::Groups(groups) => {
                    groups.iter().flatten().for_each(|r| range(r, bound, free))
                }
                NoiseTargets::Product(product) => {
                    product.iter().for_each(|(_, r)| range(r, bound, free))
                }
            },
            StmtKind::Detector { parity, .. } | StmtKind::Observable { parity, .. } => {
                parity.iter().for_each(|r| range(r, bound, free))
            }
        }
    }
}

/// A binary operation other than `and` / `or` on values; `None` on overflow, division by zero
/// or `%` of non-integers (integer `/` and `%` are Euclidean).
fn arith(op: BinOp, l: Value, r: Value) -> Option<Value> {
    if let (Value::Int(a), Value::Int(b)) = (l, r) {
        let v = match op {
            BinOp::Add => a.checked_add(b)?,
            BinOp::Sub => a.checked_sub(b)?,
            BinOp::Mul => a.checked_mul(b)?,
            BinOp::Div => a.checked_div_euclid(b)?,
            BinOp::Rem => a.checked_rem_euclid(b)?,
            BinOp::Eq => i64::from(a == b),
            BinOp::Ne => i64::from(a != b),
            BinOp::Lt => i64::from(a < b),
            BinOp::Le => i64::from(a <= b),
            BinOp::Gt => i64::from(a > b),
            BinOp::Ge => i64::from(a >= b),
            BinOp::And | BinOp::Or => unreachable_logic(),
        };
        return Some(Value::Int(v));
    }
    let (a, b) = (l.as_f64(), r.as_f64());
    Some(match op {
        BinOp::Add => Value::Float(a + b),
        BinOp::Sub => Value::Float(a - b),
        BinOp::Mul => Value::Float(a * b),
        BinOp::Div if b == 0.0 => return None,
        BinOp::Div => Value::Float(a / b),
        BinOp::Rem => return None,
        BinOp::Eq => Value::Int(i64::from(a == b)),
        BinOp::Ne => Value::Int(i64::from(a != b)),
        BinOp::Lt => Value::Int(i64::from(a < b)),
        BinOp::Le => Value::Int(i64::from(a <= b)),
        BinOp::Gt => Value::Int(i64::from(a > b)),
        BinOp::Ge => Value::Int(i64::from(a >= b)),
        BinOp::And | BinOp::Or => Value::Int(unreachable_logic()),
    })
}

fn unreachable_logic() -> i64 {
    // `and` / `or` are evaluated before `binary` is called; reaching this is a bug, and the
    // conservative answer (false) keeps the program running.
    0
}

#[cfg(test)]
mod tests {
    use super::*;

    /// (up-front count, count spent while expanding) of a circuit under a large limit.
    fn counts(text: &str) -> (Tally, Tally) {
        let src = Source::new("t.slant", text);
        let ast = crate::lang::parse(&src).unwrap_or_else(|d| panic!("{}", d[0].render()));
        let mut x = Expander::new(src.clone(), &[], u64::MAX / 2);
        let estimate = x.check_estimate(&ast.stmts).unwrap();
        x.block(&ast.stmts);
        let spent = x.used;
        if let Err(d) = x.finish(&ast.stmts) {
            panic!("{}\n{text}", d[0].render());
        }
        (estimate, spent)
    }

    #[test]
    fn up_front_count_is_exact() {
        // The up-front count promises to be what expansion spends, on every construct: the
        // generated families exercise loops that depend on their variables and loops that do
        // not, conditions, layers, products, detectors and observables.
        let mut texts: Vec<String> = Vec::new();
        for entry in std::fs::read_dir(concat!(env!("CARGO_MANIFEST_DIR"), "/circuits")).unwrap() {
            let path = entry.unwrap().path();
            if path.extension().is_some_and(|e| e == "slant") {
                texts.push(std::fs::read_to_string(path).unwrap());
            }
        }
        texts.push(
            "param n = 6\nqubit q[0..n, 0..2] role data, extra\nqubit z at (1, 2, 3)\n\
             for i in 0..n {\n  for j in 0..i by 2 { layer { h q[j, 0]; cx q[i, 0] q[i, 1] } }\n\
             }\nfor i in 0..n {\n  if i % 3 == 0 { measure z q[i, 0] -> m[i] } else { \
             measure x q[i, 1] * x q[i, 0] -> m[i] flip 0.1 }\n}\n\
             layer { reset z q[0..n, 0]; noise depolarizing p=0.1 q[0..n, 1] }\n\
             noise correlated p=0.1 x z * z q[0, 0]\n\
             detector at (1, 2) = m[0..n] ^ m[0..n]\nobservable o = m[1]\nobservable o ^= m[2..4]\n"
                .into(),
        );
        assert!(texts.len() > 10);
        for text in &texts {
            let (estimate, spent) = counts(text);
            assert_eq!(estimate, spent, "{text}");
            assert!(spent.items > 0 && spent.steps > 0);
        }
    }

    #[test]
    fn fast_evaluation_agrees_with_the_diagnosing_one() {
        let exprs = [
            "1 + 2 * 3",
            "-7 / 2",
            "-7 % 2",
            "7 % -2",
            "n - i * 2",
            "(i + 1) % 2 == 0 and i > 0 or not n",
            "0 and 1 / 0",
            "1 or 1 / 0",
            "1 / 0",
            "1 % 0",
            "1.5 % 2",
            "1.5 / 0",
            "2 / 0.0",
            "9223372036854775807 + 1",
            "-(-9223372036854775807 - 1)",
            "(-9223372036854775807 - 1) / -1",
            "(-9223372036854775807 - 1) % -1",
            "not 0.5",
            "1.5 and 1",
            "0.5 < 1",
            "unknown + 1",
            "2.5 * 2 == 5",
        ];
        let src = Source::new("t", "");
        let mut x = Expander::new(src, &[], 100);
        x.params.push(("n".into(), 5));
        x.vars.push(("i".into(), 3));
        for text in exprs {
            let ast = crate::lang::parse(&Source::new("t", format!("param p = {text}\n")))
                .unwrap_or_else(|d| panic!("{text}: {}", d[0].render()));
            let StmtKind::Param { value, .. } = &ast.stmts[0].kind else {
                panic!("{text}");
            };
            assert_eq!(x.value(value), x.eval_diagnosed(value).ok(), "{text}");
        }
    }

    #[test]
    fn running_count_backs_up_the_estimate_and_halts() {
        // Expanded without the up-front count, as if it had missed: the running count refuses
        // once, at the statement that passes the limit, and nothing after it is expanded.
        let text = "qubit a\nfor i in 0..1000 { h a }\nqubit b\n";
        let src = Source::new("t.slant", text);
        let ast = crate::lang::parse(&src).unwrap();
        let mut x = Expander::new(src.clone(), &[], 100);
        x.block(&ast.stmts);
        assert_eq!(x.errors.len(), 1);
        let d = &x.errors[0];
        assert_eq!(
            d.message,
            "the circuit expands past the size limit of 100 items"
        );
        assert_eq!(d.location().map(|l| (l.1, l.2)), Some((2, 20)));
        assert!(x.used.items <= 100 + cost::LAYER + cost::OP + cost::TARGET);
        assert!(!x.qubit_ids.contains_key("b"));
        // Steps are counted the same way.
        let src = Source::new("t.slant", "qubit a\nfor i in 0..1000 { }\n");
        let ast = crate::lang::parse(&src).unwrap();
        let mut x = Expander::new(src.clone(), &[], 100);
        x.block(&ast.stmts);
        assert!(x.errors[0]
            .message
            .contains("runs past the limit of 100 steps"));
    }

    #[test]
    fn dependent_loops_are_walked_and_others_multiplied() {
        let dependent = "qubit a\nfor i in 0..100 {\n  for j in 0..i { h a }\n}\n";
        // 4950 lone `h a`: a layer, an op and its target each, and a step for the statement and
        // one for its loop iteration.
        let (estimate, spent) = counts(dependent);
        let per = cost::LAYER + cost::OP + cost::TARGET;
        assert_eq!(estimate.items, cost::QUBIT + 4950 * per);
        assert_eq!(estimate, spent);
        assert!(!counts_depend_on(
            &crate::lang::parse(&Source::new("t", "for j in 0..n { h q[i] }\n"))
                .unwrap()
                .stmts,
            "i"
        ));
        for body in [
            "for j in 0..i { }",
            "if i > 2 { h a }",
            "h q[0..i]",
            "detector = m[i..3]",
        ] {
            let ast = crate::lang::parse(&Source::new("t", format!("{body}\n"))).unwrap();
            assert!(counts_depend_on(&ast.stmts, "i"), "{body}");
        }
    }
}
