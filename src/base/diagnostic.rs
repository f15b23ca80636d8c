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
        let _ = writeln!(out, "{head}: {}", elide_names(&self.message));
        if let Some(label) = &self.primary {
            render_label(&mut out, label);
        }
        for label in &self.secondary {
            render_label(&mut out, label);
        }
        if let Some(hint) = &self.hint {
            let _ = writeln!(out, "  = hint: {}", elide_names(hint));
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
        let _ = writeln!(out, " {}", elide_names(&label.text));
    }
}

/// Names (text in backticks) longer than this are shown by their start and length: a message
/// about a megabyte-long name should not be a megabyte long.
const MAX_NAME_SHOWN: usize = 64;

/// `text` with every backticked name longer than [`MAX_NAME_SHOWN`] characters cut to its
/// first characters, an ellipsis and its length.
fn elide_names(text: &str) -> std::borrow::Cow<'_, str> {
    if text.len() <= MAX_NAME_SHOWN {
        return text.into();
    }
    let parts: Vec<&str> = text.split('`').collect();
    let mut out = String::new();
    for (i, part) in parts.iter().enumerate() {
        // Odd parts are inside a pair of backticks (an unpaired last backtick keeps its tail).
        let quoted = i % 2 == 1 && i + 1 < parts.len();
        if i > 0 {
            out.push('`');
        }
        let chars = part.chars().count();
        if quoted && chars > MAX_NAME_SHOWN {
            let head: String = part.chars().take(MAX_NAME_SHOWN / 2).collect();
            let _ = write!(out, "{head}…` ({chars} characters)");
            // The closing backtick has been written; the next part follows it directly.
            out.push('\u{1}');
        } else {
            out.push_str(part);
        }
    }
    out.replace("\u{1}`", "").into()
}

/// Names longer than this get no suggestion: nobody mistypes a name that long, and the edit
/// distance costs the product of the two lengths, so the bound keeps a hint linear in the
/// number of candidates whatever the input.
const MAX_HINTED: usize = 64;

/// Suggests the candidate closest to `word` by edit distance, if it is close enough to be a typo.
pub fn did_you_mean<'a>(
    word: &str,
    candidates: impl IntoIterator<Item = &'a str>,
) -> Option<&'a str> {
    if word.len() > MAX_HINTED {
        return None;
    }
    let limit = word.len().max(2) / 2 + (word.len() > 4) as usize;
    let mut best: Option<(usize, &str)> = None;
    for cand in candidates {
        // Lengths further apart than the limit cannot be within it; this also skips every
        // candidate longer than `MAX_HINTED` plus the limit.
        if cand.len().abs_diff(word.len()) > limit {
            continue;
        }
        let d = edit_distance(word, cand);
        if d <= limit && best.is_none_or(|(bd, _)| d < bd) {
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
    fn long_names_are_shown_by_their_start_and_length() {
        let name = "q".repeat(1 << 20);
        let d = Diagnostic::bare(format!("unknown qubit `{name}` in `cx`"))
            .with_hint(format!("declare `{name}` first"));
        let text = d.render();
        assert!(text.len() < 400, "{} bytes", text.len());
        assert!(
            text.contains(&format!(
                "unknown qubit `{}…` (1048576 characters) in `cx`",
                "q".repeat(32)
            )),
            "{text}"
        );
        // Short names and unpaired backticks are left alone.
        let short = format!("`{}` and `b", "x".repeat(70));
        assert_eq!(elide_names("`a` is `b`"), "`a` is `b`");
        assert!(elide_names(&short).ends_with("(70 characters) and `b"));
    }

    /// A hint costs time linear in the candidates whatever the word's length (a 65,536-character
    /// name against long candidates took 41 s when every pair was compared in full).
    #[test]
    fn hints_skip_names_that_cannot_be_typos() {
        let long = "a".repeat(1 << 16);
        let cands = [long.as_str(), "ab", "abc"];
        // Before the bound this one call compared 2^16 × 2^16 characters (tens of seconds).
        assert_eq!(did_you_mean(&long, cands), None);
        assert_eq!(
            did_you_mean(&"a".repeat(64), [&*"a".repeat(65)]),
            Some(&*"a".repeat(65))
        );
        assert_eq!(did_you_mean("abd", cands), Some("ab"));
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
