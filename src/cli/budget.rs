//! `slant budget`: which noise sources the logical error rate comes from, and what improving
//! each one gains ([`crate::study::budget`]).

use std::path::PathBuf;

use crate::base::{count, write_atomic, Diagnostic};
use crate::cli::common::{CircuitArgs, NoiseArgs, WalkArgs};
use crate::cli::progress::Progress;
use crate::cli::CliError;
use crate::decode::DecoderKind;
use crate::study::{
    budget, render_budget, Budget, BudgetOptions, BudgetStage, DirectSampling, EstimatorEvent,
    FailureEstimator, Grouping, Interval, Removal, RemovalMethod, SplittingOptions,
    SplittingSampling,
};

const AFTER_HELP: &str = "\
Sources are groups of the circuit's faults: by default each model section (each gate kind, idle,
reset, measure, each override; `circuit` for noise the circuit file writes) split by class
(high-rate: only Z and I factors; low-rate: the rest and measurement flips). `--by` regroups:
any of `section`, `class`, `qubit`, `role`, comma-separated (a fault on two qubits then counts
for both, and shares are not shown).

Columns:
  faults        elementary faults of the source in the fault graph
  exp./shot     their summed probability: expected number per shot
  sensitivity   d log p_L / d log s: the relative change of the logical error rate per relative
                change of the source's rate, at the model's rates, with its 95% interval
  share         its part of the summed sensitivities
  -10%          change of p_L when the source's rate drops by 10% (reweighted)
  removed       p_L without the source, relative to p_L, and how it was estimated

Method: failing configurations (which fault-graph edges fired, in shots the decoder got wrong)
are sampled once from the graph's independent edges and reweighted by the change of every
edge's prior when a source is scaled; the decoder stays the one built for the model's rates.
The rate with a source removed is re-estimated directly (the graph sampled again without it)
when reweighting rests on too few configurations (`--removal auto`), always (`direct`) or never
(`reweight`); `--retune` decodes those runs with a decoder built for the new rates.

--method splitting budgets rates far below what sampling reaches: the failing configurations
are the samples the splitting method's walks record at the target noise (the ladder of
`slant estimate --method splitting`, run on the fault graph's edge probabilities scaled
together; --chains, --sweeps, --until-failures and --ladder-top as there). Their intervals are
batch means (each walk cut into batches of at least 10 autocorrelation times, Student's t). At
low rates a source on every shortest failure cannot be removed by reweighting: `--removal auto`
then reports it as not estimable, `--removal direct` runs a ladder of its own without it.

Results are estimates under the stated noise model: Pauli channels, independent faults.";

/// Arguments of `slant budget`.
#[derive(Debug, clap::Args)]
#[command(after_help = AFTER_HELP)]
pub struct Args {
    /// The circuit.
    #[command(flatten)]
    pub circuit: CircuitArgs,
    /// Noise to add.
    #[command(flatten)]
    pub noise: NoiseArgs,
    /// Shots of the main sample and of each direct re-estimate (default 100000). With
    /// `--method splitting`: most shots of direct sampling at the top of the ladder.
    #[arg(long, value_name = "N", value_parser = clap::value_parser!(u64).range(1..))]
    pub shots: Option<u64>,
    /// Stop the main sample once this many shots have failed. With `--method splitting`:
    /// failures to collect at the top of the ladder (default 1000).
    #[arg(long, value_name = "K", value_parser = clap::value_parser!(u64).range(1..))]
    pub until_failures: Option<u64>,
    /// Where the failing configurations come from: `sampling` (direct sampling of the fault
    /// graph) or `splitting` (the splitting method's walks at the target, for low rates).
    #[arg(long, value_name = "M", default_value = "sampling", value_parser = ["sampling", "splitting"])]
    pub method: String,
    /// The splitting method's walks.
    #[command(flatten)]
    pub walks: WalkArgs,
    /// With `--method splitting`: the top of the ladder as a multiple of the noise (default:
    /// chosen by pilot runs; `slant estimate` calls it `--top`).
    #[arg(long, value_name = "S")]
    pub ladder_top: Option<f64>,
    /// How faults are grouped into sources: any of `section`, `class`, `qubit`, `role`.
    #[arg(long, value_name = "LIST", default_value = "section,class", value_parser = Grouping::parse)]
    pub by: Grouping,
    /// How the rate without a source is estimated: `auto`, `direct` or `reweight`.
    #[arg(long, value_name = "HOW", default_value = "auto", value_parser = |s: &str| s.parse::<Removal>())]
    pub removal: Removal,
    /// With `--removal auto`, re-estimate directly when fewer failing configurations than this
    /// carry the reweighted removal (effective sample size).
    #[arg(long, value_name = "N", default_value_t = 30.0)]
    pub min_effective: f64,
    /// Decode the direct re-estimates with a decoder built for the scaled rates.
    #[arg(long)]
    pub retune: bool,
    /// Decoder: `mwpm` or `uf`.
    #[arg(long, value_name = "D", default_value = "mwpm", value_parser = |s: &str| s.parse::<DecoderKind>())]
    pub decoder: DecoderKind,
    /// Seed of the sampler.
    #[arg(long, value_name = "S", default_value_t = 0)]
    pub seed: u64,
    /// Rows of the table (every source in `--json`).
    #[arg(long, value_name = "N", default_value_t = 20)]
    pub top: usize,
    /// Print one JSON object instead of the text report.
    #[arg(long)]
    pub json: bool,
    /// Write a bar chart of the sensitivities (`.png`, else SVG).
    #[arg(long, value_name = "OUT")]
    pub plot: Option<PathBuf>,
    /// Title of the chart (default: circuit, noise and rate).
    #[arg(long, value_name = "TEXT")]
    pub title: Option<String>,
}

const MODEL_NOTE: &str =
    "estimates under the stated noise model: Pauli channels, independent faults";

/// Runs `slant budget`.
pub fn run(args: Args) -> Result<(), CliError> {
    let pipeline = args.circuit.load_noisy(args.noise.noise.as_deref())?;
    if pipeline.noisy().observables.is_empty() {
        return Err(Diagnostic::bare(format!(
            "`{}` declares no observable, so there is no logical error to budget",
            args.circuit.file.display()
        ))
        .into());
    }
    if args.min_effective.is_nan() || args.min_effective < 0.0 {
        return Err(Diagnostic::bare("`--min-effective` must be a non-negative number").into());
    }
    let splitting = args.method == "splitting";
    if splitting && !(args.walks.sweeps > 0.0 && args.walks.sweeps.is_finite()) {
        return Err(CliError::Usage(Diagnostic::bare(format!(
            "`--sweeps {}` must be a positive number",
            args.walks.sweeps
        ))));
    }
    let shots = args.shots.unwrap_or(DEFAULT_SHOTS);
    let sample = DirectSampling {
        shots,
        until_failures: args.until_failures,
        seed: args.seed,
    };
    let ladder = SplittingSampling {
        opts: SplittingOptions {
            chains: args.walks.chains as usize,
            sweeps: args.walks.sweeps,
            top: args.ladder_top,
            top_failures: args.until_failures.unwrap_or(1000),
            max_shots: args.shots.unwrap_or(SplittingOptions::default().max_shots),
            seed: args.seed,
            ..SplittingOptions::default()
        },
    };
    let estimator: &dyn FailureEstimator = if splitting { &ladder } else { &sample };
    let opts = BudgetOptions {
        by: args.by,
        removal: args.removal,
        improve: 0.9,
        min_effective: args.min_effective,
        retune: args.retune,
        decoder: args.decoder,
        direct: DirectSampling {
            until_failures: None,
            ..sample
        },
    };
    let mut progress = if splitting {
        Progress::new(1, "rungs")
    } else {
        Progress::new(shots, "shots")
    };
    let b = budget(&pipeline, estimator, &opts, &mut |s| match s {
        BudgetStage::Main(e) => show(&mut progress, e, splitting, ""),
        BudgetStage::Direct { index, of, event } => show(
            &mut progress,
            event,
            splitting,
            &format!("without source {} of {of}: ", index + 1),
        ),
    });
    progress.finish();
    let b = b?;
    let noise = args
        .noise
        .noise
        .as_deref()
        .unwrap_or("as written in the circuit file");
    let file = args.circuit.file.display().to_string();
    if let Some(path) = &args.plot {
        let title = args.title.clone().unwrap_or_else(|| {
            format!(
                "error budget: {} under {noise}, p_L = {:.2e} per shot{}",
                short_name(&file),
                b.rate.rate,
                if splitting { " (splitting)" } else { "" }
            )
        });
        let bytes = render_budget(path, &b, &title).map_err(CliError::Internal)?;
        write_atomic(path, &bytes)?;
    }
    if args.json {
        outln!("{}", json_text(&b, &file, noise, &args)?);
        return Ok(());
    }
    out!("{}", text(&b, &file, noise, &args));
    Ok(())
}

/// Shots of the main sample without `--shots`.
const DEFAULT_SHOTS: u64 = 100_000;

/// Shows an estimator's progress: shots on a shot bar, or the ladder's rungs.
fn show(bar: &mut Progress, e: EstimatorEvent, splitting: bool, prefix: &str) {
    match e {
        EstimatorEvent::Shots {
            scale,
            shots,
            failures,
        } => {
            if splitting {
                bar.set_message(format!(
                    "{prefix}direct sampling at {scale}x: {failures} failures in {shots} shots"
                ));
                bar.set_position(0);
            } else {
                bar.set_message(format!("{prefix}{failures} failures"));
                bar.set_position(shots);
            }
        }
        EstimatorEvent::Rung {
            done,
            expected,
            scale,
        } => {
            bar.set_total(expected as u64);
            bar.set_message(format!("{prefix}at {scale:.3}x the noise"));
            bar.set_position(done as u64);
        }
    }
}

fn short_name(file: &str) -> &str {
    file.rsplit('/').next().unwrap_or(file)
}

fn interval(i: &Interval, digits: usize) -> String {
    if i.value.is_nan() {
        return "-".into();
    }
    format!(
        "{:.*} [{:.*}, {:.*}]",
        digits, i.value, digits, i.low, digits, i.high
    )
}

fn percent(x: f64) -> String {
    if x.is_nan() {
        return "-".into();
    }
    let v = 100.0 * x;
    format!("{}{:.0}%", if v < -0.5 { "\u{2212}" } else { "+" }, v.abs())
}

fn text(b: &Budget, file: &str, noise: &str, args: &Args) -> String {
    let mut out = String::new();
    out += &format!("circuit: {file}\nnoise: {noise}\n");
    match (&b.splitting, b.batches) {
        (Some(s), Some(batches)) => {
            let target = s.target();
            let top = s.points.first().map_or(1.0, |p| p.scale);
            out += &format!(
                "logical error rate per shot: {:.4e} (95% interval {:.4e} .. {:.4e}; relative uncertainty {:.3} in ln p_L from the spread of {} independent walks)\n",
                b.rate.rate,
                b.rate.low,
                b.rate.high,
                target.uncertainty,
                s.chains,
            );
            out += &format!(
                "splitting: {} from {top}x the noise (direct sampling there: {} with {}) down to the model's rates; {} recorded at the target, intervals are batch means over {} ({} edges of the fault graph, {} decoder, seed {})\n",
                count(s.points.len(), "rung"),
                count(s.top.shots as usize, "shot"),
                count(s.top.failures as usize, "failure"),
                count(b.failures as usize, "failing configuration"),
                count(batches, "batch"),
                b.edges,
                args.decoder.name(),
                args.seed
            );
        }
        _ => {
            out += &format!(
                "logical error rate per shot: {:.4e} (95% Wilson interval {:.4e} .. {:.4e}), {} with {} ({} of the fault graph's {} edges, {} decoder, seed {})\n",
                b.rate.rate,
                b.rate.low,
                b.rate.high,
                count(b.shots as usize, "shot"),
                count(b.failures as usize, "failure"),
                b.method,
                b.edges,
                args.decoder.name(),
                args.seed
            );
        }
    }
    if b.unmatched > 0 {
        out += &format!(
            "  ({} with detection events the decoder could not pair)\n",
            b.unmatched
        );
    }
    out += &format!(
        "sensitivity to all the noise at once (d log p_L / d log s): {}; sources sum to {:.2}\n",
        interval(&b.total, 2),
        b.sum
    );
    let width = b
        .sources
        .iter()
        .take(args.top)
        .map(|s| s.label.chars().count())
        .max()
        .unwrap_or(6)
        .max(6);
    out += &format!(
        "{:<width$}  {:>7}  {:>9}  {:>21}  {:>5}  {:>5}  {}\n",
        "source",
        "faults",
        "exp./shot",
        "sensitivity [95%]",
        "share",
        "-10%",
        "removed [95%] (how)"
    );
    for s in b.sources.iter().take(args.top) {
        let share = s
            .share
            .map_or("-".to_string(), |x| format!("{:.0}%", 100.0 * x.value));
        let removed = &s.removed;
        let how = match removed.method {
            RemovalMethod::Reweighted => format!("reweighted, {:.0} eff.", removed.effective),
            RemovalMethod::Direct if b.splitting.is_some() => "own ladder".into(),
            RemovalMethod::Direct => match removed.direct {
                Some((shots, failures)) => format!("direct, {failures}/{shots}"),
                None => "direct".into(),
            },
            RemovalMethod::NotEstimable => {
                format!("not estimable, {:.0} eff.", removed.effective)
            }
        };
        out += &format!(
            "{:<width$}  {:>7}  {:>9.3e}  {:>21}  {:>5}  {:>5}  {} ({how})\n",
            s.label,
            s.source.faults,
            s.source.expected,
            interval(&s.sensitivity, 2),
            share,
            percent(s.improved.ratio.value - 1.0),
            interval(&removed.ratio, 3),
        );
    }
    if b.sources.len() > args.top {
        out += &format!(
            "... {} more sources (`--top`)\n",
            b.sources.len() - args.top
        );
    }
    if b.sources
        .iter()
        .any(|s| s.removed.method == RemovalMethod::NotEstimable)
    {
        out += "not estimable: the failures without the source are too rare among the sampled \
                ones to reweight; `--removal direct` estimates each again without its source\n";
    }
    out += &format!("answer: {}\n", b.answer());
    out +=
        &format!("These are {MODEL_NOTE}; the decoder is the one built for the model's rates.\n");
    out
}

#[derive(serde::Serialize)]
struct JsonRemoved {
    ratio: Interval,
    rate: Interval,
    method: &'static str,
    effective: f64,
    reweighted: Interval,
    direct_shots: Option<u64>,
    direct_failures: Option<u64>,
}

#[derive(serde::Serialize)]
struct JsonSource {
    key: String,
    label: String,
    section: Option<String>,
    class: Option<&'static str>,
    qubit: Option<String>,
    role: Option<String>,
    faults: usize,
    expected: f64,
    edges: usize,
    sensitivity: Interval,
    share: Option<Interval>,
    improved: Interval,
    removed: JsonRemoved,
}

/// The splitting method's ladder in `--json`.
#[derive(serde::Serialize)]
struct JsonLadder {
    top: f64,
    shots: u64,
    failures: u64,
    rungs: usize,
    chains: usize,
    proposals: u64,
    acceptance: Option<f64>,
    autocorrelation: Option<f64>,
}

#[derive(serde::Serialize)]
struct JsonBudget<'a> {
    format: &'static str,
    version: u32,
    circuit: &'a str,
    noise: &'a str,
    decoder: &'static str,
    seed: u64,
    grouping: String,
    method: &'a str,
    edges: usize,
    rounds: u32,
    shots: u64,
    failures: u64,
    unmatched: u64,
    rate: crate::study::Estimate,
    uncertainty: Option<f64>,
    batches: Option<usize>,
    ladder: Option<JsonLadder>,
    total: Interval,
    sum: f64,
    improve: f64,
    sources: Vec<JsonSource>,
    answer: String,
    model: &'static str,
}

fn json_text(b: &Budget, file: &str, noise: &str, args: &Args) -> Result<String, CliError> {
    let scale = |i: &Interval, by: f64| Interval {
        value: i.value * by,
        low: i.low * by,
        high: i.high * by,
    };
    let out = JsonBudget {
        format: "slant-budget",
        version: 1,
        circuit: file,
        noise,
        decoder: args.decoder.name(),
        seed: args.seed,
        grouping: args.by.text(),
        method: &b.method,
        edges: b.edges,
        rounds: b.rounds,
        shots: b.shots,
        failures: b.failures,
        unmatched: b.unmatched,
        rate: b.rate,
        uncertainty: b.splitting.as_ref().map(|s| s.target().uncertainty),
        batches: b.batches,
        ladder: b.splitting.as_ref().map(|s| {
            let mixing = s.target().mixing.as_ref();
            JsonLadder {
                top: s.points.first().map_or(1.0, |p| p.scale),
                shots: s.top.shots,
                failures: s.top.failures,
                rungs: s.points.len(),
                chains: s.chains,
                proposals: s.proposals,
                acceptance: mixing.map(|m| m.acceptance),
                autocorrelation: mixing.and_then(|m| m.autocorrelation),
            }
        }),
        total: b.total,
        sum: b.sum,
        improve: b.improve,
        sources: b
            .sources
            .iter()
            .map(|s| JsonSource {
                key: s.source.key(),
                label: s.label.clone(),
                section: s.source.section.clone(),
                class: s.source.class.map(|c| c.name()),
                qubit: s.source.qubit.clone(),
                role: s.source.role.clone(),
                faults: s.source.faults,
                expected: s.source.expected,
                edges: s.source.edges,
                sensitivity: s.sensitivity,
                share: s.share,
                improved: s.improved.ratio,
                removed: JsonRemoved {
                    ratio: s.removed.ratio,
                    rate: scale(&s.removed.ratio, b.rate.rate),
                    method: s.removed.method.name(),
                    effective: s.removed.effective,
                    reweighted: s.removed.reweighted,
                    direct_shots: s.removed.direct.map(|d| d.0),
                    direct_failures: s.removed.direct.map(|d| d.1),
                },
            })
            .collect(),
        answer: b.answer(),
        model: MODEL_NOTE,
    };
    serde_json::to_string_pretty(&out)
        .map_err(|e| CliError::Internal(format!("cannot serialise the report: {e}")))
}
