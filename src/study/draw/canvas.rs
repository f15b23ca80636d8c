//! The page: palette, mark sizes, the map from circuit coordinates to pixels, label placement
//! without overlaps, the legend, and the assembly of title, panels and legend into a [`Scene`].
//!
//! Colours are the Okabe–Ito palette ("Color Universal Design", Okabe and Ito, 2008), chosen to
//! stay apart for the common colour-vision deficiencies. Nothing is told by colour alone: qubit
//! roles differ in shape, check types carry their letter, gate kinds their line style (solid with
//! an arrowhead, dashed), fault classes a solid or dashed ring, so the picture also reads in
//! greyscale.

use super::model::Point;
use super::scene::{text_width, Anchor, Group, Paint, Px, Rgb, Scene, Shape};

/// Okabe–Ito orange.
pub const ORANGE: Rgb = Rgb(230, 159, 0);
/// Okabe–Ito sky blue.
pub const SKY: Rgb = Rgb(86, 180, 233);
/// Okabe–Ito bluish green.
pub const GREEN: Rgb = Rgb(0, 158, 115);
/// Okabe–Ito yellow.
pub const YELLOW: Rgb = Rgb(240, 228, 66);
/// Okabe–Ito blue.
pub const BLUE: Rgb = Rgb(0, 114, 178);
/// Okabe–Ito vermillion.
pub const VERMILLION: Rgb = Rgb(213, 94, 0);
/// Okabe–Ito reddish purple.
pub const PURPLE: Rgb = Rgb(204, 121, 167);
/// Black.
pub const BLACK: Rgb = Rgb(0, 0, 0);
/// Dark grey of ancilla marks.
pub const DARK: Rgb = Rgb(64, 64, 64);
/// Grey of the outline of the data qubits.
pub const OUTLINE: Rgb = Rgb(170, 170, 170);
/// White.
pub const WHITE: Rgb = Rgb(255, 255, 255);

/// Body text size.
pub const FONT: f64 = 15.0;
/// Title size.
pub const TITLE: f64 = 22.0;
/// Panel caption size.
pub const CAPTION: f64 = 17.0;
const MARGIN: f64 = 24.0;
const GAP: f64 = 28.0;
const LINE: f64 = 22.0;

/// Sizes of marks for one panel scale.
#[derive(Clone, Copy, Debug)]
pub struct Sizes {
    /// Pixels between nearest neighbours.
    pub nn: f64,
    /// Radius of a qubit mark.
    pub rq: f64,
    /// Radius of a step badge.
    pub badge: f64,
    /// Font size of badges and labels.
    pub small: f64,
    /// Font size of tags (faults, times): readable on a slide at any scale.
    pub tag: f64,
    /// Width of gate lines.
    pub line: f64,
    /// Whether step badges and corner letters fit.
    pub detail: bool,
}

impl Sizes {
    /// Sizes for `nn` pixels between nearest neighbours.
    pub fn for_spacing(nn: f64) -> Sizes {
        Sizes {
            nn,
            rq: (0.13 * nn).clamp(4.0, 15.0),
            badge: (0.095 * nn).clamp(6.0, 11.0),
            small: (0.12 * nn).clamp(11.0, 13.5),
            tag: (0.13 * nn).clamp(13.0, 14.0),
            line: (0.022 * nn).clamp(1.2, 2.4),
            detail: nn >= 60.0,
        }
    }
}

/// Maps circuit coordinates into a panel's content box.
#[derive(Clone, Copy, Debug)]
pub struct Frame {
    /// Left edge of the content box.
    pub ox: f64,
    /// Top edge of the content box.
    pub oy: f64,
    /// Smallest x shown.
    pub xmin: f64,
    /// Smallest y shown.
    pub ymin: f64,
    /// Pixels per unit.
    pub unit: f64,
    /// Width of the content box.
    pub w: f64,
    /// Height of the content box.
    pub h: f64,
}

impl Frame {
    /// The direction from the middle of the content box to a pixel.
    pub fn out(&self, p: Px) -> Px {
        (
            p.0 - (self.ox + self.w / 2.0),
            p.1 - (self.oy + self.h / 2.0),
        )
    }

    /// The pixel of a circuit point.
    pub fn p(&self, pt: Point) -> Px {
        (
            self.ox + (pt.0 - self.xmin) * self.unit,
            self.oy + (pt.1 - self.ymin) * self.unit,
        )
    }
}

/// Bounds `(xmin, ymin, xmax, ymax)` of points, padded by `pad` on every side.
pub fn bounds(points: impl Iterator<Item = Point>, pad: f64) -> (f64, f64, f64, f64) {
    let mut b = (
        f64::INFINITY,
        f64::INFINITY,
        f64::NEG_INFINITY,
        f64::NEG_INFINITY,
    );
    for p in points {
        b = (b.0.min(p.0), b.1.min(p.1), b.2.max(p.0), b.3.max(p.1));
    }
    if !b.0.is_finite() {
        b = (0.0, 0.0, 0.0, 0.0);
    }
    (b.0 - pad, b.1 - pad, b.2 + pad, b.3 + pad)
}

/// An axis-aligned box `(x0, y0, x1, y1)`.
pub type Rect = (f64, f64, f64, f64);

fn overlaps(a: Rect, b: Rect) -> bool {
    a.0 < b.2 && b.0 < a.2 && a.1 < b.3 && b.1 < a.3
}

/// Places labels so that they overlap neither each other nor the marks registered as obstacles.
#[derive(Clone, Debug, Default)]
pub struct Placer {
    taken: Vec<Rect>,
}

impl Placer {
    /// Marks a box as taken.
    pub fn block(&mut self, r: Rect) {
        self.taken.push(r);
    }

    /// Marks a circle as taken.
    pub fn block_circle(&mut self, c: Px, r: f64) {
        self.block((c.0 - r, c.1 - r, c.0 + r, c.1 + r));
    }

    /// The top-left corner for a `w × h` box near `at`, at `reach` from it: the first free one
    /// of eight directions, tried in order of how well they point along `out` (away from the
    /// middle of the panel, so labels drift to the margins), then twice and three times as far;
    /// if none is free, the best direction at `reach`.
    pub fn place(&mut self, at: Px, reach: f64, w: f64, h: f64, out: Px) -> Px {
        let mut dirs = [
            (1.0, -1.0),
            (1.0, 1.0),
            (-1.0, -1.0),
            (-1.0, 1.0),
            (1.0, 0.0),
            (-1.0, 0.0),
            (0.0, -1.0),
            (0.0, 1.0),
        ];
        let norm = (out.0 * out.0 + out.1 * out.1).sqrt();
        if norm > 1e-9 {
            let score = |d: &(f64, f64)| {
                let l = (d.0 * d.0 + d.1 * d.1).sqrt();
                -(d.0 * out.0 + d.1 * out.1) / (l * norm)
            };
            dirs.sort_by(|a, b| score(a).total_cmp(&score(b)));
        }
        self.place_along(at, reach, w, h, &dirs)
    }

    /// Like [`Placer::place`], trying the directions in the order given.
    pub fn place_along(&mut self, at: Px, reach: f64, w: f64, h: f64, dirs: &[(f64, f64)]) -> Px {
        let corner = |k: f64, d: (f64, f64)| {
            let l = (d.0 * d.0 + d.1 * d.1).sqrt();
            let cx = at.0 + d.0 / l * reach * k;
            let cy = at.1 + d.1 / l * reach * k;
            let x = if d.0 > 0.0 {
                cx
            } else if d.0 < 0.0 {
                cx - w
            } else {
                cx - w / 2.0
            };
            let y = if d.1 > 0.0 {
                cy
            } else if d.1 < 0.0 {
                cy - h
            } else {
                cy - h / 2.0
            };
            (x, y)
        };
        for k in [1.0, 1.8, 2.6] {
            for &d in dirs {
                let (x, y) = corner(k, d);
                let r = (x, y, x + w, y + h);
                if !self.taken.iter().any(|&t| overlaps(t, r)) {
                    self.taken.push(r);
                    return (x, y);
                }
            }
        }
        let (x, y) = corner(1.0, dirs[0]);
        self.taken.push((x, y, x + w, y + h));
        (x, y)
    }
}

/// What painting one panel needs: its frame, its mark sizes, its number (for ids) and the
/// placer of its labels.
pub struct Pen {
    /// Circuit coordinates to pixels.
    pub f: Frame,
    /// Mark sizes.
    pub s: Sizes,
    /// Panel number.
    pub panel: usize,
    /// Label placement.
    pub placer: Placer,
}

impl Pen {
    /// A pen for panel `panel`.
    pub fn new(f: Frame, s: Sizes, panel: usize) -> Pen {
        Pen {
            f,
            s,
            panel,
            placer: Placer::default(),
        }
    }
}

/// A text shape.
pub fn text(
    at: Px,
    s: impl Into<String>,
    size: f64,
    anchor: Anchor,
    colour: Rgb,
    bold: bool,
) -> Shape {
    Shape::Text {
        at,
        text: s.into(),
        size,
        anchor,
        colour,
        bold,
    }
}

/// A boxed text label with its top-left corner at `at`: white box, coloured border.
pub fn tag(g: &mut Group, at: Px, s: &str, size: f64, border: Rgb, dashed: bool) -> Rect {
    let w = text_width(s, size, true) + 10.0;
    let h = size + 8.0;
    let mut paint = Paint::both(WHITE, border, 1.8);
    if dashed {
        paint = paint.dashed(5.0, 3.0);
    }
    g.push(Shape::Polygon {
        pts: vec![at, (at.0 + w, at.1), (at.0 + w, at.1 + h), (at.0, at.1 + h)],
        paint,
    });
    g.push(text(
        (at.0 + 5.0, at.1 + h / 2.0),
        s,
        size,
        Anchor::Start,
        BLACK,
        true,
    ));
    (at.0, at.1, at.0 + w, at.1 + h)
}

/// Size of a tag box for `s`.
pub fn tag_size(s: &str, size: f64) -> (f64, f64) {
    (text_width(s, size, true) + 10.0, size + 8.0)
}

/// A legend entry: its swatch, drawn in a 36 × 22 box at the given top-left corner, and its
/// text.
pub struct Entry {
    /// Class of the entry's group (`legend-…`).
    pub class: String,
    /// Draws the swatch.
    pub swatch: Box<dyn Fn(Px) -> Vec<Shape>>,
    /// The text.
    pub text: String,
}

/// One panel: a caption over a content box.
pub struct PanelOut {
    /// Caption.
    pub caption: String,
    /// The panel's groups, already in page coordinates.
    pub groups: Vec<Group>,
}

/// Page geometry decided before painting: where each panel's content box goes.
pub struct Grid {
    /// Header height (title and notes).
    pub top: f64,
    /// Panel content size.
    pub w: f64,
    /// Panel content height.
    pub h: f64,
    /// Columns.
    pub cols: usize,
    /// Number of panels.
    pub n: usize,
}

impl Grid {
    /// A grid of `n` panels of `w × h` in at most `max_cols` columns below `lines` header lines.
    pub fn new(n: usize, w: f64, h: f64, max_cols: usize, lines: usize) -> Grid {
        Grid {
            top: MARGIN + TITLE + 10.0 + LINE * lines as f64 + 8.0,
            w,
            h,
            cols: n.clamp(1, max_cols.max(1)),
            n,
        }
    }

    /// Top-left corner of panel `k`'s content box.
    pub fn origin(&self, k: usize) -> Px {
        let (r, c) = (k / self.cols, k % self.cols);
        (
            MARGIN + c as f64 * (self.w + GAP),
            self.top + CAPTION + 12.0 + r as f64 * (self.h + CAPTION + 12.0 + GAP),
        )
    }

    fn size(&self) -> (f64, f64) {
        let rows = self.n.div_ceil(self.cols).max(1);
        (
            self.cols as f64 * (self.w + GAP) - GAP,
            rows as f64 * (self.h + CAPTION + 12.0 + GAP) - GAP,
        )
    }
}

/// Puts the page together: title, header lines, panels with captions, legend on the right.
pub fn compose(
    title: &str,
    lines: &[String],
    grid: &Grid,
    panels: Vec<PanelOut>,
    legend: Vec<Entry>,
) -> Scene {
    let mut groups = Vec::new();
    let mut head = Group::new("title");
    head.push(text(
        (MARGIN, MARGIN + TITLE / 2.0),
        title,
        TITLE,
        Anchor::Start,
        BLACK,
        true,
    ));
    let mut right: f64 = MARGIN + text_width(title, TITLE, true);
    for (k, l) in lines.iter().enumerate() {
        let y = MARGIN + TITLE + 10.0 + LINE * k as f64 + LINE / 2.0;
        head.push(text(
            (MARGIN, y),
            l.as_str(),
            FONT,
            Anchor::Start,
            BLACK,
            false,
        ));
        right = right.max(MARGIN + text_width(l, FONT, false));
    }
    groups.push(head);
    for (k, p) in panels.into_iter().enumerate() {
        let o = grid.origin(k);
        let mut cap = Group::new("caption");
        cap.push(text(
            (o.0, o.1 - 12.0 - CAPTION / 2.0),
            p.caption.as_str(),
            CAPTION,
            Anchor::Start,
            BLACK,
            true,
        ));
        groups.push(cap);
        groups.extend(p.groups);
    }
    let (gw, gh) = grid.size();
    let lx = MARGIN + gw + GAP + 8.0;
    let mut ly = grid.top + 4.0;
    let mut lw: f64 = 0.0;
    if !legend.is_empty() {
        let mut g = Group::new("legend-title");
        g.push(text(
            (lx, ly + CAPTION / 2.0),
            "Legend",
            CAPTION,
            Anchor::Start,
            BLACK,
            true,
        ));
        groups.push(g);
        ly += CAPTION + 12.0;
        for e in legend {
            let mut g = Group::new(format!("legend {}", e.class));
            g.shapes.extend((e.swatch)((lx, ly)));
            g.push(text(
                (lx + 46.0, ly + 11.0),
                e.text.as_str(),
                FONT,
                Anchor::Start,
                BLACK,
                false,
            ));
            lw = lw.max(46.0 + text_width(&e.text, FONT, false));
            groups.push(g);
            ly += 30.0;
        }
    }
    let width = (lx + lw + MARGIN).max(right + MARGIN);
    let height = (grid.top + gh).max(ly) + MARGIN;
    fit(Scene {
        width: width.ceil(),
        height: height.ceil(),
        groups,
    })
}

/// The box `(x0, y0, x1, y1)` a shape covers (texts measured in the bundled face).
fn extent(s: &Shape) -> Rect {
    let over = |pts: &[Px], pad: f64| {
        pts.iter().fold(
            (
                f64::INFINITY,
                f64::INFINITY,
                f64::NEG_INFINITY,
                f64::NEG_INFINITY,
            ),
            |b, p| {
                (
                    b.0.min(p.0 - pad),
                    b.1.min(p.1 - pad),
                    b.2.max(p.0 + pad),
                    b.3.max(p.1 + pad),
                )
            },
        )
    };
    match s {
        Shape::Circle { c, r, paint } => over(&[*c], r + paint.width / 2.0),
        Shape::Polygon { pts, paint } | Shape::Path { pts, paint } => over(pts, paint.width / 2.0),
        Shape::Text {
            at,
            text,
            size,
            anchor,
            bold,
            ..
        } => {
            let w = text_width(text, *size, *bold);
            let x0 = match anchor {
                Anchor::Start => at.0,
                Anchor::Middle => at.0 - w / 2.0,
                Anchor::End => at.0 - w,
            };
            (x0, at.1 - size / 2.0, x0 + w, at.1 + size / 2.0)
        }
    }
}

/// Moves and grows the page so that every shape (a label pushed past a panel's edge, say) lies
/// at least half a margin inside it.
fn fit(mut scene: Scene) -> Scene {
    let all = scene
        .groups
        .iter()
        .flat_map(|g| g.shapes.iter())
        .map(extent)
        .fold(
            (f64::INFINITY, f64::INFINITY, scene.width, scene.height),
            |b, e| (b.0.min(e.0), b.1.min(e.1), b.2.max(e.2), b.3.max(e.3)),
        );
    let (dx, dy) = (
        (MARGIN / 2.0 - all.0).max(0.0),
        (MARGIN / 2.0 - all.1).max(0.0),
    );
    if dx > 0.0 || dy > 0.0 {
        let mv = |p: &mut Px| {
            p.0 += dx;
            p.1 += dy;
        };
        for s in scene.groups.iter_mut().flat_map(|g| g.shapes.iter_mut()) {
            match s {
                Shape::Circle { c, .. } => mv(c),
                Shape::Polygon { pts, .. } | Shape::Path { pts, .. } => pts.iter_mut().for_each(mv),
                Shape::Text { at, .. } => mv(at),
            }
        }
    }
    scene.width = scene.width.max(all.2 + dx + MARGIN / 2.0).ceil();
    scene.height = scene.height.max(all.3 + dy + MARGIN / 2.0).ceil();
    scene
}
