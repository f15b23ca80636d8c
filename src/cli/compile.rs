//! `slant compile`: write a circuit with every noise channel of a model explicit.

use std::path::PathBuf;

use crate::base::write_atomic;
use crate::cli::common::CircuitArgs;
use crate::cli::CliError;
use crate::noise::to_text;

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

/// Runs `slant compile`.
pub fn run(args: Args) -> Result<(), CliError> {
    let pipeline = args.circuit.load_noisy(Some(&args.noise))?;
    let circuit = pipeline.circuit();
    let header = vec![
        format!(
            "compiled by slant from `{}` with --noise `{}`",
            circuit.source.name,
            args.noise.trim()
        ),
        "every noise channel is explicit; comments say what produced each one".to_string(),
    ];
    let text = to_text(pipeline.noisy(), pipeline.notes(), &header);
    match args.output.as_deref() {
        Some(p) if p.as_os_str() != "-" => write_atomic(p, text.as_bytes())?,
        _ => out!("{text}"),
    }
    Ok(())
}
