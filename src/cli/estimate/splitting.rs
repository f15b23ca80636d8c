//! `slant estimate --method splitting`: the ladder of [`crate::study::splitting`], its report
//! and the scaling check against the circuit distance.

use crate::base::{count, Diagnostic, Severity};
use crate::cli::common::{circuit_line, print_json, print_warnings};
use crate::cli::estimate::{Args, MODEL_NOTE};
use crate::cli::progress::Progress;
use crate::cli::CliError;
use crate::faults::ExtractOptions;
use crate::study::{
    fit_exponent, splitting, Estimate, ExponentFit, LadderPoint, Pipeline, SplittingEvent,
    SplittingOptions, Start, TopSampling,
};

/// The exponent is fitted over the rungs within this factor of the target noise.
const FIT_RANGE: f64 = 4.0;

/// One rung in the JSON report.
#[derive(Debug, serde::Serialize)]
struct Rung<'a> {
    #[serde(flatten)]
    point: &'a LadderPoint,
    per_round: Estimate,
}

/// The circuit distance the exponent is compared with.
#[derive(Debug, serde::Serialize)]
struct Distance {
    value: u32,
    lower: u32,
    method: &'static str,
    high_rate: Option<u32>,
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
    fault_edges: usize,
    rounds: u32,
    confidence: f64,
    per_shot: Estimate,
    per_round: Estimate,
    uncertainty: f64,
    top: Top,
    start: &'static str,
    chains: usize,
    proposals: u64,
    ladder: Vec<Rung<'a>>,
    exponent: Option<ExponentFit>,
    distance: Option<Distance>,
    expected_exponent: Option<u32>,
    model: &'static str,
}

/// Direct sampling at the top, with its scale.
#[derive(Debug, serde::Serialize)]
struct Top {
    scale: f64,
    #[serde(flatten)]
    sampling: TopSampling,
}

fn per_round_of(p: &LadderPoint, rounds: u32) -> Estimate {
    Estimate {
        rate: p.rate,
        low: p.low,
        high: p.high,
    }
    .per_round(rounds)
}

/// Runs the splitting method and prints its report.
pub(super) fn run(args: &Args, pipeline: &Pipeline) -> Result<(), CliError> {
    let opts = SplittingOptions {
        chains: args.walks.chains as usize,
        sweeps: args.walks.sweeps,
        top: args.top,
        top_failures: args.until_failures.unwrap_or(1000),
        max_shots: args.shots.unwrap_or(SplittingOptions::default().max_shots),
        seed: args.seed,
        start: args.start,
    };
    if !(opts.sweeps > 0.0 && opts.sweeps.is_finite()) {
        return Err(crate::base::Diagnostic::bare(format!(
            "`--sweeps {}` must be a positive number",
            opts.sweeps
        ))
        .into());
    }
    let mut bar = Progress::new(1, "rungs");
    let result = splitting(pipeline, args.decoder, &opts, |e| match e {
        SplittingEvent::Sampling {
            scale,
            shots,
            failures,
        } => {
            bar.set_message(format!(
                "direct sampling at {scale}x: {failures} failures in {shots} shots"
            ));
            bar.set_position(0);
        }
        SplittingEvent::Rung {
            done,
            expected,
            scale,
        } => {
            bar.set_total(expected as u64);
            bar.set_message(format!("at {scale:.3}x the noise"));
            bar.set_position(done as u64);
        }
    });
    bar.finish();
    let result = result?;
    let warnings: Vec<Diagnostic> = result
        .warnings
        .iter()
        .map(|w| Diagnostic {
            severity: Severity::Warning,
            ..Diagnostic::bare(w.clone())
        })
        .collect();
    print_warnings(&warnings);
    let rounds = pipeline.noisy().rounds.max(1);
    let graph = pipeline.graph(&ExtractOptions::default());
    let (matching, stats) = graph.matching_graph();
    // `splitting` always runs the distance search on the target graph.
    let report = result.distance.as_ref().ok_or_else(|| {
        CliError::Internal("the splitting run returned no distance search".into())
    })?;
    let distance = report.distance.as_ref().map(|d| Distance {
        value: d.value,
        lower: d.lower,
        method: d.method.name(),
        high_rate: report.high_rate.as_ref().map(|h| h.value),
    });
    let expected = distance
        .as_ref()
        .filter(|d| d.value == d.lower)
        .map(|d| d.value.div_ceil(2));
    let fit = fit_exponent(&result.points, FIT_RANGE);
    let target = result.target();
    let per_shot = Estimate {
        rate: target.rate,
        low: target.low,
        high: target.high,
    };
    let noise = args
        .noise
        .noise
        .as_deref()
        .unwrap_or("as written in the circuit file");
    let top_scale = result.points[0].scale;
    if args.json {
        let report = Report {
            format: "slant-estimate",
            version: 3,
            method: "splitting",
            circuit: args.circuit.file.display().to_string(),
            noise,
            decoder: args.decoder.name(),
            seed: args.seed,
            detectors: pipeline.noisy().detectors.len(),
            observables: pipeline.noisy().observables.len(),
            edges: matching.edges.len(),
            fault_edges: result.edges,
            rounds,
            confidence: 0.95,
            per_shot,
            per_round: per_shot.per_round(rounds),
            uncertainty: target.uncertainty,
            top: Top {
                scale: top_scale,
                sampling: result.top,
            },
            start: result.start.name(),
            chains: result.chains,
            proposals: result.proposals,
            ladder: result
                .points
                .iter()
                .map(|p| Rung {
                    point: p,
                    per_round: per_round_of(p, rounds),
                })
                .collect(),
            exponent: fit,
            distance,
            expected_exponent: expected,
            model: MODEL_NOTE,
        };
        return print_json(&report);
    }
    let mut out = String::new();
    out += &circuit_line(
        &args.circuit.file,
        pipeline.noisy().detectors.len(),
        pipeline.noisy().observables.len(),
        rounds as usize,
    );
    out += &format!("noise: {noise}\n");
    out += &format!(
        "decoder: {} on {}, built at the target noise and used at every rung\n",
        args.decoder.name(),
        count(matching.edges.len(), "matching-graph edge")
    );
    if !stats.unsplit.is_empty() || !stats.silent_logical.is_empty() {
        out += &format!(
            "note: the decoder leaves out {} unsplit hyperedges and {} silent logical errors; \
             the walks still fire them\n",
            stats.unsplit.len(),
            stats.silent_logical.len()
        );
    }
    out += &format!(
        "method: splitting over {}; {} walks, {} proposals each per rung; seed {}\n",
        count(result.edges, "fault-graph edge"),
        result.chains,
        result.proposals,
        args.seed
    );
    out += &format!(
        "top: {}x the noise, {} failures in {} shots of direct sampling\n",
        fmt_scale(top_scale),
        result.top.failures,
        result.top.shots
    );
    out += match result.start {
        Start::Sampling => "walks start from: failing shots of direct sampling at the top\n",
        Start::Shortest => {
            "walks start from: the shortest logical errors of the distance search, thinned\n"
        }
    };
    out += "ladder:\n";
    out += &format!(
        "  {:>8} {:>10} {:>11} {:>7} {:>6} {:>7} {:>6} {:>7} {:>8} {:>11}\n",
        "scale", "p", "per shot", "± rel", "slope", "accept", "fired", "tau", "n_eff", "overlap"
    );
    for p in &result.points {
        let m = p.mixing.as_ref();
        out += &format!(
            "  {:>8} {:>10} {:>11.3e} {:>7} {:>6} {:>7} {:>6} {:>7} {:>8} {:>11}\n",
            fmt_scale(p.scale),
            p.p.map_or("-".into(), |v| format!("{v:.3e}")),
            p.rate,
            percent(p.uncertainty),
            p.slope.map_or("-".into(), |v| format!("{v:.2}")),
            m.map_or("-".into(), |m| format!("{:.4}", m.acceptance)),
            m.map_or("-".into(), |m| format!("{:.1}", m.mean_fired)),
            m.and_then(|m| m.autocorrelation)
                .map_or("-".into(), |t| format!("{t:.1}")),
            m.map_or("-".into(), |m| format!("{:.0}", m.effective_samples)),
            p.overlap
                .map_or("-".into(), |[a, b]| format!("{a:.2}/{b:.2}")),
        );
    }
    out += &format!(
        "per shot:  {}, ± {} relative\n",
        show(per_shot),
        percent(target.uncertainty)
    );
    out += &format!("per round: {}\n", show(per_shot.per_round(rounds)));
    out += &scaling_line(fit.as_ref(), distance.as_ref());
    out += &format!("These are {MODEL_NOTE}.\n");
    out!("{out}");
    Ok(())
}

/// The exponent of `P_L ∝ t^k` over the lowest rungs next to `⌈d/2⌉`.
fn scaling_line(fit: Option<&ExponentFit>, distance: Option<&Distance>) -> String {
    let mut s = String::from("scaling: ");
    match fit {
        Some(f) => {
            s += &format!(
                "P_L ~ p^k with k = {:.2} ± {:.2} over {} rungs ({}x..{}x the noise)",
                f.exponent,
                f.error,
                f.points,
                fmt_scale(f.scales[0]),
                fmt_scale(f.scales[1])
            );
        }
        None => s += "too few rungs below 4x the noise to fit an exponent",
    }
    match distance {
        Some(d) if d.value == d.lower => {
            s += &format!(
                "; circuit distance {} ({}), ceil(d/2) = {}",
                d.value,
                d.method,
                d.value.div_ceil(2)
            );
        }
        Some(d) => {
            s += &format!(
                "; circuit distance between {} and {} ({})",
                d.lower, d.value, d.method
            )
        }
        None => s += "; no logical error found by the distance search",
    }
    if let Some(h) = distance.and_then(|d| d.high_rate) {
        // Under bias the exponent splits by class; the budget measures each class's share.
        s += &format!(
            "; high-rate distance {h}, ceil/2 = {} (each class's exponent: `slant budget \
             --by class --method splitting`)",
            h.div_ceil(2)
        );
    }
    s + "\n"
}

/// `rate (95% interval low .. high)`.
fn show(e: Estimate) -> String {
    format!(
        "{:.4e}  (95% interval {:.4e} .. {:.4e})",
        e.rate, e.low, e.high
    )
}

fn fmt_scale(s: f64) -> String {
    if s >= 10.0 {
        format!("{s:.1}")
    } else {
        format!("{s:.3}")
    }
}

fn percent(u: f64) -> String {
    if u.is_finite() {
        format!("{:.1}%", 100.0 * u)
    } else {
        "?".into()
    }
}
