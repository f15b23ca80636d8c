//! A [`Scene`] as a PNG image, drawn with plotters' bitmap backend.
//!
//! The backend does not smooth edges, so the scene is drawn at [`SUPERSAMPLE`] times its size
//! and scaled down with a triangle filter: edges come out smooth and thin lines keep their
//! weight. Dashes are cut here (the backend draws solid lines only), circles with dashed
//! outlines as 48-gons.

use image::ImageEncoder;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::scene::{ensure_fonts, Anchor, Paint, Px, Rgb, Scene, Shape};

/// Drawing scale before the downsampling.
const SUPERSAMPLE: f64 = 2.0;

fn colour(c: Rgb, a: f64) -> RGBAColor {
    RGBAColor(c.0, c.1, c.2, a)
}

fn px(p: Px) -> (i32, i32) {
    (
        (p.0 * SUPERSAMPLE).round() as i32,
        (p.1 * SUPERSAMPLE).round() as i32,
    )
}

fn width(w: f64) -> u32 {
    (w * SUPERSAMPLE).round().max(1.0) as u32
}

/// Cuts a polyline into dashes of length `dash` separated by `gap` (page pixels).
fn dashes(pts: &[Px], dash: f64, gap: f64) -> Vec<Vec<Px>> {
    let mut out = Vec::new();
    let mut cur: Vec<Px> = Vec::new();
    let mut on = true;
    let mut left = dash;
    for w in pts.windows(2) {
        let (a, b) = (w[0], w[1]);
        let len = ((b.0 - a.0).powi(2) + (b.1 - a.1).powi(2)).sqrt();
        let mut t = 0.0;
        if on && cur.is_empty() {
            cur.push(a);
        }
        while len - t > left {
            t += left;
            let p = (a.0 + (b.0 - a.0) * t / len, a.1 + (b.1 - a.1) * t / len);
            if on {
                cur.push(p);
                out.push(std::mem::take(&mut cur));
                left = gap;
            } else {
                cur.push(p);
                left = dash;
            }
            on = !on;
        }
        left -= len - t;
        if on {
            cur.push(b);
        }
    }
    if cur.len() > 1 {
        out.push(cur);
    }
    out
}

fn circle_points(c: Px, r: f64) -> Vec<Px> {
    (0..=48)
        .map(|k| {
            let a = k as f64 * std::f64::consts::TAU / 48.0;
            (c.0 + r * a.cos(), c.1 + r * a.sin())
        })
        .collect()
}

type Area<'a> = DrawingArea<BitMapBackend<'a>, plotters::coord::Shift>;

fn stroke_path(area: &Area, pts: &[Px], paint: &Paint) -> Result<(), String> {
    let Some(c) = paint.stroke else {
        return Ok(());
    };
    let style = colour(c, 1.0).stroke_width(width(paint.width));
    let pieces = match paint.dash {
        Some((d, g)) => dashes(pts, d, g),
        None => vec![pts.to_vec()],
    };
    for piece in pieces {
        let p: Vec<(i32, i32)> = piece.into_iter().map(px).collect();
        area.draw(&PathElement::new(p, style))
            .map_err(|e| e.to_string())?;
    }
    Ok(())
}

fn draw_shape(area: &Area, s: &Shape) -> Result<(), String> {
    let fail = |e: &dyn std::fmt::Display| e.to_string();
    match s {
        Shape::Circle { c, r, paint } => {
            if let Some((f, a)) = paint.fill {
                let style = colour(f, a).filled();
                area.draw(&Circle::new(
                    px(*c),
                    (r * SUPERSAMPLE).round() as i32,
                    style,
                ))
                .map_err(|e| fail(&e))?;
            }
            if let Some(st) = paint.stroke {
                if paint.dash.is_some() {
                    stroke_path(area, &circle_points(*c, *r), paint)?;
                } else {
                    let style = colour(st, 1.0).stroke_width(width(paint.width));
                    area.draw(&Circle::new(
                        px(*c),
                        (r * SUPERSAMPLE).round() as i32,
                        style,
                    ))
                    .map_err(|e| fail(&e))?;
                }
            }
        }
        Shape::Polygon { pts, paint } => {
            if let Some((f, a)) = paint.fill {
                let p: Vec<(i32, i32)> = pts.iter().copied().map(px).collect();
                area.draw(&Polygon::new(p, colour(f, a).filled()))
                    .map_err(|e| fail(&e))?;
            }
            let mut closed = pts.clone();
            if let Some(&first) = pts.first() {
                closed.push(first);
            }
            stroke_path(area, &closed, paint)?;
        }
        Shape::Path { pts, paint } => stroke_path(area, pts, paint)?,
        Shape::Text {
            at,
            text,
            size,
            anchor,
            colour: c,
            bold,
        } => {
            let h = match anchor {
                Anchor::Start => HPos::Left,
                Anchor::Middle => HPos::Center,
                Anchor::End => HPos::Right,
            };
            let face = if *bold {
                FontStyle::Bold
            } else {
                FontStyle::Normal
            };
            // `FontDesc::style` keeps the face already loaded, so the style goes to `new`.
            let style = FontDesc::new(FontFamily::SansSerif, size * SUPERSAMPLE, face)
                .color(&colour(*c, 1.0))
                .pos(Pos::new(h, VPos::Center));
            area.draw(&Text::new(text.clone(), px(*at), style))
                .map_err(|e| fail(&e))?;
        }
    }
    Ok(())
}

/// The PNG file (RGB, 8 bits per channel) of a scene.
pub fn png(scene: &Scene) -> Result<Vec<u8>, String> {
    ensure_fonts();
    let (w, h) = (scene.width.ceil() as u32, scene.height.ceil() as u32);
    let (bw, bh) = (
        (w as f64 * SUPERSAMPLE) as u32,
        (h as f64 * SUPERSAMPLE) as u32,
    );
    let mut big = vec![0u8; bw as usize * bh as usize * 3];
    {
        let area = BitMapBackend::with_buffer(&mut big, (bw, bh)).into_drawing_area();
        area.fill(&WHITE).map_err(|e| e.to_string())?;
        for g in &scene.groups {
            for s in &g.shapes {
                draw_shape(&area, s)?;
            }
        }
        area.present().map_err(|e| e.to_string())?;
    }
    let img = image::RgbImage::from_raw(bw, bh, big)
        .ok_or_else(|| "the drawing buffer has the wrong size".to_string())?;
    let small = image::imageops::resize(&img, w, h, image::imageops::FilterType::Triangle);
    let mut out = Vec::new();
    image::codecs::png::PngEncoder::new(&mut out)
        .write_image(small.as_raw(), w, h, image::ColorType::Rgb8)
        .map_err(|e| format!("PNG encoding failed: {e}"))?;
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn dashes_alternate_along_the_line() {
        let d = dashes(&[(0.0, 0.0), (10.0, 0.0)], 3.0, 2.0);
        // 0–3, 5–8 dashes.
        assert_eq!(d.len(), 2);
        assert!((d[0][1].0 - 3.0).abs() < 1e-9 && (d[1][0].0 - 5.0).abs() < 1e-9);
        assert!((d[1].last().unwrap().0 - 8.0).abs() < 1e-9);
    }
}
