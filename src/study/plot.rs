//! Log-log plots of logical against physical error rate, drawn as SVG text.
//!
//! In: [`Panel`]s, each a title, an axis label for the rate and a list of [`Curve`]s of
//! `(p, Estimate)` points, with an optional dashed vertical marker (e.g. a threshold estimate).
//! Out: one SVG document with the panels stacked vertically ([`svg`]). Each curve is a coloured
//! line through its point estimates with a dot per point and a vertical error bar from the lower
//! to the upper end of the interval; points with a zero rate get only the error bar (a log axis
//! has no zero). Shared by `slant plot` (one curve per distance) and `slant compare` (one curve
//! per variant). plotters' SVG backend needs no system libraries; writing the file is the
//! caller's job.

use image::ImageEncoder;
use plotters::prelude::*;

use crate::study::stats::Estimate;

/// One line of a panel.
#[derive(Clone, Debug)]
pub struct Curve {
    /// Legend text.
    pub label: String,
    /// `(physical error rate, logical error rate with interval)`, in any order of `p`.
    pub points: Vec<(f64, Estimate)>,
}

/// A dashed vertical line across a panel.
#[derive(Clone, Debug)]
pub struct Marker {
    /// Position on the `p` axis.
    pub p: f64,
    /// Legend text.
    pub label: String,
}

/// One log-log chart.
#[derive(Clone, Debug)]
pub struct Panel {
    /// Caption above the chart.
    pub title: String,
    /// Label of the y axis, e.g. `logical error rate (per round)`.
    pub y_desc: String,
    /// The curves, drawn in order with a fixed colour cycle.
    pub curves: Vec<Curve>,
    /// Optional vertical marker.
    pub marker: Option<Marker>,
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

const WIDTH: u32 = 820;
const PANEL_HEIGHT: u32 = 520;

/// Registers the bundled DejaVu Sans as plotters' `sans-serif`, once. Text is measured (legends)
/// and, in PNG output, drawn with it, so plots never depend on the fonts of the machine.
fn ensure_font() {
    static ONCE: std::sync::Once = std::sync::Once::new();
    ONCE.call_once(|| {
        let _ = plotters::style::register_font(
            "sans-serif",
            plotters::style::FontStyle::Normal,
            dejavu::sans::regular(),
        );
    });
}

fn size(panels: &[Panel]) -> (u32, u32) {
    (WIDTH, PANEL_HEIGHT * panels.len().max(1) as u32)
}

/// Draws every panel into a drawing area split vertically.
fn draw_all<DB: DrawingBackend>(
    root: DrawingArea<DB, plotters::coord::Shift>,
    panels: &[Panel],
) -> Result<(), String>
where
    DB::ErrorType: 'static,
{
    let fail = |e: &dyn std::fmt::Display| format!("plotting failed: {e}");
    root.fill(&WHITE).map_err(|e| fail(&e))?;
    let areas = root.split_evenly((panels.len().max(1), 1));
    for (panel, area) in panels.iter().zip(areas.iter()) {
        draw_panel(area, panel).map_err(|e| fail(&e))?;
    }
    root.present().map_err(|e| fail(&e))
}

/// Draws the panels, stacked vertically, into an SVG document. The error is plotters' message.
pub fn svg(panels: &[Panel]) -> Result<String, String> {
    ensure_font();
    let mut svg = String::new();
    draw_all(
        SVGBackend::with_string(&mut svg, size(panels)).into_drawing_area(),
        panels,
    )?;
    Ok(svg)
}

/// Draws the panels into a PNG image (RGB, 8 bits per channel).
pub fn png(panels: &[Panel]) -> Result<Vec<u8>, String> {
    ensure_font();
    let (w, h) = size(panels);
    let mut rgb = vec![0u8; w as usize * h as usize * 3];
    draw_all(
        BitMapBackend::with_buffer(&mut rgb, (w, h)).into_drawing_area(),
        panels,
    )?;
    let mut out = Vec::new();
    image::codecs::png::PngEncoder::new(&mut out)
        .write_image(&rgb, w, h, image::ColorType::Rgb8)
        .map_err(|e| format!("PNG encoding failed: {e}"))?;
    Ok(out)
}

/// Renders to SVG or PNG by the output file's extension (`.png`, anything else SVG).
pub fn render_for(path: &std::path::Path, panels: &[Panel]) -> Result<Vec<u8>, String> {
    if path
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("png"))
    {
        png(panels)
    } else {
        svg(panels).map(String::into_bytes)
    }
}

/// Tick positions for a log axis over `[lo, hi]`: `m·10^k` for m = 1..9 when the range spans at
/// most half a decade, 1, 2, 3 and 5 up to 1.2 decades, 1, 2 and 5 up to three, powers of ten
/// beyond. plotters' own log ticks sit
/// only on powers of ten, which leaves a range inside one decade (a few values of `p`) unlabelled.
fn ticks(lo: f64, hi: f64) -> Vec<f64> {
    if !(lo > 0.0 && hi > lo) {
        return Vec::new();
    }
    let decades = (hi / lo).log10();
    // Dense ticks only on short ranges: at 0.9 decades nine labels already overlap.
    let mantissas: &[f64] = if decades <= 0.5 {
        &[1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0]
    } else if decades <= 1.2 {
        &[1.0, 2.0, 3.0, 5.0]
    } else if decades <= 3.0 {
        &[1.0, 2.0, 5.0]
    } else {
        &[1.0]
    };
    let mut out = Vec::new();
    for k in lo.log10().floor() as i32..=hi.log10().ceil() as i32 {
        for &m in mantissas {
            let v = m * 10f64.powi(k);
            if v >= lo && v <= hi {
                out.push(v);
            }
        }
    }
    out
}

fn draw_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, plotters::coord::Shift>,
    panel: &Panel,
) -> Result<(), Box<dyn std::error::Error>>
where
    DB::ErrorType: 'static,
{
    let all = || panel.curves.iter().flat_map(|c| c.points.iter());
    let (xmin, xmax) = (
        all().map(|b| b.0).fold(f64::INFINITY, f64::min),
        all().map(|b| b.0).fold(0.0f64, f64::max),
    );
    let (xmin, xmax) = if xmin.is_finite() && xmax > 0.0 {
        (xmin, xmax)
    } else {
        (1e-3, 1e-2)
    };
    let positive = |v: f64| (v > 0.0).then_some(v);
    let ymin = all()
        .filter_map(|b| positive(b.1.low).or(positive(b.1.rate)))
        .fold(f64::INFINITY, f64::min);
    let ymax = all().map(|b| b.1.high).fold(0.0f64, f64::max);
    let (ymin, ymax) = if ymin.is_finite() && ymax > 0.0 {
        (ymin / 1.5, (ymax * 1.5).min(1.0))
    } else {
        (1e-6, 1.0)
    };
    let mut chart = ChartBuilder::on(area)
        .caption(&panel.title, ("sans-serif", 20))
        .margin(12)
        .x_label_area_size(45)
        .y_label_area_size(70)
        .build_cartesian_2d(
            (xmin / 1.1..xmax * 1.1)
                .log_scale()
                .with_key_points(ticks(xmin / 1.1, xmax * 1.1)),
            (ymin..ymax).log_scale().with_key_points(ticks(ymin, ymax)),
        )?;
    chart
        .configure_mesh()
        .x_desc("physical error rate p")
        .y_desc(panel.y_desc.as_str())
        .x_label_formatter(&|x| format!("{x:.2e}"))
        .y_label_formatter(&|y| format!("{y:.0e}"))
        .draw()?;
    for (i, curve) in panel.curves.iter().enumerate() {
        let colour = COLOURS[i % COLOURS.len()];
        let mut pts = curve.points.clone();
        pts.sort_by(|a, b| a.0.total_cmp(&b.0));
        let line: Vec<(f64, f64)> = pts
            .iter()
            .filter(|(_, e)| e.rate > 0.0)
            .map(|&(p, e)| (p, e.rate))
            .collect();
        chart
            .draw_series(LineSeries::new(line.clone(), colour.stroke_width(2)))?
            .label(curve.label.as_str())
            .legend(move |(x, y)| {
                PathElement::new(vec![(x, y), (x + 20, y)], colour.stroke_width(2))
            });
        chart.draw_series(
            line.iter()
                .map(|&(p, r)| Circle::new((p, r), 3, colour.filled())),
        )?;
        chart.draw_series(pts.iter().map(|&(p, e)| {
            ErrorBar::new_vertical(p, e.low.max(ymin), e.rate.max(ymin), e.high, colour, 6)
        }))?;
    }
    if let Some(m) = &panel.marker {
        chart
            .draw_series(DashedLineSeries::new(
                vec![(m.p, ymin), (m.p, ymax)],
                6,
                4,
                BLACK.stroke_width(1),
            ))?
            .label(m.label.as_str())
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
