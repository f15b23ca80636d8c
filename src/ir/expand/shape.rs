//! How a loop body's count changes with the loop variable, so that a loop whose body depends on
//! its variable only through conditions need not be walked one iteration at a time.
//!
//! The generated families guard their gates with conditions such as
//! `(i + j) % 2 == 0 and j > 0 and j < dx`. As a function of `j`, with the outer variables
//! fixed, such a condition is *piecewise periodic*: the comparisons of expressions linear in `j`
//! change value only next to their roots (the *breaks*), and between two breaks the `%` terms
//! repeat with a period that divides the least common multiple of their moduli. Every
//! iteration inside one stretch between breaks therefore counts the same as the iteration one
//! period earlier, and the stretch's count is that of its first period times the number of
//! whole periods, plus a partial period. This makes the up-front count of a d = 1001 surface
//! patch take thousands of evaluations instead of millions, and it stays exact: the same body
//! count is evaluated by the same code, only at fewer values of the variable.
//!
//! Anything the analysis does not understand (a division, a product of two terms that both
//! move with the variable, a range or loop bound that moves with it, a variable bound by an
//! inner loop, a float) makes it give up, and the caller walks the loop as before.

use crate::ir::expand::eval::{arith, Value};
use crate::ir::expand::Expander;
use crate::lang::{BinOp, Expr, ExprKind, Index, NoiseTargets, Stmt, StmtKind};

/// The largest period worth using: past it, walking is about as cheap.
const MAX_PERIOD: u64 = 1 << 12;

/// The most breaks worth using.
const MAX_BREAKS: usize = 1 << 10;

/// How an expression's value moves with the loop variable `v`.
#[derive(Clone, Debug, PartialEq)]
enum Form {
    /// `slope·v + offset`.
    Linear { slope: i128, offset: i128 },
    /// Between consecutive `breaks` (values of `v` where a new stretch starts), periodic in
    /// `v` with `period`.
    Periodic { breaks: Vec<i128>, period: u64 },
}

/// The stretches of a loop body: where its count may change as a function of the loop
/// variable.
#[derive(Clone, Debug, PartialEq)]
pub(super) struct Shape {
    /// Values of the variable where a new stretch starts, in no particular order.
    pub breaks: Vec<i128>,
    /// Within a stretch, the count repeats after this many values of the variable.
    pub period: u64,
}

fn gcd(a: u64, b: u64) -> u64 {
    if b == 0 {
        a
    } else {
        gcd(b, a % b)
    }
}

fn lcm(a: u64, b: u64) -> Option<u64> {
    let l = (a / gcd(a, b)).checked_mul(b)?;
    (l <= MAX_PERIOD).then_some(l)
}

impl Form {
    fn constant(c: i128) -> Form {
        Form::Linear {
            slope: 0,
            offset: c,
        }
    }

    /// As a periodic form: a linear one that moves is not periodic; used as a truth value it
    /// is (it is true except at its root).
    fn periodic(self, truth: bool) -> Option<(Vec<i128>, u64)> {
        match self {
            Form::Periodic { breaks, period } => Some((breaks, period)),
            Form::Linear { slope: 0, .. } => Some((Vec::new(), 1)),
            Form::Linear { slope, offset } if truth => Some((root_breaks(slope, offset), 1)),
            Form::Linear { .. } => None,
        }
    }
}

/// The values where `slope·v + offset` may change sign or pass zero: around its root.
fn root_breaks(slope: i128, offset: i128) -> Vec<i128> {
    // The root is -offset/slope; the sign is constant below floor(root), on
    // [floor(root), floor(root)+1) it may be zero, and constant again above.
    let r = (-offset).div_euclid(slope);
    vec![r, r + 1, r + 2]
}

fn join(a: (Vec<i128>, u64), b: (Vec<i128>, u64)) -> Option<Form> {
    let (mut breaks, pa) = a;
    breaks.extend(b.0);
    breaks.sort_unstable();
    breaks.dedup();
    if breaks.len() > MAX_BREAKS {
        return None;
    }
    Some(Form::Periodic {
        breaks,
        period: lcm(pa, b.1)?,
    })
}

impl Expander {
    /// The shape of `body`'s count as a function of the loop variable `var`, with every other
    /// variable at its current value; `None` when the analysis cannot tell (see the module
    /// docs).
    pub(super) fn count_shape(&self, body: &[Stmt], var: &str) -> Option<Shape> {
        let mut shape = (Vec::new(), 1);
        let mut ok = true;
        let mut bound = Vec::new();
        visit(body, &mut bound, &mut |e, is_condition, bound| {
            if !ok || !mentions(e, var) {
                return;
            }
            // A name bound inside the body has no value here; a bound or range that moves with
            // the variable changes the count without a period.
            let form = if !is_condition || bound.iter().any(|b| mentions(e, b)) {
                None
            } else {
                self.form(e, var)
                    .and_then(|f| f.periodic(true))
                    .and_then(|p| join(std::mem::take(&mut shape), p))
            };
            match form {
                Some(Form::Periodic { breaks, period }) => shape = (breaks, period),
                _ => ok = false,
            }
        });
        ok.then_some(Shape {
            breaks: shape.0,
            period: shape.1,
        })
    }

    /// How `e` moves with `var`.
    fn form(&self, e: &Expr, var: &str) -> Option<Form> {
        Some(match &e.kind {
            ExprKind::Int(v) => Form::constant(i128::from(*v)),
            ExprKind::Float(_) => return None,
            ExprKind::Var(name) if name == var => Form::Linear {
                slope: 1,
                offset: 0,
            },
            ExprKind::Var(name) => Form::constant(i128::from(self.lookup(name)?)),
            ExprKind::Neg(a) => match self.form(a, var)? {
                Form::Linear { slope, offset } => Form::Linear {
                    slope: -slope,
                    offset: -offset,
                },
                p => p,
            },
            ExprKind::Not(a) => match self.form(a, var)? {
                Form::Linear {
                    slope: 0,
                    offset: x,
                } => Form::constant(i128::from(x == 0)),
                f => {
                    let (breaks, period) = f.periodic(true)?;
                    Form::Periodic { breaks, period }
                }
            },
            ExprKind::Binary(op, a, b) => {
                let (a, b) = (self.form(a, var)?, self.form(b, var)?);
                self.binary_form(*op, a, b)?
            }
        })
        .filter(|f| match f {
            // Far from any value an i64 holds: the evaluator overflows there; let the walk
            // see it.
            Form::Linear { slope, offset } => {
                slope.unsigned_abs() < 1 << 62 && offset.unsigned_abs() < 1 << 62
            }
            Form::Periodic { .. } => true,
        })
    }

    fn binary_form(&self, op: BinOp, a: Form, b: Form) -> Option<Form> {
        use Form::Linear;
        // Two values that do not move: the evaluator's own arithmetic, so that a constant
        // factor or modulus is the value expansion will use.
        if let (
            Linear {
                slope: 0,
                offset: x,
            },
            Linear {
                slope: 0,
                offset: y,
            },
        ) = (&a, &b)
        {
            let (x, y) = (i64::try_from(*x).ok()?, i64::try_from(*y).ok()?);
            let v = match op {
                BinOp::And => i64::from(x != 0 && y != 0),
                BinOp::Or => i64::from(x != 0 || y != 0),
                _ => match arith(op, Value::Int(x), Value::Int(y))? {
                    Value::Int(v) => v,
                    Value::Float(_) => return None,
                },
            };
            return Some(Form::constant(i128::from(v)));
        }
        match (op, a, b) {
            (
                BinOp::Add | BinOp::Sub,
                Linear {
                    slope: s1,
                    offset: o1,
                },
                Linear {
                    slope: s2,
                    offset: o2,
                },
            ) => {
                let sign = if op == BinOp::Add { 1 } else { -1 };
                Some(Linear {
                    slope: s1 + sign * s2,
                    offset: o1 + sign * o2,
                })
            }
            (
                BinOp::Mul,
                Linear {
                    slope: 0,
                    offset: c,
                },
                Linear { slope, offset },
            )
            | (
                BinOp::Mul,
                Linear { slope, offset },
                Linear {
                    slope: 0,
                    offset: c,
                },
            ) => Some(Linear {
                slope: slope.checked_mul(c)?,
                offset: offset.checked_mul(c)?,
            }),
            // (s·v + o) mod m repeats after |m| values of v.
            (
                BinOp::Rem,
                Linear { .. },
                Linear {
                    slope: 0,
                    offset: m,
                },
            ) if m != 0 => {
                let m = u64::try_from(m.unsigned_abs()).ok()?;
                (m <= MAX_PERIOD).then_some(Form::Periodic {
                    breaks: Vec::new(),
                    period: m,
                })
            }
            // A comparison of two linear values has the sign of their difference, which
            // changes only at its root.
            (
                BinOp::Eq | BinOp::Ne | BinOp::Lt | BinOp::Le | BinOp::Gt | BinOp::Ge,
                Linear {
                    slope: s1,
                    offset: o1,
                },
                Linear {
                    slope: s2,
                    offset: o2,
                },
            ) => {
                if s1 == s2 {
                    // Equal slopes: the comparison of the offsets, at every value.
                    self.binary_form(op, Form::constant(o1), Form::constant(o2))
                } else {
                    Some(Form::Periodic {
                        breaks: root_breaks(s1 - s2, o1 - o2),
                        period: 1,
                    })
                }
            }
            (BinOp::And | BinOp::Or, a, b) => join(a.periodic(true)?, b.periodic(true)?),
            // Anything else of periodic values is periodic; of a moving linear value, unknown.
            (_, a, b) => join(a.periodic(false)?, b.periodic(false)?),
        }
    }
}

/// Whether `e` reads the name `name`.
fn mentions(e: &Expr, name: &str) -> bool {
    let mut found = false;
    each_node(e, |x| {
        found |= matches!(&x.kind, ExprKind::Var(v) if v == name)
    });
    found
}

/// Calls `f` on every node of `e`. An explicit stack, not recursion: expressions may be a
/// thousand operators long, and this runs for every statement of every loop iteration the
/// up-front count walks.
pub(super) fn each_node<'a>(e: &'a Expr, mut f: impl FnMut(&'a Expr)) {
    let mut stack: smallvec::SmallVec<[&Expr; 32]> = smallvec::smallvec![e];
    while let Some(e) = stack.pop() {
        f(e);
        match &e.kind {
            ExprKind::Var(_) | ExprKind::Int(_) | ExprKind::Float(_) => {}
            ExprKind::Neg(a) | ExprKind::Not(a) => stack.push(a),
            ExprKind::Binary(_, a, b) => {
                stack.push(a);
                stack.push(b);
            }
        }
    }
}

/// Calls `f(expr, is_condition, bound)` on every expression that what `stmts` count can depend
/// on: loop bounds and steps, conditions (`is_condition`) and the ends of ranges; `bound` holds
/// the names bound by loops inside `stmts` around the expression. Index values, coordinates
/// and probabilities change what is built, not how much.
pub(super) fn visit(
    stmts: &[Stmt],
    bound: &mut Vec<String>,
    f: &mut dyn FnMut(&Expr, bool, &[String]),
) {
    fn range(r: &crate::lang::Ref, bound: &[String], f: &mut dyn FnMut(&Expr, bool, &[String])) {
        for ix in &r.index {
            if let Index::Range(a, b) = ix {
                f(a, false, bound);
                f(b, false, bound);
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
                f(start, false, bound);
                f(end, false, bound);
                if let Some(s) = step {
                    f(s, false, bound);
                }
                bound.push(var.name.clone());
                visit(body, bound, f);
                bound.pop();
            }
            StmtKind::If {
                cond,
                then,
                otherwise,
            } => {
                f(cond, true, bound);
                visit(then, bound, f);
                visit(otherwise, bound, f);
            }
            StmtKind::Layer(body) | StmtKind::Round(body) => visit(body, bound, f),
            StmtKind::Qubit { target, .. } => range(target, bound, f),
            StmtKind::Gate { groups, .. } => {
                groups.iter().flatten().for_each(|r| range(r, bound, f))
            }
            StmtKind::Reset { targets, .. } => targets.iter().for_each(|r| range(r, bound, f)),
            StmtKind::Measure { outcomes, .. } => {
                for o in outcomes {
                    range(&o.result, bound, f);
                    o.product.iter().for_each(|(_, r)| range(r, bound, f));
                }
            }
            StmtKind::Noise { targets, .. } => match targets {
                NoiseTargets::Groups(groups) => {
                    groups.iter().flatten().for_each(|r| range(r, bound, f))
                }
                NoiseTargets::Product(product) => {
                    product.iter().for_each(|(_, r)| range(r, bound, f))
                }
            },
            StmtKind::Detector { parity, .. } | StmtKind::Observable { parity, .. } => {
                parity.iter().for_each(|r| range(r, bound, f))
            }
        }
    }
}
