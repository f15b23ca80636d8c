//! Recursive-descent parser built from nom combinators.
//!
//! Design note. Input is a [`nom_locate::LocatedSpan`] so every node knows its byte offset. A
//! statement ends at a newline or `;`; inside a statement, [`Parser::sp`] skips spaces, tabs and
//! comments but never a newline. Each grammar rule of `grammar/slant.ebnf` is one method with the
//! same name. After a statement's leading keyword the parser commits (`nom::Err::Failure`), so the
//! caret lands on the token that is wrong, not on the statement start. Statement lists recover
//! from an error by skipping to the end of the line (and past any block opened on it), so one file
//! reports several independent errors without cascades.
//!
//! Comments and blank lines between statements are kept as [`StmtKind::Comment`] and
//! [`StmtKind::Blank`] so the canonical printer (`slant fmt`) does not lose them; a comment after a
//! statement on the same line is kept in [`Stmt::comment`].

use std::cell::{Cell, RefCell};
use std::sync::Arc;

use nom::bytes::complete::{tag, take_while, take_while1};
use nom::character::complete::{char, digit1, one_of};
use nom::combinator::{opt, recognize};
use nom::error::{ErrorKind, ParseError};
use nom::sequence::pair;
use nom::{IResult, Input, Parser as _};
use nom_locate::LocatedSpan;

use crate::base::{did_you_mean, Basis, ChannelKind, Diagnostic, Gate, Pauli, Source, Span};
use crate::lang::ast::{
    Ast, BinOp, Expr, ExprKind, Ident, Index, NoiseTargets, Outcome, Ref, Stmt, StmtKind,
};

type In<'a> = LocatedSpan<&'a str>;
type PResult<'a, T> = IResult<In<'a>, T, PError>;

/// Deepest nesting of blocks, brackets and parentheses accepted; deeper input is refused before
/// parsing so recursion cannot overflow the stack.
pub(crate) const MAX_NESTING: usize = 64;

/// Most binary operators in one expression (outside parentheses) and most `else if` links in
/// one chain. Both build recursion (evaluation of a left-deep operator tree, the parser's own
/// `else if`) that bracket counting cannot see.
pub(crate) const MAX_CHAIN: usize = 1000;

/// Most errors reported for one file; past this the rest are likely cascades.
const MAX_ERRORS: usize = 20;

/// Words that cannot name a qubit, result or variable because statements use them as separators.
pub(crate) const RESERVED: [&str; 9] =
    ["and", "at", "by", "else", "flip", "in", "not", "or", "role"];

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
pub(crate) struct PError {
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
    fn sp<'a>(&self, i: In<'a>) -> In<'a> {
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
    fn punct<'a>(&self, i: In<'a>, t: &'static str) -> PResult<'a, In<'a>> {
        let j = self.sp(i);
        tag(t).parse(j)
    }

    /// Like [`Parser::punct`] but committed, with an "expected" message.
    fn expect<'a>(&self, i: In<'a>, t: &'static str, what: &str) -> PResult<'a, In<'a>> {
        let j = self.sp(i);
        match tag::<_, _, PError>(t).parse(j) {
            Ok(r) => Ok(r),
            Err(_) => fail(&j, format!("expected {what}, found {}", describe(&j))),
        }
    }

    fn ident<'a>(&self, i: In<'a>) -> PResult<'a, Ident> {
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
    fn keyword<'a>(&self, i: In<'a>, word: &str) -> PResult<'a, Ident> {
        let (rest, id) = self.ident(i)?;
        if id.name == word {
            Ok((rest, id))
        } else {
            Err(nom::Err::Error(PError::at(&i, 1, "")))
        }
    }

    /// A name usable for qubits, results and variables.
    fn name<'a>(&self, i: In<'a>, what: &str) -> PResult<'a, Ident> {
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

    // ---- statements -------------------------------------------------------------------------

    /// `file = stmt_list`
    fn file<'a>(&self, i: In<'a>) -> Vec<Stmt> {
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
    fn stmt_list<'a>(&self, mut i: In<'a>) -> (In<'a>, Vec<Stmt>) {
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
    fn end<'a>(&self, i: In<'a>, mut st: Stmt) -> PResult<'a, Stmt> {
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
    fn stmt<'a>(&self, i: In<'a>) -> PResult<'a, Stmt> {
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
                if let Some(g) = Gate::from_name(&lower) {
                    e = e.hint(format!("gate names are lower-case: `{}`", g.name()));
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
    fn param<'a>(&self, i: In<'a>) -> PResult<'a, StmtKind> {
        let (i, name) = self.name(i, "a parameter name")?;
        let (i, _) = self.expect(i, "=", "`=` and a default value")?;
        let (i, value) = self.expr(i)?;
        Ok((i, StmtKind::Param { name, value }))
    }

    /// `qubit = 'qubit' ref ( 'at' coords )? ( 'role' IDENT ( ',' IDENT )* )?`
    fn qubit<'a>(&self, i: In<'a>) -> PResult<'a, StmtKind> {
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
    fn block<'a>(&self, i: In<'a>, owner: &Ident) -> PResult<'a, Vec<Stmt>> {
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
    fn for_loop<'a>(&self, i: In<'a>) -> PResult<'a, StmtKind> {
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
    fn if_stmt<'a>(&self, start: In<'a>, i: In<'a>) -> PResult<'a, Stmt> {
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
    fn gate<'a>(&self, i: In<'a>, gate: Ident) -> PResult<'a, StmtKind> {
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
    fn group<'a>(&self, i: In<'a>, what: &str) -> PResult<'a, Vec<Ref>> {
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
    fn reset<'a>(&self, i: In<'a>) -> PResult<'a, StmtKind> {
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
    fn basis<'a>(&self, i: In<'a>, example: &str) -> PResult<'a, Basis> {
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
    fn measure<'a>(&self, i: In<'a>) -> PResult<'a, StmtKind> {
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
    fn outcome<'a>(&self, i: In<'a>) -> PResult<'a, Outcome> {
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
    fn product<'a>(&self, i: In<'a>, example: &str) -> PResult<'a, Vec<(Pauli, Ref)>> {
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
    fn noise<'a>(&self, i: In<'a>) -> PResult<'a, StmtKind> {
        let j = self.sp(i);
        let Ok((i, channel)) = self.ident(j) else {
            return fail(
                &j,
                format!("expected a channel name, found {}", describe(&j)),
            );
        };
        let Some(kind) = ChannelKind::from_name(&channel.name) else {
            let mut e = PError::at(
                &j,
                channel.name.len(),
                format!("unknown noise channel `{}`", channel.name),
            );
            if let Some(s) = did_you_mean(&channel.name, ChannelKind::ALL.map(ChannelKind::name)) {
                e = e.hint(format!("did you mean `{s}`?"));
            } else {
                let names = ChannelKind::ALL.map(ChannelKind::name).join(", ");
                e = e.hint(format!("channels are {names}"));
            }
            return fail_err(e);
        };
        let mut args: Vec<(Ident, Expr)> = Vec::new();
        let mut i = i;
        loop {
            let j = self.sp(i);
            let Ok((after, key)) = self.ident(j) else {
                break;
            };
            let Ok((after, _)) = self.punct(after, "=") else {
                break;
            };
            if !kind.takes(&key.name) {
                let mut e = PError::at(
                    &j,
                    key.name.len(),
                    format!("`{}` takes no parameter `{}`", channel.name, key.name),
                );
                e = e.hint(if kind == ChannelKind::Pauli2 {
                    "pauli2 terms are two-letter Pauli names such as `zz=0.01` or `ix=0.001`"
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
            let (i, p) = self.product(i, "noise correlated p=0.01 x a * z b")?;
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
    fn detector<'a>(&self, i: In<'a>) -> PResult<'a, StmtKind> {
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
    fn observable<'a>(&self, i: In<'a>) -> PResult<'a, StmtKind> {
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
    fn parity<'a>(&self, i: In<'a>) -> PResult<'a, Vec<Ref>> {
        let (mut i, first) = self.reference(i, "a result name")?;
        let mut refs = vec![first];
        while let Ok((j, _)) = self.punct(i, "^") {
            let (j, r) = self.reference(j, "a result name after `^`")?;
            refs.push(r);
            i = j;
        }
        Ok((i, refs))
    }

    // ---- names and expressions --------------------------------------------------------------

    /// `ref = IDENT ( '[' index ( ',' index )* ']' )?`
    fn reference<'a>(&self, i: In<'a>, what: &str) -> PResult<'a, Ref> {
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
    fn index<'a>(&self, i: In<'a>) -> PResult<'a, Index> {
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
    fn coords<'a>(&self, i: In<'a>) -> PResult<'a, Vec<Expr>> {
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
    fn expr<'a>(&self, i: In<'a>) -> PResult<'a, Expr> {
        self.expr_prec(i, 0)
    }

    fn binop<'a>(&self, i: In<'a>) -> PResult<'a, BinOp> {
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

    fn expr_prec<'a>(&self, i: In<'a>, min: u8) -> PResult<'a, Expr> {
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
    fn unary<'a>(&self, i: In<'a>) -> PResult<'a, Expr> {
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
    fn prefixed<'a>(&self, j: In<'a>) -> PResult<'a, Expr> {
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
    fn atom<'a>(&self, j: In<'a>) -> PResult<'a, Expr> {
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
    fn number<'a>(&self, j: In<'a>) -> PResult<'a, Expr> {
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
