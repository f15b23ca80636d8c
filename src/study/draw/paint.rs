//! The drawing model as a [`Scene`]: the patch panels (checks, gate steps, qubits, faults), the
//! time-view panels and the shot panels, each with a legend of exactly the marks it uses.
//!
//! Every drawn thing is one [`Group`] whose id starts with its panel (`p0-…`) and whose classes
//! and `data-*` attributes say what it is: `qubit` (`data-qubit`, `data-at` in circuit
//! coordinates), `check` (`data-check`, `data-kind`, `data-at`), `step` (`data-check`,
//! `data-qubit`, `data-step`, `data-gate`), `fault` (`data-number`, `data-edge`, `data-qubits`,
//! `data-at`, `data-when`), `detector`, `event` (`data-detector`, `data-at`, `data-time`) and
//! `match`.

use std::collections::BTreeSet;

use super::canvas::{
    bounds, compose, text, Frame, Grid, PanelOut, Pen, Sizes, BLACK, DARK, OUTLINE, WHITE,
};
use super::legend::{check_key, entry, role_key, Key};
use super::marks::{badge, band, check_fill, check_stroke, gate_line, image, lerp, qubit, toward};
use super::model::{Check, CheckKind, Drawing, Layout, Point, Structure, View};
use super::place::hull;
use super::scene::{text_width, Anchor, Group, Paint, Scene, Shape};

/// Choices that change the look but not the content.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Style {
    /// Write every qubit's name beside it (hover shows names in SVG either way).
    pub labels: bool,
}

/// `x,y` with integers written without a decimal point.
pub(super) fn fmt_coord(p: Point) -> String {
    let f = |v: f64| {
        if v == v.trunc() {
            format!("{}", v as i64)
        } else {
            format!("{v}")
        }
    };
    format!("{},{}", f(p.0), f(p.1))
}

/// Where a check's letters and step go: its ancilla, or the middle of a product's region.
fn label_point(c: &Check) -> Point {
    if c.ancilla.is_some() {
        return c.at;
    }
    let pts: Vec<Point> = c.support.iter().map(|q| q.at).collect();
    let mut h = hull(&pts);
    if h.is_empty() {
        let mut with = pts;
        with.push(c.at);
        h = hull(&with);
    }
    if h.is_empty() {
        return c.at;
    }
    let n = h.len() as f64;
    h.iter()
        .fold((0.0, 0.0), |a, p| (a.0 + p.0 / n, a.1 + p.1 / n))
}

/// What one view paints into its panels, with the legend keys it used.
pub(super) struct Painter<'a> {
    pub layout: &'a Layout,
    pub style: Style,
    pub keys: BTreeSet<Key>,
}

impl Painter<'_> {
    pub fn name(&self, q: u32) -> &str {
        &self.layout.qubits[q as usize].name
    }

    pub fn at(&self, q: u32) -> Point {
        self.layout.qubits[q as usize].at
    }

    /// The outline of the data qubits, a thin grey line under the checks.
    fn outline(&mut self, f: &Frame, out: &mut Vec<Group>) {
        if self.layout.outline.is_empty() {
            return;
        }
        self.keys.insert(Key::Outline);
        let mut g = Group::new("outline");
        g.push(Shape::Polygon {
            pts: self.layout.outline.iter().map(|&p| f.p(p)).collect(),
            paint: Paint::stroke(OUTLINE, 1.2),
        });
        out.push(g);
    }

    /// One check's region: the hull of its support (with its own place when the support alone
    /// has no area), or a band along a support on one line.
    fn check_region(&mut self, pen: &mut Pen, k: usize, c: &Check, faint: bool) -> Group {
        let (f, s, panel) = (pen.f, pen.s, pen.panel);
        let (f, s) = (&f, &s);
        let kind = c.kind;
        self.keys.insert(check_key(kind));
        let pts: Vec<Point> = c.support.iter().map(|q| q.at).collect();
        let mut h = hull(&pts);
        if h.is_empty() {
            let mut with = pts.clone();
            with.push(c.at);
            h = hull(&with);
        }
        let (fill, alpha) = check_fill(kind);
        let alpha = if faint { alpha * 0.45 } else { alpha };
        let paint =
            Paint::both(fill, check_stroke(kind), if faint { 0.8 } else { 1.5 }).opacity(alpha);
        // As the language writes a product: `x d[0,0] * z d[0,1]`.
        let product: Vec<String> = c
            .support
            .iter()
            .map(|q| {
                format!(
                    "{} {}",
                    q.pauli.letter().to_ascii_lowercase(),
                    self.name(q.qubit)
                )
            })
            .collect();
        let names: Vec<&str> = c.support.iter().map(|q| self.name(q.qubit)).collect();
        let paulis: String = c.support.iter().map(|q| q.pauli.letter()).collect();
        let mut g = Group::new(format!("check check-{}", kind.class()))
            .id(format!("p{panel}-check-{k}"))
            .title(format!(
                "{} `{}`: measures {}",
                kind.name(),
                c.name,
                product.join(" * ")
            ))
            .data("check", c.name.clone())
            .data("kind", kind.class())
            .data("at", fmt_coord(c.at))
            .data("support", names.join(" "))
            .data("paulis", paulis);
        if h.is_empty() {
            // All on one line: a band from end to end.
            let mut ends = pts.clone();
            ends.push(c.at);
            ends.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.total_cmp(&b.1)));
            let (a, b) = (f.p(ends[0]), f.p(ends[ends.len() - 1]));
            g.push(Shape::Polygon {
                pts: band(
                    toward(a, b, -0.2 * s.nn),
                    toward(b, a, -0.2 * s.nn),
                    0.32 * s.nn,
                ),
                paint,
            });
        } else {
            g.push(Shape::Polygon {
                pts: h.iter().map(|&p| f.p(p)).collect(),
                paint,
            });
        }
        g
    }

    /// The letters of a mixed check beside the line to each qubit, and the kind letter of a
    /// product check at its centre.
    fn check_letters(&mut self, pen: &mut Pen, c: &Check, g: &mut Group) {
        let (f, s) = (pen.f, pen.s);
        let (f, s) = (&f, &s);
        let centre = f.p(label_point(c));
        if c.kind == CheckKind::Mixed && s.detail {
            self.keys.insert(Key::Corner);
            for q in &c.support {
                let p = f.p(q.at);
                let at = if c.couplings.is_empty() {
                    lerp(centre, p, 0.62)
                } else {
                    // Beside the gate line, which runs from the ancilla to the qubit.
                    let m = lerp(centre, p, 0.68);
                    let len = ((p.0 - centre.0).powi(2) + (p.1 - centre.1).powi(2))
                        .sqrt()
                        .max(1e-9);
                    let off = 0.6 * s.small + 5.0;
                    (
                        m.0 - (p.1 - centre.1) / len * off,
                        m.1 + (p.0 - centre.0) / len * off,
                    )
                };
                pen.placer.block_circle(at, 0.5 * s.small + 2.0);
                g.push(text(
                    at,
                    q.pauli.letter().to_string(),
                    s.small + 2.5,
                    Anchor::Middle,
                    BLACK,
                    true,
                ));
            }
        }
        if c.ancilla.is_none() && c.kind != CheckKind::Mixed {
            let letter = match c.kind {
                CheckKind::X => "X",
                CheckKind::Y => "Y",
                _ => "Z",
            };
            let at = if c.step.is_some() && s.detail {
                (centre.0 - s.badge, centre.1)
            } else {
                centre
            };
            g.push(text(at, letter, s.small + 4.0, Anchor::Middle, BLACK, true));
        }
    }

    /// The ancilla's gates: lines to each qubit with their steps.
    fn couplings(&mut self, pen: &mut Pen, c: &Check, out: &mut Vec<Group>) {
        let (f, s, panel) = (pen.f, pen.s, pen.panel);
        let (f, s) = (&f, &s);
        let Some(a) = c.ancilla else {
            if let (Some(step), true) = (c.step, s.detail) {
                self.keys.insert(Key::ProductStep);
                let centre = f.p(label_point(c));
                let at = if c.kind == CheckKind::Mixed {
                    centre
                } else {
                    (centre.0 + s.badge + 2.0, centre.1)
                };
                let mut g = Group::new("step product")
                    .id(format!("p{panel}-step-{}", c.name))
                    .title(format!("`{}` is measured at step {step}", c.name))
                    .data("check", c.name.clone())
                    .data("step", step.to_string());
                g.shapes.extend(badge(at, &step.to_string(), s));
                pen.placer.block_circle(at, s.badge + 1.0);
                pen.placer.block_circle(centre, s.badge + 1.0);
                out.push(g);
            }
            return;
        };
        let ca = f.p(c.at);
        for k in &c.couplings {
            self.keys.insert(Key::Gate(k.gate));
            let target = c
                .support
                .iter()
                .find(|q| q.qubit == k.qubit)
                .map(|q| q.at)
                .unwrap_or_else(|| self.at(k.qubit));
            let cq = f.p(target);
            let (from, to, rf, rt) = if k.ancilla_first {
                (ca, cq, s.rq, s.rq)
            } else {
                (cq, ca, s.rq, s.rq)
            };
            let (ga, gb) = if k.ancilla_first {
                (self.name(a), self.name(k.qubit))
            } else {
                (self.name(k.qubit), self.name(a))
            };
            let mut g = Group::new(format!("step {}", k.gate.name()))
                .id(format!(
                    "p{panel}-step-{}-{}",
                    self.name(a),
                    self.name(k.qubit)
                ))
                .title(format!(
                    "step {}: {} {ga} {gb} (check `{}`)",
                    k.step,
                    k.gate.name(),
                    c.name
                ))
                .data("check", c.name.clone())
                .data("qubit", self.name(k.qubit).to_string())
                .data("step", k.step.to_string())
                .data("gate", k.gate.name());
            g.shapes
                .extend(gate_line(k.gate, from, to, rf, rt, s.line, BLACK));
            if s.detail {
                self.keys.insert(Key::Step);
                g.shapes
                    .extend(badge(lerp(ca, cq, 0.42), &k.step.to_string(), s));
                pen.placer.block_circle(lerp(ca, cq, 0.42), s.badge + 1.0);
            }
            out.push(g);
        }
    }

    /// Every qubit (and the images of wrapped checks), with names beside them if asked.
    fn qubits(&mut self, pen: &mut Pen, checks: &[Check], faint: bool, out: &mut Vec<Group>) {
        let (f, s, panel) = (pen.f, pen.s, pen.panel);
        let (f, s) = (&f, &s);
        let mut images: Vec<(u32, Point)> = Vec::new();
        for c in checks {
            for q in &c.support {
                let own = self.at(q.qubit);
                if (q.at.0 - own.0).abs() > 1e-9 || (q.at.1 - own.1).abs() > 1e-9 {
                    images.push((q.qubit, q.at));
                }
            }
        }
        images.sort_by(|a, b| {
            a.0.cmp(&b.0)
                .then(a.1 .0.total_cmp(&b.1 .0))
                .then(a.1 .1.total_cmp(&b.1 .1))
        });
        images.dedup();
        for (q, at) in images {
            self.keys.insert(Key::Image);
            let mut g = Group::new("image")
                .title(format!(
                    "image of `{}` across the periodic boundary",
                    self.name(q)
                ))
                .data("qubit", self.name(q).to_string())
                .data("at", fmt_coord(at));
            g.shapes.extend(image(f.p(at), s.rq));
            out.push(g);
        }
        // Kind letters inside the ancillas of uniform checks.
        let mut letter: Vec<Option<char>> = vec![None; self.layout.qubits.len()];
        for c in checks {
            if let (Some(a), false) = (c.ancilla, c.kind == CheckKind::Mixed) {
                letter[a as usize] = c.support.first().map(|q| q.pauli.letter());
            }
        }
        for q in &self.layout.qubits {
            let lettered = !faint && letter[q.index as usize].is_some();
            self.keys.insert(if lettered {
                Key::AncillaLetter
            } else {
                role_key(q.role)
            });
            let c = f.p(q.at);
            pen.placer.block_circle(c, s.rq + 2.0);
            let mut g = Group::new(format!("qubit {}", q.role.name()))
                .id(format!("p{panel}-qubit-{}", q.index))
                .title(format!(
                    "{} ({} qubit at {})",
                    q.name,
                    q.role.name(),
                    fmt_coord(q.at)
                ))
                .data("qubit", q.name.clone())
                .data("at", fmt_coord(q.at));
            g.shapes.extend(qubit(q.role, c, s.rq, faint));
            if let (Some(l), false) = (letter[q.index as usize], faint) {
                g.push(text(
                    c,
                    l.to_string(),
                    s.rq * 1.15,
                    Anchor::Middle,
                    WHITE,
                    true,
                ));
            }
            out.push(g);
        }
        if self.style.labels {
            let size = s.small;
            // Below a qubit first, then above, then on the diagonals: beside it a label would
            // sit on the gate lines of a chain.
            let dirs = [
                (0.0, 1.0),
                (0.0, -1.0),
                (1.0, 1.0),
                (-1.0, 1.0),
                (1.0, -1.0),
                (-1.0, -1.0),
                (1.0, 0.0),
                (-1.0, 0.0),
            ];
            for q in &self.layout.qubits {
                let c = f.p(q.at);
                let w = text_width(&q.name, size, false);
                let at = pen.placer.place_along(c, s.rq + 1.0, w, size + 2.0, &dirs);
                let mut g = Group::new("label").data("qubit", q.name.clone());
                g.push(text(
                    (at.0, at.1 + (size + 2.0) / 2.0),
                    q.name.as_str(),
                    size,
                    Anchor::Start,
                    DARK,
                    false,
                ));
                out.push(g);
            }
        }
    }

    /// A patch panel: outline, checks, gate steps, qubits.
    fn patch(&mut self, pen: &mut Pen, st: &Structure) -> Vec<Group> {
        let (f, s) = (pen.f, pen.s);
        let (f, s) = (&f, &s);
        let mut out = Vec::new();
        self.outline(f, &mut out);
        let mut regions = Vec::new();
        for (k, c) in st.checks.iter().enumerate() {
            let mut g = self.check_region(pen, k, c, false);
            self.check_letters(pen, c, &mut g);
            regions.push(g);
        }
        out.extend(regions);
        for c in &st.checks {
            self.couplings(pen, c, &mut out);
        }
        self.qubits(pen, &st.checks, false, &mut out);
        for c in &st.checks {
            if c.ancilla.is_none() {
                pen.placer.block_circle(f.p(c.at), s.badge * 2.5);
            }
        }
        out
    }

    /// A faint patch behind time-view and shot panels.
    pub fn faint_patch(&mut self, pen: &mut Pen, st: Option<&Structure>) -> Vec<Group> {
        let mut out = Vec::new();
        self.outline(&pen.f, &mut out);
        let checks: &[Check] = st.map_or(&[], |st| &st.checks);
        for (k, c) in checks.iter().enumerate() {
            out.push(self.check_region(pen, k, c, true));
        }
        self.qubits(pen, checks, true, &mut out);
        out
    }
}

/// Panel geometry shared by every panel of a view: bounds over the qubits, check places and
/// images, padded by `pad` spacings, at `nn` pixels per spacing but at most `max` pixels on the
/// longer side.
fn panel_frame(
    layout: &Layout,
    extra: impl Iterator<Item = Point>,
    nn: f64,
    max: f64,
) -> (Frame, Sizes) {
    let sp = layout.spacing;
    let (x0, y0, x1, y1) = bounds(layout.qubits.iter().map(|q| q.at).chain(extra), 0.85 * sp);
    let unit = (nn / sp).min(max / (x1 - x0).max(y1 - y0).max(1e-9));
    let f = Frame {
        ox: 0.0,
        oy: 0.0,
        xmin: x0,
        ymin: y0,
        unit,
        w: (x1 - x0) * unit,
        h: (y1 - y0) * unit,
    };
    (f, Sizes::for_spacing(unit * sp))
}

fn structure_points(st: &[Structure]) -> impl Iterator<Item = Point> + '_ {
    st.iter()
        .flat_map(|s| s.checks.iter())
        .flat_map(|c| std::iter::once(c.at).chain(c.support.iter().map(|q| q.at)))
}

/// The scene of a drawing.
pub fn scene(d: &Drawing, style: Style) -> Scene {
    let layout = &d.layout;
    let mut p = Painter {
        layout,
        style,
        keys: BTreeSet::new(),
    };
    let mut lines: Vec<String> = d.notes.clone();
    let (title, grid, panels) = match &d.view {
        View::Patch(overlay) => {
            let (f0, s) = panel_frame(layout, structure_points(&layout.structures), 105.0, 1000.0);
            if let Some(o) = overlay {
                lines.insert(0, o.title.clone());
            }
            let any_steps = layout
                .structures
                .iter()
                .flat_map(|st| &st.checks)
                .any(|c| !c.couplings.is_empty() || c.step.is_some());
            if !s.detail && any_steps {
                lines.push(
                    "the patch is too dense for step numbers: `--layers` shows the steps one by one"
                        .into(),
                );
            }
            let n = layout.structures.len().max(1);
            let grid = Grid::new(n, f0.w, f0.h, 3, lines.len());
            let mut panels = Vec::new();
            let empty = Structure {
                rounds: Vec::new(),
                checks: Vec::new(),
                steps: 0,
            };
            for k in 0..n {
                let st = layout.structures.get(k).unwrap_or(&empty);
                let o = grid.origin(k);
                let f = Frame {
                    ox: o.0,
                    oy: o.1,
                    ..f0
                };
                let mut pen = Pen::new(f, s, k);
                let mut groups = p.patch(&mut pen, st);
                if let Some(ov) = overlay {
                    p.faults(&mut pen, ov, k, &mut groups);
                }
                let caption = if st.checks.is_empty() {
                    format!("{} (no checks found)", st.title())
                } else {
                    let n =
                        |k: usize, one: &str| format!("{k} {one}{}", if k == 1 { "" } else { "s" });
                    format!(
                        "{}: {}, {}",
                        st.title(),
                        n(st.checks.len(), "check"),
                        n(st.steps as usize, "step")
                    )
                };
                panels.push(PanelOut { caption, groups });
            }
            let what = if overlay.is_some() {
                "faults on the patch"
            } else {
                "layout and gate order"
            };
            (format!("{}: {what}", layout.source), grid, panels)
        }
        View::Layers {
            title,
            round,
            panels: lps,
        } => {
            let (f0, s) = panel_frame(layout, structure_points(&layout.structures), 72.0, 400.0);
            let st = layout.structures.iter().find(|st| match round {
                Some(r) => st.rounds.contains(r),
                None => st.rounds.is_empty(),
            });
            let grid = Grid::new(lps.len(), f0.w, f0.h, 3, lines.len());
            let mut panels = Vec::new();
            for (k, lp) in lps.iter().enumerate() {
                let o = grid.origin(k);
                let f = Frame {
                    ox: o.0,
                    oy: o.1,
                    ..f0
                };
                let mut pen = Pen::new(f, s, k);
                let mut groups = p.faint_patch(&mut pen, st);
                p.layer(&mut pen, lp, st, &mut groups);
                panels.push(PanelOut {
                    caption: lp.label.clone(),
                    groups,
                });
            }
            (format!("{}: {title}", layout.source), grid, panels)
        }
        View::Shot(o) => {
            let (f0, s) = panel_frame(
                layout,
                structure_points(&layout.structures).chain(o.events.iter().map(|e| e.at)),
                72.0,
                440.0,
            );
            let flips = |v: &[String]| {
                if v.is_empty() {
                    "no observable".to_string()
                } else {
                    v.iter()
                        .map(|n| format!("`{n}`"))
                        .collect::<Vec<_>>()
                        .join(", ")
                }
            };
            let verdict = if o.predicted == o.flipped {
                "the decoder is right"
            } else {
                "the decoder is wrong: a logical error"
            };
            let to_boundary = o.pairs.iter().filter(|p| p.1.is_none()).count();
            let plural = |n: usize, one: &str, many: &str| {
                format!("{n} {}", if n == 1 { one } else { many })
            };
            lines.insert(
                0,
                format!(
                    "{}: {}, {} to the boundary",
                    plural(o.events.len(), "detection event", "detection events"),
                    plural(o.pairs.len() - to_boundary, "matched pair", "matched pairs"),
                    plural(to_boundary, "event matched", "events matched")
                ),
            );
            lines.insert(
                1,
                format!(
                    "the decoder predicts {} flipped, the shot flipped {}: {verdict}",
                    flips(&o.predicted),
                    flips(&o.flipped)
                ),
            );
            let grid = Grid::new(o.slices.len(), f0.w, f0.h, 4, lines.len());
            let mut panels = Vec::new();
            let st = layout.structures.first();
            for (k, &t) in o.slices.iter().enumerate() {
                let org = grid.origin(k);
                let f = Frame {
                    ox: org.0,
                    oy: org.1,
                    ..f0
                };
                let mut pen = Pen::new(f, s, k);
                let mut groups = p.faint_patch(&mut pen, st);
                p.shot(&mut pen, o, t, &mut groups);
                panels.push(PanelOut {
                    caption: format!("time {t}"),
                    groups,
                });
            }
            (
                format!("{}: shot with seed {}", layout.source, o.seed),
                grid,
                panels,
            )
        }
    };
    let legend = p.keys.iter().map(|&k| entry(k)).collect();
    compose(&title, &lines, &grid, panels, legend)
}
