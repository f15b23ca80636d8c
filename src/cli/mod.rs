//! Command-line front end: argument parsing, dispatch and exit codes.
//!
//! Each subcommand lives in its own file with an `Args` struct and a `run` function returning
//! `CliError` on failure. Only this module prints diagnostics and chooses exit codes.
//!
//! Exit codes (also in `--help` and the README):
//!
//! | code | meaning |
//! |------|---------|
//! | 0 | success |
//! | 1 | input rejected: a diagnostic was printed |
//! | 2 | usage error (bad flags) |
//! | 3 | the answer is "no" (`fmt --check` found a file that is not canonical; `bias` found the bias lost) |
//! | 4 | internal error: a bug, please report it |

/// `print!` for subcommands: writes to standard output through [`out`], which never panics and
/// keeps the first error for the exit code. Subcommands never use `print!`/`println!`
/// (`scripts/forbid.sh` refuses them under `src/cli/`).
macro_rules! out {
    ($($arg:tt)*) => { $crate::cli::out::print(format_args!($($arg)*)) };
}

/// `println!` for subcommands; see [`out!`].
macro_rules! outln {
    () => { $crate::cli::out::print(format_args!("\n")) };
    ($($arg:tt)*) => {
        $crate::cli::out::print(format_args!("{}\n", format_args!($($arg)*)))
    };
}

mod bias;
mod budget;
mod check;
mod common;
mod compare;
mod compile;
mod decode;
mod distance;
mod draw;
mod estimate;
mod fmt;
mod graph;
mod merge;
mod new;
mod out;
mod plot;
mod progress;
mod shots;
mod sweep;
mod trace;

use std::io::{IsTerminal, Write};

use clap::{Parser, Subcommand};

use crate::base::Diagnostic;
use crate::study::StudyError;

/// Exit code: success.
pub const EXIT_OK: i32 = 0;
/// Exit code: the input was rejected and a diagnostic printed.
pub const EXIT_REJECTED: i32 = 1;
/// Exit code: bad command-line usage.
pub const EXIT_USAGE: i32 = 2;
/// Exit code: a yes/no command answers "no".
pub const EXIT_NO: i32 = 3;
/// Exit code: an internal error (a bug).
pub const EXIT_INTERNAL: i32 = 4;

const EXIT_TABLE: &str = "Exit codes: 0 success, 1 input rejected (a diagnostic was printed), \
2 usage error, 3 the answer is no (`fmt --check` found changes, `bias` found the bias lost), 4 internal error (please report).";

/// slant: syndrome-extraction circuits under biased noise.
#[derive(Debug, Parser)]
#[command(name = "slant", version, about, after_help = EXIT_TABLE)]
struct Cli {
    /// What to do.
    #[command(subcommand)]
    command: Command,
}

/// The subcommands.
#[derive(Debug, Subcommand)]
enum Command {
    /// Report where the high-rate (Z-type) faults end up: kept Z, or converted to X/Y.
    Bias(bias::Args),
    /// Error budget: which noise sources the logical error rate comes from.
    Budget(budget::Args),
    /// Parse, expand and verify a circuit; print a summary.
    Check(check::Args),
    /// Compare circuits or generated variants side by side.
    Compare(compare::Args),
    /// Write a circuit with every channel of a noise model explicit.
    Compile(compile::Args),
    /// Decode measured detection events with the circuit's matching graph.
    Decode(decode::Args),
    /// Circuit-level distances by fault class, with the logical error found.
    Distance(distance::Args),
    /// Draw the patch: layout and gate order, the layers of a round, or faults on the chip.
    Draw(draw::Args),
    /// Estimate the logical error rate by sampling and decoding.
    Estimate(estimate::Args),
    /// Print a circuit in canonical form.
    Fmt(fmt::Args),
    /// Write the weighted fault graph of a noisy circuit.
    Graph(graph::Args),
    /// Combine results stores of sweeps, dropping duplicate chunks.
    Merge(merge::Args),
    /// Generate a code-family circuit in slant's language.
    New(new::Args),
    /// Plot logical against physical error rate from a results store, with the threshold.
    Plot(plot::Args),
    /// Sample detection events and observable flips.
    Shots(shots::Args),
    /// Run a threshold sweep from a TOML spec into a resumable results store.
    Sweep(sweep::Args),
    /// Show which circuit faults make up a fault-graph edge.
    Trace(trace::Args),
}

/// Why a subcommand failed.
#[derive(Debug)]
enum CliError {
    /// Input rejected with located diagnostics.
    Rejected(Vec<Diagnostic>),
    /// A yes/no command answered no; the message has been printed already.
    No,
    /// A bad option value found after argument parsing (e.g. a distance the family cannot
    /// take): exit 2 like the values the argument parser refuses itself.
    Usage(Diagnostic),
    /// A bug.
    Internal(String),
}

impl From<Vec<Diagnostic>> for CliError {
    fn from(d: Vec<Diagnostic>) -> CliError {
        CliError::Rejected(d)
    }
}

impl From<Diagnostic> for CliError {
    fn from(d: Diagnostic) -> CliError {
        CliError::Rejected(vec![d])
    }
}

impl From<StudyError> for CliError {
    fn from(e: StudyError) -> CliError {
        match e {
            StudyError::Rejected(d) => CliError::Rejected(d),
            StudyError::Undecodable(e) => CliError::Internal(format!(
                "the extracted matching graph is not decodable: {e}"
            )),
        }
    }
}

/// What the manifest of an output set ([`crate::base::OutputSet`]) says about the run: the
/// program version and the whole command line (inputs, noise, seed), and the current directory
/// the paths in it are relative to.
fn run_description() -> serde_json::Value {
    let cwd = std::env::current_dir().map_or(String::new(), |d| d.display().to_string());
    serde_json::json!({
        "program": concat!("slant ", env!("CARGO_PKG_VERSION")),
        "arguments": std::env::args_os()
            .skip(1)
            .map(|a| a.to_string_lossy().into_owned())
            .collect::<Vec<_>>(),
        "directory": cwd,
    })
}

/// Runs the CLI on the process arguments and returns the exit code.
pub fn main() -> i32 {
    let cli = match Cli::try_parse() {
        Ok(cli) => cli,
        Err(e) => {
            let _ = e.print();
            return if e.use_stderr() { EXIT_USAGE } else { EXIT_OK };
        }
    };
    let result = match cli.command {
        Command::Bias(a) => bias::run(a),
        Command::Budget(a) => budget::run(a),
        Command::Check(a) => check::run(a),
        Command::Compare(a) => compare::run(a),
        Command::Compile(a) => compile::run(a),
        Command::Decode(a) => decode::run(a),
        Command::Distance(a) => distance::run(a),
        Command::Draw(a) => draw::run(a),
        Command::Estimate(a) => estimate::run(a),
        Command::Fmt(a) => fmt::run(a),
        Command::Graph(a) => graph::run(a),
        Command::Merge(a) => merge::run(a),
        Command::New(a) => new::run(a),
        Command::Plot(a) => plot::run(a),
        Command::Shots(a) => shots::run(a),
        Command::Sweep(a) => sweep::run(a),
        Command::Trace(a) => trace::run(a),
    };
    // Standard output's first failure decides the exit code unless the subcommand failed for a
    // reason of its own (whose diagnostic is the one worth reading).
    let result = match (result, out::finish()) {
        (Ok(()) | Err(CliError::No), Some(e)) => Err(CliError::Rejected(vec![Diagnostic::bare(
            format!("cannot write to standard output: {e}"),
        )])),
        (result, _) => result,
    };
    match result {
        Ok(()) => EXIT_OK,
        Err(CliError::Rejected(diags)) => {
            print_diagnostics(&diags);
            EXIT_REJECTED
        }
        Err(CliError::No) => EXIT_NO,
        Err(CliError::Usage(d)) => {
            print_diagnostics(&[d]);
            EXIT_USAGE
        }
        Err(CliError::Internal(msg)) => {
            let _ = writeln!(
                std::io::stderr(),
                "slant: internal error: {msg}\nThis is a bug; please report it with the input that caused it."
            );
            EXIT_INTERNAL
        }
    }
}

fn print_diagnostics(diags: &[Diagnostic]) {
    let color = std::io::stderr().is_terminal() && std::env::var_os("NO_COLOR").is_none();
    for d in diags {
        let text = d.render();
        if color {
            // Colour only the severity word; the rest stays plain so tests and logs match.
            let text = text
                .replacen("error:", "\x1b[1;31merror\x1b[0m:", 1)
                .replacen("warning:", "\x1b[1;33mwarning\x1b[0m:", 1);
            let _ = write!(std::io::stderr(), "{text}");
        } else {
            let _ = write!(std::io::stderr(), "{text}");
        }
    }
}
