//! `slant compare`: several circuits, or variants of a generated family, under one noise model,
//! side by side.
//!
//! Variants are built by running the `slant new` option parser on `FAMILY --KEY VALUE` plus the
//! fixed `--with` options, so every `slant new` option can be varied and is validated the same
//! way.
//!
//! With `--p LIST` every variant is also sampled and decoded ([`crate::study::rates`]) at each
//! physical error rate: the `p=` of the `--noise` preset text is replaced by each value (other
//! keys, including an explicit `q=`, stay as written); a model file is scaled to each value as
//! its physical error per operation (`MODEL.toml p=P`: every probability times `P / p_ref`, every
//! time constant divided by it, `p_ref` the model's top-level `p`; see `docs/reference.md`). The distances and the bias
//! columns always use `--noise` as written. `--plot FILE.svg|FILE.png` draws the per-round rates against
//! `p`, one curve per variant ([`crate::study::render_for`]).

use std::fmt::Write as _;
use std::path::PathBuf;

use clap::Parser;
use serde_json::json;

use crate::analysis::{Count, DistanceOptions, Unproven};
use crate::base::{write_atomic, Diagnostic, Source};
use crate::cli::common::{parse_setting, print_warnings, read_source, NoiseArgs};
use crate::cli::progress::Progress;
use crate::cli::{distance::count_text, new, CliError};
use crate::decode::DecoderKind;
use crate::faults::ExtractOptions;
use crate::ir::Limits;
use crate::noise::NoiseSpec;
use crate::study::{self, at_p, Column, Curve, Estimate, Panel, Pipeline, Row, RunOptions};

/// The legend of the table's columns, printed under the table and in `--help`.
macro_rules! legend {
    () => {
        "qubits, layers = circuit size (layers = time steps); duration = total gate, measurement and \
reset time under the model, in its `time_unit` (- when the model gives no durations); \
detectors; edges = fault-graph edges, hyperedges included; hyper = share of edges with more than \
two detectors; hyper-after = share left unsplit for matching; distance = fewest edges forming an \
undetected logical error; high-rate = the same with high-rate (Z-type) edges only (none = no such \
logical error exists); low-rate = low-rate edges / all edges of the logical error with the \
fewest low-rate ones; weighted = least total weight ln((1-p)/p) of a logical error; bias = \
kept if no high-rate fault reaches the data as X or Y, else lost; data-eta = expected Z / \
expected X,Y faults reaching the data; * = best in column"
    };
}

/// Arguments of `slant compare`.
#[derive(Debug, clap::Args)]
#[command(after_help = concat!(
    "Examples:\n  slant compare a.slant b.slant --noise 'circuit p=0.001'\n  \
slant compare --family surface --with distance=5 --vary order=hook-safe,hook-aligned \
--noise 'circuit p=0.001' --p 0.002,0.004 --plot orders.svg\n  slant compare --family xzzx \
--with distance=3 --vary entangler=native,cx --noise 'circuit p=0.001 bias=100 \
cx=bias-preserving' --csv\n\n\
A `*` marks the best value of a column when the rows differ; a logical error rate is marked only \
when its 95% interval lies below every other row's. Rates are per round: 1 - (1 - p_shot)^(1/R), \
with failures/shots the shots whose decoded observables were wrong.\n\nColumns: ",
    legend!(),
    "\n\nWith `--family`, locations name each variant's circuit by the `slant new` command that \
writes it, e.g. `<slant new xzzx --distance 3 --entangler cx>:126:25`, so the file can be \
reproduced. JSON (`--json`): format `slant-compare`, version 2."
))]
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
    /// The option to vary and its values, e.g. `order=hook-safe,hook-aligned`; separate them
    /// with `;` when a value holds commas (`order=hook-safe;custom:nw,ne,sw,se`).
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
    /// Also estimate the logical error rate at each of these physical error rates, e.g.
    /// `0.002,0.004`: replaces the `p=` of a preset; scales a model file to each physical error
    /// per operation (`p / p_ref`, `p_ref` its top-level `p`).
    #[arg(
        long = "p",
        value_name = "P1,P2,...",
        value_delimiter = ',',
        requires = "noise"
    )]
    pub p: Vec<f64>,
    /// Shots per variant and `p`.
    #[arg(long, value_name = "N", default_value_t = 10_000,
          value_parser = clap::value_parser!(u64).range(1..))]
    pub shots: u64,
    /// Stop a point once this many shots have failed.
    #[arg(long, value_name = "K", value_parser = clap::value_parser!(u64).range(1..))]
    pub until_failures: Option<u64>,
    /// Decoder: `mwpm` or `uf`.
    #[arg(long, value_name = "D", default_value = "mwpm", value_parser = |s: &str| s.parse::<DecoderKind>())]
    pub decoder: DecoderKind,
    /// Seed of the sampler (the same for every point); the same seed gives the same counts.
    #[arg(long, value_name = "S", default_value_t = 0)]
    pub seed: u64,
    /// Draw the logical error rate per round against `p`, one curve per variant (SVG, or PNG by
    /// the file name).
    #[arg(long, value_name = "FILE.svg|FILE.png", requires = "p")]
    pub plot: Option<PathBuf>,
    /// Title of the plot (default: the family and variants, and the noise without its `p`).
    #[arg(long, value_name = "TEXT", requires = "plot")]
    pub title: Option<String>,
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

/// The named circuits to compare, loaded and checked (without `--noise` yet).
fn sources(args: &Args) -> Result<Vec<(String, Pipeline)>, CliError> {
    let mut out = Vec::new();
    if let Some(family) = &args.family {
        let vary = args.vary.as_deref().unwrap_or_default();
        let (key, values) = vary
            .split_once('=')
            .ok_or_else(|| Diagnostic::bare(format!("`--vary {vary}`: expected KEY=V1,V2,...")))?;
        // A value may itself hold commas (`custom:nw,ne,sw,se`): then `;` separates the values.
        let sep = if values.contains(';') { ';' } else { ',' };
        for v in values.split(sep).map(str::trim).filter(|v| !v.is_empty()) {
            let mut argv = vec![family.clone()];
            for w in &args.with {
                argv.extend(option_args(w));
            }
            argv.extend(option_args(&format!("{key}={v}")));
            let parsed = NewArgs::try_parse_from(&argv).map_err(|e| {
                Diagnostic::bare(format!(
                    "variant `{key}={v}`: {}",
                    e.to_string()
                        .lines()
                        .next()
                        .unwrap_or("bad option")
                        .trim_start_matches("error: ")
                ))
            })?;
            let spec = parsed
                .inner
                .spec()
                .map_err(|m| Diagnostic::bare(format!("variant `{key}={v}`: {m}")))?;
            let text = crate::gen::generate(&spec)
                .map_err(|e| Diagnostic::bare(format!("variant `{key}={v}`: {e}")))?;
            let name = format!("{key}={v}");
            // Locations name the circuit by the command that writes it, so a user can
            // reproduce the file a location points into.
            let command = spec
                .command_line()
                .map_err(|e| Diagnostic::bare(format!("variant `{key}={v}`: {e}")))?;
            let source = Source::new(format!("<{command}>"), text);
            out.push((name, Pipeline::load(&source, &[], &Limits::default())?));
        }
    } else {
        if args.files.is_empty() {
            return Err(
                Diagnostic::bare("give circuit files or `--family F --vary KEY=V1,V2`").into(),
            );
        }
        for f in &args.files {
            let source = read_source(f)?;
            let pipeline = Pipeline::load(&source, &args.set, &Limits::default())?;
            out.push((f.display().to_string(), pipeline));
        }
    }
    Ok(out)
}

/// Runs `slant compare`.
pub fn run(args: Args) -> Result<(), CliError> {
    let extract = ExtractOptions {
        high_rate_flips: args.high_rate_flips,
    };
    if args.p.iter().any(|&p| !(p > 0.0 && p < 1.0)) {
        return Err(
            Diagnostic::bare("`--p`: every value must lie strictly between 0 and 1").into(),
        );
    }
    if let Some(plot) = &args.plot {
        if !plot
            .extension()
            .is_some_and(|e| e.eq_ignore_ascii_case("svg") || e.eq_ignore_ascii_case("png"))
        {
            return Err(Diagnostic::bare(format!(
                "`{}`: plots are written as SVG or PNG",
                plot.display()
            ))
            .with_hint("name the plot FILE.svg or FILE.png")
            .into());
        }
    }
    let spec = match &args.noise.noise {
        Some(text) => {
            if !args.p.is_empty() {
                at_p(text, args.p[0])?;
            }
            Some(NoiseSpec::parse(text)?)
        }
        None => None,
    };
    let run = RunOptions {
        shots: args.shots,
        until_failures: args.until_failures,
        seed: args.seed,
    };
    let mut rows = Vec::new();
    let sources = sources(&args)?;
    // One line for the whole comparison: the shots of every row's rates, with the row and what
    // it is doing (its distance searches, or the failures so far at one p) as the message.
    let per_row = args.shots * args.p.len() as u64;
    let mut bar = Progress::new(per_row * sources.len() as u64, "shots");
    for (r, (name, circuit)) in sources.into_iter().enumerate() {
        bar.set_position(r as u64 * per_row);
        bar.set_message(format!("{name}: distances"));
        if !args.p.is_empty() && circuit.circuit().observables.is_empty() {
            return Err(Diagnostic::bare(format!(
                "`{name}` declares no observable, so there is no logical error rate to estimate"
            ))
            .into());
        }
        let noisy = match &spec {
            Some(spec) => circuit.noised_spec(spec)?,
            None => circuit.clone(),
        };
        bar.suspend(|| print_warnings(noisy.warnings()));
        let mut row = study::evaluate(name.clone(), &noisy, &extract, &DistanceOptions::default())
            .map_err(CliError::Internal)?;
        if let Some(text) = &args.noise.noise {
            row.rates = study::rates(&circuit, text, &args.p, args.decoder, &run, |i, c| {
                bar.set_message(format!(
                    "{name}: {} failures at p={}",
                    c.failures, args.p[i]
                ));
                bar.set_position(r as u64 * per_row + i as u64 * args.shots + c.shots);
            })?;
        }
        rows.push(row);
    }
    bar.finish();
    if let Some(path) = &args.plot {
        let noise = args.noise.noise.as_deref().unwrap_or_default();
        let base = study::without_p(noise);
        let base = if crate::noise::is_model_text(&base) {
            format!("{base} (scaled to p)")
        } else {
            base
        };
        let title = args.title.clone().unwrap_or_else(|| {
            let what = match (&args.family, &args.vary) {
                (Some(f), Some(v)) => format!("{f}, {}, {v}", args.with.join(", ")),
                _ => "circuits compared".to_string(),
            };
            format!("{what}; {base}")
        });
        let panel = Panel::rates(
            title,
            "logical error rate (per round)",
            rows.iter()
                .enumerate()
                .map(|(i, r)| {
                    let mut c = Curve::new(
                        r.name.clone(),
                        r.rates
                            .iter()
                            .map(|x| {
                                (
                                    x.p,
                                    Estimate {
                                        rate: x.rate,
                                        low: x.low,
                                        high: x.high,
                                    },
                                )
                            })
                            .collect(),
                        i,
                    );
                    c.shape = study::Shape::nth(i);
                    c
                })
                .collect(),
        );
        let bytes = study::render_for(path, &[panel]).map_err(CliError::Internal)?;
        write_atomic(path, &bytes)?;
    }
    let unit = match &spec {
        Some(NoiseSpec::Model(m)) => m.time_unit,
        _ => None,
    };
    let text = if args.json {
        json_text(&rows, unit)?
    } else if args.csv {
        csv_text(&rows)
    } else {
        table_text(&rows, unit)
    };
    out!("{text}");
    if let Some(path) = &args.plot {
        eprintln!("plot written to `{}`", path.display());
    }
    Ok(())
}

const HEADERS: [&str; 14] = [
    "circuit",
    "qubits",
    "layers",
    "duration",
    "detectors",
    "edges",
    "hyper",
    "hyper-after",
    "distance",
    "high-rate",
    "low-rate",
    "weighted",
    "bias",
    "data-eta",
];

fn eta_text(x: Option<f64>) -> String {
    match x {
        None => "-".into(),
        Some(x) if x.is_infinite() => "inf".into(),
        Some(x) => format!("{}", study::significant(x, 2)),
    }
}

/// The cells of one row without best marks, in [`HEADERS`] order.
fn cells(r: &Row) -> Vec<String> {
    let absent = |u: Option<Unproven>| u.map_or("none".to_string(), |u| u.cell());
    let (low, weighted) = (
        r.report.lexicographic.as_ref().map_or_else(
            || absent(r.report.unresolved.lexicographic),
            |l| format!("{}/{}", l.low, l.total),
        ),
        r.report.weighted.as_ref().map_or_else(
            || absent(r.report.unresolved.weighted),
            |w| format!("{:.2}", w.weight),
        ),
    );
    vec![
        r.name.clone(),
        r.qubits.to_string(),
        r.layers.to_string(),
        // Sums of decimal durations leave binary rounding residue; six figures is plenty.
        r.duration
            .map_or("-".into(), |d| format!("{}", study::significant(d, 6))),
        r.detectors.to_string(),
        r.edges.to_string(),
        format!("{:.1}%", 100.0 * r.hyperedge_share),
        format!("{:.1}%", 100.0 * r.unsplit_share),
        count_text(r.report.distance.as_ref(), r.report.unresolved.distance),
        count_text(r.report.high_rate.as_ref(), r.report.unresolved.high_rate),
        low,
        weighted,
        if r.bias.kept { "kept" } else { "lost" }.into(),
        eta_text(r.bias.data_eta),
    ]
}

/// Column index in [`cells`] of each fixed column.
fn cell_index(c: Column) -> Option<usize> {
    Some(match c {
        Column::Qubits => 1,
        Column::Layers => 2,
        Column::Duration => 3,
        Column::Unsplit => 7,
        Column::Distance => 8,
        Column::HighRate => 9,
        Column::LowRate => 10,
        Column::Weighted => 11,
        Column::Bias => 12,
        Column::DataBias => 13,
        Column::Rate(_) => return None,
    })
}

/// The name of a column in JSON `best` lists.
fn column_name(rows: &[Row], c: Column) -> String {
    match (c, cell_index(c)) {
        (Column::Rate(i), _) => format!("rate p={}", rows[0].rates[i].p),
        (_, Some(k)) => HEADERS[k].to_string(),
        (_, None) => String::new(),
    }
}

/// Left-aligned first column, right-aligned others, two spaces apart.
fn aligned(header: &[String], grid: &[Vec<String>]) -> String {
    let widths: Vec<usize> = (0..header.len())
        .map(|i| {
            grid.iter()
                .map(|r| r[i].chars().count())
                .chain([header[i].chars().count()])
                .max()
                .unwrap_or(0)
        })
        .collect();
    let mut s = String::new();
    for cols in std::iter::once(header).chain(grid.iter().map(Vec::as_slice)) {
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
    }
    s
}

/// The legend, its `; `-separated items packed into lines of at most 100 characters.
fn legend_lines() -> String {
    let mut out = String::new();
    let mut line = String::new();
    for item in legend!().split("; ") {
        if !line.is_empty() && line.len() + 2 + item.len() > 100 {
            out.push_str(&line);
            out.push_str(";\n");
            line.clear();
        }
        if !line.is_empty() {
            line.push_str("; ");
        }
        line.push_str(item);
    }
    out.push_str(&line);
    out.push('\n');
    out
}

fn table_text(rows: &[Row], unit: Option<&str>) -> String {
    let mut header: Vec<String> = HEADERS.iter().map(|s| s.to_string()).collect();
    if let Some(u) = unit {
        header[3] = format!("duration ({u})");
    }
    let mut grid: Vec<Vec<String>> = rows.iter().map(cells).collect();
    for c in Column::FIXED {
        let marks = study::best(rows, c);
        let Some(k) = cell_index(c) else { continue };
        for (row, m) in grid.iter_mut().zip(marks) {
            if m {
                row[k].push('*');
            }
        }
    }
    let mut s = aligned(&header, &grid);
    s.push_str(&legend_lines());
    if rows
        .iter()
        .any(|r| r.report.unresolved != Default::default())
    {
        s.push_str(
            "> k = no logical error of at most k edges (larger ones not searched); \
             ? = the search could not decide (see `slant distance`)\n",
        );
    }
    for r in rows.iter().filter(|r| !r.bias.kept) {
        let _ = writeln!(s, "{}: {}", r.name, r.bias.verdict);
    }
    let n = rows.first().map_or(0, |r| r.rates.len());
    if n > 0 {
        let mut header = vec!["circuit".to_string()];
        header.extend(rows[0].rates.iter().map(|x| format!("p={}", x.p)));
        let mut grid: Vec<Vec<String>> = rows
            .iter()
            .map(|r| {
                std::iter::once(r.name.clone())
                    .chain(r.rates.iter().map(|x| {
                        format!(
                            "{:.2e} [{:.2e}, {:.2e}] {}/{}",
                            x.rate, x.low, x.high, x.failures, x.shots
                        )
                    }))
                    .collect()
            })
            .collect();
        for i in 0..n {
            for (row, m) in grid.iter_mut().zip(study::best(rows, Column::Rate(i))) {
                if m {
                    row[i + 1].push('*');
                }
            }
        }
        s.push_str("\nlogical error rate per round [95% Wilson interval] failures/shots:\n");
        s.push_str(&aligned(&header, &grid));
    }
    s
}

fn csv_text(rows: &[Row]) -> String {
    let mut s = String::from(
        "circuit,qubits,layers,detectors,edges,hyperedge_share,hyperedge_share_after,\
         distance,distance_lower,high_rate_distance,low_rate_count,low_rate_total,weighted,\
         duration,bias_kept,bias_verdict,data_eta",
    );
    if let Some(r) = rows.first() {
        for x in &r.rates {
            let p = x.p;
            let _ = write!(s, ",rate_p{p},low_p{p},high_p{p},failures_p{p},shots_p{p}");
        }
    }
    s.push_str(",best\n");
    let columns = Column::all(rows);
    // Empty: proven absent; `> k` or `?`: absent without proof (see `slant distance`).
    let opt = |c: Option<&Count>, u: Option<Unproven>| match (c, u) {
        (Some(c), _) => c.value.to_string(),
        (None, Some(u)) => u.cell(),
        (None, None) => String::new(),
    };
    let quote = |t: &str| {
        if t.contains([',', '"']) {
            format!("\"{}\"", t.replace('"', "\"\""))
        } else {
            t.to_string()
        }
    };
    for (i, r) in rows.iter().enumerate() {
        let _ = write!(
            s,
            "{},{},{},{},{},{},{},{},{},{},{},{},{},{},{},{},{}",
            quote(&r.name),
            r.qubits,
            r.layers,
            r.detectors,
            r.edges,
            r.hyperedge_share,
            r.unsplit_share,
            opt(r.report.distance.as_ref(), r.report.unresolved.distance),
            r.report
                .distance
                .as_ref()
                .map_or(String::new(), |c| c.lower.to_string()),
            opt(r.report.high_rate.as_ref(), r.report.unresolved.high_rate),
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
            r.duration.map_or(String::new(), |d| d.to_string()),
            r.bias.kept,
            quote(&r.bias.verdict),
            r.bias.data_eta.map_or(String::new(), |e| e.to_string()),
        );
        for x in &r.rates {
            let _ = write!(
                s,
                ",{},{},{},{},{}",
                x.rate, x.low, x.high, x.failures, x.shots
            );
        }
        // The columns where this row holds the best value, as the table's `*` marks them.
        let best: Vec<String> = columns
            .iter()
            .filter(|&&c| study::best(rows, c)[i])
            .map(|&c| column_name(rows, c))
            .collect();
        let _ = writeln!(s, ",{}", best.join(";"));
    }
    s
}

/// Version of the `--json` document (version 1 was a bare array and used earlier key names).
const JSON_VERSION: u32 = 2;

fn json_text(rows: &[Row], unit: Option<&str>) -> Result<String, CliError> {
    let count = |c: Option<&Count>, u: Option<Unproven>| match (c, u) {
        (Some(c), _) => json!({"value": c.value, "lower": c.lower, "method": c.method.name()}),
        (None, Some(u)) => json!({"value": null, "unproven": u.describe()}),
        (None, None) => serde_json::Value::Null,
    };
    let columns = Column::all(rows);
    let list: Vec<_> = rows
        .iter()
        .enumerate()
        .map(|(i, r)| {
            let best: Vec<String> = columns
                .iter()
                .filter(|&&c| study::best(rows, c)[i])
                .map(|&c| column_name(rows, c))
                .collect();
            // JSON has no infinity: an infinite data bias is written as the string "inf".
            let eta = r.bias.data_eta.map(|e| {
                if e.is_infinite() {
                    json!("inf")
                } else {
                    json!(e)
                }
            });
            json!({
                "circuit": r.name,
                "qubits": r.qubits,
                "layers": r.layers,
                "duration": r.duration,
                "detectors": r.detectors,
                "edges": r.edges,
                "hyperedge_share": r.hyperedge_share,
                "hyperedge_share_after": r.unsplit_share,
                "distance": count(r.report.distance.as_ref(), r.report.unresolved.distance),
                "high_rate_distance": count(
                    r.report.high_rate.as_ref(),
                    r.report.unresolved.high_rate
                ),
                "low_rate": r.report.lexicographic.as_ref()
                    .map(|l| json!({"low": l.low, "total": l.total})),
                "weighted": r.report.weighted.as_ref()
                    .map(|w| json!({"weight": w.weight, "probability": w.probability})),
                "bias": {"kept": r.bias.kept, "verdict": r.bias.verdict, "data_eta": eta},
                "rates": r.rates.iter().map(|x| json!({
                    "p": x.p,
                    "shots": x.shots,
                    "failures": x.failures,
                    "rounds": x.rounds,
                    "per_round": {"rate": x.rate, "low": x.low, "high": x.high},
                    "confidence": 0.95,
                })).collect::<Vec<_>>(),
                "best": best,
            })
        })
        .collect();
    let doc = json!({
        "format": "slant-compare",
        "version": JSON_VERSION,
        "time_unit": unit,
        "rows": list,
    });
    let mut s =
        serde_json::to_string_pretty(&doc).map_err(|e| CliError::Internal(e.to_string()))?;
    s.push('\n');
    Ok(s)
}
