//! `slant draw`: a picture of the patch — layout and gate order, the layers of a round, or
//! faults on the chip — as SVG or PNG ([`crate::study::draw`]).

use std::path::PathBuf;

use crate::base::write_atomic;
use crate::cli::common::{CircuitArgs, NoiseArgs};
use crate::cli::CliError;
use crate::faults::ExtractOptions;
use crate::study::draw::{drawing, render, DrawError, DrawOptions, Format, Show, Style};

/// Arguments of `slant draw`.
#[derive(Debug, clap::Args)]
#[command(
    after_help = "Overlays (--show): `shortest`, `high-rate` and `likely` draw the \
logical error `slant distance` finds, one circuit fault per fault-graph edge, numbered and \
tagged with its Pauli term and time (rR sS: round R, step S); `edge:K` draws every circuit fault \
of edge K (as `slant graph --format text` and `slant trace` number them) and the detectors it \
flips; `shot:SEED` draws the detection events of the first shot `slant shots --seed SEED` gives, \
one panel per time, with the pairs the matching decoder makes. Overlays need noise (--noise or \
noise in the file)."
)]
pub struct Args {
    /// The circuit.
    #[command(flatten)]
    pub circuit: CircuitArgs,
    /// Noise model (for the overlays).
    #[command(flatten)]
    pub noise: NoiseArgs,
    /// The picture to write: FILE.svg (names on hover) or FILE.png.
    #[arg(short, long, value_name = "FILE.svg|FILE.png")]
    pub output: PathBuf,
    /// Draw on the patch: `shortest`, `high-rate`, `likely`, `edge:K` or `shot:SEED`.
    #[arg(long, value_name = "WHAT", conflicts_with = "layers")]
    pub show: Option<Show>,
    /// Draw one panel per layer of a round instead of the patch.
    #[arg(long)]
    pub layers: bool,
    /// The round of `--layers` (default: the first).
    #[arg(long, value_name = "R", requires = "layers")]
    pub round: Option<u32>,
    /// Write each qubit's name beside it.
    #[arg(long)]
    pub labels: bool,
    /// When the circuit gives no coordinates, place the qubits in rows by role.
    #[arg(long)]
    pub rows: bool,
    /// Tag measurement flips as high-rate faults (as `slant distance --high-rate-flips`).
    #[arg(long)]
    pub high_rate_flips: bool,
}

/// Runs `slant draw`.
pub fn run(args: Args) -> Result<(), CliError> {
    // Refuse a bad output name before any work.
    let format = Format::of(&args.output)?;
    let pipeline = args.circuit.load_noisy(args.noise.noise.as_deref())?;
    let options = DrawOptions {
        show: args.show,
        layers: args.layers,
        round: args.round,
        rows: args.rows,
        extract: ExtractOptions {
            high_rate_flips: args.high_rate_flips,
        },
    };
    let d = drawing(&pipeline, &options).map_err(|e| match e {
        DrawError::Rejected(d) => CliError::Rejected(d),
        DrawError::Internal(m) => CliError::Internal(m),
    })?;
    let bytes = render(
        &d,
        Style {
            labels: args.labels,
        },
        format,
    )
    .map_err(CliError::Internal)?;
    write_atomic(&args.output, &bytes)?;
    outln!("picture written to `{}`", args.output.display());
    Ok(())
}
