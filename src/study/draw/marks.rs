//! The shapes of each kind of mark, shared by the panels and the legend swatches so that a
//! legend entry is drawn exactly like the mark it explains.

use crate::base::Gate;

use super::canvas::{
    text, Sizes, BLACK, BLUE, DARK, GREEN, ORANGE, PURPLE, SKY, VERMILLION, WHITE,
};
use super::model::{CheckKind, Role};
use super::scene::{Anchor, Paint, Px, Rgb, Shape};

/// Fill colour and opacity of a check of this kind.
pub fn check_fill(k: CheckKind) -> (Rgb, f64) {
    match k {
        CheckKind::X => (SKY, 0.45),
        CheckKind::Z => (ORANGE, 0.55),
        CheckKind::Y => (GREEN, 0.40),
        CheckKind::Mixed => (PURPLE, 0.40),
    }
}

/// Outline colour of a check of this kind.
pub fn check_stroke(k: CheckKind) -> Rgb {
    match k {
        CheckKind::X => BLUE,
        CheckKind::Z => Rgb(170, 110, 0),
        CheckKind::Y => GREEN,
        CheckKind::Mixed => Rgb(150, 70, 120),
    }
}

/// The mark of a qubit of a role, centred at `c` with radius `r`; faint marks are grey.
pub fn qubit(role: Role, c: Px, r: f64, faint: bool) -> Vec<Shape> {
    let (ink, width) = if faint {
        (Rgb(130, 130, 130), 1.2)
    } else {
        (BLACK, 2.0)
    };
    match role {
        Role::Data => vec![Shape::Circle {
            c,
            r,
            paint: Paint::both(WHITE, ink, width),
        }],
        Role::Ancilla => {
            let h = 0.9 * r;
            let fill = if faint { Rgb(170, 170, 170) } else { DARK };
            vec![Shape::Polygon {
                pts: vec![
                    (c.0 - h, c.1 - h),
                    (c.0 + h, c.1 - h),
                    (c.0 + h, c.1 + h),
                    (c.0 - h, c.1 + h),
                ],
                paint: Paint::both(fill, ink, width),
            }]
        }
        Role::Flag => {
            let h = 1.15 * r;
            vec![Shape::Polygon {
                pts: vec![
                    (c.0, c.1 - h),
                    (c.0 + h, c.1),
                    (c.0, c.1 + h),
                    (c.0 - h, c.1),
                ],
                paint: Paint::both(Rgb(200, 200, 200), ink, width),
            }]
        }
        Role::Other => {
            let h = 1.15 * r;
            vec![Shape::Polygon {
                pts: vec![
                    (c.0, c.1 - h),
                    (c.0 + h * 0.95, c.1 + h * 0.7),
                    (c.0 - h * 0.95, c.1 + h * 0.7),
                ],
                paint: Paint::both(WHITE, ink, width),
            }]
        }
    }
}

/// A dashed ring where a qubit's image across a periodic boundary sits.
pub fn image(c: Px, r: f64) -> Vec<Shape> {
    vec![Shape::Circle {
        c,
        r,
        paint: Paint::stroke(Rgb(110, 110, 110), 1.5).dashed(4.0, 3.0),
    }]
}

/// `a` moved towards `b` by `d` pixels.
pub fn toward(a: Px, b: Px, d: f64) -> Px {
    let len = ((b.0 - a.0).powi(2) + (b.1 - a.1).powi(2)).sqrt();
    if len < 1e-9 {
        return a;
    }
    (a.0 + (b.0 - a.0) * d / len, a.1 + (b.1 - a.1) * d / len)
}

/// The point at fraction `t` from `a` to `b`.
pub fn lerp(a: Px, b: Px, t: f64) -> Px {
    (a.0 + (b.0 - a.0) * t, a.1 + (b.1 - a.1) * t)
}

/// A band (thick segment) from `a` to `b` of width `w`, as a polygon.
pub fn band(a: Px, b: Px, w: f64) -> Vec<Px> {
    let len = ((b.0 - a.0).powi(2) + (b.1 - a.1).powi(2)).sqrt().max(1e-9);
    let (nx, ny) = (-(b.1 - a.1) / len * w / 2.0, (b.0 - a.0) / len * w / 2.0);
    vec![
        (a.0 + nx, a.1 + ny),
        (b.0 + nx, b.1 + ny),
        (b.0 - nx, b.1 - ny),
        (a.0 - nx, a.1 - ny),
    ]
}

/// How a two-qubit gate's line is drawn: dash pattern and whether it points at its target.
fn gate_style(g: Gate) -> (Option<(f64, f64)>, bool) {
    match g {
        Gate::Cx | Gate::Cy => (None, true),
        Gate::Cz => (Some((7.0, 4.0)), false),
        _ => (Some((2.0, 4.0)), false),
    }
}

/// The line of a two-qubit gate from its first target at `a` to its second at `b`, stopping
/// `ra` and `rb` short of the marks; a `cx` (or `cy`) gets an arrowhead at its target.
pub fn gate_line(g: Gate, a: Px, b: Px, ra: f64, rb: f64, width: f64, ink: Rgb) -> Vec<Shape> {
    let (dash, arrow) = gate_style(g);
    let start = toward(a, b, ra);
    let end = toward(b, a, rb + 1.0);
    let mut paint = Paint::stroke(ink, width);
    if let Some((d, gap)) = dash {
        paint = paint.dashed(d, gap);
    }
    let mut out = Vec::new();
    if arrow {
        let head = 4.0 * width + 4.0;
        let base = toward(end, start, head);
        out.push(Shape::Path {
            pts: vec![start, base],
            paint,
        });
        let len = ((end.0 - base.0).powi(2) + (end.1 - base.1).powi(2))
            .sqrt()
            .max(1e-9);
        let (nx, ny) = (
            -(end.1 - base.1) / len * head * 0.5,
            (end.0 - base.0) / len * head * 0.5,
        );
        out.push(Shape::Polygon {
            pts: vec![end, (base.0 + nx, base.1 + ny), (base.0 - nx, base.1 - ny)],
            paint: Paint::fill(ink),
        });
    } else {
        out.push(Shape::Path {
            pts: vec![start, end],
            paint,
        });
    }
    out
}

/// A round badge with a number (a step).
pub fn badge(c: Px, label: &str, s: &Sizes) -> Vec<Shape> {
    vec![
        Shape::Circle {
            c,
            r: s.badge,
            paint: Paint::both(WHITE, BLACK, 1.3),
        },
        text(c, label, s.small, Anchor::Middle, BLACK, true),
    ]
}

/// A square badge with a short text (a time-view operation), border in `ink`.
pub fn op_badge(c: Px, label: &str, size: f64, ink: Rgb) -> Vec<Shape> {
    let w = super::scene::text_width(label, size, true) + 8.0;
    let h = size + 6.0;
    vec![
        Shape::Polygon {
            pts: vec![
                (c.0 - w / 2.0, c.1 - h / 2.0),
                (c.0 + w / 2.0, c.1 - h / 2.0),
                (c.0 + w / 2.0, c.1 + h / 2.0),
                (c.0 - w / 2.0, c.1 + h / 2.0),
            ],
            paint: Paint::both(WHITE, ink, 1.8),
        },
        text(c, label, size, Anchor::Middle, BLACK, true),
    ]
}

/// Colour of a fault class: vermillion for high rate, blue for low rate.
pub fn fault_colour(high: bool) -> Rgb {
    if high {
        VERMILLION
    } else {
        BLUE
    }
}

/// The ring around a faulty qubit: solid for a high-rate fault, dashed for a low-rate one.
pub fn fault_ring(c: Px, r: f64, high: bool) -> Shape {
    let mut paint = Paint::stroke(fault_colour(high), 4.0);
    if !high {
        paint = paint.dashed(7.0, 4.0);
    }
    Shape::Circle { c, r, paint }
}

/// A flipped detector: a yellow hexagon with a black outline.
pub fn detector(c: Px, r: f64) -> Vec<Shape> {
    let pts = (0..6)
        .map(|k| {
            let a = std::f64::consts::PI / 3.0 * k as f64 + std::f64::consts::PI / 6.0;
            (c.0 + r * a.cos(), c.1 + r * a.sin())
        })
        .collect();
    vec![Shape::Polygon {
        pts,
        paint: Paint::both(super::canvas::YELLOW, BLACK, 1.6),
    }]
}

/// A detection event of a shot: a vermillion disc with a black outline.
pub fn event(c: Px, r: f64) -> Vec<Shape> {
    vec![Shape::Circle {
        c,
        r,
        paint: Paint::both(VERMILLION, BLACK, 1.6),
    }]
}
