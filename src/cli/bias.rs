//! `slant bias`: where the high-rate (Z-type) faults of a noisy circuit end up.
//!
//! Always exits 0 when the inputs are valid: the verdict is a report, not a yes/no answer.

use crate::analysis::{analyze_bias, BiasReport};
use crate::cli::common::CircuitArgs;
use crate::cli::CliError;

/// Arguments of `slant bias`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// The circuit.
    #[command(flatten)]
    pub circuit: CircuitArgs,
    /// Noise: a model file `FILE.toml` or a preset such as `circuit p=0.001 bias=100
    /// cx=bias-preserving`.
    #[arg(long, value_name = "MODEL")]
    pub noise: String,
    /// Print the report as JSON.
    #[arg(long)]
    pub json: bool,
    /// How many converting operations to list.
    #[arg(long, default_value_t = 10)]
    pub top: usize,
}

/// Runs `slant bias`.
pub fn run(args: Args) -> Result<(), CliError> {
    let pipeline = args.circuit.load_noisy(Some(&args.noise))?;
    let report = analyze_bias(pipeline.noisy(), pipeline.notes());
    if args.json {
        #[derive(serde::Serialize)]
        struct Out<'a> {
            #[serde(flatten)]
            report: &'a BiasReport,
            verdict: String,
            all_chains: bool,
        }
        let out = Out {
            report: &report,
            verdict: report.verdict(),
            all_chains: report.all_chains(),
        };
        let text =
            serde_json::to_string_pretty(&out).map_err(|e| CliError::Internal(e.to_string()))?;
        println!("{text}");
    } else {
        print!("{}", render(&report, args.top));
    }
    Ok(())
}

fn eta(x: f64) -> String {
    if x.is_infinite() {
        "inf".into()
    } else if x.is_nan() {
        "-".into()
    } else {
        format!("{x:.3}")
    }
}

/// The report as text.
pub fn render(r: &BiasReport, top: usize) -> String {
    use std::fmt::Write as _;
    let mut s = String::new();
    if r.all_qubits_data {
        let _ = writeln!(
            s,
            "note: the circuit declares no `data` role, so every qubit is counted as data"
        );
    }
    let _ = writeln!(
        s,
        "input bias per operation class (eta = pZ-type / pother):"
    );
    let _ = writeln!(
        s,
        "  {:<12} {:>12} {:>12} {:>10} {:>14}",
        "class", "p Z-type", "p other", "eta in", "Z share out"
    );
    for c in &r.classes {
        let _ = writeln!(
            s,
            "  {:<12} {:>12.4e} {:>12.4e} {:>10} {:>14.4}",
            c.class,
            c.input_high,
            c.input_low,
            eta(c.input_eta()),
            c.output_z_share()
        );
    }
    if r.circuit_rounds == 0 {
        let _ = writeln!(
            s,
            "effective bias at the data per round: not reported, the circuit has no `round {{ }}` blocks"
        );
    } else {
        let _ = writeln!(s, "effective bias at the data per round (eta = pZ / pX,Y):");
    }
    if r.circuit_rounds > 0 && r.rounds.is_empty() {
        let _ = writeln!(s, "  no fault reaches the data inside a round");
    }
    for rb in &r.rounds {
        let _ = writeln!(
            s,
            "  round {:<4} Z {:.4e}  X/Y {:.4e} (from high-rate {:.4e})  eta {}",
            rb.round,
            rb.z,
            rb.xy,
            rb.xy_from_high,
            eta(rb.eta())
        );
    }
    let _ = writeln!(
        s,
        "high-rate faults: {} (total probability {:.4e}); reaching the data with X/Y: {:.4e}",
        r.high_faults, r.high_probability, r.converted_probability
    );
    if r.converters.is_empty() {
        let _ = writeln!(s, "operations converting Z into X/Y: none");
    } else {
        let _ = writeln!(
            s,
            "operations converting Z into X/Y (by converted probability):"
        );
        for c in r.converters.iter().take(top) {
            let _ = writeln!(
                s,
                "  {:<28} {:<24} {:.4e} ({} faults)",
                c.location, c.what, c.probability, c.faults
            );
        }
        if r.converters.len() > top {
            let _ = writeln!(s, "  ... {} more", r.converters.len() - top);
        }
    }
    let _ = writeln!(
        s,
        "fault-graph probability in high-rate-only edges: {:.4}",
        r.high_only_share
    );
    let chains = r.components.iter().filter(|c| c.chain).count();
    let _ = writeln!(
        s,
        "high-rate fault graph: {} components, {} chains, {} hyperedges{}",
        r.components.len(),
        chains,
        r.hyperedges,
        if r.all_chains() { " (all chains)" } else { "" }
    );
    let _ = writeln!(s, "verdict: {}", r.verdict());
    s
}
