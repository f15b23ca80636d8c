//! `slant trace`: which circuit faults make up a fault-graph edge.

use std::fmt::Write;

use crate::base::{count, Diagnostic};
use crate::cli::common::{CircuitArgs, NoiseArgs};
use crate::cli::CliError;
use crate::faults::{ExtractOptions, FaultGraph};

/// Arguments of `slant trace`.
#[derive(Debug, clap::Args)]
#[command(group(clap::ArgGroup::new("which").required(true).args(["edge", "detectors"])))]
pub struct Args {
    /// The circuit.
    #[command(flatten)]
    pub circuit: CircuitArgs,
    /// Noise written into the circuit before extraction.
    #[command(flatten)]
    pub noise: NoiseArgs,
    /// Index of the edge (as in `slant graph --format text`).
    #[arg(long)]
    pub edge: Option<usize>,
    /// The edges with exactly these detectors, e.g. `3,7` (one detector: a boundary edge).
    #[arg(long, value_delimiter = ',')]
    pub detectors: Option<Vec<u32>>,
}

/// Renders the contributors of edge `k`, naming qubits by `names` (indices if absent).
pub fn describe(graph: &FaultGraph, k: usize, names: &[&str]) -> String {
    let m = &graph.edges[k];
    let list = |v: &[u32]| v.iter().map(u32::to_string).collect::<Vec<_>>().join(",");
    let mut s = String::new();
    let _ = writeln!(
        s,
        "{} {k}: p={:.6e} weight={:.4} class={} detectors=[{}] observables=[{}], {}",
        if m.detectors.len() > 2 {
            "hyperedge"
        } else {
            "edge"
        },
        m.probability,
        m.weight(),
        m.classes.name(),
        list(&m.detectors),
        list(&m.observables),
        count(m.provenance.len(), "fault")
    );
    for c in graph.contributors(k) {
        let qubits: Vec<String> = c
            .qubits
            .iter()
            .map(|&q| {
                names
                    .get(q as usize)
                    .map_or(format!("#{q}"), |n| n.to_string())
            })
            .collect();
        let what = match c.result {
            Some(r) => format!("flip of result {r} measured on {}", qubits.join(" ")),
            None => format!("{} on {}", c.term_text(), qubits.join(" ")),
        };
        let _ = writeln!(
            s,
            "  {}: `{}` — {what}, p={:.6e} (independent {:.6e}), {}",
            graph.location(c),
            graph.op_text(c),
            c.term_probability,
            c.probability,
            c.class.name()
        );
    }
    s
}

/// Runs `slant trace`.
pub fn run(args: Args) -> Result<(), CliError> {
    let pipeline = args.circuit.load_noisy(args.noise.noise.as_deref())?;
    let graph = pipeline.graph(&ExtractOptions::default());
    let circuit = pipeline.noisy();
    let names: Vec<&str> = circuit.qubits.iter().map(|q| q.name.as_str()).collect();
    let ks: Vec<usize> = match (args.edge, &args.detectors) {
        (Some(k), _) => {
            if k >= graph.edges.len() {
                return Err(Diagnostic::bare(format!(
                    "there is no edge {k}: the graph has {} (0..{})",
                    graph.edges.len(),
                    graph.edges.len()
                ))
                .into());
            }
            vec![k]
        }
        (None, Some(dets)) => {
            let mut dets = dets.clone();
            dets.sort_unstable();
            dets.dedup();
            let found = graph.find_by_detectors(&dets);
            if found.is_empty() {
                return Err(Diagnostic::bare(format!(
                    "no edge flips exactly the detectors {dets:?}"
                ))
                .with_hint("list the edges with `slant graph FILE --format text`")
                .into());
            }
            found
        }
        (None, None) => unreachable_group()?,
    };
    let mut out = String::new();
    for k in ks {
        out.push_str(&describe(&graph, k, &names));
    }
    out!("{out}");
    Ok(())
}

fn unreachable_group() -> Result<Vec<usize>, CliError> {
    Err(CliError::Internal(
        "clap should require `--edge` or `--detectors`".into(),
    ))
}
