//! `slant decode`: decode detection events measured elsewhere (or written by `slant shots`) with
//! the circuit's matching graph.
//!
//! Loads the circuit, writes `--noise` into it, builds the decoder from its matching graph and
//! hands the events to [`crate::study::MeasuredEvents`], which reads and checks them. Writes
//! `predictions.npy` atomically, only once every shot is decoded; reports failures like
//! `slant estimate` when the observed flips are given.

use std::path::PathBuf;

use crate::base::{count, write_atomic, Diagnostic};
use crate::cli::common::{circuit_line, print_json, CircuitArgs, NoiseArgs};
use crate::cli::progress::Progress;
use crate::cli::CliError;
use crate::decode::DecoderKind;
use crate::study::{Estimate, MeasuredEvents, StudyError, Z95};

const AFTER_HELP: &str = "\
--events takes what `slant shots` writes: a directory with detectors.npy (uint8, shape
(shots, detectors), or packed to ceil(detectors/8) bytes per row) and, optionally,
observables.npy; or a file of `--format bits` lines (detector bits, a space, observable bits).
The circuit, its --set values and --noise must be those the events come from: the detector
count is checked, the noise gives the decoder its weights.

Writes OUT/predictions.npy (default OUT: the events directory, or the bits file's directory):
uint8, shape (shots, observables), 1 where the decoder predicts the observable flipped. Nothing
is written when any input is rejected. With the observed flips, a shot fails when the prediction
differs from them (or an event could not be paired), as in `slant estimate`.

Results are estimates under the stated noise model: Pauli channels, independent faults.";

/// Arguments of `slant decode`.
#[derive(Debug, clap::Args)]
#[command(after_help = AFTER_HELP)]
pub struct Args {
    /// The circuit the events come from.
    #[command(flatten)]
    pub circuit: CircuitArgs,
    /// Noise the decoder assumes (its edge weights).
    #[command(flatten)]
    pub noise: NoiseArgs,
    /// The detection events: a directory written by `slant shots`, or a bits file.
    #[arg(long, value_name = "DIR")]
    pub events: PathBuf,
    /// Decoder: `mwpm` (minimum-weight perfect matching) or `uf` (union-find).
    #[arg(long, value_name = "D", default_value = "mwpm", value_parser = |s: &str| s.parse::<DecoderKind>())]
    pub decoder: DecoderKind,
    /// Directory for `predictions.npy` (created if missing).
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
    /// Print one JSON object instead of the text report.
    #[arg(long)]
    pub json: bool,
}

/// The machine-readable report (`--json`): the words of `slant estimate --json`, with the
/// events and predictions paths; the failure fields only when the observed flips were given.
#[derive(Debug, serde::Serialize)]
struct Report<'a> {
    format: &'static str,
    version: u32,
    circuit: String,
    noise: &'a str,
    decoder: &'static str,
    events: String,
    layout: &'static str,
    predictions: String,
    detectors: usize,
    observables: usize,
    edges: usize,
    rounds: u32,
    shots: u64,
    #[serde(skip_serializing_if = "Option::is_none")]
    failures: Option<u64>,
    unmatched: u64,
    #[serde(skip_serializing_if = "Option::is_none")]
    confidence: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    per_shot: Option<Estimate>,
    #[serde(skip_serializing_if = "Option::is_none")]
    per_round: Option<Estimate>,
    model: &'static str,
}

const MODEL_NOTE: &str =
    "estimates under the stated noise model: Pauli channels, independent faults";

/// Runs `slant decode`.
pub fn run(args: Args) -> Result<(), CliError> {
    let pipeline = args.circuit.load_noisy(args.noise.noise.as_deref())?;
    let circuit = pipeline.noisy();
    if circuit.observables.is_empty() {
        return Err(Diagnostic::bare(format!(
            "`{}` declares no observable, so there is no flip to predict",
            args.circuit.file.display()
        ))
        .into());
    }
    let (graph, _) = pipeline.matching_graph();
    let decoder = args
        .decoder
        .build(&graph)
        .map_err(|e| CliError::from(StudyError::Undecodable(e)))?;
    let (detectors, observables) = (circuit.detectors.len(), circuit.observables.len());
    let rounds = circuit.rounds.max(1);
    let events = MeasuredEvents::open(&args.events, detectors, observables)?;
    let mut progress = Progress::new(events.shots(), "shots");
    let measured = events.decode(decoder.as_ref(), |done| progress.set_position(done))?;
    progress.finish();
    let out_dir = match &args.out {
        Some(dir) => dir.clone(),
        None if args.events.is_dir() => args.events.clone(),
        None => args
            .events
            .parent()
            .filter(|p| !p.as_os_str().is_empty())
            .map_or_else(|| PathBuf::from("."), PathBuf::from),
    };
    std::fs::create_dir_all(&out_dir)
        .map_err(|e| Diagnostic::bare(format!("cannot create `{}`: {e}", out_dir.display())))?;
    let predictions = out_dir.join("predictions.npy");
    write_atomic(&predictions, &measured.predictions_npy())?;

    let per_shot = measured
        .failures
        .map(|k| Estimate::wilson(k, measured.shots, Z95));
    let per_round = per_shot.map(|e| e.per_round(rounds));
    let noise = args
        .noise
        .noise
        .as_deref()
        .unwrap_or("as written in the circuit file");
    if args.json {
        let report = Report {
            format: "slant-decode",
            version: 1,
            circuit: args.circuit.file.display().to_string(),
            noise,
            decoder: args.decoder.name(),
            events: args.events.display().to_string(),
            layout: measured.layout.name(),
            predictions: predictions.display().to_string(),
            detectors,
            observables,
            edges: graph.edges.len(),
            rounds,
            shots: measured.shots,
            failures: measured.failures,
            unmatched: measured.unmatched,
            confidence: per_shot.map(|_| 0.95),
            per_shot,
            per_round,
            model: MODEL_NOTE,
        };
        return print_json(&report);
    }
    let mut out = String::new();
    out += &circuit_line(&args.circuit.file, detectors, observables, rounds as usize);
    out += &format!("noise: {noise}\n");
    out += &format!(
        "decoder: {} on {}\n",
        args.decoder.name(),
        count(graph.edges.len(), "matching-graph edge")
    );
    out += &format!(
        "events: {} ({}, {})\n",
        args.events.display(),
        measured.layout.name(),
        count(measured.shots as usize, "shot")
    );
    out += &format!("predictions: {}\n", predictions.display());
    match (measured.failures, per_shot, per_round) {
        (Some(failures), Some(per_shot), Some(per_round)) => {
            out += &format!("failures: {failures}");
            if measured.unmatched > 0 {
                out += &format!(
                    " ({} with detection events the decoder could not pair)",
                    measured.unmatched
                );
            }
            out += "\n";
            out += &format!("per shot:  {}\n", show(per_shot));
            out += &format!("per round: {}\n", show(per_round));
            out += &format!("These are {MODEL_NOTE}.\n");
        }
        _ => {
            if measured.unmatched > 0 {
                out += &format!(
                    "unmatched: {} with detection events the decoder could not pair\n",
                    count(measured.unmatched as usize, "shot")
                );
            }
            out += "no observed flips given (observables.npy or a bits observable field), so no \
                    failure count\n";
        }
    }
    out!("{out}");
    Ok(())
}

/// `rate [low, high]` in scientific notation.
fn show(e: Estimate) -> String {
    format!(
        "{:.4e}  (95% Wilson interval {:.4e} .. {:.4e})",
        e.rate, e.low, e.high
    )
}
