//! `slant bias`: where the high-rate (Z-type) faults of a noisy circuit end up.
//!
//! A yes/no report: exits 0 when the bias is kept and 3 (`EXIT_NO`) when some high-rate fault
//! reaches the data as X or Y, after printing the whole report either way.

use crate::analysis::{analyze_bias, BiasReport};
use crate::base::count;
use crate::cli::common::CircuitArgs;
use crate::cli::CliError;

const AFTER_HELP: &str = "\
Exit code: 0 when the bias is kept (no high-rate fault reaches the data as X or Y), 3 when it is
lost; 1 when the input is rejected.

Columns and lines (expected counts are sums of probabilities: the expected number per shot):
  class           the operation a channel follows (`cx`, `h`, `reset`, `idle`, `round-start`,
                  `noise` for channels written in the circuit)
  exp. Z-type     expected count of Z-type faults (only Z and I factors) as the model writes them
  exp. other      expected count of the other faults as written
  eta in          exp. Z-type / exp. other
  Z share out     Z-type share after the gate implementations (mid-gate faults moved through)
  round lines     expected count per round of faults reaching the data as pure Z, and as X/Y
                  (of which from high-rate faults); eta = Z / (X/Y)
  converting operations: file:line:col, gate, expected count of high-rate faults it turns into
                  X/Y at the data, and how many elementary faults that is

JSON (`--json`, format `slant-bias`, version 2): the report's fields, plus `kept` (boolean),
`lost_at` (one entry per converting operation: `file`, `line`, `column`, `gate`) and `verdict`.";

/// Arguments of `slant bias`.
#[derive(Debug, clap::Args)]
#[command(after_help = AFTER_HELP)]
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

/// Version of the `--json` document (version 1 had no `format`, `version`, `kept` or
/// `lost_at`).
const JSON_VERSION: u32 = 2;

/// Runs `slant bias`: exit 0 when the bias is kept, [`CliError::No`] (exit 3) when it is lost.
pub fn run(args: Args) -> Result<(), CliError> {
    let pipeline = args.circuit.load_noisy(Some(&args.noise))?;
    let report = analyze_bias(pipeline.noisy(), pipeline.notes());
    if args.json {
        #[derive(serde::Serialize)]
        struct Place<'a> {
            file: &'a str,
            line: usize,
            column: usize,
            gate: &'a str,
        }
        #[derive(serde::Serialize)]
        struct Out<'a> {
            format: &'static str,
            version: u32,
            kept: bool,
            lost_at: Vec<Place<'a>>,
            verdict: String,
            #[serde(flatten)]
            report: &'a BiasReport,
            all_chains: bool,
        }
        let out = Out {
            format: "slant-bias",
            version: JSON_VERSION,
            kept: report.kept(),
            lost_at: report
                .converters
                .iter()
                .map(|c| Place {
                    file: &c.file,
                    line: c.line,
                    column: c.column,
                    gate: &c.what,
                })
                .collect(),
            verdict: report.verdict(),
            report: &report,
            all_chains: report.all_chains(),
        };
        let text =
            serde_json::to_string_pretty(&out).map_err(|e| CliError::Internal(e.to_string()))?;
        outln!("{text}");
    } else {
        out!("{}", render(&report, args.top));
    }
    if report.kept() {
        Ok(())
    } else {
        Err(CliError::No)
    }
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
        "input bias per operation class (expected faults per shot; eta = Z-type / other):"
    );
    let _ = writeln!(
        s,
        "  {:<12} {:>12} {:>12} {:>10} {:>14}",
        "class", "exp. Z-type", "exp. other", "eta in", "Z share out"
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
        let _ = writeln!(
            s,
            "effective bias at the data per round (expected faults reaching the data; eta = Z / X,Y):"
        );
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
        "high-rate faults: {} (expected {:.4e} per shot); reaching the data with X/Y: {:.4e}",
        r.high_faults, r.high_probability, r.converted_probability
    );
    if r.converters.is_empty() {
        let _ = writeln!(s, "operations converting Z into X/Y: none");
    } else {
        let _ = writeln!(
            s,
            "operations converting Z into X/Y (by expected converted faults per shot):"
        );
        for c in r.converters.iter().take(top) {
            let _ = writeln!(
                s,
                "  {:<28} {:<24} {:.4e} ({})",
                c.location,
                c.what,
                c.probability,
                count(c.faults, "fault")
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
        "high-rate fault graph: {}, {}, {}{}",
        count(r.components.len(), "component"),
        count(chains, "chain"),
        count(r.hyperedges, "hyperedge"),
        if r.all_chains() { " (all chains)" } else { "" }
    );
    let _ = writeln!(s, "verdict: {}", r.verdict());
    s
}
