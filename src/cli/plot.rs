//! `slant plot`: logical against physical error rate from a results store, with the threshold.
//!
//! Reads a store written by `slant sweep` (or `slant merge`), sums its chunks per task
//! ([`crate::study::aggregate`]) and draws one log-log panel per curve group (label,
//! decoder, bias): one line per distance, 95% Wilson error bars, and a dashed vertical line at
//! the threshold estimate ([`crate::study::threshold`]). The estimates and the scaling fit are
//! printed on stdout. Output is SVG (drawn by [`crate::study::render_for`]), written
//! atomically.

use std::collections::BTreeMap;
use std::path::PathBuf;

use crate::base::{write_atomic, Diagnostic};
use crate::cli::CliError;
use crate::study::{
    aggregate, crossings, read_store, render_for, scaling_fit, threshold, Curve, Estimate, Marker,
    Panel, Point, Z95,
};

/// Arguments of `slant plot`.
#[derive(Debug, clap::Args)]
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
    /// this whole name as `slant plot` prints it (`LABEL (DECODER)`). Matches whole names only.
    #[arg(long, value_name = "LABEL")]
    pub only: Option<String>,
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
    if args
        .output
        .extension()
        .is_none_or(|e| !e.eq_ignore_ascii_case("svg") && !e.eq_ignore_ascii_case("png"))
    {
        return Err(Diagnostic::bare(format!(
            "`{}`: plots are written as SVG or PNG",
            args.output.display()
        ))
        .with_hint("name the output FILE.svg or FILE.png")
        .into());
    }
    let rows = read_store(&args.store)?;
    let mut groups: BTreeMap<String, Vec<Point>> = BTreeMap::new();
    for mut pt in aggregate(&rows) {
        if args.per_round {
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
        let labels: std::collections::BTreeSet<String> = groups
            .values()
            .flat_map(|pts| pts.iter().map(|p| p.label.clone()))
            .collect();
        let all: Vec<String> = labels.iter().cloned().collect();
        groups.retain(|g, pts| g == only || pts.iter().any(|p| p.label == only));
        if groups.is_empty() && !all.is_empty() {
            return Err(
                Diagnostic::bare(format!("`--only {only}`: no label matches"))
                    .with_hint(format!(
                        "the labels in `{}`: {}",
                        args.store.display(),
                        all.iter()
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
    let bytes = draw(&groups, rate_name, &args.output)?;
    write_atomic(&args.output, &bytes)?;
    out!("{report}");
    outln!("plot written to `{}`", args.output.display());
    Ok(())
}

/// Draws all groups, one panel each ([`crate::study::render_for`]): one curve per distance and the
/// threshold estimate as a dashed marker.
fn draw(
    groups: &BTreeMap<String, Vec<Point>>,
    rate_name: &str,
    output: &std::path::Path,
) -> Result<Vec<u8>, CliError> {
    let panels: Vec<Panel> = groups
        .iter()
        .map(|(name, pts)| {
            let mut by_d: BTreeMap<u32, Vec<(f64, Estimate)>> = BTreeMap::new();
            for p in pts {
                by_d.entry(p.distance)
                    .or_default()
                    .push((p.p, Estimate::wilson(p.failures, p.shots, Z95)));
            }
            Panel {
                title: name.clone(),
                y_desc: format!("logical error rate ({rate_name})"),
                curves: by_d
                    .into_iter()
                    .map(|(d, points)| Curve {
                        label: format!("d = {d}"),
                        points,
                    })
                    .collect(),
                marker: threshold(pts).map(|t| Marker {
                    p: t.p,
                    label: format!("threshold ≈ {:.3e} (d={}/{})", t.p, t.d1, t.d2),
                }),
            }
        })
        .collect();
    render_for(output, &panels).map_err(CliError::Internal)
}
