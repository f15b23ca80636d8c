//! The syntax tree: what the text says, before loops are unrolled. Every node keeps its span.

use std::sync::Arc;

use crate::base::{Basis, Pauli, Source, Span};

/// A parsed file.
#[derive(Clone, Debug)]
pub struct Ast {
    /// The text it came from.
    pub source: Arc<Source>,
    /// Top-level statements.
    pub stmts: Vec<Stmt>,
}

/// A name with its place.
#[derive(Clone, Debug, PartialEq)]
pub struct Ident {
    /// The name.
    pub name: String,
    /// Where it is written.
    pub span: Span,
}

/// One index position of a reference: a value or a half-open range `a..b`.
#[derive(Clone, Debug, PartialEq)]
pub enum Index {
    /// `e`
    Single(Expr),
    /// `a..b`
    Range(Expr, Expr),
}

/// A reference to a qubit, a result or a detector name: `name` or `name[i, j..k]`.
#[derive(Clone, Debug, PartialEq)]
pub struct Ref {
    /// Base name.
    pub name: Ident,
    /// Index positions; empty for a plain name.
    pub index: Vec<Index>,
    /// The whole reference.
    pub span: Span,
}

/// Binary operators of expressions.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum BinOp {
    /// `+`
    Add,
    /// `and`
    And,
    /// `/` (integer division on integers)
    Div,
    /// `==`
    Eq,
    /// `>=`
    Ge,
    /// `>`
    Gt,
    /// `<=`
    Le,
    /// `<`
    Lt,
    /// `*`
    Mul,
    /// `!=`
    Ne,
    /// `or`
    Or,
    /// `%`
    Rem,
    /// `-`
    Sub,
}

impl BinOp {
    /// The operator as written.
    pub fn symbol(self) -> &'static str {
        match self {
            BinOp::Add => "+",
            BinOp::And => "and",
            BinOp::Div => "/",
            BinOp::Eq => "==",
            BinOp::Ge => ">=",
            BinOp::Gt => ">",
            BinOp::Le => "<=",
            BinOp::Lt => "<",
            BinOp::Mul => "*",
            BinOp::Ne => "!=",
            BinOp::Or => "or",
            BinOp::Rem => "%",
            BinOp::Sub => "-",
        }
    }

    /// Binding strength; higher binds tighter.
    pub fn precedence(self) -> u8 {
        match self {
            BinOp::Or => 1,
            BinOp::And => 2,
            BinOp::Eq | BinOp::Ne | BinOp::Lt | BinOp::Le | BinOp::Gt | BinOp::Ge => 4,
            BinOp::Add | BinOp::Sub => 5,
            BinOp::Mul | BinOp::Div | BinOp::Rem => 6,
        }
    }
}

/// Expression forms.
#[derive(Clone, Debug, PartialEq)]
pub enum ExprKind {
    /// Binary operation.
    Binary(BinOp, Box<Expr>, Box<Expr>),
    /// Decimal literal with a point or exponent.
    Float(f64),
    /// Integer literal.
    Int(i64),
    /// Unary minus.
    Neg(Box<Expr>),
    /// `not e`.
    Not(Box<Expr>),
    /// A parameter or loop variable.
    Var(String),
}

/// An expression with its span.
#[derive(Clone, Debug, PartialEq)]
pub struct Expr {
    /// The form.
    pub kind: ExprKind,
    /// Where it is written.
    pub span: Span,
}

/// One `product -> result` item of a measurement.
#[derive(Clone, Debug, PartialEq)]
pub struct Outcome {
    /// The Pauli factors measured together.
    pub product: Vec<(Pauli, Ref)>,
    /// The result name written.
    pub result: Ref,
}

/// Targets of a noise statement.
#[derive(Clone, Debug, PartialEq)]
pub enum NoiseTargets {
    /// Comma-separated groups of qubits (one or two per group).
    Groups(Vec<Vec<Ref>>),
    /// A Pauli product (`joint` only).
    Product(Vec<(Pauli, Ref)>),
}

/// Statement forms.
#[derive(Clone, Debug, PartialEq)]
pub enum StmtKind {
    /// A blank line between statements (kept so `slant fmt` preserves paragraphs).
    Blank,
    /// A comment on a line of its own (text after `#`).
    Comment(String),
    /// `detector name? (at (..))? = parity`
    Detector {
        /// Optional name.
        name: Option<Ref>,
        /// Optional space-time coordinates.
        coords: Option<Vec<Expr>>,
        /// Results whose XOR is the detector.
        parity: Vec<Ref>,
    },
    /// `for var in start..end (by step)? { .. }`
    For {
        /// Loop variable.
        var: Ident,
        /// First value.
        start: Expr,
        /// One past the last value.
        end: Expr,
        /// Increment (default 1).
        step: Option<Expr>,
        /// Body.
        body: Vec<Stmt>,
    },
    /// `cx a b, c d`
    Gate {
        /// Gate name as written.
        gate: Ident,
        /// Target groups.
        groups: Vec<Vec<Ref>>,
    },
    /// `if cond { .. } else { .. }`
    If {
        /// Condition.
        cond: Expr,
        /// Taken when non-zero.
        then: Vec<Stmt>,
        /// Taken otherwise (an `else if` is a nested `If`).
        otherwise: Vec<Stmt>,
    },
    /// `layer { .. }`
    Layer(Vec<Stmt>),
    /// `measure z a -> m, x b * x c -> n flip 0.01`
    Measure {
        /// The measured products.
        outcomes: Vec<Outcome>,
        /// Classical flip probability of every result of the statement.
        flip: Option<Expr>,
    },
    /// `noise kind key=value .. targets`
    Noise {
        /// Channel keyword.
        channel: Ident,
        /// `key=value` arguments.
        args: Vec<(Ident, Expr)>,
        /// Where it acts.
        targets: NoiseTargets,
    },
    /// `observable name = parity` or `observable name ^= parity`
    Observable {
        /// Name.
        name: Ref,
        /// `^=`: extend an existing observable.
        extend: bool,
        /// Results whose XOR is added.
        parity: Vec<Ref>,
    },
    /// `param name = default`
    Param {
        /// Name.
        name: Ident,
        /// Default value.
        value: Expr,
    },
    /// `qubit ref (at (..))? (role ..)?`
    Qubit {
        /// Name (a range declares several).
        target: Ref,
        /// Optional coordinates.
        coords: Option<Vec<Expr>>,
        /// Roles and tags.
        roles: Vec<Ident>,
    },
    /// `reset z a, b`
    Reset {
        /// Basis.
        basis: Basis,
        /// Targets.
        targets: Vec<Ref>,
    },
    /// `round { .. }`
    Round(Vec<Stmt>),
}

/// A statement with its span.
#[derive(Clone, Debug, PartialEq)]
pub struct Stmt {
    /// The form.
    pub kind: StmtKind,
    /// From the leading keyword to the end of the statement (blocks included).
    pub span: Span,
    /// A comment after the statement on the same line (text after `#`).
    pub comment: Option<String>,
}
