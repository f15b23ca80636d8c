//! `slant compile`: write a circuit with every noise channel of a model explicit.

use std::path::PathBuf;

use crate::cli::common::CircuitArgs;
use crate::cli::{output, CliError};
use crate::ir::Circuit;
use crate::lang::Diagnostic;
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

/// Writes the noise of `spec` into `circuit`, with the compiler's notes when the spec is a
/// hardware model (presets give none).
pub fn compile_spec(
    circuit: &Circuit,
    text: &str,
) -> Result<(Circuit, Vec<Note>), Vec<Diagnostic>> {
    let spec = NoiseSpec::parse(text).map_err(|d| vec![d])?;
    match &spec {
        NoiseSpec::Model(m) => {
            crate::noise::compile::compile(circuit, m).map(|c| (c.circuit, c.notes))
        }
        _ => crate::noise::apply(circuit, &spec).map(|c| (c, Vec::new())),
    }
}

/// Runs `slant compile`.
pub fn run(args: Args) -> Result<(), CliError> {
    let circuit = args.circuit.load()?;
    let (noisy, mut notes) = compile_spec(&circuit, &args.noise)?;
    if notes.is_empty() {
        // A preset: comment each inserted channel with the preset text.
        notes = preset_notes(&circuit, &noisy, &args.noise);
    }
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
        Some(p) if p.as_os_str() != "-" => output::write_atomic(p, text.as_bytes())?,
        _ => print!("{text}"),
    }
    Ok(())
}

/// Notes for the channels a preset inserted. Noise written in the circuit keeps its own
/// statement span, so a channel whose span is not a noise statement of the original came from
/// the preset.
fn preset_notes(original: &Circuit, noisy: &Circuit, text: &str) -> Vec<Note> {
    use crate::ir::OpKind;
    let written: std::collections::HashSet<(u32, u32)> = original
        .ops()
        .filter(|(_, o)| matches!(o.kind, OpKind::Noise(_)))
        .map(|(_, o)| (o.span.start, o.span.end))
        .collect();
    let mut out = Vec::new();
    for (li, layer) in noisy.layers.iter().enumerate() {
        for (oi, op) in layer.ops.iter().enumerate() {
            if let OpKind::Noise(ch) = &op.kind {
                if !written.contains(&(op.span.start, op.span.end)) {
                    out.push(Note {
                        layer: li,
                        op: oi,
                        class: "preset".into(),
                        gate: None,
                        implementation: crate::noise::implement::Implementation::Ideal,
                        input: ch.clone(),
                        text: format!("preset `{}`", text.trim()),
                    });
                }
            }
        }
    }
    out
}
