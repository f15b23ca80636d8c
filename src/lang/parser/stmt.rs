//! The statement rules: a file, statement lists with error recovery, and one method per
//! statement form.

use nom::bytes::complete::tag;
use nom::{Input, Parser as _};

use crate::base::{did_you_mean, key_arity, Arity, Basis, ChannelKind, Gate, Pauli, Span};
use crate::lang::ast::{Expr, Ident, NoiseTargets, Outcome, Ref, Stmt, StmtKind};
use crate::lang::parser::{
    commit, describe, fail, fail_err, is_ident_start, skip_line, span_from, token_len, In, PError,
    PResult, Parser, KEYWORDS, MAX_CHAIN, MAX_ERRORS, RESERVED,
};

impl Parser {
    /// `file = stmt_list`
    pub(super) fn file<'a>(&self, i: In<'a>) -> Vec<Stmt> {
        let (rest, stmts) = self.stmt_list(i);
        let rest = self.sp(rest);
        if !rest.fragment().is_empty() {
            self.errors.borrow_mut().push(PError::at(
                &rest,
                1,
                "unexpected `}` with no open block",
            ));
        }
        stmts
    }

    /// `stmt_list = ( stmt? END )*`, stopping before `}` or at the end of input.
    pub(super) fn stmt_list<'a>(&self, mut i: In<'a>) -> (In<'a>, Vec<Stmt>) {
        let mut stmts: Vec<Stmt> = Vec::new();
        let mut newlines = 0;
        loop {
            // Between statements: spaces, `;`, newlines, own-line comments.
            let s = i.fragment();
            let n = s.len() - s.trim_start_matches([' ', '\t', '\r', ';']).len();
            i = i.take_from(n);
            let s = i.fragment();
            if s.starts_with('\n') {
                newlines += 1;
                i = i.take_from(1);
                continue;
            }
            if newlines >= 2 && !stmts.is_empty() && s.chars().next().is_some_and(|c| c != '}') {
                stmts.push(Stmt {
                    kind: StmtKind::Blank,
                    span: span_from(&i, &i),
                    comment: None,
                });
            }
            newlines = 0;
            if s.starts_with('#') {
                let len = s.find('\n').unwrap_or(s.len());
                let text = s[1..len].trim_end().to_string();
                let start = i;
                i = i.take_from(len);
                stmts.push(Stmt {
                    kind: StmtKind::Comment(text),
                    span: span_from(&start, &i),
                    comment: None,
                });
                continue;
            }
            if s.is_empty() || s.starts_with('}') {
                return (i, stmts);
            }
            if self.errors.borrow().len() >= MAX_ERRORS {
                return (i.take_from(s.len()), stmts);
            }
            match self.stmt(i).and_then(|(rest, st)| self.end(rest, st)) {
                Ok((rest, st)) => {
                    stmts.push(st);
                    i = rest;
                }
                Err(nom::Err::Error(e)) | Err(nom::Err::Failure(e)) => {
                    self.errors.borrow_mut().push(e);
                    i = skip_line(i);
                }
                Err(nom::Err::Incomplete(_)) => return (i, stmts),
            }
        }
    }

    /// The end of a statement: optional trailing comment, then a newline, `;`, `}` or the end.
    pub(super) fn end<'a>(&self, i: In<'a>, mut st: Stmt) -> PResult<'a, Stmt> {
        let s = i.fragment();
        let n = s.len() - s.trim_start_matches([' ', '\t', '\r']).len();
        let j = i.take_from(n);
        let s = j.fragment();
        if s.starts_with('#') {
            let len = s.find('\n').unwrap_or(s.len());
            st.comment = Some(s[1..len].trim_end().to_string());
            return Ok((j.take_from(len), st));
        }
        if s.is_empty() || s.starts_with(['\n', ';', '}']) {
            return Ok((j, st));
        }
        fail(
            &j,
            format!("expected the end of the statement, found {}", describe(&j)),
        )
        .map_err(|e| match e {
            nom::Err::Failure(e) => nom::Err::Failure(
                e.hint("put one statement per line, or separate statements with `;`"),
            ),
            other => other,
        })
    }

    /// `stmt`: dispatch on the leading word.
    pub(super) fn stmt<'a>(&self, i: In<'a>) -> PResult<'a, Stmt> {
        let start = self.sp(i);
        let Ok((rest, word)) = self.ident(start) else {
            return fail(
                &start,
                format!("expected a statement, found {}", describe(&start)),
            );
        };
        let kind = match word.name.as_str() {
            "param" => self.param(rest),
            "qubit" => self.qubit(rest),
            "layer" => self
                .block(rest, &word)
                .map(|(r, b)| (r, StmtKind::Layer(b))),
            "round" => self
                .block(rest, &word)
                .map(|(r, b)| (r, StmtKind::Round(b))),
            "for" => self.for_loop(rest),
            "if" => return self.if_stmt(start, rest),
            "reset" => self.reset(rest),
            "measure" => self.measure(rest),
            "noise" => self.noise(rest),
            "detector" => self.detector(rest),
            "observable" => self.observable(rest),
            name if Gate::from_name(name).is_some() => self.gate(rest, word.clone()),
            name => {
                let lower = name.to_ascii_lowercase();
                let candidates = Gate::ALL.iter().map(|g| g.name()).chain(KEYWORDS);
                let mut e = PError::at(
                    &start,
                    name.len(),
                    format!("unknown statement or gate `{name}`"),
                );
                if name.chars().any(|c| c.is_ascii_uppercase()) {
                    // A capitalised word is a habit from elsewhere, not a typo: name the
                    // lower-case statement or gate it stands for instead of the nearest spelling.
                    let names: Vec<&str> = candidates.collect();
                    let exact = names.iter().find(|c| **c == lower);
                    let starting: Vec<&str> = names
                        .iter()
                        .copied()
                        .filter(|c| c.starts_with(&lower))
                        .collect();
                    let list = |v: &[&str]| {
                        v.iter()
                            .map(|c| format!("`{c}`"))
                            .collect::<Vec<_>>()
                            .join(" or ")
                    };
                    let target = match (exact, starting.as_slice()) {
                        (Some(c), _) => Some(format!("`{c}`")),
                        (None, [_, ..]) => Some(list(&starting)),
                        (None, []) => {
                            did_you_mean(&lower, names.iter().copied()).map(|c| format!("`{c}`"))
                        }
                    };
                    e = e.hint(match target {
                        Some(t) => format!("names are lower-case: `{name}` → {t}"),
                        None => "names are lower-case".to_string(),
                    });
                } else if let Some(s) = did_you_mean(name, candidates) {
                    e = e.hint(format!("did you mean `{s}`?"));
                }
                return fail_err(e);
            }
        };
        let (rest, kind) = commit(kind)?;
        Ok((
            rest,
            Stmt {
                kind,
                span: span_from(&start, &rest),
                comment: None,
            },
        ))
    }

    /// `param = 'param' IDENT '=' expr`
    pub(super) fn param<'a>(&self, i: In<'a>) -> PResult<'a, StmtKind> {
        let (i, name) = self.name(i, "a parameter name")?;
        let (i, _) = self.expect(i, "=", "`=` and a default value")?;
        let (i, value) = self.expr(i)?;
        Ok((i, StmtKind::Param { name, value }))
    }

    /// `qubit = 'qubit' ref ( 'at' coords )? ( 'role' IDENT ( ',' IDENT )* )?`
    pub(super) fn qubit<'a>(&self, i: In<'a>) -> PResult<'a, StmtKind> {
        let (i, target) = self.reference(i, "a qubit name")?;
        let (i, coords) = match self.keyword(i, "at") {
            Ok((i, _)) => {
                let (i, c) = self.coords(i)?;
                (i, Some(c))
            }
            Err(_) => (i, None),
        };
        let mut roles = Vec::new();
        let mut i = i;
        if let Ok((j, _)) = self.keyword(i, "role") {
            let (j, first) = self.name(j, "a role name")?;
            roles.push(first);
            i = j;
            while let Ok((j, _)) = self.punct(i, ",") {
                let (j, r) = self.name(j, "a role name")?;
                roles.push(r);
                i = j;
            }
        }
        Ok((
            i,
            StmtKind::Qubit {
                target,
                coords,
                roles,
            },
        ))
    }

    /// `block = '{' stmt_list '}'`
    pub(super) fn block<'a>(&self, i: In<'a>, owner: &Ident) -> PResult<'a, Vec<Stmt>> {
        let j = self.sp(i);
        let Ok((j, open)) = tag::<_, _, PError>("{").parse(j) else {
            return fail(
                &j,
                format!(
                    "expected `{{` to open the body of `{}`, found {}",
                    owner.name,
                    describe(&j)
                ),
            );
        };
        let (j, body) = self.stmt_list(j);
        match tag::<_, _, PError>("}").parse(j) {
            Ok((j, _)) => Ok((j, body)),
            Err(_) => {
                let mut e = PError::at(
                    &open,
                    1,
                    format!(
                        "unterminated block: this `{{` of `{}` is never closed",
                        owner.name
                    ),
                );
                e = e.hint("add a matching `}`");
                fail_err(e)
            }
        }
    }

    /// `for = 'for' IDENT 'in' expr '..' expr ( 'by' expr )? block`
    pub(super) fn for_loop<'a>(&self, i: In<'a>) -> PResult<'a, StmtKind> {
        let (i, var) = self.name(i, "a loop variable")?;
        let i = match self.keyword(i, "in") {
            Ok((i, _)) => i,
            Err(_) => {
                let j = self.sp(i);
                return fail(
                    &j,
                    format!(
                        "expected `in` after the loop variable, found {}",
                        describe(&j)
                    ),
                );
            }
        };
        let (i, start) = self.expr(i)?;
        let (i, _) = self.expect(i, "..", "`..` between the loop bounds (e.g. `0..5`)")?;
        let (i, end) = self.expr(i)?;
        let (i, step) = match self.keyword(i, "by") {
            Ok((i, _)) => {
                let (i, s) = self.expr(i)?;
                (i, Some(s))
            }
            Err(_) => (i, None),
        };
        let for_word = Ident {
            name: "for".into(),
            span: Span::default(),
        };
        let (i, body) = self.block(i, &for_word)?;
        Ok((
            i,
            StmtKind::For {
                var,
                start,
                end,
                step,
                body,
            },
        ))
    }

    /// `if = 'if' expr block ( 'else' ( if | block ) )?`
    pub(super) fn if_stmt<'a>(&self, start: In<'a>, i: In<'a>) -> PResult<'a, Stmt> {
        let (i, cond) = commit(self.expr(i))?;
        let if_word = Ident {
            name: "if".into(),
            span: Span::default(),
        };
        let (i, then) = commit(self.block(i, &if_word))?;
        // `else` may follow the closing brace on the same line or on the next lines; only
        // whitespace may stand between them, so no comment is lost by the printer.
        let after_newlines = {
            let s = i.fragment();
            i.take_from(s.len() - s.trim_start_matches([' ', '\t', '\r', '\n']).len())
        };
        let (i, otherwise) = match self.keyword(after_newlines, "else") {
            Ok((j, _)) => {
                let k = self.sp(j);
                if let Ok((rest, _)) = self.keyword(k, "if") {
                    if self.else_ifs.get() >= MAX_CHAIN {
                        return fail(&k, format!("more than {MAX_CHAIN} `else if` in one chain"));
                    }
                    self.else_ifs.set(self.else_ifs.get() + 1);
                    let nested = self.if_stmt(k, rest);
                    self.else_ifs.set(self.else_ifs.get() - 1);
                    let (rest, nested) = nested?;
                    (rest, vec![nested])
                } else {
                    let else_word = Ident {
                        name: "else".into(),
                        span: Span::default(),
                    };
                    commit(self.block(j, &else_word))?
                }
            }
            Err(_) => (i, Vec::new()),
        };
        Ok((
            i,
            Stmt {
                kind: StmtKind::If {
                    cond,
                    then,
                    otherwise,
                },
                span: span_from(&start, &i),
                comment: None,
            },
        ))
    }

    /// `gate = GATE group ( ',' group )*`
    pub(super) fn gate<'a>(&self, i: In<'a>, gate: Ident) -> PResult<'a, StmtKind> {
        let (mut i, first) = self.group(i, &format!("a target qubit of `{}`", gate.name))?;
        let mut groups = vec![first];
        while let Ok((j, _)) = self.punct(i, ",") {
            let (j, g) = self.group(j, "a target qubit after `,`")?;
            groups.push(g);
            i = j;
        }
        Ok((i, StmtKind::Gate { gate, groups }))
    }

    /// `group = ref+`
    pub(super) fn group<'a>(&self, i: In<'a>, what: &str) -> PResult<'a, Vec<Ref>> {
        let (mut i, first) = self.reference(i, what)?;
        let mut refs = vec![first];
        loop {
            let j = self.sp(i);
            if !j.fragment().starts_with(is_ident_start) {
                break;
            }
            // A reserved word ends the group (e.g. `flip` after measurement targets).
            if let Ok((_, id)) = self.ident(j) {
                if RESERVED.contains(&id.name.as_str()) {
                    break;
                }
            }
            let (j, r) = self.reference(j, "a qubit")?;
            refs.push(r);
            i = j;
        }
        Ok((i, refs))
    }

    /// `reset = 'reset' basis ref ( ',' ref )*`
    pub(super) fn reset<'a>(&self, i: In<'a>) -> PResult<'a, StmtKind> {
        let (i, basis) = self.basis(i, "reset z q")?;
        let (mut i, first) = self.reference(i, "a qubit to reset")?;
        let mut targets = vec![first];
        while let Ok((j, _)) = self.punct(i, ",") {
            let (j, r) = self.reference(j, "a qubit to reset after `,`")?;
            targets.push(r);
            i = j;
        }
        Ok((i, StmtKind::Reset { basis, targets }))
    }

    /// `basis = 'x' | 'y' | 'z'`
    pub(super) fn basis<'a>(&self, i: In<'a>, example: &str) -> PResult<'a, Basis> {
        let j = self.sp(i);
        match self.ident(j) {
            Ok((rest, id)) => match id.name.as_str() {
                "x" => Ok((rest, Basis::X)),
                "y" => Ok((rest, Basis::Y)),
                "z" => Ok((rest, Basis::Z)),
                _ => fail_err(
                    PError::at(
                        &j,
                        id.name.len(),
                        format!("expected a basis `x`, `y` or `z`, found `{}`", id.name),
                    )
                    .hint(format!(
                        "write the basis before each qubit, e.g. `{example}`"
                    )),
                ),
            },
            Err(_) => fail(
                &j,
                format!("expected a basis `x`, `y` or `z`, found {}", describe(&j)),
            ),
        }
    }

    /// `measure = 'measure' outcome ( ',' outcome )* ( 'flip' expr )?`
    pub(super) fn measure<'a>(&self, i: In<'a>) -> PResult<'a, StmtKind> {
        let (mut i, first) = self.outcome(i)?;
        let mut outcomes = vec![first];
        while let Ok((j, _)) = self.punct(i, ",") {
            let (j, o) = self.outcome(j)?;
            outcomes.push(o);
            i = j;
        }
        let (i, flip) = match self.keyword(i, "flip") {
            Ok((i, _)) => {
                let (i, e) = self.expr(i)?;
                (i, Some(e))
            }
            Err(_) => (i, None),
        };
        Ok((i, StmtKind::Measure { outcomes, flip }))
    }

    /// `outcome = product '->' ref`
    pub(super) fn outcome<'a>(&self, i: In<'a>) -> PResult<'a, Outcome> {
        let (i, product) = self.product(i, "measure z q -> m")?;
        let j = self.sp(i);
        let Ok((i, _)) = tag::<_, _, PError>("->").parse(j) else {
            return fail_err(
                PError::at(
                    &j,
                    token_len(&j),
                    format!("expected `->` and a result name, found {}", describe(&j)),
                )
                .hint("every measurement names its result, e.g. `measure z q -> m`"),
            );
        };
        let (i, result) = self.reference(i, "a result name")?;
        Ok((i, Outcome { product, result }))
    }

    /// `product = factor ( '*' factor )*`, `factor = basis ref`
    pub(super) fn product<'a>(&self, i: In<'a>, example: &str) -> PResult<'a, Vec<(Pauli, Ref)>> {
        let (i, b) = self.basis(i, example)?;
        let (mut i, r) = self.reference(i, "a qubit")?;
        let mut factors = vec![(b.pauli(), r)];
        while let Ok((j, _)) = self.punct(i, "*") {
            let (j, b) = self.basis(j, example)?;
            let (j, r) = self.reference(j, "a qubit")?;
            factors.push((b.pauli(), r));
            i = j;
        }
        Ok((i, factors))
    }

    /// `noise = 'noise' CHANNEL ( IDENT '=' expr )* noise_targets`
    pub(super) fn noise<'a>(&self, i: In<'a>) -> PResult<'a, StmtKind> {
        let j = self.sp(i);
        let Ok((i, channel)) = self.ident(j) else {
            return fail(
                &j,
                format!("expected a channel name, found {}", describe(&j)),
            );
        };
        let Some(mut kind) = ChannelKind::from_name(&channel.name) else {
            let mut e = PError::at(
                &j,
                channel.name.len(),
                format!("unknown noise channel `{}`", channel.name),
            );
            if let Some(s) = did_you_mean(&channel.name, ChannelKind::KEYWORDS) {
                e = e.hint(format!("did you mean `{s}`?"));
            } else {
                let names = ChannelKind::KEYWORDS.join(", ");
                e = e.hint(format!("channels are {names}"));
            }
            return fail_err(e);
        };
        let mut args: Vec<(Ident, Expr)> = Vec::new();
        // The keys of `pauli` decide its arity: the first key sets it, and a later key of the
        // other arity is refused at that key.
        let mut arity = Arity::Open;
        let mut i = i;
        loop {
            let j = self.sp(i);
            let Ok((after, key)) = self.ident(j) else {
                break;
            };
            let Ok((after, _)) = self.punct(after, "=") else {
                break;
            };
            if matches!(kind, ChannelKind::Pauli | ChannelKind::PairPauli) {
                let a = key_arity(&key.name);
                if a != Arity::Open && arity != Arity::Open && a != arity {
                    let (first, this) = if a == Arity::Two {
                        ("one-qubit", "two-qubit")
                    } else {
                        ("two-qubit", "one-qubit")
                    };
                    return fail_err(
                        PError::at(
                            &j,
                            key.name.len(),
                            format!(
                                "`pauli` mixes {first} keys with the {this} key `{}`",
                                key.name
                            ),
                        )
                        .hint(
                            "one channel acts on one qubit (`x= y= z=`) or on a pair (`ix= … zz=`); \
                             write two `noise pauli` statements",
                        ),
                    );
                }
                if arity == Arity::Open && a != Arity::Open {
                    arity = a;
                    kind = if a == Arity::Two {
                        ChannelKind::PairPauli
                    } else {
                        ChannelKind::Pauli
                    };
                }
            }
            if !kind.takes(&key.name) {
                let mut e = PError::at(
                    &j,
                    key.name.len(),
                    format!("`{}` takes no parameter `{}`", channel.name, key.name),
                );
                e = e.hint(if kind == ChannelKind::Pauli {
                    "`pauli` takes `x=`, `y=`, `z=` for one qubit, or two-letter Pauli names such \
                     as `zz=0.01` or `ix=0.001` for a pair"
                        .to_string()
                } else {
                    format!(
                        "`{}` takes {}",
                        channel.name,
                        kind.keys()
                            .iter()
                            .map(|k| format!("`{k}=`"))
                            .collect::<Vec<_>>()
                            .join(", ")
                    )
                });
                return fail_err(e);
            }
            if let Some((prev, _)) = args.iter().find(|(k, _)| k.name == key.name) {
                let _ = prev;
                return fail_err(PError::at(
                    &j,
                    key.name.len(),
                    format!("parameter `{}` is given twice", key.name),
                ));
            }
            let (after, value) = self.expr(after)?;
            args.push((key, value));
            i = after;
        }
        let (i, targets) = if kind.takes_product() {
            let (i, p) = self.product(i, "noise joint p=0.01 x a * z b")?;
            (i, NoiseTargets::Product(p))
        } else {
            let (mut i, first) = self.group(i, "a target qubit")?;
            let mut groups = vec![first];
            while let Ok((j, _)) = self.punct(i, ",") {
                let (j, g) = self.group(j, "a target qubit after `,`")?;
                groups.push(g);
                i = j;
            }
            (i, NoiseTargets::Groups(groups))
        };
        Ok((
            i,
            StmtKind::Noise {
                channel,
                args,
                targets,
            },
        ))
    }

    /// `detector = 'detector' ref? ( 'at' coords )? '=' parity`
    pub(super) fn detector<'a>(&self, i: In<'a>) -> PResult<'a, StmtKind> {
        let j = self.sp(i);
        let (i, name) =
            if j.fragment().starts_with(is_ident_start) && self.keyword(j, "at").is_err() {
                let (i, r) = self.reference(j, "a detector name")?;
                (i, Some(r))
            } else {
                (i, None)
            };
        let (i, coords) = match self.keyword(i, "at") {
            Ok((i, _)) => {
                let (i, c) = self.coords(i)?;
                (i, Some(c))
            }
            Err(_) => (i, None),
        };
        let (i, _) = self.expect(i, "=", "`=` and the results whose parity is the detector")?;
        let (i, parity) = self.parity(i)?;
        Ok((
            i,
            StmtKind::Detector {
                name,
                coords,
                parity,
            },
        ))
    }

    /// `observable = 'observable' ref ( '=' | '^=' ) parity`
    pub(super) fn observable<'a>(&self, i: In<'a>) -> PResult<'a, StmtKind> {
        let (i, name) = self.reference(i, "an observable name")?;
        let (i, extend) = match self.punct(i, "^=") {
            Ok((i, _)) => (i, true),
            Err(_) => {
                let (i, _) = self.expect(i, "=", "`=` or `^=` and a parity of results")?;
                (i, false)
            }
        };
        let (i, parity) = self.parity(i)?;
        Ok((
            i,
            StmtKind::Observable {
                name,
                extend,
                parity,
            },
        ))
    }

    /// `parity = ref ( '^' ref )*`
    pub(super) fn parity<'a>(&self, i: In<'a>) -> PResult<'a, Vec<Ref>> {
        let (mut i, first) = self.reference(i, "a result name")?;
        let mut refs = vec![first];
        while let Ok((j, _)) = self.punct(i, "^") {
            let (j, r) = self.reference(j, "a result name after `^`")?;
            refs.push(r);
            i = j;
        }
        Ok((i, refs))
    }
}
