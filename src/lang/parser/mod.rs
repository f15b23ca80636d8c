//! Recursive-descent parser built from nom combinators.
//!
//! Design note. Input is a [`nom_locate::LocatedSpan`] so every node knows its byte offset. A
//! statement ends at a newline or `;`; inside a statement, [`Parser::sp`] skips spaces, tabs and
//! comments but never a newline. A grammar rule of `grammar/slant.ebnf` is a method of the same
//! name where it has one of its own (`stmt`, `qubit`, `parity`, `atom`, …); `layer` and `round`
//! share [`Parser::block`], `for` and `if` are `for_loop` and `if_stmt`, `factor` and
//! `noise_targets` are read inside `product` and `noise`, and the operator rules from `or_expr`
//! down to `term` are one precedence-climbing method (`expr_prec`). After a statement's leading keyword the parser commits (`nom::Err::Failure`), so the
//! caret lands on the token that is wrong, not on the statement start. Statement lists recover
//! from an error by skipping to the end of the line (and past any block opened on it), so one file
//! reports several independent errors without cascades.
//!
//! Comments and blank lines between statements are kept as [`StmtKind::Comment`] and
//! [`StmtKind::Blank`] so the canonical printer (`slant fmt`) does not lose them; a comment after a
//! statement on the same line is kept in [`Stmt::comment`].
//!
//! Files: this one holds the parser state, the token helpers and the entry point; `stmt.rs` the
//! statement rules and `expr.rs` the rules for names and expressions.

mod expr;
mod stmt;

use std::cell::{Cell, RefCell};
use std::sync::Arc;

use nom::bytes::complete::{tag, take_while, take_while1};
use nom::combinator::recognize;
use nom::error::{ErrorKind, ParseError};
use nom::sequence::pair;
use nom::{IResult, Input, Parser as _};
use nom_locate::LocatedSpan;

use crate::base::{Diagnostic, Source, Span};
use crate::lang::ast::{Ast, Ident};

type In<'a> = LocatedSpan<&'a str>;
type PResult<'a, T> = IResult<In<'a>, T, PError>;

/// Deepest nesting of blocks, brackets and parentheses accepted; deeper input is refused before
/// parsing so recursion cannot overflow the stack.
const MAX_NESTING: usize = 64;

/// Most binary operators in one expression (outside parentheses) and most `else if` links in
/// one chain. Both build recursion (evaluation of a left-deep operator tree, the parser's own
/// `else if`) that bracket counting cannot see.
const MAX_CHAIN: usize = 1000;

/// Most errors reported for one file; past this the rest are likely cascades.
const MAX_ERRORS: usize = 20;

/// Words that cannot name a qubit, result or variable because statements use them as separators.
const RESERVED: [&str; 9] = ["and", "at", "by", "else", "flip", "in", "not", "or", "role"];

/// Statement keywords (besides gate names), for suggestions.
const KEYWORDS: [&str; 11] = [
    "param",
    "qubit",
    "layer",
    "round",
    "for",
    "if",
    "reset",
    "measure",
    "noise",
    "detector",
    "observable",
];

/// A parse error: a byte range, a message and an optional hint.
#[derive(Debug, Clone)]
struct PError {
    start: usize,
    end: usize,
    message: String,
    hint: Option<String>,
}

impl PError {
    fn at(i: &In, len: usize, message: impl Into<String>) -> PError {
        let start = i.location_offset();
        PError {
            start,
            end: start + len,
            message: message.into(),
            hint: None,
        }
    }

    fn hint(mut self, hint: impl Into<String>) -> PError {
        self.hint = Some(hint.into());
        self
    }
}

impl<'a> ParseError<In<'a>> for PError {
    fn from_error_kind(input: In<'a>, _kind: ErrorKind) -> Self {
        PError::at(&input, 1, format!("unexpected {}", describe(&input)))
    }

    fn append(_: In<'a>, _: ErrorKind, other: Self) -> Self {
        other
    }
}

/// A short description of what starts at `i`, for "expected X, found Y" messages.
fn describe(i: &In) -> String {
    let s = i.fragment();
    match s.chars().next() {
        None => "end of file".into(),
        Some('\n') | Some('\r') => "end of line".into(),
        Some(c) if c.is_alphanumeric() || c == '_' => {
            let word: String = s
                .chars()
                .take_while(|c| c.is_alphanumeric() || *c == '_' || *c == '.')
                .take(40)
                .collect();
            format!("`{word}`")
        }
        // Shown by code point: quoted as is, these would print as nothing (or break the line).
        Some(c) if is_invisible(c) => format!("the invisible character U+{:04X}", c as u32),
        Some(c) => format!("`{c}`"),
    }
}

/// Characters a terminal shows as nothing or as plain space: controls, spaces other than the
/// ASCII one, and the zero-width and byte-order marks editors leave behind.
fn is_invisible(c: char) -> bool {
    (c.is_control() && c != '\t')
        || (c.is_whitespace() && c != ' ' && c != '\t')
        || matches!(c, '\u{200b}'..='\u{200f}' | '\u{2060}' | '\u{feff}')
}

fn token_len(i: &In) -> usize {
    let s = i.fragment();
    let n = s
        .chars()
        .take_while(|c| c.is_alphanumeric() || *c == '_')
        .map(char::len_utf8)
        .sum::<usize>();
    if n == 0 {
        s.chars().next().map_or(1, char::len_utf8)
    } else {
        n
    }
}

fn fail<T>(i: &In, message: impl Into<String>) -> PResult<'static, T> {
    Err(nom::Err::Failure(PError::at(i, token_len(i), message)))
}

fn fail_err<T>(e: PError) -> PResult<'static, T> {
    Err(nom::Err::Failure(e))
}

fn span_from(start: &In, end: &In) -> Span {
    Span::new(start.location_offset(), end.location_offset())
}

/// Turns a recoverable error into a committed one.
fn commit<T>(r: PResult<'_, T>) -> PResult<'_, T> {
    r.map_err(|e| match e {
        nom::Err::Error(e) => nom::Err::Failure(e),
        other => other,
    })
}

fn is_ident_start(c: char) -> bool {
    c.is_ascii_alphabetic() || c == '_'
}

fn is_ident_char(c: char) -> bool {
    c.is_ascii_alphanumeric() || c == '_'
}

/// The parser state: collected errors.
struct Parser {
    errors: RefCell<Vec<PError>>,
    /// Prefix operators (`-`, `not`) open around the current point.
    prefixes: Cell<usize>,
    /// `else if` links of the chain being parsed.
    else_ifs: Cell<usize>,
}

impl Parser {
    /// Spaces, tabs and comments, never a newline.
    pub(super) fn sp<'a>(&self, i: In<'a>) -> In<'a> {
        let mut i = i;
        loop {
            let s = i.fragment();
            let n = s.len() - s.trim_start_matches([' ', '\t', '\r']).len();
            if n > 0 {
                i = i.take_from(n);
                continue;
            }
            if s.starts_with('#') {
                let n = s.find('\n').unwrap_or(s.len());
                i = i.take_from(n);
                continue;
            }
            return i;
        }
    }

    /// A punctuation token after optional spaces.
    pub(super) fn punct<'a>(&self, i: In<'a>, t: &'static str) -> PResult<'a, In<'a>> {
        let j = self.sp(i);
        tag(t).parse(j)
    }

    /// Like [`Parser::punct`] but committed, with an "expected" message.
    pub(super) fn expect<'a>(&self, i: In<'a>, t: &'static str, what: &str) -> PResult<'a, In<'a>> {
        let j = self.sp(i);
        match tag::<_, _, PError>(t).parse(j) {
            Ok(r) => Ok(r),
            Err(_) => fail(&j, format!("expected {what}, found {}", describe(&j))),
        }
    }

    pub(super) fn ident<'a>(&self, i: In<'a>) -> PResult<'a, Ident> {
        let j = self.sp(i);
        let (rest, word) =
            recognize(pair(take_while1(is_ident_start), take_while(is_ident_char))).parse(j)?;
        Ok((
            rest,
            Ident {
                name: word.fragment().to_string(),
                span: span_from(&j, &rest),
            },
        ))
    }

    /// An identifier that is exactly `word`.
    pub(super) fn keyword<'a>(&self, i: In<'a>, word: &str) -> PResult<'a, Ident> {
        let (rest, id) = self.ident(i)?;
        if id.name == word {
            Ok((rest, id))
        } else {
            Err(nom::Err::Error(PError::at(&i, 1, "")))
        }
    }

    /// A name usable for qubits, results and variables.
    pub(super) fn name<'a>(&self, i: In<'a>, what: &str) -> PResult<'a, Ident> {
        let j = self.sp(i);
        match self.ident(j) {
            Ok((_, id)) if RESERVED.contains(&id.name.as_str()) => fail_err(
                PError::at(
                    &j,
                    id.name.len(),
                    format!("`{}` is a reserved word and cannot be {what}", id.name),
                )
                .hint("pick another name"),
            ),
            Ok(r) => Ok(r),
            Err(_) => fail(&j, format!("expected {what}, found {}", describe(&j))),
        }
    }
}

/// Skips to the next line after an error; if the skipped text opened a block, skips the block
/// too so its body does not produce follow-on errors.
fn skip_line(i: In) -> In {
    let s = i.fragment();
    let mut depth = 0usize;
    let mut in_comment = false;
    for (k, c) in s.char_indices() {
        match c {
            '\n' if depth == 0 => return i.take_from(k + 1),
            '\n' => in_comment = false,
            '#' => in_comment = true,
            '{' if !in_comment => depth += 1,
            '}' if !in_comment => {
                if depth == 0 {
                    return i.take_from(k);
                }
                depth -= 1;
            }
            _ => {}
        }
    }
    i.take_from(s.len())
}

/// Refuses input nested deeper than [`MAX_NESTING`] before the recursive parser sees it.
fn check_nesting(text: &str) -> Option<(usize, char)> {
    let mut depth = 0usize;
    let mut in_comment = false;
    for (k, c) in text.char_indices() {
        match c {
            '\n' => in_comment = false,
            '#' => in_comment = true,
            '(' | '[' | '{' if !in_comment => {
                depth += 1;
                if depth > MAX_NESTING {
                    return Some((k, c));
                }
            }
            ')' | ']' | '}' if !in_comment => depth = depth.saturating_sub(1),
            _ => {}
        }
    }
    None
}

/// Parses a whole source.
pub(crate) fn parse(source: &Arc<Source>) -> Result<Ast, Vec<Diagnostic>> {
    if let Some((at, c)) = check_nesting(&source.text) {
        return Err(vec![Diagnostic::error(
            source,
            Span::new(at, at + 1),
            format!("`{c}` nests deeper than {MAX_NESTING} levels"),
        )
        .with_hint(
            "use loops or split the expression; slant refuses deeper nesting to stay safe",
        )]);
    }
    let parser = Parser {
        errors: RefCell::new(Vec::new()),
        prefixes: Cell::new(0),
        else_ifs: Cell::new(0),
    };
    let input = In::new(source.text.as_str());
    let stmts = parser.file(input);
    let errors = parser.errors.into_inner();
    if errors.is_empty() {
        Ok(Ast {
            source: source.clone(),
            stmts,
        })
    } else {
        Err(errors
            .into_iter()
            .map(|e| {
                let d = Diagnostic::error(source, Span::new(e.start, e.end), e.message);
                match e.hint {
                    Some(h) => d.with_hint(h),
                    None => d,
                }
            })
            .collect())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lang::{BinOp, ExprKind, NoiseTargets, StmtKind};

    fn ok(text: &str) -> Ast {
        parse(&Source::new("t.slant", text)).unwrap_or_else(|d| panic!("{}", d[0].render()))
    }

    /// `(message, line, column)` of every error.
    fn errors(text: &str) -> Vec<(String, usize, usize)> {
        parse(&Source::new("t.slant", text))
            .expect_err(text)
            .iter()
            .map(|d| {
                let (_, l, c) = d.location().unwrap();
                (d.message.clone(), l, c)
            })
            .collect()
    }

    /// The value expression of a `param p = …` statement.
    fn param(expr: &str) -> ExprKind {
        let ast = ok(&format!("param p = {expr}\n"));
        match &ast.stmts[0].kind {
            StmtKind::Param { value, .. } => value.kind.clone(),
            other => panic!("{other:?}"),
        }
    }

    #[test]
    fn precedence_climbing_binds_tighter_operators_first() {
        let ExprKind::Binary(BinOp::Add, a, b) = param("1 + 2 * 3") else {
            panic!("`+` at the top");
        };
        assert_eq!(a.kind, ExprKind::Int(1));
        assert!(matches!(b.kind, ExprKind::Binary(BinOp::Mul, _, _)));
        // Left associative: (8 - 2) - 1.
        let ExprKind::Binary(BinOp::Sub, a, _) = param("8 - 2 - 1") else {
            panic!("`-` at the top");
        };
        assert!(matches!(a.kind, ExprKind::Binary(BinOp::Sub, _, _)));
        // `not` binds looser than comparison, tighter than `and`.
        let ExprKind::Binary(BinOp::And, a, _) = param("not 1 < 2 and 1") else {
            panic!("`and` at the top");
        };
        assert!(matches!(a.kind, ExprKind::Not(_)));
        assert_eq!(param("(1)"), ExprKind::Int(1));
        assert_eq!(param("2.5e-1"), ExprKind::Float(0.25));
    }

    #[test]
    fn statements_keep_their_parts_and_comments() {
        let ast = ok(
            "qubit q[0..3] at (1, 2) role data, edge  # note\n\n# own line\n\
                      noise joint p=0.1 x q[0] * z q[1]\nmeasure z q[0] -> m flip 0.01\n",
        );
        let kinds: Vec<&StmtKind> = ast.stmts.iter().map(|s| &s.kind).collect();
        assert!(
            matches!(kinds[0], StmtKind::Qubit { roles, coords: Some(c), .. }
            if roles.len() == 2 && c.len() == 2)
        );
        assert_eq!(ast.stmts[0].comment.as_deref(), Some(" note"));
        assert_eq!(kinds[1], &StmtKind::Blank);
        assert_eq!(kinds[2], &StmtKind::Comment(" own line".into()));
        assert!(
            matches!(kinds[3], StmtKind::Noise { targets: NoiseTargets::Product(p), .. }
            if p.len() == 2)
        );
        assert!(
            matches!(kinds[4], StmtKind::Measure { flip: Some(_), outcomes } if outcomes.len() == 1)
        );
    }

    #[test]
    fn the_measurement_arrow_is_not_a_minus() {
        let ast = ok("qubit q[0..2]\nmeasure z q[1] -> m[1]\n");
        assert_eq!(ast.stmts.len(), 2);
    }

    #[test]
    fn errors_recover_at_the_next_line() {
        // Two independent mistakes, each reported at its token; the block of the first does not
        // cascade.
        let e = errors("qubit a\nfor i in 0..2 { hh a }\nmeasure q a -> m\n");
        assert_eq!(e.len(), 2, "{e:?}");
        assert_eq!((e[0].1, e[0].2), (2, 17));
        assert!(e[0].0.contains("unknown statement or gate `hh`"), "{e:?}");
        assert_eq!((e[1].1, e[1].2), (3, 9));
        assert!(e[1].0.contains("expected a basis"), "{e:?}");
    }

    #[test]
    fn limits_are_refused_before_recursion() {
        let deep = format!("param p = {}1{}\n", "(".repeat(70), ")".repeat(70));
        let e = errors(&deep);
        assert!(e[0].0.contains("nests deeper than 64 levels"), "{e:?}");
        assert!(errors("param p = 1 < 2 < 3\n")[0]
            .0
            .contains("cannot be chained"));
    }

    #[test]
    fn invisible_characters_are_named_by_code_point() {
        let e = errors("qubit a\n\u{200b}h a\n");
        assert!(e[0].0.contains("U+200B"), "{e:?}");
    }
}
