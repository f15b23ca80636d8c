//! A [`Scene`] as an SVG document.
//!
//! Written here rather than through plotters' SVG backend, which emits bare shapes: the picture
//! needs a `<g>` per drawn thing with an id, classes, `data-*` attributes and a `<title>` (the
//! name shown on hover), and tests read those. Every number is rounded to 0.1 px.

use std::fmt::Write;

use super::scene::{Anchor, Paint, Scene, Shape};

/// Escapes text for XML content and attribute values.
fn esc(s: &str) -> String {
    let mut o = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => o.push_str("&amp;"),
            '<' => o.push_str("&lt;"),
            '>' => o.push_str("&gt;"),
            '"' => o.push_str("&quot;"),
            c => o.push(c),
        }
    }
    o
}

fn num(v: f64) -> String {
    let r = (v * 10.0).round() / 10.0;
    if r == r.trunc() {
        format!("{}", r as i64)
    } else {
        format!("{r:.1}")
    }
}

fn paint_attrs(p: &Paint) -> String {
    let mut s = String::new();
    match p.fill {
        Some((c, a)) => {
            let _ = write!(s, " fill=\"{}\"", c.hex());
            if a < 1.0 {
                let _ = write!(s, " fill-opacity=\"{a:.2}\"");
            }
        }
        None => s.push_str(" fill=\"none\""),
    }
    if let Some(c) = p.stroke {
        let _ = write!(
            s,
            " stroke=\"{}\" stroke-width=\"{}\"",
            c.hex(),
            num(p.width)
        );
        if let Some((d, g)) = p.dash {
            let _ = write!(s, " stroke-dasharray=\"{} {}\"", num(d), num(g));
        }
    }
    s
}

fn points(pts: &[(f64, f64)]) -> String {
    pts.iter()
        .map(|p| format!("{},{}", num(p.0), num(p.1)))
        .collect::<Vec<_>>()
        .join(" ")
}

/// The SVG document.
pub fn svg(scene: &Scene) -> String {
    let mut o = String::new();
    let _ = writeln!(
        o,
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{w}\" height=\"{h}\" \
         viewBox=\"0 0 {w} {h}\" font-family=\"DejaVu Sans, Verdana, sans-serif\">",
        w = num(scene.width),
        h = num(scene.height)
    );
    let _ = writeln!(o, "<rect width=\"100%\" height=\"100%\" fill=\"#ffffff\"/>");
    for g in &scene.groups {
        o.push_str("<g");
        if let Some(id) = &g.id {
            let _ = write!(o, " id=\"{}\"", esc(id));
        }
        if !g.class.is_empty() {
            let _ = write!(o, " class=\"{}\"", esc(&g.class));
        }
        for (k, v) in &g.data {
            let _ = write!(o, " data-{k}=\"{}\"", esc(v));
        }
        o.push('>');
        if let Some(t) = &g.title {
            let _ = write!(o, "<title>{}</title>", esc(t));
        }
        for s in &g.shapes {
            match s {
                Shape::Circle { c, r, paint } => {
                    let _ = write!(
                        o,
                        "<circle cx=\"{}\" cy=\"{}\" r=\"{}\"{}/>",
                        num(c.0),
                        num(c.1),
                        num(*r),
                        paint_attrs(paint)
                    );
                }
                Shape::Polygon { pts, paint } => {
                    let _ = write!(
                        o,
                        "<polygon points=\"{}\"{} stroke-linejoin=\"round\"/>",
                        points(pts),
                        paint_attrs(paint)
                    );
                }
                Shape::Path { pts, paint } => {
                    let p = Paint {
                        fill: None,
                        ..*paint
                    };
                    let _ = write!(
                        o,
                        "<polyline points=\"{}\"{} stroke-linecap=\"round\" \
                         stroke-linejoin=\"round\"/>",
                        points(pts),
                        paint_attrs(&p)
                    );
                }
                Shape::Text {
                    at,
                    text,
                    size,
                    anchor,
                    colour,
                    bold,
                } => {
                    let anchor = match anchor {
                        Anchor::Start => "start",
                        Anchor::Middle => "middle",
                        Anchor::End => "end",
                    };
                    let _ = write!(
                        o,
                        "<text x=\"{}\" y=\"{}\" font-size=\"{}\" text-anchor=\"{anchor}\" \
                         dominant-baseline=\"central\" fill=\"{}\"{}>{}</text>",
                        num(at.0),
                        num(at.1),
                        num(*size),
                        colour.hex(),
                        if *bold { " font-weight=\"bold\"" } else { "" },
                        esc(text)
                    );
                }
            }
        }
        o.push_str("</g>\n");
    }
    o.push_str("</svg>\n");
    o
}

#[cfg(test)]
mod tests {
    use super::super::scene::{Group, Rgb};
    use super::*;

    #[test]
    fn groups_keep_their_meaning_and_text_is_escaped() {
        let mut g = Group::new("qubit data")
            .id("qubit-0")
            .title("d<0>")
            .data("at", "1,2");
        g.push(Shape::Circle {
            c: (10.04, 20.0),
            r: 5.0,
            paint: Paint::stroke(Rgb(0, 0, 0), 2.0).dashed(4.0, 2.0),
        });
        let s = svg(&Scene {
            width: 100.0,
            height: 50.0,
            groups: vec![g],
        });
        assert!(s.contains(
            "<g id=\"qubit-0\" class=\"qubit data\" data-at=\"1,2\"><title>d&lt;0&gt;</title>"
        ));
        assert!(s.contains("cx=\"10\" cy=\"20\" r=\"5\" fill=\"none\" stroke=\"#000000\""));
        assert!(s.contains("stroke-dasharray=\"4 2\""));
    }
}
