//! `slant distance`: circuit-level distances by fault class and the logical error that attains
//! them, traced back to source lines.

use std::fmt::Write as _;

use serde_json::{json, Value};

use crate::analysis::{
    distances_reporting, Count, DistanceOptions, DistanceReport, LogicalError, Unproven,
    DISTANCE_SEARCHES,
};
use crate::base::count as plural_count;
use crate::cli::common::{CircuitArgs, NoiseArgs};
use crate::cli::progress::Progress;
use crate::cli::CliError;
use crate::faults::{ExtractOptions, FaultGraph};
use crate::ir::Circuit;

/// Arguments of `slant distance`.
#[derive(Debug, clap::Args)]
#[command(after_help = "Lines of the report:\n  \
distance            fewest fault-graph edges whose detectors cancel and that flip an observable \
(an undetected logical error), with the method that found it\n  \
high-rate distance  the same using only edges a high-rate fault (pure Z at injection, or a \
measurement flip with --high-rate-flips) alone produces\n  \
low-rate count      fewest low-rate edges any logical error needs, and the size of that error\n  \
weighted distance   least total weight ln((1-p)/p) of a logical error (its probability product)\n\
Each logical error found is listed edge by edge (e.g. `edge 4`, or `hyperedge 9` for more than \
two detectors) with the circuit faults behind it.\n\n\
`none` means no undetected logical error of that kind exists (proven); `> k` means none with at \
most k edges exists and larger ones were not searched; `unknown` means the search could not \
decide (the report says why). `≤ a (≥ b)` gives bounds when the search could not close the \
gap.\n\nJSON (`--json`): format `slant-distance`, version 2.")]
pub struct Args {
    /// The circuit.
    #[command(flatten)]
    pub circuit: CircuitArgs,
    /// Noise model.
    #[command(flatten)]
    pub noise: NoiseArgs,
    /// Tag measurement flips as high-rate faults.
    #[arg(long)]
    pub high_rate_flips: bool,
    /// Print JSON instead of text.
    #[arg(long)]
    pub json: bool,
}

/// Runs `slant distance`.
pub fn run(args: Args) -> Result<(), CliError> {
    let pipeline = args.circuit.load_noisy(args.noise.noise.as_deref())?;
    let circuit = pipeline.noisy();
    let opts = ExtractOptions {
        high_rate_flips: args.high_rate_flips,
    };
    let steps = 1 + DISTANCE_SEARCHES.len() as u64;
    let mut progress = Progress::steps(steps);
    progress.step(1, "fault graph");
    let graph = pipeline.graph(&opts);
    let report = distances_reporting(&graph, &DistanceOptions::default(), |i, name| {
        progress.step(2 + i as u64, name)
    })
    .map_err(CliError::Internal)?;
    progress.finish();
    let text = if args.json {
        let mut s = serde_json::to_string_pretty(&to_json(&report, &graph, circuit))
            .map_err(|e| CliError::Internal(e.to_string()))?;
        s.push('\n');
        s
    } else {
        render(&report, &graph, circuit)
    };
    out!("{text}");
    Ok(())
}

/// A count as text: `5`, `≤ 5 (≥ 3)`, `none` (proven), or for an unproven absence `> 12` or
/// `?`.
pub fn count_text(c: Option<&Count>, unproven: Option<Unproven>) -> String {
    match (c, unproven) {
        (None, None) => "none".into(),
        (None, Some(u)) => u.cell(),
        (Some(c), _) if c.exact() => c.value.to_string(),
        (Some(c), _) => format!("≤ {} (≥ {})", c.value, c.lower),
    }
}

/// An absent result in the text report: `none`, or what the search could not prove.
fn absent_text(unproven: Option<Unproven>) -> String {
    match unproven {
        None => "none".into(),
        Some(u @ Unproven::AboveDepth(_)) => format!("{}  [{}]", u.cell(), u.describe()),
        Some(u) => u.describe(),
    }
}

/// The text report.
pub fn render(r: &DistanceReport, graph: &FaultGraph, circuit: &Circuit) -> String {
    let mut s = String::new();
    let count = |c: Option<&Count>, u: Option<Unproven>| match c {
        Some(c) => format!("{}  [{}]", count_text(Some(c), None), c.method.name()),
        None => absent_text(u),
    };
    let _ = writeln!(
        s,
        "distance             {}",
        count(r.distance.as_ref(), r.unresolved.distance)
    );
    let _ = writeln!(
        s,
        "high-rate distance   {}",
        count(r.high_rate.as_ref(), r.unresolved.high_rate)
    );
    match &r.lexicographic {
        Some(l) => {
            let _ = writeln!(
                s,
                "low-rate count       {} (in a logical error of {})",
                l.low,
                plural_count(l.total as usize, "edge")
            );
        }
        None => {
            let _ = writeln!(
                s,
                "low-rate count       {}",
                absent_text(r.unresolved.lexicographic)
            );
        }
    }
    match &r.weighted {
        Some(w) => {
            let _ = writeln!(
                s,
                "weighted distance    {:.3} (probability product {:.3e}, {})",
                w.weight,
                w.probability,
                plural_count(w.error.edges.len(), "edge")
            );
        }
        None => {
            let _ = writeln!(
                s,
                "weighted distance    {}",
                absent_text(r.unresolved.weighted)
            );
        }
    }
    if r.hyperedges > 0 {
        let _ = writeln!(
            s,
            "note: {}; the low-rate count and weighted distance use matchable edges only",
            plural_count(r.hyperedges, "hyperedge")
        );
    }
    if graph.observables.is_empty() {
        let _ = writeln!(
            s,
            "note: the circuit declares no observable, so no fault can be a logical error"
        );
    }
    let shown = [
        ("shortest", r.distance.as_ref().map(|c| &c.error)),
        ("high-rate", r.high_rate.as_ref().map(|c| &c.error)),
        ("most likely", r.weighted.as_ref().map(|w| &w.error)),
    ];
    for (name, e) in shown {
        if let Some(e) = e {
            s.push('\n');
            write_error(&mut s, name, e, graph, circuit);
        }
    }
    s
}

fn write_error(s: &mut String, name: &str, e: &LogicalError, g: &FaultGraph, c: &Circuit) {
    let obs: Vec<String> = e
        .observables
        .iter()
        .map(|&o| format!("`{}`", g.observables[o as usize]))
        .collect();
    let _ = writeln!(
        s,
        "{name} logical error: {}, flips {}",
        plural_count(e.edges.len(), "edge"),
        obs.join(", ")
    );
    for &m in &e.edges {
        let mech = &g.edges[m as usize];
        let dets: Vec<String> = mech
            .detectors
            .iter()
            .map(|&d| g.detectors[d as usize].name.clone())
            .collect();
        let _ = writeln!(
            s,
            "  {} {m}  p={:.3e}  {}  detectors [{}]",
            if mech.detectors.len() > 2 {
                "hyperedge"
            } else {
                "edge"
            },
            mech.probability,
            mech.classes.name(),
            dets.join(" ")
        );
        let all = g.contributors(m as usize);
        // A few contributors are enough to locate the fault; `--json` lists them all.
        const SHOWN: usize = 4;
        for k in all.iter().take(SHOWN) {
            let qubits: Vec<String> = k
                .qubits
                .iter()
                .map(|&q| c.qubits[q as usize].name.clone())
                .collect();
            let _ = writeln!(
                s,
                "    {}  {} on {}  ({})  {}",
                g.location(k),
                k.term_text(),
                qubits.join(" "),
                k.class.name(),
                g.op_text(k)
            );
        }
        if all.len() > SHOWN {
            let more = all.len() - SHOWN;
            let noun = if more == 1 {
                "contributor"
            } else {
                "contributors"
            };
            let _ = writeln!(s, "    … and {more} more {noun}");
        }
    }
}

/// `null` for a proven absence; an object saying why for an unproven one.
fn unproven_json(u: Option<Unproven>) -> Value {
    match u {
        None => Value::Null,
        Some(u) => json!({
            "above": match u {
                Unproven::AboveDepth(k) => Some(k),
                _ => None,
            },
            "reason": u.describe(),
        }),
    }
}

fn count_json(c: Option<&Count>, g: &FaultGraph, circuit: &Circuit) -> Value {
    match c {
        None => Value::Null,
        Some(c) => json!({
            "value": c.value,
            "lower": c.lower,
            "exact": c.exact(),
            "method": c.method.name(),
            "error": error_json(&c.error, g, circuit),
        }),
    }
}

fn error_json(e: &LogicalError, g: &FaultGraph, c: &Circuit) -> Value {
    let mechs: Vec<Value> = e
        .edges
        .iter()
        .map(|&m| {
            let mech = &g.edges[m as usize];
            let contributors: Vec<Value> = g
                .contributors(m as usize)
                .iter()
                .map(|k| {
                    json!({
                        "location": g.location(k),
                        "op": g.op_text(k),
                        "term": k.term_text(),
                        "qubits": k.qubits.iter().map(|&q| c.qubits[q as usize].name.clone())
                            .collect::<Vec<_>>(),
                        "class": k.class.name(),
                    })
                })
                .collect();
            json!({
                "id": m,
                "probability": mech.probability,
                "class": mech.classes.name(),
                "detectors": mech.detectors,
                "observables": mech.observables,
                "contributors": contributors,
            })
        })
        .collect();
    json!({
        "observables": e.observables.iter().map(|&o| g.observables[o as usize].clone())
            .collect::<Vec<_>>(),
        "edges": mechs,
    })
}

/// The report as JSON.
pub fn to_json(r: &DistanceReport, g: &FaultGraph, c: &Circuit) -> Value {
    json!({
        "format": "slant-distance",
        // Version 1 had no `format` or `version` and used an earlier name for an error.s edges.
        "version": 2,
        "distance": count_json(r.distance.as_ref(), g, c),
        "high_rate_distance": count_json(r.high_rate.as_ref(), g, c),
        "lexicographic": r.lexicographic.as_ref().map(|l| json!({
            "low": l.low,
            "total": l.total,
            "error": error_json(&l.error, g, c),
        })),
        "weighted": r.weighted.as_ref().map(|w| json!({
            "weight": w.weight,
            "probability": w.probability,
            "error": error_json(&w.error, g, c),
        })),
        "hyperedges": r.hyperedges,
        // Results above that are null without proof that none exists.
        "unproven": {
            "distance": unproven_json(r.unresolved.distance),
            "high_rate_distance": unproven_json(r.unresolved.high_rate),
            "lexicographic": unproven_json(r.unresolved.lexicographic),
            "weighted": unproven_json(r.unresolved.weighted),
        },
    })
}
