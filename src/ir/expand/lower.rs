//! Lowering: each statement of the syntax tree executed into the circuit being built — loops
//! unrolled, conditions taken, declarations recorded, operations placed in layers.

use crate::base::{odd_parity, ChannelKind, Diagnostic, Gate, Pauli, Span};
use crate::ir::expand::budget::{cost, stmt_steps};
use crate::ir::expand::eval::Value;
use crate::ir::expand::{Expander, Tally, MAX_ERRORS, R};
use crate::ir::{Channel, Detector, Observable, Op, OpKind, Qubit, Record};
use crate::lang::{Expr, Ident, NoiseTargets, Outcome, Ref, Stmt, StmtKind};

impl Expander {
    // ---- statements -------------------------------------------------------------------------

    pub(super) fn block(&mut self, stmts: &[Stmt]) {
        for st in stmts {
            if self.errors.len() >= MAX_ERRORS || self.halted {
                return;
            }
            let result = self
                .spend(stmt_steps(st), st.span)
                .and_then(|()| self.stmt(st));
            if let Err(d) = result {
                self.report(d);
                // What the refused statement would have measured is now undefined for reasons
                // already reported: later uses of those results get no error of their own.
                refused_results(st, &mut self.refused);
            }
        }
    }

    pub(super) fn stmt(&mut self, st: &Stmt) -> R<()> {
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

    pub(super) fn stmt_inner(&mut self, st: &Stmt) -> R<()> {
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
                            if first == r.span {
                                // The same statement again: a loop runs it once per
                                // iteration, so the name needs the loop variable.
                                return Err(self.repeated_in_loop(r, &n));
                            }
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

    pub(super) fn param(&mut self, st: &Stmt, name: &Ident, value: &Expr) -> R<()> {
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

    pub(super) fn gate(&mut self, st: &Stmt, gate: &Ident, groups: &[Vec<Ref>]) -> R<()> {
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

    pub(super) fn measure(&mut self, st: &Stmt, o: &Outcome, flip: f64) -> R<()> {
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
                        "{} for {}",
                        crate::base::count(len, "result name"),
                        crate::base::count(
                            lists.iter().map(Vec::len).max().unwrap_or(0),
                            "measurement"
                        )
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

    pub(super) fn check_distinct(&self, targets: &[u32], spans: &[Span]) -> R<()> {
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

    /// The error for a detector statement inside a loop whose name does not change between
    /// iterations: its hint indexes the name by the loop variables it lacks (`flagged[r]`).
    fn repeated_in_loop(&self, r: &Ref, name: &str) -> Diagnostic {
        let text = self.src.slice(r.span).trim().to_string();
        let is_word = |w: &str| {
            text.split(|c: char| !(c.is_ascii_alphanumeric() || c == '_'))
                .any(|t| t == w)
        };
        let missing: Vec<&str> = self
            .vars
            .iter()
            .map(|(v, _)| v.as_str())
            .filter(|v| !is_word(v))
            .collect();
        let suggestion = match text.split_once('[') {
            _ if missing.is_empty() => None,
            None => Some(format!("{text}[{}]", missing.join(", "))),
            Some((base, rest)) => Some(format!("{base}[{}, {rest}", missing.join(", "))),
        };
        let d = self.err(
            r.span,
            format!("detector `{name}` is declared again on the next iteration of its loop"),
        );
        match suggestion {
            Some(s) => d.with_hint(format!(
                "each iteration declares a new detector; index its name by the loop variable: \
                 `detector {s} ...`"
            )),
            None => d.with_hint("each iteration declares a new detector; give each its own name"),
        }
    }

    pub(super) fn noise(
        &mut self,
        st: &Stmt,
        channel: &str,
        args: &[(Ident, Expr)],
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
        let Some(kind) = ChannelKind::resolve(channel, args.iter().map(|(k, _)| k.name.as_str()))
        else {
            return Err(self.err(st.span, format!("unknown noise channel `{channel}`")));
        };
        let ch = match kind {
            ChannelKind::BitFlip => Channel::BitFlip(required("p")?),
            ChannelKind::Dephasing => Channel::Dephasing(required("p")?),
            ChannelKind::Depolarizing => Channel::Depolarizing(required("p")?),
            ChannelKind::PairDepolarizing => Channel::PairDepolarizing(required("p")?),
            ChannelKind::Pauli => Channel::Pauli {
                px: optional("x")?,
                py: optional("y")?,
                pz: optional("z")?,
            },
            ChannelKind::PairPauli => {
                let mut probs = [0.0; 15];
                for (k, e) in args {
                    if let Some(ix) = Pauli::pair_index(&k.name) {
                        probs[ix - 1] = self.probability(e)?;
                    }
                }
                Channel::PairPauli(Box::new(probs))
            }
            ChannelKind::Joint => {
                let NoiseTargets::Product(product) = targets else {
                    return Err(
                        self.err(st.span, "`joint` takes a Pauli product, e.g. `x a * z b`")
                    );
                };
                Channel::Joint {
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
                            self.err(r.span, "each factor of a joint fault names one qubit")
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
    pub(super) fn parity(&mut self, refs: &[Ref]) -> R<Option<Vec<u32>>> {
        Ok(self.parity_terms(refs)?.map(odd_parity))
    }

    /// The record indices a parity names, in the order written, repeats kept. `None` as for
    /// [`Expander::parity`].
    pub(super) fn parity_terms(&mut self, refs: &[Ref]) -> R<Option<Vec<u32>>> {
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
}

/// Adds the base names of the results that `st` (and the statements inside it) measure.
fn refused_results(st: &Stmt, out: &mut std::collections::HashSet<String>) {
    match &st.kind {
        StmtKind::Measure { outcomes, .. } => {
            for o in outcomes {
                out.insert(o.result.name.name.clone());
            }
        }
        StmtKind::Layer(body) | StmtKind::Round(body) | StmtKind::For { body, .. } => {
            for s in body {
                refused_results(s, out);
            }
        }
        StmtKind::If {
            then, otherwise, ..
        } => {
            for s in then.iter().chain(otherwise) {
                refused_results(s, out);
            }
        }
        _ => {}
    }
}
