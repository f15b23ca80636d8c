//! The error budget as a bar chart for slides: one horizontal bar per source, its sensitivity
//! `d log p_L / d log s` with the 95% interval as a whisker and its share written beside it,
//! largest at the top; SVG or PNG by the file's extension.

use image::ImageEncoder;
use plotters::prelude::*;

use crate::study::budget::Budget;
use crate::study::plot::ensure_font;

/// Pixel size of the chart.
pub const CHART_SIZE: (u32, u32) = (1200, 700);
/// At most this many bars; the rest are summed up in the caption.
pub const MAX_BARS: usize = 12;

const HIGH: RGBColor = RGBColor(31, 119, 180);
const LOW: RGBColor = RGBColor(255, 127, 14);
const OTHER: RGBColor = RGBColor(110, 110, 110);

fn draw<DB: DrawingBackend>(
    root: DrawingArea<DB, plotters::coord::Shift>,
    budget: &Budget,
    title: &str,
) -> Result<(), String>
where
    DB::ErrorType: 'static,
{
    let fail = |e: &dyn std::fmt::Display| format!("plotting failed: {e}");
    root.fill(&WHITE).map_err(|e| fail(&e))?;
    let bars: Vec<_> = budget.sources.iter().take(MAX_BARS).collect();
    let n = bars.len().max(1);
    let lo = bars
        .iter()
        .map(|b| b.sensitivity.low)
        .filter(|v| v.is_finite())
        .fold(0.0f64, f64::min);
    let hi = bars
        .iter()
        .map(|b| b.sensitivity.high)
        .filter(|v| v.is_finite())
        .fold(0.0f64, f64::max)
        .max(1e-9);
    // Room on the right for the share text.
    let hi = hi + 0.18 * (hi - lo);
    let labels: Vec<String> = bars.iter().map(|b| b.label.clone()).collect();
    let longest = labels.iter().map(|l| l.chars().count()).max().unwrap_or(10) as u32;
    // About 0.55 em per character at 19 px, capped at half the width.
    let label_area = (longest * 11 + 30).clamp(120, CHART_SIZE.0 / 2);
    let title_size = 28u32
        .min((CHART_SIZE.0 * 95 / 100) * 100 / (55 * title.chars().count().max(1) as u32))
        .max(14);
    let mut chart = ChartBuilder::on(&root)
        .caption(title, ("sans-serif", title_size))
        .margin(20)
        .x_label_area_size(60)
        .y_label_area_size(label_area)
        .build_cartesian_2d(lo..hi, (0..n - 1).into_segmented())
        .map_err(|e| fail(&e))?;
    // Largest at the top: bar i sits at segment n - 1 - i.
    let at = |i: usize| n - 1 - i;
    let name_of = move |v: &SegmentValue<usize>| match v {
        SegmentValue::CenterOf(k) | SegmentValue::Exact(k) if *k < n => {
            labels.get(n - 1 - *k).cloned().unwrap_or_default()
        }
        _ => String::new(),
    };
    chart
        .configure_mesh()
        .disable_y_mesh()
        .light_line_style(WHITE)
        .x_desc("sensitivity d log p_L / d log s  (95% interval)")
        .axis_desc_style(("sans-serif", 22))
        .label_style(("sans-serif", 19))
        .y_labels(n)
        .y_label_formatter(&name_of)
        .draw()
        .map_err(|e| fail(&e))?;
    let mut legend = Vec::new();
    for (i, b) in bars.iter().enumerate() {
        let colour = match b.source.class {
            Some(crate::faults::FaultClass::High) => HIGH,
            Some(crate::faults::FaultClass::Low) => LOW,
            None => OTHER,
        };
        let y = at(i);
        let mut rect = Rectangle::new(
            [
                (0.0, SegmentValue::Exact(y)),
                (b.sensitivity.value, SegmentValue::Exact(y + 1)),
            ],
            colour.mix(0.85).filled(),
        );
        rect.set_margin(8, 8, 0, 0);
        let drawn = chart.draw_series([rect]).map_err(|e| fail(&e))?;
        let class = b.source.class;
        if class.is_some() && !legend.contains(&class) {
            legend.push(class);
            let name = match class {
                Some(crate::faults::FaultClass::High) => "high-rate faults (Z-type)",
                _ => "low-rate faults",
            };
            drawn.label(name).legend(move |(x, y)| {
                Rectangle::new([(x, y - 7), (x + 20, y + 7)], colour.mix(0.85).filled())
            });
        }
        let mid = SegmentValue::CenterOf(y);
        let (l, h) = (b.sensitivity.low, b.sensitivity.high);
        if l.is_finite() && h.is_finite() {
            chart
                .draw_series([PathElement::new(
                    vec![(l, mid.clone()), (h, mid.clone())],
                    BLACK.stroke_width(2),
                )])
                .map_err(|e| fail(&e))?;
        }
        let text = match &b.share {
            Some(s) => format!("{:.0}%", 100.0 * s.value),
            None => format!("{:.2}", b.sensitivity.value),
        };
        let x = if h.is_finite() {
            h.max(b.sensitivity.value)
        } else {
            b.sensitivity.value
        };
        chart
            .draw_series([Text::new(
                format!("  {text}"),
                (x, mid),
                ("sans-serif", 19).into_font().into_text_style(&root).pos(
                    plotters::style::text_anchor::Pos::new(
                        plotters::style::text_anchor::HPos::Left,
                        plotters::style::text_anchor::VPos::Center,
                    ),
                ),
            )])
            .map_err(|e| fail(&e))?;
    }
    if !legend.is_empty() {
        chart
            .configure_series_labels()
            .position(SeriesLabelPosition::LowerRight)
            .label_font(("sans-serif", 18))
            .background_style(WHITE.mix(0.9))
            .border_style(BLACK)
            .draw()
            .map_err(|e| fail(&e))?;
    }
    root.present().map_err(|e| fail(&e))
}

/// Renders the budget's chart with `title` to SVG or PNG by the extension of `path` (`.png`,
/// anything else SVG).
pub fn render_budget(
    path: &std::path::Path,
    budget: &Budget,
    title: &str,
) -> Result<Vec<u8>, String> {
    ensure_font();
    let (w, h) = CHART_SIZE;
    if path
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("png"))
    {
        let mut rgb = vec![0u8; w as usize * h as usize * 3];
        draw(
            BitMapBackend::with_buffer(&mut rgb, (w, h)).into_drawing_area(),
            budget,
            title,
        )?;
        let mut out = Vec::new();
        image::codecs::png::PngEncoder::new(&mut out)
            .write_image(&rgb, w, h, image::ColorType::Rgb8)
            .map_err(|e| format!("PNG encoding failed: {e}"))?;
        Ok(out)
    } else {
        let mut svg = String::new();
        draw(
            SVGBackend::with_string(&mut svg, (w, h)).into_drawing_area(),
            budget,
            title,
        )?;
        Ok(svg.into_bytes())
    }
}
