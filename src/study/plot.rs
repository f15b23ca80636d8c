//! Log-log charts of logical error rates and thresholds, drawn as SVG or PNG.
//!
//! In: [`Panel`]s, each a title, axis labels and [`Curve`]s of `(x, Estimate)` points, with
//! dashed vertical [`Marker`]s (threshold estimates, with their uncertainty as a shaded band).
//! Out: one image with the panels stacked vertically ([`svg`], [`png`], [`render_for`]).
//!
//! Drawn for slides: 1000 × 700 pixels per panel, text in the bundled DejaVu Sans at sizes
//! readable on a projector, x ticks on the sampled values when there are few of them, one tick
//! format per axis (plain decimals, or scientific for every tick when any needs it), a legend
//! whose entries show the line, colour and marker shape of what they name. A curve is a line
//! through its point estimates with a marker per point and a vertical error bar from the lower
//! to the upper end of the interval; points with a zero rate get only the error bar (a log axis
//! has no zero). A curve's `beyond` points (e.g. "no crossing inside the grid") are drawn as
//! hollow triangles pointing out of the range. SVG and PNG come from the same drawing code, so
//! they look the same (the SVG names the font family; the PNG has it rasterised).

use image::ImageEncoder;
use plotters::element::EmptyElement;
use plotters::prelude::*;

use crate::study::stats::Estimate;

/// The shape of a curve's point markers.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Shape {
    /// A filled circle.
    Circle,
    /// A filled square.
    Square,
    /// A filled upward triangle.
    Triangle,
    /// A filled diamond.
    Diamond,
}

impl Shape {
    /// The shapes in the order curves take them.
    pub const ALL: [Shape; 4] = [
        Shape::Circle,
        Shape::Square,
        Shape::Triangle,
        Shape::Diamond,
    ];

    /// The `i`-th shape, cycling.
    pub fn nth(i: usize) -> Shape {
        Shape::ALL[i % Shape::ALL.len()]
    }
}

/// What a curve draws.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum CurveStyle {
    /// A line through the points, a marker and an error bar at each.
    Full,
    /// A line only (e.g. a fitted power law).
    Line,
    /// Markers and error bars without a line (e.g. sampled points beside a computed curve).
    Points,
}

/// One line of a panel.
#[derive(Clone, Debug)]
pub struct Curve {
    /// Legend text (empty: not in the legend).
    pub label: String,
    /// `(x, estimate with interval)`, in any order of `x`.
    pub points: Vec<(f64, Estimate)>,
    /// Index into the colour cycle.
    pub colour: usize,
    /// Marker shape.
    pub shape: Shape,
    /// Dashed rather than solid line.
    pub dashed: bool,
    /// Points outside the drawable range: `(x, y at the edge, above)`, drawn as hollow
    /// triangles pointing up (`above`) or down.
    pub beyond: Vec<(f64, f64, bool)>,
    /// Line, markers and error bars, or some of them.
    pub style: CurveStyle,
}

impl Curve {
    /// A solid curve with circles in colour `colour`.
    pub fn new(label: impl Into<String>, points: Vec<(f64, Estimate)>, colour: usize) -> Curve {
        Curve {
            label: label.into(),
            points,
            colour,
            shape: Shape::Circle,
            dashed: false,
            beyond: Vec::new(),
            style: CurveStyle::Full,
        }
    }
}

/// A dashed vertical line across a panel.
#[derive(Clone, Debug)]
pub struct Marker {
    /// Position on the x axis.
    pub x: f64,
    /// Legend text.
    pub label: String,
    /// An interval drawn as a shaded band (e.g. a bootstrap interval), if any.
    pub band: Option<(f64, f64)>,
    /// Shape drawn at the top of the line (to tell markers of overlaid groups apart).
    pub shape: Option<Shape>,
}

/// A legend line with no curve of its own (e.g. "d = 5" for a colour shared by several
/// overlaid curves).
#[derive(Clone, Debug)]
pub struct LegendEntry {
    /// Text.
    pub label: String,
    /// Colour index; `None`: black.
    pub colour: Option<usize>,
    /// Marker shape shown; `None`: none.
    pub shape: Option<Shape>,
    /// Whether a line is shown, and dashed.
    pub line: Option<bool>,
}

/// One chart.
#[derive(Clone, Debug)]
pub struct Panel {
    /// Caption above the chart.
    pub title: String,
    /// Label of the x axis.
    pub x_desc: String,
    /// Label of the y axis, e.g. `logical error rate (per round)`.
    pub y_desc: String,
    /// The curves.
    pub curves: Vec<Curve>,
    /// Vertical markers.
    pub markers: Vec<Marker>,
    /// The legend; empty: one entry per labelled curve and marker.
    pub legend: Vec<LegendEntry>,
}

impl Panel {
    /// A log-log panel of logical against physical error rate.
    pub fn rates(title: impl Into<String>, y_desc: impl Into<String>, curves: Vec<Curve>) -> Panel {
        Panel {
            title: title.into(),
            x_desc: "physical error rate p".into(),
            y_desc: y_desc.into(),
            curves,
            markers: Vec::new(),
            legend: Vec::new(),
        }
    }
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

/// Pixel size of one panel.
pub const PANEL_SIZE: (u32, u32) = (1000, 700);
const TITLE_SIZE: u32 = 28;
const LABEL_SIZE: u32 = 22;
const TICK_SIZE: u32 = 19;
const LEGEND_SIZE: u32 = 18;
const MARKER_SIZE: i32 = 5;

/// The caption's font size: [`TITLE_SIZE`], smaller for a title too long to fit the width.
fn title_size(title: &str) -> u32 {
    let n = title.chars().count().max(1) as u32;
    // About 0.55 em per character of DejaVu Sans, in 95% of the panel width.
    TITLE_SIZE
        .min((PANEL_SIZE.0 * 95 / 100) * 100 / (55 * n))
        .max(14)
}

fn colour(i: Option<usize>) -> RGBColor {
    i.map_or(BLACK, |i| COLOURS[i % COLOURS.len()])
}

/// The bundled font, so that plots never depend on the fonts of the machine (legends are
/// measured and PNG text is drawn with it).
pub(crate) fn ensure_font() {
    crate::study::draw::ensure_fonts();
}

fn size(panels: &[Panel]) -> (u32, u32) {
    (PANEL_SIZE.0, PANEL_SIZE.1 * panels.len().max(1) as u32)
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
/// beyond. plotters' own log ticks sit only on powers of ten, which leaves a range inside one
/// decade unlabelled.
fn log_ticks(lo: f64, hi: f64) -> Vec<f64> {
    if !(lo > 0.0 && hi > lo) {
        return Vec::new();
    }
    let decades = (hi / lo).log10();
    let sets: [&[f64]; 4] = [
        &[1.0],
        &[1.0, 2.0, 5.0],
        &[1.0, 2.0, 3.0, 5.0],
        &[1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0],
    ];
    let within = |mantissas: &[f64]| -> Vec<f64> {
        let mut out = Vec::new();
        for k in lo.log10().floor() as i32..=hi.log10().ceil() as i32 {
            for &m in mantissas {
                // Divided for negative powers, so 9e-3 is 0.009 exactly as printed.
                let v = if k < 0 {
                    m / 10f64.powi(-k)
                } else {
                    m * 10f64.powi(k)
                };
                if v >= lo * (1.0 - 1e-9) && v <= hi * (1.0 + 1e-9) {
                    out.push(v);
                }
            }
        }
        out
    };
    let first = if decades > 3.0 {
        0
    } else if decades > 1.2 {
        1
    } else if decades > 0.5 {
        2
    } else {
        3
    };
    // Under a decade (a threshold axis, say) evenly spaced round values read best; otherwise
    // the coarsest set from the one the span calls for that labels at least four values.
    if decades < 1.0 {
        let t = linear_ticks(lo, hi);
        if t.len() >= 3 {
            return t;
        }
    }
    for set in &sets[first..] {
        let t = within(set);
        if t.len() >= 4 {
            return t;
        }
    }
    linear_ticks(lo, hi)
}

/// Round values 1, 2 or 5 × 10^k apart, about five of them, inside `[lo, hi]`.
fn linear_ticks(lo: f64, hi: f64) -> Vec<f64> {
    let raw = (hi - lo) / 5.0;
    let e = raw.log10().floor();
    let base = 10f64.powf(e);
    let step = [1.0, 2.0, 5.0, 10.0]
        .into_iter()
        .map(|m| m * base)
        .find(|&s| s >= raw)
        .unwrap_or(10.0 * base);
    let mut out = Vec::new();
    let mut k = (lo / step).ceil();
    while k * step <= hi * (1.0 + 1e-9) {
        // Rounded to the step's decimals, so 0.012 is not 0.012000000000000002.
        let v = k * step;
        let decimals = (-(step.log10().floor()) as i32 + 1).max(0);
        let scale = 10f64.powi(decimals);
        out.push((v * scale).round() / scale);
        k += 1.0;
    }
    out
}

/// The ticks of an axis: the sampled values themselves when there are at most ten and none
/// crowds its neighbour, else round values.
fn axis_ticks(sampled: &[f64], lo: f64, hi: f64, log: bool) -> Vec<f64> {
    let mut s: Vec<f64> = sampled.to_vec();
    s.sort_by(f64::total_cmp);
    s.dedup_by(|a, b| (*a - *b).abs() <= 1e-12 * b.abs());
    let pos = |v: f64| if log { v.ln() } else { v };
    let span = pos(hi) - pos(lo);
    let spread = s.len() >= 2
        && s.len() <= 10
        && span > 0.0
        && s.windows(2).all(|w| (pos(w[1]) - pos(w[0])) / span > 0.07);
    if spread {
        s
    } else {
        log_ticks(lo, hi)
    }
}

/// One format for every tick of an axis: plain decimals when all ticks lie in `[1e-3, 1e5)`
/// (with as many decimals as the finest needs), else scientific notation for all.
fn tick_format(ticks: &[f64]) -> impl Fn(&f64) -> String {
    let plain = ticks
        .iter()
        .all(|&t| t == 0.0 || (1e-3..1e5).contains(&t.abs()));
    // Decimals needed to show each tick to 3 significant figures, trailing zeros dropped.
    let decimals = ticks
        .iter()
        .filter(|t| **t != 0.0)
        .map(|&t| {
            let s = format!(
                "{:.*}",
                (2 - t.abs().log10().floor() as i32).max(0) as usize,
                t
            );
            s.split_once('.')
                .map_or(0, |(_, f)| f.trim_end_matches('0').len())
        })
        .max()
        .unwrap_or(0);
    move |v: &f64| {
        if plain {
            format!("{:.*}", decimals, v)
        } else if *v == 0.0 {
            "0".into()
        } else {
            let e = v.abs().log10().floor() as i32;
            let m = v / 10f64.powi(e);
            let m = (m * 100.0).round() / 100.0;
            if (m - m.round()).abs() < 1e-9 {
                format!("{}e{e}", m.round())
            } else {
                format!("{m}e{e}")
            }
        }
    }
}

/// The outline of a marker of `shape` around the origin, in pixels (a circle as a 16-gon), so
/// points and legend samples are drawn by the same polygon.
fn outline(shape: Shape) -> Vec<(i32, i32)> {
    let s = MARKER_SIZE;
    match shape {
        Shape::Circle => (0..16)
            .map(|k| {
                let a = k as f64 * std::f64::consts::PI / 8.0;
                (
                    (a.cos() * (s as f64 + 0.5)).round() as i32,
                    (a.sin() * (s as f64 + 0.5)).round() as i32,
                )
            })
            .collect(),
        Shape::Square => vec![(-s, -s), (s, -s), (s, s), (-s, s)],
        Shape::Triangle => vec![(0, -s - 2), (s + 2, s), (-s - 2, s)],
        Shape::Diamond => vec![(0, -s - 2), (s + 2, 0), (0, s + 2), (-s - 2, 0)],
    }
}

/// The three segments (solid: touching; dashed: with gaps) of a legend sample's line, in
/// pixels from the sample's left end.
fn legend_segments(line: Option<bool>) -> [Vec<(i32, i32)>; 3] {
    let seg = |k: i32| -> Vec<(i32, i32)> {
        match line {
            None => Vec::new(),
            Some(false) => vec![(k * 9 - 2, 0), (k * 9 + 9, 0)],
            Some(true) => vec![(k * 9, 0), (k * 9 + 5, 0)],
        }
    };
    [seg(0), seg(1), seg(2)]
}

fn draw_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, plotters::coord::Shift>,
    panel: &Panel,
) -> Result<(), Box<dyn std::error::Error>>
where
    DB::ErrorType: 'static,
{
    let all = || panel.curves.iter().flat_map(|c| c.points.iter());
    let xs: Vec<f64> = all()
        .map(|b| b.0)
        .chain(
            panel
                .curves
                .iter()
                .flat_map(|c| c.beyond.iter().map(|b| b.0)),
        )
        .filter(|x| x.is_finite() && *x > 0.0)
        .collect();
    let (mut xmin, mut xmax) = (
        xs.iter().copied().fold(f64::INFINITY, f64::min),
        xs.iter().copied().fold(f64::NEG_INFINITY, f64::max),
    );
    for m in &panel.markers {
        xmin = xmin.min(m.x);
        xmax = xmax.max(m.x);
    }
    if !(xmin.is_finite() && xmax.is_finite()) {
        (xmin, xmax) = if true { (1e-3, 1e-2) } else { (0.0, 1.0) };
    }
    let (x_lo, x_hi) = if true {
        let pad = if xmax > xmin {
            (xmax / xmin).powf(0.06)
        } else {
            2.0
        };
        (xmin / pad, xmax * pad)
    } else {
        let pad = if xmax > xmin {
            (xmax - xmin) * 0.06
        } else {
            xmin.abs().max(1.0) * 0.5
        };
        (xmin - pad, xmax + pad)
    };
    let positive = |v: f64| (v > 0.0).then_some(v);
    let ylows: Vec<f64> = all()
        .filter_map(|b| {
            if true {
                positive(b.1.low).or(positive(b.1.rate))
            } else {
                Some(b.1.low)
            }
        })
        .chain(
            panel
                .curves
                .iter()
                .flat_map(|c| c.beyond.iter().map(|b| b.1)),
        )
        .collect();
    let yhighs: Vec<f64> = all()
        .map(|b| b.1.high)
        .chain(
            panel
                .curves
                .iter()
                .flat_map(|c| c.beyond.iter().map(|b| b.1)),
        )
        .collect();
    let ymin = ylows.iter().copied().fold(f64::INFINITY, f64::min);
    let ymax = yhighs.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let (y_lo, y_hi) = if true {
        if ymin.is_finite() && ymax > 0.0 {
            (ymin / 1.6, (ymax * 1.6).min(1.0).max(ymin * 2.0))
        } else {
            (1e-6, 1.0)
        }
    } else if ymin.is_finite() && ymax.is_finite() {
        let pad = ((ymax - ymin) * 0.12).max(ymax.abs() * 0.05).max(1e-12);
        ((ymin - pad).max(0.0), ymax + pad)
    } else {
        (0.0, 1.0)
    };
    let sampled_x: Vec<f64> = xs.clone();
    let x_ticks = axis_ticks(&sampled_x, x_lo, x_hi, true);
    let y_ticks = log_ticks(y_lo, y_hi);
    let x_fmt = tick_format(&x_ticks);
    let y_fmt = tick_format(&y_ticks);
    let mut builder = ChartBuilder::on(area);
    builder
        .caption(&panel.title, ("sans-serif", title_size(&panel.title)))
        .margin(16)
        .margin_right(28)
        .x_label_area_size(64)
        .y_label_area_size(96);
    // plotters needs the coordinate types fixed at compile time: one function per axis kind.
    macro_rules! body {
        ($chart:expr, $x:expr, $y:expr) => {{
            let mut chart = $chart;
            chart
                .configure_mesh()
                .x_desc(panel.x_desc.as_str())
                .y_desc(panel.y_desc.as_str())
                .axis_desc_style(("sans-serif", LABEL_SIZE))
                .label_style(("sans-serif", TICK_SIZE))
                .x_label_formatter(&x_fmt)
                .y_label_formatter(&y_fmt)
                .light_line_style(WHITE.mix(0.0))
                .bold_line_style(BLACK.mix(0.08))
                .draw()?;
            let (ylo, yhi) = (y_lo, y_hi);
            for m in &panel.markers {
                if let Some((a, b)) = m.band {
                    chart.draw_series(std::iter::once(Rectangle::new(
                        [(a.max(x_lo), ylo), (b.min(x_hi), yhi)],
                        BLACK.mix(0.07).filled(),
                    )))?;
                }
            }
            for curve in &panel.curves {
                let c = colour(Some(curve.colour));
                let mut pts = curve.points.clone();
                pts.sort_by(|a, b| a.0.total_cmp(&b.0));
                let line: Vec<(f64, f64)> = pts
                    .iter()
                    .filter(|(_, e)| e.rate > 0.0)
                    .map(|&(p, e)| (p, e.rate))
                    .collect();
                if curve.style == CurveStyle::Points {
                } else if curve.dashed {
                    chart.draw_series(DashedLineSeries::new(
                        line.clone(),
                        10,
                        6,
                        c.stroke_width(3),
                    ))?;
                } else {
                    chart.draw_series(LineSeries::new(line.clone(), c.stroke_width(3)))?;
                }
                let marks: &[(f64, Estimate)] = if curve.style == CurveStyle::Line {
                    &[]
                } else {
                    &pts
                };
                let line: &[(f64, f64)] = if curve.style == CurveStyle::Line {
                    &[]
                } else {
                    &line
                };
                chart.draw_series(marks.iter().map(|&(p, e)| {
                    ErrorBar::new_vertical(
                        p,
                        e.low.max(ylo),
                        e.rate.max(ylo),
                        e.high.min(yhi),
                        c.stroke_width(2),
                        10,
                    )
                }))?;
                chart.draw_series(line.iter().map(|&(p, r)| {
                    EmptyElement::at((p, r)) + Polygon::new(outline(curve.shape), c.filled())
                }))?;
                chart.draw_series(curve.beyond.iter().map(|&(x, y, above)| {
                    let s = MARKER_SIZE + 3;
                    let tip = if above { -s - 4 } else { s + 4 };
                    EmptyElement::at((x, y))
                        + Polygon::new(vec![(0, tip), (s, 0), (-s, 0)], c.mix(0.25).filled())
                        + PathElement::new(
                            vec![(0, tip), (s, 0), (-s, 0), (0, tip)],
                            c.stroke_width(2),
                        )
                }))?;
            }
            for m in &panel.markers {
                chart.draw_series(DashedLineSeries::new(
                    vec![(m.x, ylo), (m.x, yhi)],
                    8,
                    5,
                    BLACK.stroke_width(2),
                ))?;
                if let Some(shape) = m.shape {
                    chart.draw_series(std::iter::once(
                        EmptyElement::at((m.x, yhi)) + Polygon::new(outline(shape), BLACK.filled()),
                    ))?;
                }
            }
            // The legend: explicit entries, else one per labelled curve and marker.
            let entries: Vec<LegendEntry> = if panel.legend.is_empty() {
                panel
                    .curves
                    .iter()
                    .filter(|c| !c.label.is_empty())
                    .map(|c| LegendEntry {
                        label: c.label.clone(),
                        colour: Some(c.colour),
                        shape: (c.style != CurveStyle::Line).then_some(c.shape),
                        line: (c.style != CurveStyle::Points).then_some(c.dashed),
                    })
                    .chain(panel.markers.iter().map(|m| LegendEntry {
                        label: m.label.clone(),
                        colour: None,
                        shape: m.shape,
                        line: Some(true),
                    }))
                    .collect()
            } else {
                panel.legend.clone()
            };
            for e in entries {
                chart
                    .draw_series(std::iter::empty::<Circle<(f64, f64), i32>>())?
                    .label(e.label.clone())
                    .legend(move |at| {
                        let c = colour(e.colour);
                        let [a, b, d] = legend_segments(e.line);
                        let marker: Vec<(i32, i32)> = e.shape.map_or_else(Vec::new, |s| {
                            outline(s).into_iter().map(|(x, y)| (x + 12, y)).collect()
                        });
                        EmptyElement::at(at)
                            + PathElement::new(a, c.stroke_width(3))
                            + PathElement::new(b, c.stroke_width(3))
                            + PathElement::new(d, c.stroke_width(3))
                            + Polygon::new(marker, c.filled())
                    });
            }
            chart
                .configure_series_labels()
                .position(SeriesLabelPosition::LowerRight)
                .label_font(("sans-serif", LEGEND_SIZE))
                .margin(12)
                .legend_area_size(34)
                .background_style(WHITE.mix(0.9))
                .border_style(BLACK.mix(0.5))
                .draw()?;
            let _ = ($x, $y);
        }};
    }
    body!(
        builder.build_cartesian_2d(
            (x_lo..x_hi).log_scale().with_key_points(x_ticks.clone()),
            (y_lo..y_hi).log_scale().with_key_points(y_ticks.clone()),
        )?,
        0,
        0
    );
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sampled_values_become_ticks_in_one_format() {
        let t = axis_ticks(&[0.002, 0.004, 0.006], 0.0018, 0.0066, true);
        assert_eq!(t, vec![0.002, 0.004, 0.006]);
        let f = tick_format(&t);
        assert_eq!(
            t.iter().map(&f).collect::<Vec<_>>(),
            ["0.002", "0.004", "0.006"]
        );
        // Ticks needing different decimals share the finest.
        let f = tick_format(&[0.01, 0.0125, 0.02]);
        assert_eq!(f(&0.01), "0.0100");
        // One tick outside the plain range turns the whole axis scientific.
        let f = tick_format(&[1e-5, 1e-4, 1e-3]);
        assert_eq!(
            (f(&1e-5), f(&1e-3)),
            ("1e-5".to_string(), "1e-3".to_string())
        );
        // A narrow log axis still gets at least four labels.
        assert_eq!(
            log_ticks(0.0098, 0.018),
            vec![0.01, 0.012, 0.014, 0.016, 0.018]
        );
        assert_eq!(log_ticks(0.007, 0.025), vec![0.01, 0.015, 0.02, 0.025]);
        assert_eq!(
            log_ticks(0.002, 0.6),
            vec![0.002, 0.005, 0.01, 0.02, 0.05, 0.1, 0.2, 0.5]
        );
        // Crowded sampled values fall back to round ticks.
        let t = axis_ticks(&[0.010, 0.0101, 0.02], 0.009, 0.021, true);
        assert!(!t.contains(&0.0101));
    }

    #[test]
    fn both_formats_draw() {
        let est = |r: f64| Estimate {
            rate: r,
            low: r * 0.8,
            high: r * 1.2,
        };
        let mut curve = Curve::new("d = 3", vec![(0.01, est(0.1)), (0.02, est(0.2))], 0);
        curve.beyond.push((0.03, 0.2, true));
        let mut panel = Panel::rates("t", "y", vec![curve]);
        panel.markers.push(Marker {
            x: 0.015,
            label: "threshold".into(),
            band: Some((0.014, 0.016)),
            shape: Some(Shape::Square),
        });
        let svg = svg(&[panel.clone()]).unwrap();
        assert!(svg.contains("d = 3") && svg.contains("threshold"));
        let png = png(&[panel.clone(), panel]).unwrap();
        assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n");
    }
}
