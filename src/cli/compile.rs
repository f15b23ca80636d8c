//! `slant compile`: write a circuit with every noise channel of a model explicit.

use std::path::PathBuf;

use crate::base::{write_atomic, Diagnostic};
use crate::cli::common::CircuitArgs;
use crate::cli::CliError;
use crate::ir::Circuit;
use crate::noise::compile::Note;
use crate::noise::NoiseSpec;

/// Arguments of `slant compile`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// The circuit.
    #[command(flatten)]
    pub circuit: CircuitArgs,
    /// Noise: a model file `FILE.toml` or a preset such as `circuit p=0.001 bias=100
    /// cx=bias-preserving`.
    #[arg(long, value_name = "MODEL")]
    pub noise: String,
    /// Output path; `-` or absent prints to standard output.
    #[arg(short = 'o', long = "output", value_name = "PATH")]
    pub output: Option<PathBuf>,
}

/// Writes the noise of `spec` into `circuit`, with the notes saying what produced each
/// inserted channel; the model's warnings go to standard error.
pub fn compile_spec(
    circuit: &Circuit,
    text: &str,
) -> Result<(Circuit, Vec<Note>), Vec<Diagnostic>> {
    let spec = NoiseSpec::parse(text).map_err(|d| vec![d])?;
    let compiled = crate::noise::apply_noted(circuit, &spec)?;
    for w in &compiled.warnings {
        eprint!("{}", w.render());
    }
    Ok((compiled.circuit, compiled.notes))
}

/// Runs `slant compile`.
pub fn run(args: Args) -> Result<(), CliError> {
    let circuit = args.circuit.load()?;
    let (noisy, notes) = compile_spec(&circuit, &args.noise)?;
    let header = vec![
        format!(
            "compiled by slant from `{}` with --noise `{}`",
            circuit.source.name,
            args.noise.trim()
        ),
        "every noise channel is explicit; comments say what produced each one".to_string(),
    ];
    let text = crate::noise::compile::to_text(&noisy, &notes, &header);
    match args.output.as_deref() {
        Some(p) if p.as_os_str() != "-" => write_atomic(p, text.as_bytes())?,
        _ => print!("{text}"),
    }
    Ok(())
}
