//! The rules for names and expressions: references with index ranges, coordinates, and
//! expressions by precedence climbing.

use nom::bytes::complete::{tag, take_while};
use nom::character::complete::{char, digit1, one_of};
use nom::combinator::{opt, recognize};
use nom::{Input, Parser as _};

use crate::lang::ast::{BinOp, Expr, ExprKind, Index, Ref};
use crate::lang::parser::{
    describe, fail, fail_err, is_ident_char, is_ident_start, span_from, token_len, In, PError,
    PResult, Parser, MAX_CHAIN, MAX_NESTING, RESERVED,
};

impl Parser {
    /// `ref = IDENT ( '[' index ( ',' index )* ']' )?`
    pub(super) fn reference<'a>(&self, i: In<'a>, what: &str) -> PResult<'a, Ref> {
        let start = self.sp(i);
        let (i, name) = self.name(start, what)?;
        let mut index = Vec::new();
        let i = if let Ok((mut j, open)) = tag::<_, _, PError>("[").parse(i) {
            loop {
                let (k, ix) = self.index(j)?;
                index.push(ix);
                if let Ok((k, _)) = self.punct(k, ",") {
                    j = k;
                    continue;
                }
                match self.punct(k, "]") {
                    Ok((k, _)) => break k,
                    Err(_) => {
                        let k = self.sp(k);
                        return fail_err(
                            PError::at(
                                &k,
                                token_len(&k),
                                format!("expected `,` or `]` in the index, found {}", describe(&k)),
                            )
                            .hint(format!(
                                "the `[` at offset {} is not closed",
                                open.location_offset()
                            )),
                        );
                    }
                }
            }
        } else {
            i
        };
        Ok((
            i,
            Ref {
                name,
                index,
                span: span_from(&start, &i),
            },
        ))
    }

    /// `index = expr ( '..' expr )?`
    pub(super) fn index<'a>(&self, i: In<'a>) -> PResult<'a, Index> {
        let (i, a) = self.expr(i)?;
        match self.punct(i, "..") {
            Ok((i, _)) => {
                let (i, b) = self.expr(i)?;
                Ok((i, Index::Range(a, b)))
            }
            Err(_) => Ok((i, Index::Single(a))),
        }
    }

    /// `coords = '(' expr ( ',' expr )* ')'`
    pub(super) fn coords<'a>(&self, i: In<'a>) -> PResult<'a, Vec<Expr>> {
        let (mut i, _) = self.expect(i, "(", "`(` and coordinates, e.g. `at (1, 2)`")?;
        let mut out = Vec::new();
        loop {
            let (j, e) = self.expr(i)?;
            out.push(e);
            if let Ok((j, _)) = self.punct(j, ",") {
                i = j;
                continue;
            }
            let (j, _) = self.expect(j, ")", "`,` or `)` in the coordinates")?;
            return Ok((j, out));
        }
    }

    /// `expr`: precedence climbing over [`BinOp::precedence`].
    pub(super) fn expr<'a>(&self, i: In<'a>) -> PResult<'a, Expr> {
        self.expr_prec(i, 0)
    }

    pub(super) fn binop<'a>(&self, i: In<'a>) -> PResult<'a, BinOp> {
        let j = self.sp(i);
        let s = j.fragment();
        let ops: [(&str, BinOp); 13] = [
            ("==", BinOp::Eq),
            ("!=", BinOp::Ne),
            ("<=", BinOp::Le),
            (">=", BinOp::Ge),
            ("<", BinOp::Lt),
            (">", BinOp::Gt),
            ("+", BinOp::Add),
            ("-", BinOp::Sub),
            ("*", BinOp::Mul),
            ("/", BinOp::Div),
            ("%", BinOp::Rem),
            ("and", BinOp::And),
            ("or", BinOp::Or),
        ];
        for (t, op) in ops {
            if let Some(rest) = s.strip_prefix(t) {
                // `->` is the measurement arrow, not a minus; words need a boundary.
                if t == "-" && rest.starts_with('>') {
                    break;
                }
                if t.starts_with(is_ident_start) && rest.starts_with(is_ident_char) {
                    continue;
                }
                return Ok((j.take_from(t.len()), op));
            }
        }
        Err(nom::Err::Error(PError::at(&j, 1, "")))
    }

    pub(super) fn expr_prec<'a>(&self, i: In<'a>, min: u8) -> PResult<'a, Expr> {
        let (mut i, mut lhs) = self.unary(i)?;
        let mut operators = 0;
        while let Ok((j, op)) = self.binop(i) {
            let prec = op.precedence();
            if prec < min || prec == 0 {
                break;
            }
            operators += 1;
            if operators > MAX_CHAIN {
                let k = self.sp(i);
                return fail(
                    &k,
                    format!("more than {MAX_CHAIN} operators in one expression; split it up"),
                );
            }
            // Comparisons do not chain: `a < b < c` is an error, caught by requiring a higher
            // precedence on the right.
            let (j, rhs) = self.expr_prec(j, prec + 1)?;
            let span = lhs.span.join(rhs.span);
            lhs = Expr {
                kind: ExprKind::Binary(op, Box::new(lhs), Box::new(rhs)),
                span,
            };
            i = j;
            if prec == 4 {
                if let Ok((_, next)) = self.binop(i) {
                    if next.precedence() == 4 {
                        let k = self.sp(i);
                        return fail(&k, "comparisons cannot be chained; combine them with `and`");
                    }
                }
            }
        }
        Ok((i, lhs))
    }

    /// `unary = '-' unary | 'not' unary | atom`
    pub(super) fn unary<'a>(&self, i: In<'a>) -> PResult<'a, Expr> {
        let j = self.sp(i);
        let prefix = char::<_, PError>('-').parse(j).is_ok() || self.keyword(j, "not").is_ok();
        if !prefix {
            return self.atom(j);
        }
        if self.prefixes.get() >= MAX_NESTING {
            return fail(
                &j,
                format!("more than {MAX_NESTING} prefix operators (`-`, `not`) in a row"),
            );
        }
        self.prefixes.set(self.prefixes.get() + 1);
        let out = self.prefixed(j);
        self.prefixes.set(self.prefixes.get() - 1);
        out
    }

    /// A `-` or `not` expression starting at `j` (the caller checked the operator is there).
    pub(super) fn prefixed<'a>(&self, j: In<'a>) -> PResult<'a, Expr> {
        if let Ok((k, _)) = char::<_, PError>('-').parse(j) {
            let (k, e) = self.unary(k)?;
            return Ok((
                k,
                Expr {
                    kind: ExprKind::Neg(Box::new(e)),
                    span: span_from(&j, &k),
                },
            ));
        }
        if let Ok((k, _)) = self.keyword(j, "not") {
            let (k, e) = self.expr_prec(k, 3)?;
            return Ok((
                k,
                Expr {
                    kind: ExprKind::Not(Box::new(e)),
                    span: span_from(&j, &k),
                },
            ));
        }
        self.atom(j)
    }

    /// `atom = INT | FLOAT | IDENT | '(' expr ')'`
    pub(super) fn atom<'a>(&self, j: In<'a>) -> PResult<'a, Expr> {
        if let Ok((k, _)) = char::<_, PError>('(').parse(j) {
            let (k, e) = self.expr(k)?;
            let (k, _) = self.expect(k, ")", "`)`")?;
            return Ok((
                k,
                Expr {
                    kind: e.kind,
                    span: span_from(&j, &k),
                },
            ));
        }
        if j.fragment().starts_with(|c: char| c.is_ascii_digit()) {
            return self.number(j);
        }
        if j.fragment().starts_with('.')
            && j.fragment()[1..].starts_with(|c: char| c.is_ascii_digit())
        {
            return fail(
                &j,
                "malformed number: write a digit before the decimal point, e.g. `0.5`",
            );
        }
        match self.ident(j) {
            Ok((k, id)) if !RESERVED.contains(&id.name.as_str()) => Ok((
                k,
                Expr {
                    kind: ExprKind::Var(id.name),
                    span: id.span,
                },
            )),
            _ => fail(
                &j,
                format!("expected a number, a name or `(`, found {}", describe(&j)),
            ),
        }
    }

    /// `INT | FLOAT`
    pub(super) fn number<'a>(&self, j: In<'a>) -> PResult<'a, Expr> {
        let frac = |i: In<'a>| -> PResult<'a, In<'a>> {
            // A point starts a fraction only if it is not the `..` of a range.
            let (i, _) = char('.').parse(i)?;
            if i.fragment().starts_with('.') {
                return Err(nom::Err::Error(PError::at(&i, 1, "")));
            }
            take_while(|c: char| c.is_ascii_digit()).parse(i)
        };
        let exp = recognize((one_of("eE"), opt(one_of("+-")), digit1));
        let (k, text) = recognize((digit1, opt(frac), opt(exp))).parse(j)?;
        // Letters glued to a number (`3x`, `1e`) are a typo, not a name.
        if k.fragment()
            .starts_with(|c: char| is_ident_char(c) || c == '.')
            && !k.fragment().starts_with("..")
        {
            let len = text.fragment().len() + token_len(&k);
            return fail_err(PError::at(
                &j,
                len,
                format!("malformed number `{}`", &j.fragment()[..len]),
            ));
        }
        let t = *text.fragment();
        let span = span_from(&j, &k);
        if t.contains(['.', 'e', 'E']) {
            match t.parse::<f64>() {
                Ok(v) if v.is_finite() => Ok((
                    k,
                    Expr {
                        kind: ExprKind::Float(v),
                        span,
                    },
                )),
                _ => fail_err(PError::at(
                    &j,
                    t.len(),
                    format!("number `{t}` is out of range"),
                )),
            }
        } else {
            match t.parse::<i64>() {
                Ok(v) => Ok((
                    k,
                    Expr {
                        kind: ExprKind::Int(v),
                        span,
                    },
                )),
                Err(_) => fail_err(PError::at(
                    &j,
                    t.len(),
                    format!("integer `{t}` is out of range"),
                )),
            }
        }
    }
}
