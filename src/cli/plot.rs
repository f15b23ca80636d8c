//! `slant plot`: logical against physical error rate from a results store, with thresholds and
//! their uncertainty, and the threshold against a device parameter.
//!
//! Reads a store written by `slant sweep` (or `slant merge`), sums its chunks per task
//! ([`crate::study::aggregate`]) and draws, per curve group (label, decoder, bias, varied model
//! keys), one log-log panel with one line per distance, 95% Wilson error bars, and a dashed line
//! at the threshold estimate with its bootstrap interval shaded ([`crate::study::threshold`],
//! [`crate::study::bootstrap`]); `--overlay` draws every group in one panel (colour = distance,
//! marker shape = group). It prints, per group, the crossing of every pair of distances or why
//! a pair has none, the estimate (flagged when it lies in the grid's first or last interval),
//! its 95% bootstrap interval and the share of resamples without a crossing, and the scaling
//! fit. `--summary FILE` draws the threshold against the parameter the groups differ in (`bias`
//! or a varied model key; `--against` picks one), marking parameter values whose curves do not
//! cross inside the grid with a hollow triangle at the grid's edge. Output is SVG or PNG by the
//! file name, written atomically.
//!
//! Points of splitting tasks (`method = "splitting"` in the spec) are drawn as lines with error
//! bars from their stated uncertainty, sampled points of the same group beside them as markers
//! with Wilson intervals, and the fitted power law per distance as a dashed line; the table of
//! fitted slopes ([`crate::study::slopes`]) against `⌈d_circ/2⌉` is printed per group (and in
//! the legend). Thresholds are estimated from the sampled points only. `--json` prints the
//! crossings' estimate and the slopes as one object.

use std::collections::{BTreeMap, BTreeSet};
use std::path::PathBuf;

use crate::base::{write_atomic, Diagnostic};
use crate::cli::common::print_json;
use crate::cli::CliError;
use crate::study::{
    aggregate, bootstrap, pairs, read_store, render_for, scaling_fit, slopes, threshold, Bootstrap,
    ChunkRow, Curve, CurveStyle, Estimate, LegendEntry, Marker, NoCrossing, Panel, Point, Shape,
    SlopeFit, Z95,
};

/// Arguments of `slant plot`.
#[derive(Debug, clap::Args)]
#[command(after_help = "\
Thresholds: every pair of distances is tried; the estimate is the crossing of the largest pair \
that crosses, with a 95% interval from a parametric bootstrap over the stored counts (each \
point's failures redrawn from a binomial with its shots and observed rate). A crossing in the \
first or last interval of the grid is flagged, and the share of resamples with no crossing is \
printed: extend the grid when either is reported.

Splitting points (a grid with method = \"splitting\"): per distance, the slope of ln p_L against \
ln p is fitted by least squares weighted by the stated uncertainties (over the points with p <= \
--fit-below, default all) and printed with its standard error next to ceil(d_circ/2), d_circ \
the circuit distance the sweep computed for that point.")]
pub struct Args {
    /// The results store (JSON Lines).
    pub store: PathBuf,
    /// The plot to write: SVG, or PNG when the name ends in `.png`.
    #[arg(short, long, value_name = "FILE.svg|FILE.png")]
    pub output: PathBuf,
    /// Plot and fit the per-round rate `1 - (1 - p_shot)^(1/R)` instead of the per-shot rate.
    #[arg(long)]
    pub per_round: bool,
    /// Only plot the curve groups of this label (the sweep grid's `label`), or the one group of
    /// this whole name as `slant plot` prints it (`LABEL (DECODER, ...)`). Matches whole names.
    #[arg(long, value_name = "LABEL")]
    pub only: Option<String>,
    /// Draw every group in one panel instead of one panel per group.
    #[arg(long)]
    pub overlay: bool,
    /// Title of the figure (default: family, distances, noise model and what is varied).
    #[arg(long, value_name = "TEXT")]
    pub title: Option<String>,
    /// Also draw the threshold against a parameter (`bias` or a varied model key) to this file.
    #[arg(long, value_name = "FILE.svg|FILE.png")]
    pub summary: Option<PathBuf>,
    /// The parameter of `--summary` (default: the one parameter the groups differ in).
    #[arg(long, value_name = "KEY", requires = "summary")]
    pub against: Option<String>,
    /// Bootstrap resamples per threshold.
    #[arg(long, value_name = "N", default_value_t = 400)]
    pub resamples: usize,
    /// Fit the slopes of splitting points over `p <= P` only (default: every splitting point).
    #[arg(long, value_name = "P")]
    pub fit_below: Option<f64>,
    /// Print the report as one JSON object (the plot is still written).
    #[arg(long)]
    pub json: bool,
}

fn check_image_name(path: &std::path::Path) -> Result<(), CliError> {
    if path
        .extension()
        .is_none_or(|e| !e.eq_ignore_ascii_case("svg") && !e.eq_ignore_ascii_case("png"))
    {
        return Err(Diagnostic::bare(format!(
            "`{}`: plots are written as SVG or PNG",
            path.display()
        ))
        .with_hint("name the output FILE.svg or FILE.png")
        .into());
    }
    Ok(())
}

/// A percentage with three significant figures.
fn pct(p: f64) -> String {
    let v = 100.0 * p;
    let decimals = (2 - v.abs().log10().floor() as i32).clamp(0, 6) as usize;
    format!("{v:.decimals$}%")
}

/// Everything computed for one group.
struct GroupFit {
    /// Every point: sampled and splitting.
    points: Vec<Point>,
    /// The slopes of the splitting points.
    slopes: Vec<SlopeFit>,
    estimate: Option<crate::study::Crossing>,
    boot: Bootstrap,
    /// The largest pair's reason for having no crossing, when no pair crosses.
    beyond: Option<NoCrossing>,
}

/// Runs `slant plot`.
pub fn run(args: Args) -> Result<(), CliError> {
    if !args.store.exists() {
        return Err(Diagnostic::bare(format!(
            "cannot read `{}`: no such file",
            args.store.display()
        ))
        .into());
    }
    check_image_name(&args.output)?;
    if let Some(s) = &args.summary {
        check_image_name(s)?;
    }
    let rows = read_store(&args.store)?;
    let mut groups: BTreeMap<String, Vec<Point>> = BTreeMap::new();
    if let Some(b) = args.fit_below {
        if !(b > 0.0 && b.is_finite()) {
            return Err(CliError::Usage(Diagnostic::bare(format!(
                "`--fit-below {b}`: give a physical error rate above 0"
            ))));
        }
    }
    for mut pt in aggregate(&rows) {
        if args.per_round && pt.splitting.is_none() {
            // Rescale the failure count so failures/shots is the per-round rate; the fits and
            // crossings then work on per-round rates unchanged.
            let r = Estimate::wilson(pt.failures, pt.shots, Z95)
                .per_round(pt.rounds)
                .rate;
            pt.failures = (r * pt.shots as f64).round() as u64;
        }
        groups.entry(pt.group()).or_default().push(pt);
    }
    if let Some(only) = args.only.as_deref() {
        let labels: BTreeSet<String> = groups
            .values()
            .flat_map(|pts| pts.iter().map(|p| p.label.clone()))
            .collect();
        groups.retain(|g, pts| g == only || pts.iter().any(|p| p.label == only));
        if groups.is_empty() && !labels.is_empty() {
            return Err(
                Diagnostic::bare(format!("`--only {only}`: no label matches"))
                    .with_hint(format!(
                        "the labels in `{}`: {}",
                        args.store.display(),
                        labels
                            .iter()
                            .map(|l| format!("`{l}`"))
                            .collect::<Vec<_>>()
                            .join(", ")
                    ))
                    .into(),
            );
        }
    }
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
    let mut fits: BTreeMap<String, GroupFit> = BTreeMap::new();
    let mut report = String::new();
    for (i, (g, every)) in groups.iter().enumerate() {
        report += &format!("{g}:\n");
        let fitted = slopes(every, args.per_round, args.fit_below);
        // Thresholds come from the sampled points; a group of splitting points only has none
        // to look for (its points lie far below threshold).
        let sampled: Vec<Point> = every
            .iter()
            .filter(|p| p.splitting.is_none())
            .cloned()
            .collect();
        let pts = &sampled;
        if pts.is_empty() {
            report += &slope_lines(&fitted, every, rate_name);
            fits.insert(
                g.clone(),
                GroupFit {
                    points: every.clone(),
                    slopes: fitted,
                    estimate: None,
                    boot: bootstrap(pts, 0, 0),
                    beyond: None,
                },
            );
            continue;
        }
        let all = pairs(pts);
        for pair in &all {
            match pair.result {
                Ok(c) => {
                    report += &format!("  crossing d={} / d={}: p = {:.4e}", c.d1, c.d2, c.p);
                    if c.at_edge {
                        report += " (in the first or last interval of the grid)";
                    }
                    report += "\n";
                }
                Err(why) => {
                    report += &format!(
                        "  no crossing d={} / d={} in the grid: {}\n",
                        pair.d1,
                        pair.d2,
                        why.describe()
                    )
                }
            }
        }
        let estimate = threshold(pts);
        let boot = bootstrap(pts, args.resamples, 0x5eed + i as u64);
        match estimate {
            Some(t) => {
                report += &format!(
                    "  threshold estimate ({rate_name}, crossing of d={} and d={}): p_th ≈ {:.4e}",
                    t.d1, t.d2, t.p
                );
                match boot.interval {
                    Some((lo, hi)) => {
                        report += &format!(
                            ", 95% bootstrap interval [{lo:.4e}, {hi:.4e}] ({} resamples",
                            boot.resamples
                        )
                    }
                    None => report += &format!(" ({} resamples", boot.resamples),
                }
                if boot.no_crossing > 0.0 {
                    report += &format!(", {:.0}% without a crossing", 100.0 * boot.no_crossing);
                }
                report += ")\n";
                if t.at_edge || boot.no_crossing >= 0.05 {
                    report += "  caution: this crossing is not a settled threshold; extend the grid of p around it and add shots\n";
                }
                let missing: Vec<String> = all
                    .iter()
                    .filter(|p| p.result.is_err())
                    .map(|p| format!("d={}/{}", p.d1, p.d2))
                    .collect();
                if !missing.is_empty() {
                    report += &format!(
                        "  pairs without a crossing in the grid: {}\n",
                        missing.join(", ")
                    );
                }
                if let Some(f) = scaling_fit(pts, t.p) {
                    report += &format!(
                        "  fit below threshold: pL ≈ {:.3e} · (p / {:.4e})^((d+1)/2) over {} points\n",
                        f.a, f.p_th, f.points
                    );
                }
            }
            None => {
                report +=
                    "  no threshold estimate: no pair of distances crosses in this range of p\n"
            }
        }
        let beyond = if estimate.is_none() {
            all.last().and_then(|p| p.result.err())
        } else {
            None
        };
        report += &slope_lines(&fitted, every, rate_name);
        fits.insert(
            g.clone(),
            GroupFit {
                points: every.clone(),
                slopes: fitted,
                estimate,
                boot,
                beyond,
            },
        );
    }
    // One panel per group names the group's own parameter values instead of the list of
    // what varies.
    let title = |params: Option<&str>| -> String {
        let base = args
            .title
            .clone()
            .unwrap_or_else(|| default_title(&groups, params.is_none()));
        match params {
            Some(p) if !p.is_empty() => format!("{base} | {p}"),
            _ => base,
        }
    };
    let mut panels = if args.overlay {
        vec![overlay_panel(
            &fits,
            args.per_round,
            rate_name,
            &title(None),
        )]
    } else {
        fits.values()
            .map(|f| {
                group_panel(
                    f,
                    args.per_round,
                    rate_name,
                    &title(Some(&params_text(&f.points[0]))),
                )
            })
            .collect()
    };
    if groups
        .values()
        .flatten()
        .all(|p| crate::noise::is_model_text(&p.noise))
    {
        for panel in &mut panels {
            panel.x_desc = MODEL_X.into();
        }
    }
    let bytes = render_for(&args.output, &panels).map_err(CliError::Internal)?;
    write_atomic(&args.output, &bytes)?;
    if let Some(path) = &args.summary {
        let base = args
            .title
            .clone()
            .unwrap_or_else(|| default_title(&groups, false));
        let (panel, text) = summary(&fits, args.against.as_deref(), &base)?;
        report += &text;
        let bytes = render_for(path, &[panel]).map_err(CliError::Internal)?;
        write_atomic(path, &bytes)?;
    }
    if args.json {
        return print_json(&json_report(&args, &fits));
    }
    out!("{report}");
    outln!("plot written to `{}`", args.output.display());
    if let Some(path) = &args.summary {
        outln!("threshold summary written to `{}`", path.display());
    }
    Ok(())
}

/// The x axis of a sweep on a model file: its scale as a physical error per operation.
const MODEL_X: &str = "physical error per operation p (model scaled by p / its p)";

/// `bias 100, idle.t2 50`: what tells a group from the others of its label.
fn params_text(p: &Point) -> String {
    p.parameters()
        .iter()
        .map(|(k, v)| format!("{} = {v}", key_name(k)))
        .collect::<Vec<_>>()
        .join("; ")
}

/// The noise text without `p=`, `bias=` and the varied keys: the model the groups share.
fn noise_base(p: &Point) -> String {
    p.noise
        .split_whitespace()
        .filter(|w| {
            let key = w.split_once('=').map_or("", |(k, _)| k);
            !(key == "p" || key == "bias" || p.vary.keys().any(|k| k.split(',').any(|x| x == key)))
        })
        .map(|w| {
            // A model path shows its file name only.
            if crate::noise::is_model_text(w) {
                std::path::Path::new(w)
                    .file_name()
                    .map_or(w.to_string(), |f| f.to_string_lossy().into_owned())
            } else {
                w.to_string()
            }
        })
        .collect::<Vec<_>>()
        .join(" ")
}

/// Family, distances, noise model and (with `varied`) the parameters that vary, from the
/// points themselves.
fn default_title(groups: &BTreeMap<String, Vec<Point>>, with_varied: bool) -> String {
    let all: Vec<&Point> = groups.values().flatten().collect();
    let set = |f: &dyn Fn(&Point) -> String| -> Vec<String> {
        let s: BTreeSet<String> = all.iter().map(|p| f(p)).collect();
        s.into_iter().collect()
    };
    let families = set(&|p| p.family.clone());
    let ds: BTreeSet<u32> = all.iter().map(|p| p.distance).collect();
    let noises = set(&noise_base);
    let mut varied: Vec<String> = Vec::new();
    if set(&|p| p.bias.clone().unwrap_or_default()).len() > 1 {
        varied.push("bias".into());
    }
    let keys: BTreeSet<String> = all.iter().flat_map(|p| p.vary.keys().cloned()).collect();
    for k in keys {
        if set(&|p| p.vary.get(&k).cloned().unwrap_or_default()).len() > 1 {
            varied.push(k);
        }
    }
    let mut t = format!(
        "{}, d = {}, {}",
        families.join("/"),
        ds.iter().map(u32::to_string).collect::<Vec<_>>().join(", "),
        noises.join(" / ")
    );
    if with_varied && !varied.is_empty() {
        t += &format!(
            "; varied: {}",
            varied
                .iter()
                .map(|k| key_name(k))
                .collect::<Vec<_>>()
                .join("; ")
        );
    }
    t
}

/// A parameter's name for people: keys set together (`a,b`) as `a & b`.
fn key_name(key: &str) -> String {
    key.replace(',', " & ")
}

/// Sampled points beside splitting points are drawn at this multiple of their `p`.
const SAMPLED_NUDGE: f64 = 1.04;

/// The estimate a point is drawn with: a sampled point's counts were already rescaled to the
/// rate shown, a splitting point carries both rates.
fn shown(p: &Point, per_round: bool) -> Estimate {
    if p.splitting.is_some() {
        p.estimate(per_round)
    } else {
        Estimate::wilson(p.failures, p.shots, Z95)
    }
}

/// Points of one group by distance, as curves: colour and shape per distance index. A group
/// with splitting points draws them as the curves, its sampled points as markers beside them,
/// and each fitted slope as a dashed line over the points it was fitted to.
fn distance_curves(f: &GroupFit, ds: &[u32], shape: Option<Shape>, per_round: bool) -> Vec<Curve> {
    let split = f.points.iter().any(|p| p.splitting.is_some());
    let mut by_d: BTreeMap<(u32, bool), Vec<(f64, Estimate)>> = BTreeMap::new();
    for p in &f.points {
        by_d.entry((p.distance, p.splitting.is_some()))
            .or_default()
            .push((p.p, shown(p, per_round)));
    }
    let mut curves: Vec<Curve> = by_d
        .into_iter()
        .map(|((d, splitting), points)| {
            let i = ds.iter().position(|&x| x == d).unwrap_or(0);
            let label = match f.slopes.iter().find(|s| s.distance == d) {
                Some(s) if splitting => format!("d = {d}: {}", slope_words(s)),
                _ if split && !splitting => String::new(),
                _ => format!("d = {d}"),
            };
            let mut c = Curve::new(label, points, i);
            c.shape = shape.unwrap_or(Shape::nth(i));
            if split && !splitting {
                // Nudged right by 4% so that the error bars of both estimates at one p show.
                c.style = CurveStyle::Points;
                c.shape = Shape::Diamond;
                for (x, _) in &mut c.points {
                    *x *= SAMPLED_NUDGE;
                }
            }
            c
        })
        .collect();
    for s in &f.slopes {
        let i = ds.iter().position(|&x| x == s.distance).unwrap_or(0);
        let at = |p: f64| {
            let r = (s.ln_a + s.slope * p.ln()).exp();
            (
                p,
                Estimate {
                    rate: r,
                    low: r,
                    high: r,
                },
            )
        };
        let mut c = Curve::new("", vec![at(s.p_range[0]), at(s.p_range[1])], i);
        c.style = CurveStyle::Line;
        c.dashed = true;
        curves.push(c);
    }
    curves
}

/// `slope 2.04 ± 0.05, expected 2` for a legend.
fn slope_words(s: &SlopeFit) -> String {
    let mut t = format!("slope {:.2}", s.slope);
    if let Some(e) = s.error {
        t += &format!(" ± {e:.2}");
    }
    match s.expected {
        Some(k) => t + &format!(", expected {k}"),
        None => t,
    }
}

/// The slope table of one group's splitting points (empty without any).
fn slope_lines(fits: &[SlopeFit], points: &[Point], rate_name: &str) -> String {
    let splitting: Vec<&Point> = points.iter().filter(|p| p.splitting.is_some()).collect();
    if splitting.is_empty() {
        return String::new();
    }
    let mut out = format!(
        "  sub-threshold scaling ({rate_name}, splitting points): slope of ln p_L against ln p\n"
    );
    if fits.is_empty() {
        return out + "    too few splitting points per distance to fit a slope (two are needed)\n";
    }
    out += &format!(
        "    {:>3}  {:>14}  {:>15}  {:>6}  {:>6}  {}\n",
        "d", "slope", "ceil(d_circ/2)", "d_circ", "points", "p fitted"
    );
    for f in fits {
        let slope = match f.error {
            Some(e) => format!("{:.2} ± {e:.2}", f.slope),
            None => format!("{:.2} ± ?", f.slope),
        };
        out += &format!(
            "    {:>3}  {:>14}  {:>15}  {:>6}  {:>6}  {:.2e} .. {:.2e}\n",
            f.distance,
            slope,
            f.expected.map_or("?".into(), |k| k.to_string()),
            f.circuit_distance.map_or("?".into(), |k| k.to_string()),
            f.points,
            f.p_range[0],
            f.p_range[1]
        );
    }
    out
}

/// The slope tables of every group of `rows` with splitting points (for `slant sweep`).
pub(crate) fn slope_report(rows: &[ChunkRow], per_round: bool, below: Option<f64>) -> String {
    let mut groups: BTreeMap<String, Vec<Point>> = BTreeMap::new();
    for pt in aggregate(rows) {
        groups.entry(pt.group()).or_default().push(pt);
    }
    let rate_name = if per_round { "per round" } else { "per shot" };
    let mut out = String::new();
    for (g, pts) in &groups {
        let lines = slope_lines(&slopes(pts, per_round, below), pts, rate_name);
        if !lines.is_empty() {
            out += &format!("{g}:\n{lines}");
        }
    }
    out
}

/// The threshold of one group in `--json`.
#[derive(Debug, serde::Serialize)]
struct ThresholdJson {
    p: f64,
    d1: u32,
    d2: u32,
    at_edge: bool,
    low: Option<f64>,
    high: Option<f64>,
    resamples: usize,
    no_crossing: f64,
}

/// One group in `--json`.
#[derive(Debug, serde::Serialize)]
struct GroupJson<'a> {
    group: &'a str,
    label: &'a str,
    decoder: &'a str,
    threshold: Option<ThresholdJson>,
    slopes: &'a [SlopeFit],
}

/// `slant plot --json`.
#[derive(Debug, serde::Serialize)]
struct PlotJson<'a> {
    format: &'static str,
    version: u32,
    store: String,
    plot: String,
    per_round: bool,
    fit_below: Option<f64>,
    groups: Vec<GroupJson<'a>>,
}

fn json_report<'a>(args: &Args, fits: &'a BTreeMap<String, GroupFit>) -> PlotJson<'a> {
    PlotJson {
        format: "slant-plot",
        version: 1,
        store: args.store.display().to_string(),
        plot: args.output.display().to_string(),
        per_round: args.per_round,
        fit_below: args.fit_below,
        groups: fits
            .iter()
            .map(|(g, f)| GroupJson {
                group: g,
                label: &f.points[0].label,
                decoder: &f.points[0].decoder,
                threshold: f.estimate.map(|t| ThresholdJson {
                    p: t.p,
                    d1: t.d1,
                    d2: t.d2,
                    at_edge: t.at_edge,
                    low: f.boot.interval.map(|i| i.0),
                    high: f.boot.interval.map(|i| i.1),
                    resamples: f.boot.resamples,
                    no_crossing: f.boot.no_crossing,
                }),
                slopes: &f.slopes,
            })
            .collect(),
    }
}

fn threshold_marker(f: &GroupFit, shape: Option<Shape>, name: &str) -> Option<Marker> {
    let t = f.estimate?;
    let interval = f.boot.interval.map_or(String::new(), |(lo, hi)| {
        format!(" [{}, {}]", pct(lo), pct(hi))
    });
    let edge = if t.at_edge { ", grid edge" } else { "" };
    Some(Marker {
        x: t.p,
        label: format!(
            "{name}threshold {}{interval} (d={}/{}{edge})",
            pct(t.p),
            t.d1,
            t.d2
        ),
        band: f.boot.interval,
        shape,
    })
}

fn group_panel(f: &GroupFit, per_round: bool, rate_name: &str, title: &str) -> Panel {
    let ds: Vec<u32> = f
        .points
        .iter()
        .map(|p| p.distance)
        .collect::<BTreeSet<_>>()
        .into_iter()
        .collect();
    let mut panel = Panel::rates(
        title,
        format!("logical error rate ({rate_name})"),
        distance_curves(f, &ds, None, per_round),
    );
    panel.markers.extend(threshold_marker(f, None, ""));
    if f.points.iter().any(|p| p.splitting.is_some()) {
        // Curves first, then one entry each for the sampled markers and the fitted lines.
        let mut legend: Vec<LegendEntry> = panel
            .curves
            .iter()
            .filter(|c| !c.label.is_empty())
            .map(|c| LegendEntry {
                label: c.label.clone(),
                colour: Some(c.colour),
                shape: Some(c.shape),
                line: Some(false),
            })
            .collect();
        if f.points.iter().any(|p| p.splitting.is_none()) {
            legend.push(LegendEntry {
                label: "sampled, 95% Wilson interval (nudged right)".into(),
                colour: None,
                shape: Some(Shape::Diamond),
                line: None,
            });
        }
        if !f.slopes.is_empty() {
            legend.push(LegendEntry {
                label: "fitted p_L = A p^k".into(),
                colour: None,
                shape: None,
                line: Some(true),
            });
        }
        legend.extend(panel.markers.iter().map(|m| LegendEntry {
            label: m.label.clone(),
            colour: None,
            shape: m.shape,
            line: Some(true),
        }));
        panel.legend = legend;
    }
    panel
}

fn overlay_panel(
    fits: &BTreeMap<String, GroupFit>,
    per_round: bool,
    rate_name: &str,
    title: &str,
) -> Panel {
    let ds: Vec<u32> = fits
        .values()
        .flat_map(|f| f.points.iter().map(|p| p.distance))
        .collect::<BTreeSet<_>>()
        .into_iter()
        .collect();
    let mut panel = Panel::rates(
        title,
        format!("logical error rate ({rate_name})"),
        Vec::new(),
    );
    for (gi, f) in fits.values().enumerate() {
        let shape = Shape::nth(gi);
        let mut curves = distance_curves(f, &ds, Some(shape), per_round);
        for c in &mut curves {
            c.label.clear();
            c.dashed = gi % 2 == 1;
        }
        panel.curves.extend(curves);
        let name = params_text(&f.points[0]);
        let name = if name.is_empty() {
            f.points[0].label.clone()
        } else {
            name
        };
        panel.legend.push(LegendEntry {
            label: name.clone(),
            colour: None,
            shape: Some(shape),
            line: Some(gi % 2 == 1),
        });
        panel
            .markers
            .extend(threshold_marker(f, Some(shape), &format!("{name}: ")));
    }
    for (i, d) in ds.iter().enumerate() {
        panel.legend.push(LegendEntry {
            label: format!("d = {d}"),
            colour: Some(i),
            shape: None,
            line: Some(false),
        });
    }
    for m in &panel.markers {
        panel.legend.push(LegendEntry {
            label: m.label.clone(),
            colour: None,
            shape: m.shape,
            line: Some(true),
        });
    }
    panel
}

/// The threshold against one parameter: a curve per series of groups that differ only in it.
fn summary(
    fits: &BTreeMap<String, GroupFit>,
    against: Option<&str>,
    title: &str,
) -> Result<(Panel, String), CliError> {
    // The parameters whose values differ between groups.
    let mut values: BTreeMap<String, BTreeSet<String>> = BTreeMap::new();
    for f in fits.values() {
        for (k, v) in f.points[0].parameters() {
            values.entry(k).or_default().insert(v);
        }
    }
    let varying: Vec<String> = values
        .iter()
        .filter(|(_, v)| v.len() > 1)
        .map(|(k, _)| k.clone())
        .collect();
    let key =
        match against {
            Some(k) if values.contains_key(k) => k.to_string(),
            Some(k) => {
                return Err(
                    Diagnostic::bare(format!("`--against {k}`: no group sets `{k}`"))
                        .with_hint(format!(
                            "the parameters in this store: {}",
                            values
                                .keys()
                                .map(|k| format!("`{k}`"))
                                .collect::<Vec<_>>()
                                .join(", ")
                        ))
                        .into(),
                )
            }
            None => match varying.as_slice() {
                [k] => k.clone(),
                [] => return Err(Diagnostic::bare(
                    "`--summary`: the groups do not differ in `bias` or a varied model key",
                )
                .with_hint(
                    "sweep a `bias` list or a `[grid.vary]` key to plot the threshold against it",
                )
                .into()),
                many => {
                    return Err(Diagnostic::bare(format!(
                        "`--summary`: the groups differ in {}; say which with `--against`",
                        many.iter()
                            .map(|k| format!("`{k}`"))
                            .collect::<Vec<_>>()
                            .join(", ")
                    ))
                    .into())
                }
            },
        };
    // Series: label, decoder and every other parameter.
    let mut series: BTreeMap<String, Vec<(f64, &GroupFit)>> = BTreeMap::new();
    for f in fits.values() {
        let p0 = &f.points[0];
        let params = p0.parameters();
        let Some(value) = params.iter().find(|(k, _)| *k == key).map(|(_, v)| v) else {
            continue;
        };
        let x: f64 = match value.parse::<f64>() {
            Ok(x) if x > 0.0 && x.is_finite() => x,
            _ => {
                return Err(Diagnostic::bare(format!(
                    "`--summary`: `{key}` = `{value}` is not a positive number, so it has no place on a log axis"
                ))
                .into())
            }
        };
        let rest: Vec<String> = params
            .iter()
            .filter(|(k, _)| *k != key)
            .map(|(k, v)| format!("{k} {v}"))
            .collect();
        let mut name = format!("{} ({})", p0.label, p0.decoder);
        if !rest.is_empty() {
            name += &format!(", {}", rest.join(", "));
        }
        series.entry(name).or_default().push((x, f));
    }
    let mut text = format!("threshold against {key}:\n");
    let mut curves = Vec::new();
    for (si, (name, mut list)) in series.into_iter().enumerate() {
        list.sort_by(|a, b| a.0.total_cmp(&b.0));
        text += &format!("  {name}:\n");
        let mut curve = Curve::new(name.clone(), Vec::new(), si);
        curve.shape = Shape::nth(si);
        for (x, f) in list {
            let grid: Vec<f64> = f.points.iter().map(|p| p.p).collect();
            let (lo_p, hi_p) = (
                grid.iter().copied().fold(f64::INFINITY, f64::min),
                grid.iter().copied().fold(0.0, f64::max),
            );
            match f.estimate {
                Some(t) => {
                    let (lo, hi) = f.boot.interval.unwrap_or((t.p, t.p));
                    curve.points.push((
                        x,
                        Estimate {
                            rate: t.p,
                            low: lo.min(t.p),
                            high: hi.max(t.p),
                        },
                    ));
                    text += &format!(
                        "    {key} {x}: p_th ≈ {} [{}, {}] (d={}/{}{}{})\n",
                        pct(t.p),
                        pct(lo),
                        pct(hi),
                        t.d1,
                        t.d2,
                        if t.at_edge {
                            ", in a grid-edge interval"
                        } else {
                            ""
                        },
                        if f.boot.no_crossing > 0.0 {
                            format!(
                                ", {:.0}% of resamples without a crossing",
                                100.0 * f.boot.no_crossing
                            )
                        } else {
                            String::new()
                        }
                    );
                }
                None => {
                    let (y, above, what) = match f.beyond {
                        Some(NoCrossing::Above) => (hi_p, true, format!("above {}", pct(hi_p))),
                        Some(NoCrossing::Below) => (lo_p, false, format!("below {}", pct(lo_p))),
                        _ => (hi_p, true, "unknown".to_string()),
                    };
                    curve.beyond.push((x, y, above));
                    text += &format!("    {key} {x}: no crossing in the grid (threshold {what})\n");
                }
            }
        }
        curves.push(curve);
    }
    let mut panel = Panel {
        title: format!("{title}: threshold against {}", key_name(&key)),
        x_desc: key_name(&key),
        y_desc: "threshold p_th (95% bootstrap interval)".into(),
        curves,
        markers: Vec::new(),
        legend: Vec::new(),
    };
    if panel.curves.iter().any(|c| !c.beyond.is_empty()) {
        panel.legend = panel
            .curves
            .iter()
            .map(|c| LegendEntry {
                label: c.label.clone(),
                colour: Some(c.colour),
                shape: Some(c.shape),
                line: Some(false),
            })
            .chain(std::iter::once(LegendEntry {
                label: "no crossing in the grid (triangle at its edge)".into(),
                colour: None,
                shape: Some(Shape::Triangle),
                line: None,
            }))
            .collect();
    }
    Ok((panel, text))
}
