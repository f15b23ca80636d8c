//! The size budget: what each expanded item costs ([`cost`]), the exact up-front count of a
//! circuit's items and steps before anything is built, and the running count kept while
//! expanding (see the module docs of the expander for the rules).

use crate::base::{Diagnostic, Span};
use crate::ir::expand::shape::{each_node, visit, Shape};
use crate::ir::expand::{Expander, Tally, R};
use crate::lang::{Expr, ExprKind, Index, NoiseTargets, Ref, Stmt, StmtKind};

/// How much each expanded thing counts against [`crate::ir::Limits::max_items`].
///
/// The weights follow memory. Loading and checking circuits made of nothing but one kind of
/// thing (qubits; lone operations; operations in layers; measurements, alone or in layers;
/// detectors and their terms) just under the default limit, one item stood for at most 64
/// bytes of peak memory (bench/memory.sh), all stages together: the expanded circuit, the
/// expander's name tables and the determinism check's tables, within the 70 bytes an item of
/// [`crate::ir::Limits::BYTES_PER_ITEM`]. The dearest things are measurements (the result's
/// name is kept twice, in the record list and in the lookup table), qubits (likewise) and lone
/// operations (each opens a layer of its own).
///
/// Not counted here: the determinism check keeps, per qubit, the set of detectors an error
/// there would flip. In circuits where a qubit is measured many times without a reset and many
/// other qubits are entangled with it first, those sets hold qubits × detectors ids, which no
/// count of items bounds; the check stops once they would pass half the memory budget.
pub mod cost {
    /// A qubit.
    pub const QUBIT: u64 = 4;
    /// A coordinate of a qubit or detector, or a role of a qubit.
    pub const COORD: u64 = 1;
    /// A layer (a `layer` block, or an operation statement outside one): its tables are
    /// allocated even when it holds a single operation.
    pub const LAYER: u64 = 3;
    /// An operation.
    pub const OP: u64 = 2;
    /// One target qubit of an operation.
    pub const TARGET: u64 = 1;
    /// A measurement result, on top of its measurement operation.
    pub const RECORD: u64 = 4;
    /// A detector or observable.
    pub const DETECTOR: u64 = 4;
    /// A result named in a detector's or observable's parity.
    pub const TERM: u64 = 1;
}

impl Expander {
    /// Spends `t` of the budget; past the limit, refuses at `span` and halts the expansion.
    pub(super) fn spend(&mut self, t: Tally, span: Span) -> R<()> {
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

    // ---- size estimate ----------------------------------------------------------------------

    pub(super) fn check_estimate(&mut self, stmts: &[Stmt]) -> R<Tally> {
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
    pub(super) fn past_limit(
        &self,
        t: Tally,
        span: Span,
        what: &str,
        partial: bool,
    ) -> Option<Diagnostic> {
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
    pub(super) fn estimate(&mut self, stmts: &[Stmt], in_layer: bool, top: bool) -> R<Tally> {
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

    pub(super) fn estimate_stmt(&mut self, st: &Stmt, in_layer: bool) -> R<Tally> {
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
    pub(super) fn estimate_loop(
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
        let shape = if walk {
            self.count_shape(body, &var.name)
        } else {
            None
        };
        let result = if let Some(shape) = shape {
            self.estimate_stretches(st, &shape, (a, s, trips), body, in_layer)
        } else if walk {
            let mut total = Tally::default();
            let mut v = a;
            loop {
                if let Some(slot) = self.vars.last_mut() {
                    slot.1 = v;
                }
                self.evaluated += 1;
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

    /// Counts a loop whose body's count moves with the loop variable in stretches of a
    /// [`Shape`] (see `shape.rs`): in each stretch, one period of iterations is counted and
    /// repeated. `(a, s, trips)`: the first value, the step and the number of iterations; the
    /// variable is the innermost of `self.vars`.
    fn estimate_stretches(
        &mut self,
        st: &Stmt,
        shape: &Shape,
        (a, s, trips): (i64, i64, u64),
        body: &[Stmt],
        in_layer: bool,
    ) -> R<Tally> {
        // Iteration t runs with the variable at a + s·t; a stretch starting at value b
        // starts at the first t with a + s·t ≥ b.
        let (a128, s128) = (i128::from(a), i128::from(s));
        let mut starts: Vec<u64> = shape
            .breaks
            .iter()
            .filter_map(|&b| {
                let t = (b - a128 + s128 - 1).div_euclid(s128);
                (t > 0 && t < i128::from(trips)).then_some(t as u64)
            })
            .collect();
        starts.push(0);
        starts.sort_unstable();
        starts.dedup();
        let mut total = Tally::default();
        for (k, &t0) in starts.iter().enumerate() {
            let len = starts.get(k + 1).copied().unwrap_or(trips) - t0;
            let (whole, rest) = (len / shape.period, len % shape.period);
            let (mut period, mut part) = (Tally::default(), Tally::default());
            for t in t0..t0 + len.min(shape.period) {
                if t - t0 == rest {
                    part = period;
                }
                if let Some(slot) = self.vars.last_mut() {
                    // t < trips, so the value lies below the loop's end and fits.
                    slot.1 = a + s * t as i64;
                }
                self.evaluated += 1;
                period = period.plus(self.estimate(body, in_layer, false)?.plus(Tally::STEP));
            }
            if rest == len {
                part = period;
            }
            total = total.plus(period.times(whole)).plus(part);
            if let Some(d) = self.past_limit(total, st.span, "this loop", t0 + len < trips) {
                return Err(d);
            }
        }
        Ok(total)
    }
}

/// The steps one execution of a statement costs: one, plus one per [`NODES_PER_STEP`] nodes
/// (numbers, names and operators) of the expressions written in it, not in the blocks it
/// contains. So a long expression evaluated in a hot loop counts for the time it takes.
pub(super) fn stmt_steps(st: &Stmt) -> Tally {
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
pub(super) fn expr_nodes(e: &Expr) -> u64 {
    let mut n = 0;
    each_node(e, |_| n += 1);
    n
}

/// Whether what `stmts` count (see `Expander::estimate`) can depend on the variable `name`.
pub(super) fn counts_depend_on(stmts: &[Stmt], name: &str) -> bool {
    let mut free = Vec::new();
    count_vars(stmts, &mut Vec::new(), &mut free);
    free.iter().any(|n| n == name)
}

/// Collects into `free` the names that what `stmts` count can depend on: those in loop bounds
/// and steps, conditions and ranges of references, less those bound by loops inside (`bound`
/// holds the loop variables in scope). Index values, coordinates and probabilities change what
/// is built, not how much.
pub(super) fn count_vars(stmts: &[Stmt], bound: &mut Vec<String>, free: &mut Vec<String>) {
    visit(stmts, bound, &mut |e, _, bound| {
        each_node(e, |x| {
            if let ExprKind::Var(v) = &x.kind {
                if !bound.contains(v) && !free.contains(v) {
                    free.push(v.clone());
                }
            }
        })
    });
}
