//! The one diagnostic type of slant and its renderer.
//!
//! Every stage (language parser, expander, checker, noise-model parser) reports problems as a
//! [`Diagnostic`]: a one-sentence message, a primary label at a span, optional secondary labels
//! ("first defined here") and an optional hint ("did you mean `cz`?"). Only the CLI renders them.

use std::fmt::Write;
use std::sync::Arc;

use crate::base::{Source, Span};

/// How bad a diagnostic is.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Severity {
    /// The input is rejected.
    Error,
    /// The input is accepted but probably not what was meant.
    Warning,
}

/// A message attached to a place in a source file.
#[derive(Clone, Debug)]
pub struct Label {
    /// The file.
    pub source: Arc<Source>,
    /// Where in it.
    pub span: Span,
    /// What to say there (may be empty for the primary label).
    pub text: String,
}

/// A located problem report.
#[derive(Clone, Debug)]
pub struct Diagnostic {
    /// Error or warning.
    pub severity: Severity,
    /// One sentence, lower-case start, names in backticks.
    pub message: String,
    /// Where the problem is; `None` for problems without a place (e.g. an unknown `--set` name).
    pub primary: Option<Label>,
    /// Related places.
    pub secondary: Vec<Label>,
    /// A suggestion.
    pub hint: Option<String>,
}

impl Diagnostic {
    /// An error at a span of a source.
    pub fn error(source: &Arc<Source>, span: Span, message: impl Into<String>) -> Diagnostic {
        Diagnostic {
            severity: Severity::Error,
            message: message.into(),
            primary: Some(Label {
                source: source.clone(),
                span,
                text: String::new(),
            }),
            secondary: Vec::new(),
            hint: None,
        }
    }

    /// An error without a place in a file.
    pub fn bare(message: impl Into<String>) -> Diagnostic {
        Diagnostic {
            severity: Severity::Error,
            message: message.into(),
            primary: None,
            secondary: Vec::new(),
            hint: None,
        }
    }

    /// Adds a hint.
    pub fn with_hint(mut self, hint: impl Into<String>) -> Diagnostic {
        self.hint = Some(hint.into());
        self
    }

    /// Adds a secondary label.
    pub fn with_label(mut self, source: &Arc<Source>, span: Span, text: impl Into<String>) -> Self {
        self.secondary.push(Label {
            source: source.clone(),
            span,
            text: text.into(),
        });
        self
    }

    /// `file:line:col` of the primary label, if any.
    pub fn location(&self) -> Option<(String, usize, usize)> {
        self.primary.as_ref().map(|l| {
            let (line, col) = l.source.line_col(l.span.start);
            (l.source.name.clone(), line, col)
        })
    }

    /// Renders as plain text: the message, then `--> file:line:col`, the source line and a caret
    /// line for each label, then the hint.
    pub fn render(&self) -> String {
        let mut out = String::new();
        let head = match self.severity {
            Severity::Error => "error",
            Severity::Warning => "warning",
        };
        let _ = writeln!(out, "{head}: {}", self.message);
        if let Some(label) = &self.primary {
            render_label(&mut out, label);
        }
        for label in &self.secondary {
            render_label(&mut out, label);
        }
        if let Some(hint) = &self.hint {
            let _ = writeln!(out, "  = hint: {hint}");
        }
        out
    }
}

/// Lines longer than this are cut around the caret so a minified file does not flood the terminal.
const MAX_SHOWN: usize = 120;

fn render_label(out: &mut String, label: &Label) {
    let src = &label.source;
    let (line, col) = src.line_col(label.span.start);
    let _ = writeln!(out, "  --> {}:{}:{}", src.name, line, col);
    let text = src.line_text(line);
    let chars: Vec<char> = text.chars().collect();
    let (end_line, end_col) = src.line_col(label.span.end);
    let width = if end_line == line && end_col > col {
        end_col - col
    } else {
        1
    };
    // Window the line so the caret stays visible on very long lines.
    let first = if chars.len() > MAX_SHOWN && col > MAX_SHOWN / 2 {
        (col - 1 - MAX_SHOWN / 2).min(chars.len().saturating_sub(MAX_SHOWN))
    } else {
        0
    };
    let shown: String = chars.iter().skip(first).take(MAX_SHOWN).collect();
    let prefix = if first > 0 { "..." } else { "" };
    let gutter = line.to_string();
    let pad = " ".repeat(gutter.len());
    let _ = writeln!(out, "{pad} |");
    let _ = writeln!(out, "{gutter} | {prefix}{}", shown.replace('\t', " "));
    let caret_col = col - 1 - first + prefix.len();
    let width = width.min((MAX_SHOWN + prefix.len()).saturating_sub(caret_col).max(1));
    let _ = write!(
        out,
        "{pad} | {}{}",
        " ".repeat(caret_col),
        "^".repeat(width)
    );
    if label.text.is_empty() {
        out.push('\n');
    } else {
        let _ = writeln!(out, " {}", label.text);
    }
}

/// Suggests the candidate closest to `word` by edit distance, if it is close enough to be a typo.
pub fn did_you_mean<'a>(
    word: &str,
    candidates: impl IntoIterator<Item = &'a str>,
) -> Option<&'a str> {
    let mut best: Option<(usize, &str)> = None;
    for cand in candidates {
        let d = edit_distance(word, cand);
        if d <= word.len().max(2) / 2 + (word.len() > 4) as usize
            && best.is_none_or(|(bd, _)| d < bd)
        {
            best = Some((d, cand));
        }
    }
    best.map(|(_, c)| c)
}

fn edit_distance(a: &str, b: &str) -> usize {
    let a: Vec<char> = a.chars().collect();
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    for i in 1..=a.len() {
        let mut cur = vec![i; b.len() + 1];
        for j in 1..=b.len() {
            let sub = prev[j - 1] + usize::from(a[i - 1] != b[j - 1]);
            cur[j] = sub.min(prev[j] + 1).min(cur[j - 1] + 1);
        }
        prev = cur;
    }
    prev[b.len()]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn renders_caret_under_span() {
        let src = Source::new("a.slant", "qubit a\nczz a b\n");
        let d = Diagnostic::error(&src, Span::new(8, 11), "unknown gate `czz`")
            .with_hint("did you mean `cz`?");
        assert_eq!(
            d.render(),
            "error: unknown gate `czz`\n  --> a.slant:2:1\n  |\n2 | czz a b\n  | ^^^\n  = hint: did you mean `cz`?\n"
        );
    }

    #[test]
    fn suggestions() {
        assert_eq!(did_you_mean("czz", ["cx", "cz", "h"]), Some("cz"));
        assert_eq!(did_you_mean("qqqqq", ["cx", "cz", "h"]), None);
        assert_eq!(
            did_you_mean("mesure", ["measure", "reset"]),
            Some("measure")
        );
    }
}
