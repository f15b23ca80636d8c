//! `slant budget`: which noise sources the logical error rate comes from, and what improving
//! each one gains ([`crate::study::budget`]).

use std::path::PathBuf;

use crate::base::{count, write_atomic, Diagnostic};
use crate::cli::common::{CircuitArgs, NoiseArgs};
use crate::cli::progress::Progress;
use crate::cli::CliError;
use crate::decode::DecoderKind;
use crate::study::{
    budget, render_budget, Budget, BudgetOptions, BudgetStage, DirectSampling, Grouping, Interval,
    Removal, RemovalMethod,
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
    /// Shots of the main sample (and of each direct re-estimate).
    #[arg(long, value_name = "N", default_value_t = 100_000, value_parser = clap::value_parser!(u64).range(1..))]
    pub shots: u64,
    /// Stop the main sample once this many shots have failed.
    #[arg(long, value_name = "K", value_parser = clap::value_parser!(u64).range(1..))]
    pub until_failures: Option<u64>,
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
    let sample = DirectSampling {
        shots: args.shots,
        until_failures: args.until_failures,
        seed: args.seed,
    };
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
    let mut progress = Progress::new(args.shots, "shots");
    let mut stage = None;
    let b = budget(&pipeline, &sample, &opts, &mut |s| match s {
        BudgetStage::Sample(shots, failures) => {
            progress.set_message(format!("{failures} failures"));
            progress.set_position(shots);
        }
        BudgetStage::Direct { index, of, shots } => {
            if stage != Some(index) {
                stage = Some(index);
                progress.set_message(format!("direct re-estimate {} of {of}", index + 1));
            }
            progress.set_position(shots);
        }
    })?;
    progress.finish();
    let noise = args
        .noise
        .noise
        .as_deref()
        .unwrap_or("as written in the circuit file");
    let file = args.circuit.file.display().to_string();
    if let Some(path) = &args.plot {
        let title = args.title.clone().unwrap_or_else(|| {
            format!(
                "error budget: {} under {noise}, p_L = {:.2e} per shot",
                short_name(&file),
                b.rate.rate
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
            RemovalMethod::Direct => match removed.direct {
                Some((shots, failures)) => format!("direct, {failures}/{shots}"),
                None => "direct".into(),
            },
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
