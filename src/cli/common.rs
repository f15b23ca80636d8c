//! Arguments shared by the subcommands that read a circuit.

use std::path::PathBuf;
use std::sync::Arc;

use crate::base::{Diagnostic, Source};
use crate::ir::Limits;
use crate::study::Pipeline;

/// A circuit file and its parameter overrides.
#[derive(Debug, clap::Args)]
pub struct CircuitArgs {
    /// The circuit file (`-` reads standard input).
    pub file: PathBuf,
    /// Override a parameter, e.g. `--set distance=5` (repeatable).
    #[arg(long = "set", value_name = "NAME=INT", value_parser = parse_setting)]
    pub set: Vec<(String, i64)>,
    /// Refuse circuits that expand to more items, or whose loops take more steps. Items are
    /// weighted by memory: a qubit 4, a layer 3, an operation 2 plus 1 per target, a result 4,
    /// a detector or observable 4 plus 1 per term, a coordinate or role 1.
    #[arg(long, value_name = "N", default_value_t = Limits::default().max_items)]
    pub max_items: u64,
}

impl CircuitArgs {
    /// Reads, parses, expands and checks the circuit: a pipeline without `--noise` yet.
    pub fn load(&self) -> Result<Pipeline, Vec<Diagnostic>> {
        let limits = Limits {
            max_items: self.max_items,
        };
        let source =
            read_source_within(&self.file, limits.max_source_bytes()).map_err(|d| vec![d])?;
        Pipeline::load(&source, &self.set, &limits)
    }

    /// [`CircuitArgs::load`] with the noise of `noise` written in (`None`: as the file writes
    /// it). The noise model's warnings are printed on standard error at once.
    pub fn load_noisy(&self, noise: Option<&str>) -> Result<Pipeline, Vec<Diagnostic>> {
        let pipeline = self.load()?.noised(noise)?;
        print_warnings(pipeline.warnings());
        Ok(pipeline)
    }
}

/// The `--noise` option shared by the subcommands that simulate or analyse noisy circuits.
#[derive(Debug, Default, clap::Args)]
pub struct NoiseArgs {
    /// Noise to write into the circuit: a model file `FILE.toml`, or a preset `circuit p=P
    /// [bias=ETA] [cx=ideal|rotation|bias-preserving]`, `capacity p=P [bias=ETA]` or
    /// `phenomenological p=P [q=Q] [bias=ETA]` (bias = pZ/(pX+pY), `inf` for pure Z; default
    /// depolarizing). Noise written in the circuit file is kept as well.
    #[arg(long, value_name = "MODEL")]
    pub noise: Option<String>,
}

/// The walks of the splitting method, shared by `estimate` and `budget`.
#[derive(Debug, clap::Args)]
pub struct WalkArgs {
    /// With `--method splitting`: independent walks per rung (at least 2).
    #[arg(long, value_name = "K", default_value_t = 8, value_parser = clap::value_parser!(u64).range(2..))]
    pub chains: u64,
    /// With `--method splitting`: proposals per walk and rung, as a multiple of the number of
    /// fault-graph edges.
    #[arg(long, value_name = "N", default_value_t = 100.0)]
    pub sweeps: f64,
}

/// Prints a report as pretty JSON on standard output.
pub fn print_json<T: serde::Serialize>(report: &T) -> Result<(), crate::cli::CliError> {
    let text = serde_json::to_string_pretty(report)
        .map_err(|e| crate::cli::CliError::Internal(format!("cannot serialise the report: {e}")))?;
    crate::cli::out::print(format_args!("{text}\n"));
    Ok(())
}

/// The first line of a text report: `circuit: FILE (N detectors, M observables, R rounds)`.
pub fn circuit_line(
    file: &std::path::Path,
    detectors: usize,
    observables: usize,
    rounds: usize,
) -> String {
    use crate::base::count;
    format!(
        "circuit: {} ({}, {}, {})\n",
        file.display(),
        count(detectors, "detector"),
        count(observables, "observable"),
        count(rounds, "round")
    )
}

/// Prints warnings (e.g. a noise model's) on standard error.
pub fn print_warnings(warnings: &[Diagnostic]) {
    for w in warnings {
        eprint!("{}", w.render());
    }
}

/// Parses `NAME=INT`. A name that could not be a parameter (empty, or not a language name) is a
/// usage error here, before any file is read, like any other malformed flag.
pub fn parse_setting(s: &str) -> Result<(String, i64), String> {
    let (k, v) = s
        .split_once('=')
        .ok_or_else(|| format!("expected NAME=INT, found `{s}`"))?;
    let k = k.trim();
    if k.is_empty() {
        return Err(format!(
            "expected NAME=INT, found `{s}`: give the parameter's name before `=`"
        ));
    }
    let mut chars = k.chars();
    let valid = chars
        .next()
        .is_some_and(|c| c.is_ascii_alphabetic() || c == '_')
        && chars.all(|c| c.is_ascii_alphanumeric() || c == '_');
    if !valid {
        return Err(format!(
            "`{k}` is not a parameter name (names are letters, digits and `_`, not starting with \
             a digit)"
        ));
    }
    let v: i64 = v
        .trim()
        .parse()
        .map_err(|_| format!("`{v}` is not an integer"))?;
    Ok((k.to_string(), v))
}

/// Reads a file (or standard input for `-`) into a [`Source`], refusing one larger than the
/// default limits allow ([`Limits::max_source_bytes`]). Bytes that are not UTF-8 are rejected
/// with the location of the first bad byte.
pub fn read_source(path: &std::path::Path) -> Result<Arc<Source>, Diagnostic> {
    read_source_within(path, Limits::default().max_source_bytes())
}

/// [`read_source`] refusing files of more than `max_bytes` before reading them whole: the
/// parser's memory grows with the text, so a file past the budget is refused before parsing.
pub fn read_source_within(
    path: &std::path::Path,
    max_bytes: u64,
) -> Result<Arc<Source>, Diagnostic> {
    use std::io::Read;
    let name = path.display().to_string();
    let too_large = |size: String| {
        Diagnostic::bare(format!(
            "`{name}` is {size} bytes, past the limit of {max_bytes} bytes for an input file"
        ))
        .with_hint("the limit is half of `--max-items` in bytes; raise that if the file is meant")
    };
    let mut reader: Box<dyn Read> = if name == "-" {
        Box::new(std::io::stdin())
    } else {
        let file = std::fs::File::open(path)
            .map_err(|e| Diagnostic::bare(format!("cannot read `{name}`: {e}")))?;
        if let Ok(m) = file.metadata() {
            if m.is_file() && m.len() > max_bytes {
                return Err(too_large(m.len().to_string()));
            }
        }
        Box::new(file)
    };
    // Pipes and devices have no size: read one byte past the limit to find out.
    let mut bytes = Vec::new();
    reader
        .by_ref()
        .take(max_bytes.saturating_add(1))
        .read_to_end(&mut bytes)
        .map_err(|e| {
            let what = if name == "-" {
                "standard input".to_string()
            } else {
                format!("`{name}`")
            };
            Diagnostic::bare(format!("cannot read {what}: {e}"))
        })?;
    if bytes.len() as u64 > max_bytes {
        return Err(too_large(
            "more than".to_string() + &format!(" {max_bytes}"),
        ));
    }
    crate::base::source_from_bytes(name, bytes)
}
