//! `slant estimate`: logical error rate of a noisy circuit by sampling and decoding, or by the
//! splitting method far below what sampling reaches.
//!
//! Loads the circuit, writes `--noise` into it, extracts its fault graph, builds the decoder and
//! either runs the Monte Carlo loop ([`crate::study::run`]: shots in batches on the rayon pool,
//! stopping early after `--until-failures` failures) or, with `--method splitting`, the ladder of
//! [`crate::study::splitting`] (the report is in `estimate/splitting.rs`). Reports the rate per
//! shot and per round with 95% intervals, as text or as one JSON object (`--json`). A progress
//! bar appears on stderr only when stderr is a terminal.

mod splitting;

use crate::base::{count, Diagnostic};
use crate::cli::common::{circuit_line, print_json, CircuitArgs, NoiseArgs, WalkArgs};
use crate::cli::progress::Progress;
use crate::cli::CliError;
use crate::decode::DecoderKind;
use crate::study::{Counts, Estimate, RunOptions, Start, Z95};

const AFTER_HELP: &str = "\
A shot fails when the decoder's predicted observable flips differ from the sampled ones (or it
could not pair every detection event). The per-round rate is 1 - (1 - p_shot)^(1/R) with R the
number of `round` blocks. Intervals are 95% Wilson score intervals. The same --seed gives the
same counts for any number of threads (RAYON_NUM_THREADS).

--method splitting estimates rates far below what sampling reaches: it samples the fault graph
directly at a noise scale where failures are common (--top, or the first of 1, 2, 4, ... times
the noise where 5% of shots fail; --until-failures failures there, default 1000), then walks
down a ladder of noise scales with --chains independent Metropolis walks over failing fault
configurations (--sweeps proposals per edge of the fault graph at each rung), multiplying the
ratios of neighbouring rungs. It prints every rung with its relative uncertainty (the spread
of the independent walks) and mixing diagnostics, and the fitted exponent of P_L against the
noise over the lowest rungs next to the circuit distance d: below threshold it should be near
ceil(d/2). A preset is rebuilt at each scale; a model file's edge probabilities are scaled.
With --start shortest the walks start from the shortest logical errors the distance search
finds instead (each thinned to a least subset the decoder still fails on), so the top only
anchors the ladder: it is the first scale where 0.5% of shots fail, sampled until
--until-failures failures as before.

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
    /// Maximum number of shots (with `--method splitting`: of direct sampling at the top).
    #[arg(long, value_name = "N", value_parser = clap::value_parser!(u64).range(1..), required_if_eq("method", "sampling"))]
    pub shots: Option<u64>,
    /// Stop once this many shots have failed (a logical error: predicted and sampled observable flips differ) (checked every 4096 shots). With `--method splitting`: failures to collect at the top (default 1000).
    #[arg(long, value_name = "K", value_parser = clap::value_parser!(u64).range(1..))]
    pub until_failures: Option<u64>,
    /// How to estimate: `sampling` (sample the circuit and decode) or `splitting` (a ladder of
    /// Metropolis walks over failing fault configurations, for rates far below sampling).
    #[arg(long, value_name = "M", default_value = "sampling", value_parser = ["sampling", "splitting"])]
    pub method: String,
    /// The splitting method's walks.
    #[command(flatten)]
    pub walks: WalkArgs,
    /// With `--method splitting`: the top of the ladder as a multiple of the noise (default:
    /// chosen by pilot runs).
    #[arg(long, value_name = "S")]
    pub top: Option<f64>,
    /// With `--method splitting`: where the walks start: `sampling` (failing shots of direct
    /// sampling at the top) or `shortest` (the shortest logical errors `slant distance` finds,
    /// thinned to least failing subsets; the top may then be lower).
    #[arg(long, value_name = "FROM", default_value = "sampling", value_parser = |s: &str| s.parse::<Start>())]
    pub start: Start,
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
    method: &'static str,
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

/// The noise-model caveat every report carries.
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
    if args.method == "splitting" {
        return splitting::run(&args, &pipeline);
    }
    let shots = args.shots.unwrap_or(1);
    let exp = pipeline.experiment(args.decoder).map_err(CliError::from)?;
    let opts = RunOptions {
        shots,
        until_failures: args.until_failures,
        seed: args.seed,
    };
    let mut progress = Progress::new(shots, "shots");
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
    let stopped_early = counts.shots < shots;
    if args.json {
        let report = Report {
            format: "slant-estimate",
            // Version 1 had no `format` or `version` and named `failures` `errors`; version 2 had
            // no `method`.
            version: 3,
            method: "sampling",
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
        return print_json(&report);
    }
    let mut out = String::new();
    out += &circuit_line(
        &args.circuit.file,
        exp.detectors,
        exp.observables,
        exp.rounds as usize,
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
