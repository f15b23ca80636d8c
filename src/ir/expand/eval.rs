//! Expressions: the evaluator of parameters, loop variables and arithmetic, with a fast path
//! that builds no diagnostics and a slow one that says why and where an expression fails.

use crate::base::{did_you_mean, Span};
use crate::ir::expand::{Expander, R};
use crate::lang::{BinOp, Expr, ExprKind};

/// An evaluated expression.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(super) enum Value {
    Int(i64),
    Float(f64),
}

impl Value {
    pub(super) fn as_f64(self) -> f64 {
        match self {
            Value::Int(v) => v as f64,
            Value::Float(v) => v,
        }
    }
}

impl Expander {
    // ---- expressions ------------------------------------------------------------------------

    pub(super) fn lookup(&self, name: &str) -> Option<i64> {
        self.vars
            .iter()
            .rev()
            .find(|(n, _)| n == name)
            .or_else(|| self.params.iter().find(|(n, _)| n == name))
            .map(|(_, v)| *v)
    }

    /// Evaluates an expression.
    pub(super) fn eval(&self, e: &Expr) -> R<Value> {
        match self.value(e) {
            Some(v) => Ok(v),
            None => self.eval_diagnosed(e),
        }
    }

    /// Evaluates an expression, `None` on any error. This is the path nearly every evaluation
    /// takes, and it is several times faster than building `Result`s that carry diagnostics up
    /// every level; [`Expander::eval`] goes back for the diagnostic when it fails.
    pub(super) fn value(&self, e: &Expr) -> Option<Value> {
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
    pub(super) fn int_value(&self, e: &Expr) -> Option<i64> {
        match self.value(e)? {
            Value::Int(v) => Some(v),
            Value::Float(_) => None,
        }
    }

    pub(super) fn truth_value(&self, e: &Expr) -> Option<bool> {
        match self.value(e)? {
            Value::Int(v) => Some(v != 0),
            Value::Float(_) => None,
        }
    }

    /// [`Expander::eval`] for an expression that fails, to say why and where.
    pub(super) fn eval_diagnosed(&self, e: &Expr) -> R<Value> {
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

    pub(super) fn binary(
        &self,
        op: BinOp,
        l: Value,
        r: Value,
        span: Span,
        rspan: Span,
    ) -> R<Value> {
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

    pub(super) fn int(&self, e: &Expr) -> R<i64> {
        match self.eval(e)? {
            Value::Int(v) => Ok(v),
            Value::Float(v) => Err(self.err(e.span, format!("expected an integer, found `{v}`"))),
        }
    }

    pub(super) fn truth(&self, e: &Expr) -> R<bool> {
        Ok(self.int(e)? != 0)
    }

    pub(super) fn probability(&self, e: &Expr) -> R<f64> {
        let v = self.eval(e)?.as_f64();
        if !(0.0..=1.0).contains(&v) {
            return Err(self
                .err(e.span, format!("probability `{v}` is outside [0, 1]"))
                .with_hint("probabilities are written as plain numbers, e.g. `0.001`"));
        }
        Ok(v)
    }
}

/// A binary operation other than `and` / `or` on values; `None` on overflow, division by zero
/// or `%` of non-integers (integer `/` and `%` are Euclidean).
pub(super) fn arith(op: BinOp, l: Value, r: Value) -> Option<Value> {
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

pub(super) fn unreachable_logic() -> i64 {
    // `and` / `or` are evaluated before `binary` is called; reaching this is a bug, and the
    // conservative answer (false) keeps the program running.
    0
}
