//! `slant graph`: extract the fault graph of a noisy circuit and write it in one format.

use std::io::Write;
use std::path::{Path, PathBuf};

use crate::cli::common::CircuitArgs;
use crate::cli::{output, CliError};
use crate::faults::export::{self, Format, View};
use crate::faults::{ExtractOptions, FaultGraph};
use crate::ir::Circuit;
use crate::lang::Diagnostic;

/// Arguments of `slant graph`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// The circuit.
    #[command(flatten)]
    pub circuit: CircuitArgs,
    /// Noise model applied before extraction (circuits with explicit noise need none).
    #[arg(long, value_name = "MODEL")]
    pub noise: Option<String>,
    /// Output format.
    #[arg(long, value_enum)]
    pub format: Format,
    /// Export the matching graph (hyperedges split, parallel edges merged) instead of every
    /// mechanism.
    #[arg(long)]
    pub graphlike: bool,
    /// Tag measurement flips as high-rate faults.
    #[arg(long)]
    pub high_rate_flips: bool,
    /// Output path (a directory for `mtx`); `-` or absent prints to standard output.
    #[arg(short = 'o', long = "output", value_name = "PATH")]
    pub output: Option<PathBuf>,
}

/// Loads the circuit named by `circuit`, applying a `--noise` model when one is given.
pub fn load_noisy(circuit: &CircuitArgs, noise: Option<&str>) -> Result<Circuit, CliError> {
    let c = circuit.load()?;
    if let Some(model) = noise {
        // Noise models arrive with the noise module; until then only explicit noise works.
        return Err(Diagnostic::bare(format!(
            "`--noise {model}` is not supported by this build: write the noise into the circuit"
        ))
        .into());
    }
    Ok(c)
}

/// Runs `slant graph`.
pub fn run(args: Args) -> Result<(), CliError> {
    let circuit = load_noisy(&args.circuit, args.noise.as_deref())?;
    let opts = ExtractOptions {
        high_rate_flips: args.high_rate_flips,
    };
    let graph = crate::faults::extract(&circuit, &opts);
    write(&graph, args.format, args.graphlike, args.output.as_deref())
}

fn write(
    graph: &FaultGraph,
    format: Format,
    graphlike: bool,
    out: Option<&Path>,
) -> Result<(), CliError> {
    let matching;
    let view = if graphlike {
        matching = graph.graphlike();
        View::Graphlike(graph, &matching.0, &matching.1)
    } else {
        View::Full(graph)
    };
    let files = export::render(&view, format);
    let to_stdout = out.is_none_or(|p| p.as_os_str() == "-");
    if format == Format::Mtx {
        let dir = out.filter(|_| !to_stdout).ok_or_else(|| {
            Diagnostic::bare("`--format mtx` writes a directory: give it with `-o DIR`")
        })?;
        std::fs::create_dir_all(dir).map_err(|e| {
            Diagnostic::bare(format!("cannot create `{}`: {e}", dir.display()))
        })?;
        for (name, bytes) in &files {
            output::write_atomic(&dir.join(name), bytes)?;
        }
        return Ok(());
    }
    let bytes = &files[0].1;
    match out {
        Some(path) if !to_stdout => output::write_atomic(path, bytes)?,
        _ => {
            let mut stdout = std::io::stdout().lock();
            // A closed pipe (e.g. `| head`) is not an error worth reporting.
            let _ = stdout.write_all(bytes).and_then(|()| stdout.flush());
        }
    }
    Ok(())
}
