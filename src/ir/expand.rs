//! Expansion: [`Ast`] + parameter overrides → [`Circuit`].
//!
//! Loops are unrolled, parameters and loop variables substituted, names resolved to indices and
//! layers assembled. Structural rules are enforced here because the AST spans are at hand: a
//! layer touches each qubit at most once (noise excepted), names are declared once, results are
//! measured before they are used, probabilities lie in `[0, 1]`.
//!
//! Size bombs: before expanding, `Expander::estimate` walks the AST multiplying loop trip counts; a
//! circuit whose estimate passes [`Limits::max_items`] is refused with the loop that causes it,
//! before any memory is spent. A running count during expansion backs the estimate up.
//!
//! Conventions: names of indexed things print as `base[i,j]`; ranges `a..b` are half-open and
//! expand in row-major order; integer `/` and `%` use Euclidean division so negative indices
//! behave predictably.

use std::collections::HashMap;
use std::sync::Arc;

use crate::ir::{
    Channel, Circuit, Detector, Gate, Layer, Observable, Op, OpKind, Pauli, Qubit, Record,
};
use crate::lang::ast::{BinOp, Expr, ExprKind, Index, NoiseTargets, Ref, Stmt, StmtKind};
use crate::lang::diagnostic::did_you_mean;
use crate::lang::{Ast, Diagnostic, Source, Span};

/// Size limits for expansion.
#[derive(Clone, Debug)]
pub struct Limits {
    /// Maximum number of expanded items (qubits, operations, records, detectors).
    pub max_items: u64,
}

impl Default for Limits {
    fn default() -> Self {
        // A distance-25, 25-round surface-code memory is about 1e5 items; 2e7 leaves room for
        // far larger studies while refusing accidental exponents.
        Limits {
            max_items: 20_000_000,
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
    used: HashMap<u32, Span>,
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
    layers: Vec<Layer>,
    open: Option<OpenLayer>,
    round: Option<u32>,
    rounds: u32,
    items: u64,
    max_items: u64,
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
            layers: Vec::new(),
            open: None,
            round: None,
            rounds: 0,
            items: 0,
            max_items,
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

    fn eval(&self, e: &Expr) -> R<Value> {
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
        let overflow = || self.err(span, "arithmetic overflow");
        if let (Value::Int(a), Value::Int(b)) = (l, r) {
            let v = match op {
                BinOp::Add => a.checked_add(b).ok_or_else(overflow)?,
                BinOp::Sub => a.checked_sub(b).ok_or_else(overflow)?,
                BinOp::Mul => a.checked_mul(b).ok_or_else(overflow)?,
                BinOp::Div | BinOp::Rem if b == 0 => {
                    return Err(self.err(rspan, "division by zero"))
                }
                BinOp::Div => a.checked_div_euclid(b).ok_or_else(overflow)?,
                BinOp::Rem => a.checked_rem_euclid(b).ok_or_else(overflow)?,
                BinOp::Eq => i64::from(a == b),
                BinOp::Ne => i64::from(a != b),
                BinOp::Lt => i64::from(a < b),
                BinOp::Le => i64::from(a <= b),
                BinOp::Gt => i64::from(a > b),
                BinOp::Ge => i64::from(a >= b),
                BinOp::And | BinOp::Or => unreachable_logic(),
            };
            return Ok(Value::Int(v));
        }
        let (a, b) = (l.as_f64(), r.as_f64());
        Ok(match op {
            BinOp::Add => Value::Float(a + b),
            BinOp::Sub => Value::Float(a - b),
            BinOp::Mul => Value::Float(a * b),
            BinOp::Div if b == 0.0 => return Err(self.err(rspan, "division by zero")),
            BinOp::Div => Value::Float(a / b),
            BinOp::Rem => return Err(self.err(span, "`%` needs integers")),
            BinOp::Eq => Value::Int(i64::from(a == b)),
            BinOp::Ne => Value::Int(i64::from(a != b)),
            BinOp::Lt => Value::Int(i64::from(a < b)),
            BinOp::Le => Value::Int(i64::from(a <= b)),
            BinOp::Gt => Value::Int(i64::from(a > b)),
            BinOp::Ge => Value::Int(i64::from(a >= b)),
            BinOp::And | BinOp::Or => Value::Int(unreachable_logic()),
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

    /// Expands a reference into display names, ranges in row-major order.
    fn names(&self, r: &Ref) -> R<Vec<String>> {
        let mut lists: Vec<Vec<i64>> = Vec::new();
        for ix in &r.index {
            match ix {
                Index::Single(e) => lists.push(vec![self.int(e)?]),
                Index::Range(a, b) => {
                    let (a, b) = (self.int(a)?, self.int(b)?);
                    if b - a > self.max_items as i64 {
                        return Err(self.err(
                            r.span,
                            format!("range `{a}..{b}` is larger than the size limit"),
                        ));
                    }
                    lists.push((a..b).collect());
                }
            }
        }
        let base = &r.name.name;
        if lists.is_empty() {
            return Ok(vec![base.clone()]);
        }
        let mut out = vec![String::new()];
        for (k, list) in lists.iter().enumerate() {
            let mut next = Vec::with_capacity(out.len() * list.len());
            for prefix in &out {
                for v in list {
                    next.push(if k == 0 {
                        format!("{v}")
                    } else {
                        format!("{prefix},{v}")
                    });
                }
            }
            out = next;
        }
        Ok(out.into_iter().map(|s| format!("{base}[{s}]")).collect())
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
        let names = self.names(r)?;
        let mut out = Vec::with_capacity(names.len());
        for n in names {
            match self.qubit_ids.get(&n) {
                Some(&q) => out.push(q),
                None => return Err(self.undefined_qubit(r, &n)),
            }
        }
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
        let names = self.names(r)?;
        Ok(names
            .into_iter()
            .map(|n| match self.record_ids.get(&n) {
                Some(&id) => Some(id),
                None => {
                    self.pending.push((n, r.span));
                    None
                }
            })
            .collect())
    }

    // ---- layers -----------------------------------------------------------------------------

    fn count(&mut self, n: u64, span: Span) -> R<()> {
        self.items += n;
        if self.items > self.max_items {
            return Err(self
                .err(
                    span,
                    format!(
                        "the circuit expands past the size limit of {} items",
                        self.max_items
                    ),
                )
                .with_hint("shrink the parameters, or raise the limit with `--max-items`"));
        }
        Ok(())
    }

    /// Adds an op to the open layer, or to a layer of its own outside `layer` blocks.
    fn push_op(&mut self, op: Op, target_spans: &[Span]) -> R<()> {
        self.count(1, op.span)?;
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
            for (k, &q) in op.targets.iter().enumerate() {
                let span = target_spans.get(k).copied().unwrap_or(op.span);
                if let Some(&first) = open.used.get(&q) {
                    let name = &self.qubits[q as usize].name;
                    result = Err(Diagnostic::error(&self.src, span, format!("qubit `{name}` is used twice in one layer"))
                        .with_label(&self.src, first, "first used here")
                        .with_hint("operations in one layer act on disjoint qubits; move one into the next `layer`"));
                    break;
                }
                open.used.insert(q, span);
            }
        }
        open.layer.ops.push(op);
        result
    }

    fn open_layer(&mut self, span: Span) {
        self.open = Some(OpenLayer {
            layer: Layer {
                ops: Vec::new(),
                round: self.round,
                span,
            },
            used: HashMap::new(),
        });
    }

    fn close_layer(&mut self) {
        if let Some(open) = self.open.take() {
            self.layers.push(open.layer);
        }
    }

    // ---- statements -------------------------------------------------------------------------

    fn block(&mut self, stmts: &[Stmt]) {
        for st in stmts {
            if self.errors.len() >= MAX_ERRORS {
                return;
            }
            if let Err(d) = self.stmt(st) {
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
            self.open_layer(st.span);
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
                    self.count(1, st.span)?;
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
                self.open_layer(st.span);
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
                self.count(1, st.span)?;
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
                let records = self.parity(parity)?;
                let existing = self.observables.iter().position(|o| o.name == n);
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
                            let merged = xor_sorted(&self.observables[k].records, &records);
                            self.observables[k].records = merged;
                        }
                    }
                    (None, false) => {
                        self.count(1, st.span)?;
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

    fn param(&mut self, st: &Stmt, name: &crate::lang::ast::Ident, value: &Expr) -> R<()> {
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

    fn gate(&mut self, st: &Stmt, gate: &crate::lang::ast::Ident, groups: &[Vec<Ref>]) -> R<()> {
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

    fn measure(&mut self, st: &Stmt, o: &crate::lang::ast::Outcome, flip: f64) -> R<()> {
        let lists = o
            .product
            .iter()
            .map(|(_, r)| self.qubits_of(r))
            .collect::<R<Vec<_>>>()?;
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
        args: &[(crate::lang::ast::Ident, Expr)],
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
        let ch = match channel {
            "bitflip" => Channel::BitFlip(required("p")?),
            "dephasing" => Channel::Dephasing(required("p")?),
            "depolarizing" => Channel::Depolarizing1(required("p")?),
            "depolarizing2" => Channel::Depolarizing2(required("p")?),
            "pauli" => Channel::Pauli1 {
                px: optional("x")?,
                py: optional("y")?,
                pz: optional("z")?,
            },
            "pauli2" => {
                let mut probs = [0.0; 15];
                for (k, e) in args {
                    if let Some(ix) = Pauli::pair_index(&k.name) {
                        probs[ix - 1] = self.probability(e)?;
                    }
                }
                Channel::Pauli2(Box::new(probs))
            }
            "correlated" => {
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
            other => return Err(self.err(st.span, format!("unknown noise channel `{other}`"))),
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
        if !complete {
            return Ok(None);
        }
        out.sort_unstable();
        let mut dedup: Vec<u32> = Vec::with_capacity(out.len());
        for id in out {
            if dedup.last() == Some(&id) {
                dedup.pop();
            } else {
                dedup.push(id);
            }
        }
        Ok(Some(dedup))
    }

    // ---- size estimate ----------------------------------------------------------------------

    fn check_estimate(&mut self, stmts: &[Stmt]) -> R<()> {
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
        let result = self.estimate(stmts).map(|_| ());
        self.params = saved;
        result
    }

    /// Estimated number of expanded items, refusing at the loop that passes the limit.
    fn estimate(&mut self, stmts: &[Stmt]) -> R<u64> {
        let mut total: u64 = 0;
        for st in stmts {
            let n = match &st.kind {
                StmtKind::For {
                    var,
                    start,
                    end,
                    step,
                    body,
                } => {
                    let (Ok(a), Ok(b)) = (self.int(start), self.int(end)) else {
                        continue;
                    };
                    let s = step
                        .as_ref()
                        .and_then(|e| self.int(e).ok())
                        .unwrap_or(1)
                        .max(1);
                    let trips = if b > a {
                        ((b as i128 - a as i128 + s as i128 - 1) / s as i128) as u64
                    } else {
                        0
                    };
                    if trips == 0 {
                        continue;
                    }
                    self.vars.push((var.name.clone(), a));
                    let inner = self.estimate(body);
                    self.vars.pop();
                    let n = trips.saturating_mul(inner?.max(1));
                    if n > self.max_items {
                        return Err(self
                            .err(st.span, format!("this loop would expand to about {n} items, past the limit of {}", self.max_items))
                            .with_hint("shrink the loop bounds or parameters, or raise the limit with `--max-items`"));
                    }
                    n
                }
                StmtKind::If {
                    then, otherwise, ..
                } => self.estimate(then)?.max(self.estimate(otherwise)?),
                StmtKind::Layer(b) | StmtKind::Round(b) => self.estimate(b)?,
                _ => 1,
            };
            total = total.saturating_add(n);
            if total > self.max_items {
                return Err(self
                    .err(
                        st.span,
                        format!(
                            "the circuit would expand to about {total} items, past the limit of {}",
                            self.max_items
                        ),
                    )
                    .with_hint("raise the limit with `--max-items`"));
            }
        }
        Ok(total)
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

fn unreachable_logic() -> i64 {
    // `and` / `or` are evaluated before `binary` is called; reaching this is a bug, and the
    // conservative answer (false) keeps the program running.
    0
}

/// XOR of two sorted record lists.
fn xor_sorted(a: &[u32], b: &[u32]) -> Vec<u32> {
    crate::ir::sensitivity::xor_sets(a, b)
}
