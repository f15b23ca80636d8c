//! `slant plot`: logical against physical error rate from a results store, with the threshold.
//!
//! Reads a store written by `slant sweep` (or `slant merge`), sums its chunks per task
//! ([`crate::decode::sweep::aggregate`]) and draws one log-log panel per curve group (label,
//! decoder, bias): one line per distance, 95% Wilson error bars, and a dashed vertical line at
//! the threshold estimate ([`crate::decode::threshold`]). The estimates and the scaling fit are
//! printed on stdout. Output is SVG (plotters' SVG backend, no system libraries), written
//! atomically.

use std::collections::BTreeMap;
use std::path::PathBuf;

use plotters::prelude::*;

use crate::cli::output::write_atomic;
use crate::cli::CliError;
use crate::decode::stats::{Estimate, Z95};
use crate::decode::sweep::{aggregate, read_store, Point};
use crate::decode::threshold::{crossings, scaling_fit, threshold};
use crate::lang::Diagnostic;

/// Arguments of `slant plot`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// The results store (JSON Lines).
    pub store: PathBuf,
    /// The SVG file to write.
    #[arg(short, long, value_name = "FILE.svg")]
    pub output: PathBuf,
    /// Plot and fit the per-round rate `1 - (1 - p_shot)^(1/R)` instead of the per-shot rate.
    #[arg(long)]
    pub per_round: bool,
    /// Only plot curve groups whose name contains this text.
    #[arg(long, value_name = "TEXT")]
    pub only: Option<String>,
}

const COLOURS: [RGBColor; 8] = [
    RGBColor(31, 119, 180),
    RGBColor(255, 127, 14),
    RGBColor(44, 160, 44),
    RGBColor(214, 39, 40),
    RGBColor(148, 103, 189),
    RGBColor(140, 86, 75),
    RGBColor(227, 119, 194),
    RGBColor(23, 190, 207),
];

/// Runs `slant plot`.
pub fn run(args: Args) -> Result<(), CliError> {
    if !args.store.exists() {
        return Err(Diagnostic::bare(format!(
            "cannot read `{}`: no such file",
            args.store.display()
        ))
        .into());
    }
    if args
        .output
        .extension()
        .is_some_and(|e| !e.eq_ignore_ascii_case("svg"))
    {
        return Err(Diagnostic::bare(format!(
            "`{}`: only SVG output is supported",
            args.output.display()
        ))
        .with_hint("name the output FILE.svg; convert with an SVG tool if you need PNG")
        .into());
    }
    let rows = read_store(&args.store)?;
    let mut groups: BTreeMap<String, Vec<Point>> = BTreeMap::new();
    for mut pt in aggregate(&rows) {
        if args.per_round {
            // Rescale the failure count so errors/shots is the per-round rate; the fits and
            // crossings then work on per-round rates unchanged.
            let r = Estimate::wilson(pt.errors, pt.shots, Z95)
                .per_round(pt.rounds)
                .rate;
            pt.errors = (r * pt.shots as f64).round() as u64;
        }
        groups.entry(pt.group()).or_default().push(pt);
    }
    groups.retain(|g, _| args.only.as_deref().is_none_or(|o| g.contains(o)));
    if groups.is_empty() {
        return Err(Diagnostic::bare(format!(
            "`{}` holds no results to plot",
            args.store.display()
        ))
        .into());
    }
    let rate_name = if args.per_round {
        "per round"
    } else {
        "per shot"
    };
    let mut report = String::new();
    for (g, pts) in &groups {
        report += &format!("{g}:\n");
        for c in crossings(pts) {
            report += &format!("  crossing d={} / d={}: p = {:.4e}\n", c.d1, c.d2, c.p);
        }
        match threshold(pts) {
            Some(t) => {
                report += &format!(
                    "  threshold estimate ({rate_name}, crossing of d={} and d={}): p_th ≈ {:.4e}\n",
                    t.d1, t.d2, t.p
                );
                if let Some(f) = scaling_fit(pts, t.p) {
                    report += &format!(
                        "  fit below threshold: pL ≈ {:.3e} · (p / {:.4e})^((d+1)/2) over {} points\n",
                        f.a, f.p_th, f.points
                    );
                }
            }
            None => report += "  no crossing of successive distances in this range of p\n",
        }
    }
    let svg = draw(&groups, rate_name)?;
    write_atomic(&args.output, svg.as_bytes())?;
    print!("{report}");
    println!("plot written to `{}`", args.output.display());
    Ok(())
}

/// Draws all groups, one panel each, into an SVG string.
fn draw(groups: &BTreeMap<String, Vec<Point>>, rate_name: &str) -> Result<String, CliError> {
    let mut svg = String::new();
    let panel_h = 520u32;
    {
        let root = SVGBackend::with_string(&mut svg, (820, panel_h * groups.len() as u32))
            .into_drawing_area();
        let fail = |e: &dyn std::fmt::Display| CliError::Internal(format!("plotting failed: {e}"));
        root.fill(&WHITE).map_err(|e| fail(&e))?;
        let panels = root.split_evenly((groups.len(), 1));
        for ((name, pts), area) in groups.iter().zip(panels.iter()) {
            draw_group(area, name, pts, rate_name).map_err(|e| fail(&e))?;
        }
        root.present().map_err(|e| fail(&e))?;
    }
    Ok(svg)
}

type Area<'a> = DrawingArea<SVGBackend<'a>, plotters::coord::Shift>;

fn draw_group(
    area: &Area<'_>,
    name: &str,
    pts: &[Point],
    rate_name: &str,
) -> Result<(), Box<dyn std::error::Error>> {
    let bars: Vec<(u32, f64, Estimate)> = pts
        .iter()
        .map(|p| (p.distance, p.p, Estimate::wilson(p.errors, p.shots, Z95)))
        .collect();
    let xs = || bars.iter().map(|b| b.1);
    let (xmin, xmax) = (
        xs().fold(f64::INFINITY, f64::min),
        xs().fold(0.0f64, f64::max),
    );
    let positive = |v: f64| (v > 0.0).then_some(v);
    let ymin = bars
        .iter()
        .filter_map(|b| positive(b.2.low).or(positive(b.2.rate)))
        .fold(f64::INFINITY, f64::min);
    let ymax = bars.iter().map(|b| b.2.high).fold(0.0f64, f64::max);
    let (ymin, ymax) = if ymin.is_finite() && ymax > 0.0 {
        (ymin / 1.5, (ymax * 1.5).min(1.0))
    } else {
        (1e-6, 1.0)
    };
    let mut chart = ChartBuilder::on(area)
        .caption(name, ("sans-serif", 20))
        .margin(12)
        .x_label_area_size(45)
        .y_label_area_size(70)
        .build_cartesian_2d(
            (xmin / 1.1..xmax * 1.1).log_scale(),
            (ymin..ymax).log_scale(),
        )?;
    chart
        .configure_mesh()
        .x_desc("physical error rate p")
        .y_desc(format!("logical error rate ({rate_name})"))
        .x_label_formatter(&|x| format!("{x:.2e}"))
        .y_label_formatter(&|y| format!("{y:.0e}"))
        .draw()?;
    let mut by_d: BTreeMap<u32, Vec<(f64, Estimate)>> = BTreeMap::new();
    for &(d, p, e) in &bars {
        by_d.entry(d).or_default().push((p, e));
    }
    for (i, (d, curve)) in by_d.iter().enumerate() {
        let colour = COLOURS[i % COLOURS.len()];
        let line: Vec<(f64, f64)> = curve
            .iter()
            .filter(|(_, e)| e.rate > 0.0)
            .map(|&(p, e)| (p, e.rate))
            .collect();
        chart
            .draw_series(LineSeries::new(line.clone(), colour.stroke_width(2)))?
            .label(format!("d = {d}"))
            .legend(move |(x, y)| {
                PathElement::new(vec![(x, y), (x + 20, y)], colour.stroke_width(2))
            });
        chart.draw_series(
            line.iter()
                .map(|&(p, r)| Circle::new((p, r), 3, colour.filled())),
        )?;
        chart.draw_series(curve.iter().map(|&(p, e)| {
            ErrorBar::new_vertical(p, e.low.max(ymin), e.rate.max(ymin), e.high, colour, 6)
        }))?;
    }
    if let Some(t) = threshold(pts) {
        chart
            .draw_series(DashedLineSeries::new(
                vec![(t.p, ymin), (t.p, ymax)],
                6,
                4,
                BLACK.stroke_width(1),
            ))?
            .label(format!("threshold ≈ {:.3e} (d={}/{})", t.p, t.d1, t.d2))
            .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], BLACK));
    }
    chart
        .configure_series_labels()
        .position(SeriesLabelPosition::LowerRight)
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK)
        .draw()?;
    Ok(())
}
