//! `slant estimate`: logical error rate of a noisy circuit by sampling and decoding.
//!
//! Loads the circuit, writes `--noise` into it, extracts its fault graph, builds the decoder and
//! runs the Monte Carlo loop ([`crate::study::run`]): shots in batches on the rayon pool,
//! stopping early after `--until-failures` failures. Reports the rate per shot and per round with 95%
//! Wilson intervals ([`crate::study::Estimate`]), as text or as one JSON object (`--json`). A
//! progress bar appears on stderr only when stderr is a terminal.

use crate::base::{count, Diagnostic};
use crate::cli::common::{CircuitArgs, NoiseArgs};
use crate::cli::progress::Progress;
use crate::cli::CliError;
use crate::decode::DecoderKind;
use crate::study::{Counts, Estimate, RunOptions, Z95};

const AFTER_HELP: &str = "\
A shot fails when the decoder's predicted observable flips differ from the sampled ones (or it
could not pair every detection event). The per-round rate is 1 - (1 - p_shot)^(1/R) with R the
number of `round` blocks. Intervals are 95% Wilson score intervals. The same --seed gives the
same counts for any number of threads (RAYON_NUM_THREADS).

Results are estimates under the stated noise model: Pauli channels, independent faults.";

/// Arguments of `slant estimate`.
#[derive(Debug, clap::Args)]
#[command(after_help = AFTER_HELP)]
pub struct Args {
    /// The circuit.
    #[command(flatten)]
    pub circuit: CircuitArgs,
    /// Noise to add.
    #[command(flatten)]
    pub noise: NoiseArgs,
    /// Maximum number of shots.
    #[arg(long, value_name = "N", value_parser = clap::value_parser!(u64).range(1..))]
    pub shots: u64,
    /// Stop once this many shots have failed (a logical error: predicted and sampled observable flips differ) (checked every 4096 shots).
    #[arg(long, value_name = "K", value_parser = clap::value_parser!(u64).range(1..))]
    pub until_failures: Option<u64>,
    /// Decoder: `mwpm` (minimum-weight perfect matching) or `uf` (union-find).
    #[arg(long, value_name = "D", default_value = "mwpm", value_parser = |s: &str| s.parse::<DecoderKind>())]
    pub decoder: DecoderKind,
    /// Seed of the sampler; the same seed gives the same counts.
    #[arg(long, value_name = "S", default_value_t = 0)]
    pub seed: u64,
    /// Print one JSON object instead of the text report.
    #[arg(long)]
    pub json: bool,
}

/// The machine-readable report (`--json`).
#[derive(Debug, serde::Serialize)]
struct Report<'a> {
    format: &'static str,
    version: u32,
    circuit: String,
    noise: &'a str,
    decoder: &'static str,
    seed: u64,
    detectors: usize,
    observables: usize,
    edges: usize,
    rounds: u32,
    shots: u64,
    failures: u64,
    unmatched: u64,
    stopped_early: bool,
    confidence: f64,
    per_shot: Estimate,
    per_round: Estimate,
    model: &'static str,
}

const MODEL_NOTE: &str =
    "estimates under the stated noise model: Pauli channels, independent faults";

/// Runs `slant estimate`.
pub fn run(args: Args) -> Result<(), CliError> {
    let pipeline = args.circuit.load_noisy(args.noise.noise.as_deref())?;
    if pipeline.noisy().observables.is_empty() {
        return Err(Diagnostic::bare(format!(
            "`{}` declares no observable, so there is no logical error to estimate",
            args.circuit.file.display()
        ))
        .into());
    }
    let exp = pipeline.experiment(args.decoder).map_err(CliError::from)?;
    let opts = RunOptions {
        shots: args.shots,
        until_failures: args.until_failures,
        seed: args.seed,
    };
    let mut progress = Progress::new(args.shots, "shots");
    let counts = exp.run(&opts, |c: Counts| {
        progress.set_message(format!("{} failures", c.failures));
        progress.set_position(c.shots);
    });
    progress.finish();
    let per_shot = Estimate::wilson(counts.failures, counts.shots, Z95);
    let per_round = per_shot.per_round(exp.rounds);
    let noise = args
        .noise
        .noise
        .as_deref()
        .unwrap_or("as written in the circuit file");
    let stopped_early = counts.shots < args.shots;
    if args.json {
        let report = Report {
            format: "slant-estimate",
            // Version 1 had no `format` or `version` and named `failures` `errors`.
            version: 2,
            circuit: args.circuit.file.display().to_string(),
            noise,
            decoder: args.decoder.name(),
            seed: args.seed,
            detectors: exp.detectors,
            observables: exp.observables,
            edges: exp.edges,
            rounds: exp.rounds,
            shots: counts.shots,
            failures: counts.failures,
            unmatched: counts.unmatched,
            stopped_early,
            confidence: 0.95,
            per_shot,
            per_round,
            model: MODEL_NOTE,
        };
        let text = serde_json::to_string_pretty(&report)
            .map_err(|e| CliError::Internal(format!("cannot serialise the report: {e}")))?;
        outln!("{text}");
        return Ok(());
    }
    let mut out = String::new();
    out += &format!(
        "circuit: {} ({}, {}, {})\n",
        args.circuit.file.display(),
        count(exp.detectors, "detector"),
        count(exp.observables, "observable"),
        count(exp.rounds as usize, "round")
    );
    out += &format!("noise: {noise}\n");
    out += &format!(
        "decoder: {} on {}\n",
        args.decoder.name(),
        count(exp.edges, "matching-graph edge")
    );
    let s = &exp.graph_stats;
    if !s.unsplit.is_empty() || !s.silent_logical.is_empty() {
        out += &format!(
            "note: the matching graph leaves out {} unsplit hyperedges and {} silent logical \
             errors; the sampler still produces them\n",
            s.unsplit.len(),
            s.silent_logical.len()
        );
    }
    out += &format!("seed: {}\n", args.seed);
    out += &format!(
        "shots: {}{}\n",
        counts.shots,
        if stopped_early {
            format!(" (stopped after {} failures)", counts.failures)
        } else {
            String::new()
        }
    );
    out += &format!("failures: {}", counts.failures);
    if counts.unmatched > 0 {
        out += &format!(
            " ({} with detection events the decoder could not pair)",
            counts.unmatched
        );
    }
    out += "\n";
    out += &format!("per shot:  {}\n", show(per_shot));
    out += &format!("per round: {}\n", show(per_round));
    out += &format!("These are {MODEL_NOTE}.\n");
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
