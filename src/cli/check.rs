//! `slant check`: parse, expand and verify a circuit, then print a summary.

use std::collections::BTreeMap;

use serde::Serialize;

use crate::base::{Diagnostic, Severity};
use crate::cli::common::CircuitArgs;
use crate::cli::CliError;
use crate::ir::{Circuit, OpKind};

/// Arguments of `slant check`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// The circuit.
    #[command(flatten)]
    pub circuit: CircuitArgs,
    /// Print the summary as JSON.
    #[arg(long)]
    pub json: bool,
}

/// The facts `check` reports.
#[derive(Debug, Serialize)]
pub struct Summary {
    /// File name.
    pub file: String,
    /// Parameter values after overrides.
    pub params: BTreeMap<String, i64>,
    /// Number of qubits.
    pub qubits: usize,
    /// Qubits per role or tag.
    pub roles: BTreeMap<String, usize>,
    /// Number of layers.
    pub layers: usize,
    /// Number of `round` blocks executed.
    pub rounds: u32,
    /// Operations by kind (gate names, `reset`, `measure`, `noise`).
    pub operations: BTreeMap<String, usize>,
    /// Number of measurement results.
    pub measurements: usize,
    /// Number of detectors.
    pub detectors: usize,
    /// Number of observables.
    pub observables: usize,
    /// Noise applications per channel kind.
    pub noise_channels: BTreeMap<String, usize>,
    /// Sum over all noise applications (and measurement flips) of their total probability: the
    /// expected number of faults per shot to first order.
    pub noise_total_probability: f64,
    /// Items of the size budget the circuit uses (what `--max-items` bounds).
    pub items: u64,
}

impl Summary {
    /// Computes the summary of a checked circuit.
    pub fn of(c: &Circuit) -> Summary {
        let mut roles = BTreeMap::new();
        for q in &c.qubits {
            for r in &q.roles {
                *roles.entry(r.clone()).or_insert(0) += 1;
            }
        }
        let mut operations = BTreeMap::new();
        let mut noise_channels = BTreeMap::new();
        let mut noise_total = 0.0;
        for (_, op) in c.ops() {
            match &op.kind {
                OpKind::Gate(g) => {
                    *operations.entry(g.name().to_string()).or_insert(0) +=
                        op.targets.len() / g.arity()
                }
                OpKind::Reset(_) => {
                    *operations.entry("reset".to_string()).or_insert(0) += op.targets.len()
                }
                OpKind::Measure { flip, .. } => {
                    *operations.entry("measure".to_string()).or_insert(0) += 1;
                    if *flip > 0.0 {
                        *noise_channels
                            .entry("measurement flip".to_string())
                            .or_insert(0) += 1;
                        noise_total += flip;
                    }
                }
                OpKind::Noise(ch) => {
                    let apps = (op.targets.len() / ch.arity().max(1)).max(1);
                    *operations.entry("noise".to_string()).or_insert(0) += apps;
                    *noise_channels.entry(ch.keyword().to_string()).or_insert(0) += apps;
                    noise_total += ch.total() * apps as f64;
                }
            }
        }
        Summary {
            file: c.source.name.clone(),
            params: c.params.iter().cloned().collect(),
            qubits: c.qubits.len(),
            roles,
            layers: c.layers.len(),
            rounds: c.rounds,
            operations,
            measurements: c.records.len(),
            detectors: c.detectors.len(),
            observables: c.observables.len(),
            noise_channels,
            noise_total_probability: noise_total,
            items: c.items,
        }
    }

    /// Human-readable rendering.
    pub fn render(&self) -> String {
        let list = |m: &BTreeMap<String, usize>| {
            if m.is_empty() {
                "none".to_string()
            } else {
                m.iter()
                    .map(|(k, v)| format!("{k} {v}"))
                    .collect::<Vec<_>>()
                    .join(", ")
            }
        };
        let mut out = format!("{}: ok\n", self.file);
        if !self.params.is_empty() {
            let p: Vec<String> = self
                .params
                .iter()
                .map(|(k, v)| format!("{k}={v}"))
                .collect();
            out += &format!("  parameters    {}\n", p.join(" "));
        }
        out += &format!("  qubits        {} ({})\n", self.qubits, list(&self.roles));
        out += &format!(
            "  layers        {} in {}\n",
            self.layers,
            crate::base::count(self.rounds as usize, "round")
        );
        out += &format!("  operations    {}\n", list(&self.operations));
        out += &format!("  measurements  {}\n", self.measurements);
        out += &format!("  detectors     {} (all deterministic)\n", self.detectors);
        out += &format!("  observables   {} (all deterministic)\n", self.observables);
        out += &format!(
            "  noise         {} (expected faults per shot {:.4e})\n",
            list(&self.noise_channels),
            self.noise_total_probability
        );
        out += &format!("  size          {} items\n", self.items);
        out
    }
}

/// Runs `slant check`.
pub fn run(args: Args) -> Result<(), CliError> {
    let pipeline = match args.circuit.load() {
        Ok(p) => p,
        Err(diags) => {
            if args.json {
                // Machines get the refusal on stdout too; people still read stderr.
                let errors: Vec<serde_json::Value> = diags.iter().map(diagnostic_json).collect();
                let v = serde_json::json!({
                    "file": args.circuit.file.display().to_string(),
                    "ok": false,
                    "errors": errors,
                });
                let text = serde_json::to_string_pretty(&v)
                    .map_err(|e| CliError::Internal(e.to_string()))?;
                outln!("{text}");
            }
            return Err(CliError::Rejected(diags));
        }
    };
    let summary = Summary::of(pipeline.circuit());
    if args.json {
        let mut v =
            serde_json::to_value(&summary).map_err(|e| CliError::Internal(e.to_string()))?;
        v["ok"] = serde_json::Value::Bool(true);
        let text =
            serde_json::to_string_pretty(&v).map_err(|e| CliError::Internal(e.to_string()))?;
        outln!("{text}");
    } else {
        out!("{}", summary.render());
    }
    Ok(())
}

/// A diagnostic as JSON: severity, message, location (`null` when it has none) and hint.
fn diagnostic_json(d: &Diagnostic) -> serde_json::Value {
    let location = d.location().map(
        |(file, line, column)| serde_json::json!({"file": file, "line": line, "column": column}),
    );
    serde_json::json!({
        "severity": match d.severity {
            Severity::Error => "error",
            Severity::Warning => "warning",
        },
        "message": d.message,
        "location": location,
        "hint": d.hint,
    })
}
