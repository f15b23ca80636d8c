//! The `--noise` value: a preset text or the path of a model file, parsed into a [`NoiseSpec`]
//! and written into a circuit ([`apply`], [`apply_noted`]).

use std::sync::Arc;

use crate::base::{did_you_mean, Diagnostic, Source, Span};
use crate::ir::Circuit;
use crate::noise::compile::{self, Compiled};
use crate::noise::implement::Implementation;
use crate::noise::model::NoiseModel;
use crate::noise::preset::{Preset, PresetKind};
use crate::noise::settings::{read_with_settings, split_settings};

/// A parsed `--noise` value.
#[derive(Clone, Debug, PartialEq)]
pub enum NoiseSpec {
    /// A hardware model: a model file (`--noise FILE.toml`) or a `circuit` preset with a
    /// non-ideal `cx=` implementation (see [`NoiseModel`] and [`Implementation`]).
    Model(Box<NoiseModel>),
    /// A standard preset (`capacity`, `phenomenological`, `circuit`).
    Preset(Preset),
}

impl NoiseSpec {
    /// Parses the text of a `--noise` option. Diagnostics point into the option text, shown as a
    /// source named `--noise`.
    pub fn parse(text: &str) -> Result<NoiseSpec, Diagnostic> {
        let source = Source::new("--noise", text);
        NoiseSpec::parse_source(&source)
    }

    /// Parses a specification held in a [`Source`].
    pub fn parse_source(source: &Arc<Source>) -> Result<NoiseSpec, Diagnostic> {
        if let Some(spec) = parse_extension(source) {
            return spec;
        }
        Preset::parse(source).map(NoiseSpec::Preset)
    }
}

/// Whether a noise text names a model file (its first word ends in `.toml` or contains `/`)
/// rather than a preset.
pub fn is_model_text(text: &str) -> bool {
    let first = text.split_whitespace().next().unwrap_or("");
    first.ends_with(".toml") || first.contains('/')
}

/// Returns a copy of `circuit` with the noise of `spec` written in as explicit operations.
pub fn apply(circuit: &Circuit, spec: &NoiseSpec) -> Result<Circuit, Vec<Diagnostic>> {
    apply_noted(circuit, spec).map(|c| c.circuit)
}

/// Like [`apply`], with one [`crate::noise::Note`] per inserted channel saying what produced it and
/// its operation class (presets and model files class channels alike). Presets give no
/// durations, so their total duration is 0.
pub fn apply_noted(circuit: &Circuit, spec: &NoiseSpec) -> Result<Compiled, Vec<Diagnostic>> {
    match spec {
        NoiseSpec::Model(m) => compile::compile(circuit, m),
        NoiseSpec::Preset(p) => p.apply_noted(circuit).map(|(circuit, notes)| Compiled {
            circuit,
            notes,
            duration: 0.0,
            warnings: Vec::new(),
        }),
    }
}

/// The extensions of `--noise` beyond the plain presets: the path of a model file, or a
/// `circuit` preset with a `cx=ideal|rotation|bias-preserving` key. Returns `None` when the text
/// is neither (it is then a plain preset). `cx=ideal` gives the plain preset.
///
/// The text is a model file when its first word ends in `.toml` or contains `/` (no preset
/// name does); the words after it are settings (`p=0.002`, `scale=2`, `idle.t2=50`: see
/// `settings.rs`). A path that names no file is reported as such, not as an unknown preset.
fn parse_extension(source: &Arc<Source>) -> Option<Result<NoiseSpec, Diagnostic>> {
    let text = source.text.as_str();
    let first = text.split_whitespace().next().unwrap_or("");
    if is_model_text(text) {
        let path = std::path::Path::new(first);
        let start = text.find(first).unwrap_or(0);
        let at = Span::new(start, start + first.len());
        let settings = match split_settings(source, start + first.len()) {
            Ok(s) => s,
            Err(e) => return Some(Err(e)),
        };
        // A model file is a page of TOML; anything past the limit (a mistaken path to a data
        // file) is refused before it is read and parsed.
        let max = crate::ir::Limits::default().max_source_bytes();
        if let Ok(m) = std::fs::metadata(path) {
            if m.is_file() && m.len() > max {
                return Some(Err(Diagnostic::error(
                    source,
                    at,
                    format!(
                        "the noise model file `{first}` is {} bytes, past the limit of {max} \
                         bytes for an input file",
                        m.len()
                    ),
                )));
            }
        }
        return Some(match std::fs::read_to_string(path) {
            Ok(body) => read_with_settings(source, first, body, &settings)
                .map(|m| NoiseSpec::Model(Box::new(m))),
            Err(e) if e.kind() == std::io::ErrorKind::NotFound => Err(Diagnostic::error(
                source,
                at,
                format!("the noise model file `{first}` does not exist"),
            )
            .with_hint(
                "`--noise` takes the path of a model file or a preset such as `circuit p=0.001`",
            )),
            Err(e) => Err(Diagnostic::error(
                source,
                at,
                format!("cannot read the noise model `{first}`: {e}"),
            )),
        });
    }
    // Find a `cx=` token at a token boundary.
    let mut at = None;
    let mut offset = 0;
    for tok in text.split(char::is_whitespace) {
        if tok.starts_with("cx=") {
            at = Some((offset, tok));
        }
        offset += tok.len() + 1;
    }
    let (start, tok) = at?;
    let value = &tok[3..];
    let vspan = Span::new(start + 3, start + tok.len().max(4));
    let Some(implementation) = Implementation::from_name(value) else {
        let mut d = Diagnostic::error(
            source,
            vspan,
            format!("unknown cx implementation `{value}`"),
        );
        d = d.with_hint(
            match did_you_mean(value, Implementation::ALL.iter().map(|i| i.name())) {
                Some(s) => format!("did you mean `{s}`?"),
                None => "`cx=` takes `ideal`, `rotation` or `bias-preserving`".into(),
            },
        );
        return Some(Err(d));
    };
    // Blank the token out so the preset parser's columns still point into the original text.
    let mut rest = text.to_string();
    rest.replace_range(start..start + tok.len(), &" ".repeat(tok.len()));
    let preset = match Preset::parse(&Source::new(source.name.clone(), rest)) {
        Ok(p) => p,
        Err(e) => return Some(Err(e)),
    };
    if preset.kind != PresetKind::Circuit {
        return Some(Err(Diagnostic::error(
            source,
            Span::new(start, start + 2),
            format!(
                "`cx=` applies to the `circuit` preset, not `{}`",
                preset.kind.name()
            ),
        )
        .with_hint(
            "the `capacity` and `phenomenological` presets have no gate noise",
        )));
    }
    if implementation == Implementation::Ideal {
        return Some(Ok(NoiseSpec::Preset(preset)));
    }
    Some(Ok(NoiseSpec::Model(Box::new(NoiseModel::from_preset(
        &preset,
        implementation,
        source,
    )))))
}
