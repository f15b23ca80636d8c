//! The canonical printer behind `slant fmt`.
//!
//! Prints an [`Ast`] back to text with one fixed layout: four-space indentation, single spaces
//! around operators, commas followed by one space, the fewest parentheses that keep the
//! expression tree, blank lines and comments kept where they were. A `layer` whose body is one
//! plain statement prints on one line. The round-trip property `parse(print(ast)) == ast` (up to
//! spans) is tested by proptest, and printing is idempotent.

use std::fmt::Write;

use crate::base::Pauli;
use crate::lang::ast::{Ast, Expr, ExprKind, Ident, Index, NoiseTargets, Ref, Stmt, StmtKind};

/// Prints a whole file.
pub fn print(ast: &Ast) -> String {
    let mut out = String::new();
    block(&mut out, &ast.stmts, 0);
    out
}

fn indent(out: &mut String, level: usize) {
    for _ in 0..level {
        out.push_str("    ");
    }
}

fn block(out: &mut String, stmts: &[Stmt], level: usize) {
    for st in stmts {
        if let StmtKind::Blank = st.kind {
            out.push('\n');
            continue;
        }
        indent(out, level);
        stmt(out, st, level);
        if let Some(c) = &st.comment {
            let _ = write!(out, " #{c}");
        }
        out.push('\n');
    }
}

/// Whether a block prints on one line: exactly one statement that has no block and no comment.
fn is_inline(body: &[Stmt]) -> bool {
    matches!(body, [only] if only.comment.is_none() && matches!(
        only.kind,
        StmtKind::Gate { .. } | StmtKind::Reset { .. } | StmtKind::Measure { .. } | StmtKind::Noise { .. }
    ))
}

fn braced(out: &mut String, body: &[Stmt], level: usize) {
    if is_inline(body) {
        out.push_str("{ ");
        stmt(out, &body[0], level);
        out.push_str(" }");
    } else {
        out.push_str("{\n");
        block(out, body, level + 1);
        indent(out, level);
        out.push('}');
    }
}

fn stmt(out: &mut String, st: &Stmt, level: usize) {
    match &st.kind {
        StmtKind::Blank => {}
        StmtKind::Comment(text) => {
            let _ = write!(out, "#{text}");
        }
        StmtKind::Param { name, value } => {
            let _ = write!(out, "param {} = {}", name.name, expr(value));
        }
        StmtKind::Qubit {
            target,
            coords,
            roles,
        } => {
            let _ = write!(out, "qubit {}", reference(target));
            if let Some(c) = coords {
                let _ = write!(out, " at {}", coord_list(c));
            }
            if !roles.is_empty() {
                let _ = write!(out, " role {}", names(roles));
            }
        }
        StmtKind::Layer(body) => {
            out.push_str("layer ");
            braced(out, body, level);
        }
        StmtKind::Round(body) => {
            out.push_str("round {\n");
            block(out, body, level + 1);
            indent(out, level);
            out.push('}');
        }
        StmtKind::For {
            var,
            start,
            end,
            step,
            body,
        } => {
            let _ = write!(out, "for {} in {}..{}", var.name, expr(start), expr(end));
            if let Some(s) = step {
                let _ = write!(out, " by {}", expr(s));
            }
            out.push_str(" {\n");
            block(out, body, level + 1);
            indent(out, level);
            out.push('}');
        }
        StmtKind::If {
            cond,
            then,
            otherwise,
        } => if_chain(out, cond, then, otherwise, level),
        StmtKind::Gate { gate, groups } => {
            let _ = write!(out, "{} {}", gate.name, groups_text(groups));
        }
        StmtKind::Reset { basis, targets } => {
            let t: Vec<String> = targets.iter().map(reference).collect();
            let _ = write!(out, "reset {} {}", basis.name(), t.join(", "));
        }
        StmtKind::Measure { outcomes, flip } => {
            let items: Vec<String> = outcomes
                .iter()
                .map(|o| format!("{} -> {}", product(&o.product), reference(&o.result)))
                .collect();
            let _ = write!(out, "measure {}", items.join(", "));
            if let Some(f) = flip {
                let _ = write!(out, " flip {}", expr(f));
            }
        }
        StmtKind::Noise {
            channel,
            args,
            targets,
        } => {
            let _ = write!(out, "noise {}", channel.name);
            for (k, v) in args {
                let _ = write!(out, " {}={}", k.name, expr(v));
            }
            match targets {
                NoiseTargets::Groups(g) => {
                    let _ = write!(out, " {}", groups_text(g));
                }
                NoiseTargets::Product(p) => {
                    let _ = write!(out, " {}", product(p));
                }
            }
        }
        StmtKind::Detector {
            name,
            coords,
            parity,
        } => {
            out.push_str("detector");
            if let Some(n) = name {
                let _ = write!(out, " {}", reference(n));
            }
            if let Some(c) = coords {
                let _ = write!(out, " at {}", coord_list(c));
            }
            let _ = write!(out, " = {}", parity_text(parity));
        }
        StmtKind::Observable {
            name,
            extend,
            parity,
        } => {
            let op = if *extend { "^=" } else { "=" };
            let _ = write!(
                out,
                "observable {} {op} {}",
                reference(name),
                parity_text(parity)
            );
        }
    }
}

fn if_chain(out: &mut String, cond: &Expr, then: &[Stmt], otherwise: &[Stmt], level: usize) {
    let _ = writeln!(out, "if {} {{", expr(cond));
    block(out, then, level + 1);
    indent(out, level);
    out.push('}');
    match otherwise {
        [] => {}
        [only] if only.comment.is_none() && matches!(only.kind, StmtKind::If { .. }) => {
            if let StmtKind::If {
                cond,
                then,
                otherwise,
            } = &only.kind
            {
                out.push_str(" else ");
                if_chain(out, cond, then, otherwise, level);
            }
        }
        _ => {
            out.push_str(" else {\n");
            block(out, otherwise, level + 1);
            indent(out, level);
            out.push('}');
        }
    }
}

fn names(ids: &[Ident]) -> String {
    ids.iter()
        .map(|i| i.name.as_str())
        .collect::<Vec<_>>()
        .join(", ")
}

fn groups_text(groups: &[Vec<Ref>]) -> String {
    groups
        .iter()
        .map(|g| g.iter().map(reference).collect::<Vec<_>>().join(" "))
        .collect::<Vec<_>>()
        .join(", ")
}

fn product(p: &[(Pauli, Ref)]) -> String {
    p.iter()
        .map(|(pauli, r)| format!("{} {}", pauli.letter().to_ascii_lowercase(), reference(r)))
        .collect::<Vec<_>>()
        .join(" * ")
}

fn parity_text(refs: &[Ref]) -> String {
    refs.iter().map(reference).collect::<Vec<_>>().join(" ^ ")
}

fn coord_list(c: &[Expr]) -> String {
    format!("({})", c.iter().map(expr).collect::<Vec<_>>().join(", "))
}

/// Prints a reference such as `m[r - 1, 0..d]`.
pub fn reference(r: &Ref) -> String {
    if r.index.is_empty() {
        return r.name.name.clone();
    }
    let ix: Vec<String> = r
        .index
        .iter()
        .map(|i| match i {
            Index::Single(e) => expr(e),
            Index::Range(a, b) => format!("{}..{}", expr(a), expr(b)),
        })
        .collect();
    format!("{}[{}]", r.name.name, ix.join(", "))
}

/// Prints an expression with the fewest parentheses that keep its tree.
pub fn expr(e: &Expr) -> String {
    match &e.kind {
        ExprKind::Int(v) => v.to_string(),
        ExprKind::Float(v) => float(*v),
        ExprKind::Var(n) => n.clone(),
        ExprKind::Neg(a) => match a.kind {
            // `not` extends to the right as far as it can, so it needs parentheses under `-`.
            ExprKind::Binary(..) | ExprKind::Not(_) => format!("-({})", expr(a)),
            _ => format!("-{}", expr(a)),
        },
        ExprKind::Not(a) => match &a.kind {
            ExprKind::Binary(op, ..) if op.precedence() < 3 => format!("not ({})", expr(a)),
            _ => format!("not {}", expr(a)),
        },
        ExprKind::Binary(op, a, b) => {
            let p = op.precedence();
            let left = match &a.kind {
                ExprKind::Binary(o, ..)
                    if o.precedence() < p || (p == 4 && o.precedence() == 4) =>
                {
                    format!("({})", expr(a))
                }
                ExprKind::Not(_) if p > 3 => format!("({})", expr(a)),
                _ => expr(a),
            };
            let right = match &b.kind {
                ExprKind::Binary(o, ..) if o.precedence() <= p => format!("({})", expr(b)),
                ExprKind::Not(_) if p > 3 => format!("({})", expr(b)),
                _ => expr(b),
            };
            format!("{left} {} {right}", op.symbol())
        }
    }
}

/// Prints a float so that it reads back as a float (always with a point or an exponent).
fn float(v: f64) -> String {
    let s = format!("{v}");
    if s.contains(['.', 'e', 'E', 'i', 'N']) {
        s
    } else {
        format!("{s}.0")
    }
}
