//! `slant compare`: several circuits, or variants of a generated family, under one noise model,
//! side by side.
//!
//! Variants are built by running the `slant new` option parser on `FAMILY --KEY VALUE` plus the
//! fixed `--with` options, so every `slant new` option can be varied and is validated the same
//! way. Logical error rates, bias verdicts and `--plot` are not implemented yet (they need the
//! estimate and bias commands).

use std::fmt::Write as _;
use std::path::PathBuf;

use clap::Parser;
use serde_json::json;

use crate::analysis::compare::{self, Column, Row};
use crate::analysis::distance::{Count, DistanceOptions};
use crate::cli::common::{parse_setting, read_source, NoiseArgs};
use crate::cli::{distance::count_text, new, CliError};
use crate::faults::ExtractOptions;
use crate::lang::{Diagnostic, Source};

/// Arguments of `slant compare`.
#[derive(Debug, clap::Args)]
#[command(
    after_help = "Examples:\n  slant compare a.slant b.slant --noise 'circuit p=0.001'\n  \
slant compare --family surface --with distance=5 --vary order=hook-safe,hook-aligned \
--noise 'circuit p=0.001'\n  slant compare --family xzzx --with distance=3 --vary \
entangler=native,cx --noise 'circuit p=0.001 bias=100' --csv\n\
A `*` marks the best value of a column when the rows differ."
)]
pub struct Args {
    /// Circuit files to compare.
    #[arg(conflicts_with = "family")]
    pub files: Vec<PathBuf>,
    /// Override a parameter of every file, e.g. `--set dx=5` (repeatable).
    #[arg(long = "set", value_name = "NAME=INT", value_parser = parse_setting)]
    pub set: Vec<(String, i64)>,
    /// Generate the variants from this family (see `slant new --help`).
    #[arg(long, requires = "vary")]
    pub family: Option<String>,
    /// The option to vary and its values, e.g. `order=hook-safe,hook-aligned`.
    #[arg(long, value_name = "KEY=V1,V2,...")]
    pub vary: Option<String>,
    /// A fixed `slant new` option for every variant, e.g. `distance=5` or `periodic` (repeatable).
    #[arg(long = "with", value_name = "KEY[=VALUE]")]
    pub with: Vec<String>,
    /// Noise model.
    #[command(flatten)]
    pub noise: NoiseArgs,
    /// Tag measurement flips as high-rate faults.
    #[arg(long)]
    pub high_rate_flips: bool,
    /// Print JSON.
    #[arg(long, conflicts_with = "csv")]
    pub json: bool,
    /// Print CSV.
    #[arg(long)]
    pub csv: bool,
}

#[derive(Parser)]
#[command(no_binary_name = true)]
struct NewArgs {
    #[command(flatten)]
    inner: new::Args,
}

/// `KEY[=VALUE]` as `slant new` arguments.
fn option_args(kv: &str) -> Vec<String> {
    match kv.split_once('=') {
        Some((k, v)) => vec![format!("--{}", k.trim()), v.trim().to_string()],
        None => vec![format!("--{}", kv.trim())],
    }
}

/// The named circuits to compare, loaded and checked.
fn sources(args: &Args) -> Result<Vec<(String, crate::ir::Circuit)>, CliError> {
    let mut out = Vec::new();
    if let Some(family) = &args.family {
        let vary = args.vary.as_deref().unwrap_or_default();
        let (key, values) = vary
            .split_once('=')
            .ok_or_else(|| Diagnostic::bare(format!("`--vary {vary}`: expected KEY=V1,V2,...")))?;
        for v in values.split(',') {
            let mut argv = vec![family.clone()];
            for w in &args.with {
                argv.extend(option_args(w));
            }
            argv.extend(option_args(&format!("{key}={v}")));
            let parsed = NewArgs::try_parse_from(&argv).map_err(|e| {
                Diagnostic::bare(format!(
                    "variant `{key}={v}`: {}",
                    e.to_string().lines().next().unwrap_or("bad option")
                ))
            })?;
            let spec = parsed
                .inner
                .spec()
                .map_err(|m| Diagnostic::bare(format!("variant `{key}={v}`: {m}")))?;
            let text = crate::gen::generate(&spec)
                .map_err(|e| Diagnostic::bare(format!("variant `{key}={v}`: {e}")))?;
            let name = format!("{key}={v}");
            let circuit = crate::load_source(&Source::new(name.clone(), text), &[])?;
            out.push((name, circuit));
        }
    } else {
        if args.files.is_empty() {
            return Err(
                Diagnostic::bare("give circuit files or `--family F --vary KEY=V1,V2`").into(),
            );
        }
        for f in &args.files {
            let source = read_source(f)?;
            let circuit = crate::load_source(&source, &args.set)?;
            out.push((f.display().to_string(), circuit));
        }
    }
    Ok(out)
}

/// Runs `slant compare`.
pub fn run(args: Args) -> Result<(), CliError> {
    let extract = ExtractOptions {
        high_rate_flips: args.high_rate_flips,
    };
    let mut rows = Vec::new();
    for (name, circuit) in sources(&args)? {
        let circuit = args.noise.apply(circuit)?;
        let row = compare::evaluate(name, &circuit, &extract, &DistanceOptions::default())
            .map_err(CliError::Internal)?;
        rows.push(row);
    }
    let text = if args.json {
        json_text(&rows)?
    } else if args.csv {
        csv_text(&rows)
    } else {
        table_text(&rows)
    };
    print!("{text}");
    Ok(())
}

const HEADERS: [&str; 10] = [
    "circuit",
    "qubits",
    "layers",
    "detectors",
    "mechanisms",
    "hyper",
    "hyper-after",
    "distance",
    "high-rate",
    "low-rate",
];

/// The cells of one row (without best marks), in [`HEADERS`] order plus the weighted distance.
fn cells(r: &Row) -> Vec<String> {
    let (low, weighted) = (
        r.report
            .lexicographic
            .as_ref()
            .map_or("none".to_string(), |l| format!("{}/{}", l.low, l.total)),
        r.report
            .weighted
            .as_ref()
            .map_or("none".to_string(), |w| format!("{:.2}", w.weight)),
    );
    vec![
        r.name.clone(),
        r.qubits.to_string(),
        r.layers.to_string(),
        r.detectors.to_string(),
        r.mechanisms.to_string(),
        format!("{:.1}%", 100.0 * r.hyperedge_share),
        format!("{:.1}%", 100.0 * r.undecomposed_share),
        count_text(r.report.distance.as_ref()),
        count_text(r.report.high_rate.as_ref()),
        low,
        weighted,
    ]
}

/// Column index in [`cells`] of each comparable column.
fn cell_index(c: Column) -> usize {
    match c {
        Column::Qubits => 1,
        Column::Layers => 2,
        Column::Undecomposed => 6,
        Column::Distance => 7,
        Column::HighRate => 8,
        Column::LowRate => 9,
        Column::Weighted => 10,
    }
}

fn table_text(rows: &[Row]) -> String {
    let mut header: Vec<String> = HEADERS.iter().map(|s| s.to_string()).collect();
    header.push("weighted".into());
    let mut grid: Vec<Vec<String>> = rows.iter().map(cells).collect();
    for c in Column::ALL {
        let marks = compare::best(rows, c);
        for (row, m) in grid.iter_mut().zip(marks) {
            if m {
                row[cell_index(c)].push('*');
            }
        }
    }
    let widths: Vec<usize> = (0..header.len())
        .map(|i| {
            grid.iter()
                .map(|r| r[i].chars().count())
                .chain([header[i].len()])
                .max()
                .unwrap_or(0)
        })
        .collect();
    let mut s = String::new();
    let line = |s: &mut String, cols: &[String]| {
        let parts: Vec<String> = cols
            .iter()
            .enumerate()
            .map(|(i, c)| {
                if i == 0 {
                    format!("{c:<w$}", w = widths[i])
                } else {
                    format!("{c:>w$}", w = widths[i])
                }
            })
            .collect();
        let _ = writeln!(s, "{}", parts.join("  ").trim_end());
    };
    line(&mut s, &header);
    for r in &grid {
        line(&mut s, r);
    }
    s.push_str(
        "low-rate = low-rate mechanisms / total in the logical error with the fewest low-rate \
         ones; * = best in column\n",
    );
    s
}

fn csv_text(rows: &[Row]) -> String {
    let mut s = String::from(
        "circuit,qubits,layers,detectors,mechanisms,hyperedge_share,hyperedge_share_after,\
         distance,distance_lower,high_rate_distance,low_rate_count,low_rate_total,weighted\n",
    );
    let opt = |c: Option<&Count>| c.map_or(String::new(), |c| c.value.to_string());
    for r in rows {
        let name = if r.name.contains([',', '"']) {
            format!("\"{}\"", r.name.replace('"', "\"\""))
        } else {
            r.name.clone()
        };
        let _ = writeln!(
            s,
            "{name},{},{},{},{},{},{},{},{},{},{},{},{}",
            r.qubits,
            r.layers,
            r.detectors,
            r.mechanisms,
            r.hyperedge_share,
            r.undecomposed_share,
            opt(r.report.distance.as_ref()),
            r.report
                .distance
                .as_ref()
                .map_or(String::new(), |c| c.lower.to_string()),
            opt(r.report.high_rate.as_ref()),
            r.report
                .lexicographic
                .as_ref()
                .map_or(String::new(), |l| l.low.to_string()),
            r.report
                .lexicographic
                .as_ref()
                .map_or(String::new(), |l| l.total.to_string()),
            r.report
                .weighted
                .as_ref()
                .map_or(String::new(), |w| w.weight.to_string()),
        );
    }
    s
}

fn json_text(rows: &[Row]) -> Result<String, CliError> {
    let count = |c: Option<&Count>| {
        c.map(|c| json!({"value": c.value, "lower": c.lower, "method": c.method.name()}))
    };
    let list: Vec<_> = rows
        .iter()
        .enumerate()
        .map(|(i, r)| {
            let best: Vec<&str> = Column::ALL
                .iter()
                .filter(|&&c| compare::best(rows, c)[i])
                .map(|&c| HEADERS.get(cell_index(c)).copied().unwrap_or("weighted"))
                .collect();
            json!({
                "circuit": r.name,
                "qubits": r.qubits,
                "layers": r.layers,
                "detectors": r.detectors,
                "mechanisms": r.mechanisms,
                "hyperedge_share": r.hyperedge_share,
                "hyperedge_share_after": r.undecomposed_share,
                "distance": count(r.report.distance.as_ref()),
                "high_rate_distance": count(r.report.high_rate.as_ref()),
                "low_rate": r.report.lexicographic.as_ref()
                    .map(|l| json!({"low": l.low, "total": l.total})),
                "weighted": r.report.weighted.as_ref()
                    .map(|w| json!({"weight": w.weight, "probability": w.probability})),
                "best": best,
            })
        })
        .collect();
    let mut s =
        serde_json::to_string_pretty(&list).map_err(|e| CliError::Internal(e.to_string()))?;
    s.push('\n');
    Ok(s)
}
