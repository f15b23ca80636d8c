//! Painting the overlays: faults with their spread and the detectors an edge flips on a patch
//! panel, the events and matching of a shot on its time panels, and the operations of a layer on
//! a time-view panel.

use crate::base::Pauli;
use crate::faults::FaultClass;

use super::canvas::bounds;
use super::canvas::{
    tag, tag_size, text, Frame, Pen, Placer, Sizes, BLACK, BLUE, GREEN, VERMILLION, WHITE,
};
use super::legend::Key;
use super::marks::{band, detector, event, fault_colour, fault_ring, gate_line, op_badge, toward};
use super::model::{
    DetectorMark, FaultMark, FaultOverlay, LayerOp, LayerPanel, Point, ShotOverlay, Structure,
};
use super::paint::{fmt_coord, Painter};
use super::place::hull;
use super::scene::{text_width, Anchor, Group, Paint, Px, Rgb, Shape};

impl Painter<'_> {
    /// The faults of an overlay on their qubits, numbered, with their spread.
    pub(super) fn faults(
        &mut self,
        pen: &mut Pen,
        o: &FaultOverlay,
        which: usize,
        out: &mut Vec<Group>,
    ) {
        let (f, s, panel) = (pen.f, pen.s, pen.panel);
        let (f, s) = (&f, &s);
        for (k, m) in o
            .marks
            .iter()
            .enumerate()
            .filter(|(_, m)| m.structure == which)
        {
            out.push(self.fault(pen, k, m));
        }
        for d in &o.detectors {
            self.keys.insert(Key::Detector);
            let c = f.p(d.at);
            let mut g = Group::new("detector")
                .id(format!("p{panel}-detector-{}", d.index))
                .title(format!("detector `{}` at time {} flips", d.name, d.time))
                .data("detector", d.index.to_string())
                .data("at", fmt_coord(d.at))
                .data("time", d.time.to_string());
            g.shapes.extend(detector(c, 0.9 * s.rq));
            let label = format!("t={}", d.time);
            let (w, h) = tag_size(&label, s.tag);
            let at = pen.placer.place(c, s.rq, w, h, f.out(c));
            tag(&mut g, at, &label, s.tag, BLACK, false);
            out.push(g);
        }
    }

    fn fault(&mut self, pen: &mut Pen, k: usize, m: &FaultMark) -> Group {
        let (f, s, panel) = (pen.f, pen.s, pen.panel);
        let (f, s) = (&f, &s);
        let high = m.class == FaultClass::High;
        self.keys.insert(if high { Key::High } else { Key::Low });
        let ink = fault_colour(high);
        let names: Vec<&str> = m.qubits.iter().map(|&q| self.name(q)).collect();
        let mut title = format!(
            "{}edge {} ({}-rate): {} on {} ({}) — {} `{}`; p = {:.2e}",
            if m.number > 0 {
                format!("fault {}: ", m.number)
            } else {
                String::new()
            },
            m.edge,
            m.class.name(),
            m.term,
            names.join(" "),
            m.when_long,
            m.location,
            m.op,
            m.probability
        );
        if m.others > 0 {
            title += &format!("; {} other circuit faults give the same edge", m.others);
        }
        if !m.spread.is_empty() {
            let sp: Vec<String> = m
                .spread
                .iter()
                .map(|&(q, p)| format!("{} on {}", p.letter(), self.name(q)))
                .collect();
            title += &format!("; by the end of the round it is {}", sp.join(", "));
        }
        let mut g = Group::new(format!("fault fault-{}", m.class.name()))
            .id(format!("p{panel}-fault-{k}"))
            .title(title)
            .data("number", m.number.to_string())
            .data("edge", m.edge.to_string())
            .data("qubits", names.join(" "))
            .data(
                "at",
                m.at.iter()
                    .map(|&p| fmt_coord(p))
                    .collect::<Vec<_>>()
                    .join(";"),
            )
            .data("when", m.when.clone());
        if m.on_gate && m.qubits.len() == 2 {
            let (a, b) = (f.p(self.at(m.qubits[0])), f.p(self.at(m.qubits[1])));
            g.push(Shape::Polygon {
                pts: band(a, b, 0.22 * s.nn),
                paint: Paint::fill(ink).opacity(0.30),
            });
        }
        let r = s.rq + 6.0;
        for &p in &m.at {
            g.push(fault_ring(f.p(p), r, high));
        }
        if let Some(&first) = m.at.first() {
            let from = f.p(first);
            for &(q, p) in &m.spread {
                self.keys.insert(Key::Spread);
                let to = f.p(self.at(q));
                let mut paint = Paint::stroke(ink, 2.2).dashed(2.0, 4.0);
                paint.width = 2.2;
                g.push(Shape::Path {
                    pts: vec![toward(from, to, r), toward(to, from, r)],
                    paint,
                });
                g.push(Shape::Circle {
                    c: to,
                    r,
                    paint: Paint::stroke(ink, 2.2).dashed(2.0, 4.0),
                });
                let lc = (to.0 - r * 0.75, to.1 - r * 0.75);
                g.push(Shape::Circle {
                    c: lc,
                    r: s.small * 0.8,
                    paint: Paint::both(ink, WHITE, 1.0),
                });
                g.push(text(
                    lc,
                    p.letter().to_string(),
                    s.small * 1.05,
                    Anchor::Middle,
                    WHITE,
                    true,
                ));
                pen.placer.block_circle(lc, s.small * 0.8);
            }
            let label = if m.number > 0 {
                format!("{}: {} {}", m.number, m.term, m.when)
            } else {
                format!("{} {}", m.term, m.when)
            };
            let (w, h) = tag_size(&label, s.tag);
            let at = pen.placer.place(from, r + 2.0, w, h, f.out(from));
            // A tag pushed away from its fault gets a leader line back to the ring.
            let near = (from.0.clamp(at.0, at.0 + w), from.1.clamp(at.1, at.1 + h));
            let gap = ((near.0 - from.0).powi(2) + (near.1 - from.1).powi(2)).sqrt();
            if gap > r + 10.0 {
                g.push(Shape::Path {
                    pts: vec![toward(from, near, r + 2.0), near],
                    paint: Paint::stroke(ink, 1.5),
                });
            }
            tag(&mut g, at, &label, s.tag, ink, !high);
        }
        g
    }

    /// A shot panel's events, matches and boundary matches for one time slice.
    pub(super) fn shot(&mut self, pen: &mut Pen, o: &ShotOverlay, t: f64, out: &mut Vec<Group>) {
        let (f, s, panel) = (pen.f, pen.s, pen.panel);
        let (f, s) = (&f, &s);
        let by = |d: u32| o.events.iter().find(|e| e.index == d);
        let here = |e: &DetectorMark| (e.time - t).abs() < 1e-9;
        let r = 0.85 * s.rq + 2.0;
        for &(a, b) in &o.pairs {
            let Some(ea) = by(a) else { continue };
            let eb = b.and_then(by);
            // Draw each pair once per slice it touches.
            let (mine, other) = match eb {
                Some(eb) if here(ea) => (ea, Some(eb)),
                Some(eb) if here(eb) => (eb, Some(ea)),
                None if here(ea) => (ea, None),
                _ => continue,
            };
            let c = f.p(mine.at);
            let mut g = Group::new(if other.is_some() {
                "match"
            } else {
                "match boundary"
            })
            .data(
                "detectors",
                match other {
                    Some(o) => format!("{} {}", mine.index, o.index),
                    None => mine.index.to_string(),
                },
            );
            match other {
                Some(o2) if here(o2) => {
                    self.keys.insert(Key::Pair);
                    let d = f.p(o2.at);
                    g = g.title(format!("matched pair `{}` – `{}`", mine.name, o2.name));
                    g.push(Shape::Path {
                        pts: vec![toward(c, d, r), toward(d, c, r)],
                        paint: Paint::stroke(BLUE, 4.0),
                    });
                }
                Some(o2) => {
                    self.keys.insert(Key::Across);
                    let d = f.p(o2.at);
                    g = g.title(format!(
                        "`{}` is matched to `{}` at time {}",
                        mine.name, o2.name, o2.time
                    ));
                    if (d.0 - c.0).abs() + (d.1 - c.1).abs() > 1.0 {
                        g.push(Shape::Path {
                            pts: vec![toward(c, d, r), toward(d, c, r)],
                            paint: Paint::stroke(BLUE, 3.0).dashed(7.0, 4.0),
                        });
                        g.push(Shape::Circle {
                            c: d,
                            r,
                            paint: Paint::stroke(BLUE, 2.5).dashed(4.0, 3.0),
                        });
                    }
                    if (d.0 - c.0).abs() + (d.1 - c.1).abs() <= 1.0 {
                        // Same place, another time: a dashed ring says the partner is here.
                        g.push(Shape::Circle {
                            c,
                            r: r + 5.0,
                            paint: Paint::stroke(BLUE, 2.5).dashed(4.0, 3.0),
                        });
                    }
                    let label = format!("t={}", o2.time);
                    let (w, h) = tag_size(&label, s.tag);
                    let anchor = if (d.0 - c.0).abs() + (d.1 - c.1).abs() > 1.0 {
                        d
                    } else {
                        c
                    };
                    let at = pen.placer.place(anchor, r + 1.0, w, h, f.out(anchor));
                    tag(&mut g, at, &label, s.tag, BLUE, true);
                }
                None => {
                    self.keys.insert(Key::Boundary);
                    let place = o
                        .boundary
                        .iter()
                        .find(|b| b.0 == mine.index)
                        .and_then(|b| b.1)
                        .unwrap_or_else(|| self.boundary_point(mine.at));
                    let p = f.p(place);
                    g = g.title(format!("`{}` is matched to the boundary", mine.name));
                    let end = toward(p, c, -4.0);
                    g.push(Shape::Path {
                        pts: vec![toward(c, p, r), end],
                        paint: Paint::stroke(BLUE, 4.0),
                    });
                    let len = ((end.0 - c.0).powi(2) + (end.1 - c.1).powi(2))
                        .sqrt()
                        .max(1e-9);
                    let (nx, ny) = (-(end.1 - c.1) / len * 9.0, (end.0 - c.0) / len * 9.0);
                    g.push(Shape::Path {
                        pts: vec![(end.0 + nx, end.1 + ny), (end.0 - nx, end.1 - ny)],
                        paint: Paint::stroke(BLUE, 4.0),
                    });
                }
            }
            out.push(g);
        }
        for e in o.events.iter().filter(|e| here(e)) {
            self.keys.insert(Key::Event);
            let c = f.p(e.at);
            pen.placer.block_circle(c, r);
            let mut g = Group::new("event")
                .id(format!("p{panel}-event-{}", e.index))
                .title(format!(
                    "detection event: detector `{}` at time {}",
                    e.name, e.time
                ))
                .data("detector", e.index.to_string())
                .data("at", fmt_coord(e.at))
                .data("time", e.time.to_string());
            g.shapes.extend(event(c, r));
            out.push(g);
        }
    }

    /// The nearest point on the box around the qubits (half a spacing out), along an axis on
    /// which the qubits spread.
    fn boundary_point(&self, p: Point) -> Point {
        let pad = 0.6 * self.layout.spacing;
        let (x0, y0, x1, y1) = bounds(self.layout.qubits.iter().map(|q| q.at), pad);
        let mut best = (f64::INFINITY, p);
        if x1 - x0 > 2.0 * pad + 1e-9 {
            for x in [x0, x1] {
                let d = (p.0 - x).abs();
                if d < best.0 {
                    best = (d, (x, p.1));
                }
            }
        }
        if y1 - y0 > 2.0 * pad + 1e-9 {
            for y in [y0, y1] {
                let d = (p.1 - y).abs();
                if d < best.0 {
                    best = (d, (p.0, y));
                }
            }
        }
        best.1
    }

    /// A time-view panel: what acts in one layer.
    pub(super) fn layer(
        &mut self,
        pen: &mut Pen,
        lp: &LayerPanel,
        st: Option<&Structure>,
        out: &mut Vec<Group>,
    ) {
        let (f, s, panel) = (pen.f, pen.s, pen.panel);
        let (f, s) = (&f, &s);
        for (k, op) in lp.ops.iter().enumerate() {
            let mut g = Group::new("op")
                .id(format!("p{panel}-op-{k}"))
                .data("layer", lp.layer.to_string());
            match op {
                LayerOp::Gate2 { gate, a, b } => {
                    self.keys.insert(Key::Gate(*gate));
                    g.class = format!("op gate2 {}", gate.name());
                    g = g
                        .title(format!(
                            "{} {} {}",
                            gate.name(),
                            self.name(*a),
                            self.name(*b)
                        ))
                        .data("qubits", format!("{} {}", self.name(*a), self.name(*b)));
                    g.shapes.extend(gate_line(
                        *gate,
                        f.p(self.at(*a)),
                        f.p(self.at(*b)),
                        s.rq,
                        s.rq,
                        2.6,
                        BLACK,
                    ));
                }
                LayerOp::Gate1 { gate, qubit } => {
                    self.keys.insert(Key::Gate1);
                    g.class = format!("op gate1 {}", gate.name());
                    g = g
                        .title(format!("{} {}", gate.name(), self.name(*qubit)))
                        .data("qubits", self.name(*qubit).to_string());
                    g.shapes.extend(self.op_mark(
                        f,
                        s,
                        *qubit,
                        gate.name(),
                        GREEN,
                        &mut pen.placer,
                    ));
                }
                LayerOp::Reset { basis, qubit } => {
                    self.keys.insert(Key::Reset);
                    g.class = "op reset".into();
                    g = g
                        .title(format!("reset {} {}", basis.name(), self.name(*qubit)))
                        .data("qubits", self.name(*qubit).to_string());
                    g.shapes.extend(self.op_mark(
                        f,
                        s,
                        *qubit,
                        &format!("R{}", basis.name()),
                        BLUE,
                        &mut pen.placer,
                    ));
                }
                LayerOp::Measure { factors } => {
                    self.keys.insert(Key::Measure);
                    g.class = "op measure".into();
                    let text: Vec<String> = factors
                        .iter()
                        .map(|&(q, p)| {
                            format!("{} {}", p.letter().to_ascii_lowercase(), self.name(q))
                        })
                        .collect();
                    g = g.title(format!("measure {}", text.join(" * "))).data(
                        "qubits",
                        factors
                            .iter()
                            .map(|&(q, _)| self.name(q).to_string())
                            .collect::<Vec<_>>()
                            .join(" "),
                    );
                    if let [(q, p)] = factors.as_slice() {
                        let label = format!("M{}", p.letter().to_ascii_lowercase());
                        g.shapes.extend(self.op_mark(
                            f,
                            s,
                            *q,
                            &label,
                            VERMILLION,
                            &mut pen.placer,
                        ));
                    } else {
                        g.shapes.extend(self.product(f, s, factors, st));
                    }
                }
            }
            out.push(g);
        }
    }

    /// A short badge above a qubit.
    fn op_mark(
        &self,
        f: &Frame,
        s: &Sizes,
        q: u32,
        label: &str,
        ink: Rgb,
        placer: &mut Placer,
    ) -> Vec<Shape> {
        let c = f.p(self.at(q));
        // Readable on a slide even in the small panels of the time view.
        let size = s.small.max(13.0);
        let (w, h) = (text_width(label, size, true) + 8.0, size + 6.0);
        let at = placer.place(c, s.rq * 0.7, w, h, f.out(c));
        op_badge((at.0 + w / 2.0, at.1 + h / 2.0), label, size, ink)
    }

    /// A product measurement in the time view: its region outlined, `M` at its centre.
    fn product(
        &self,
        f: &Frame,
        s: &Sizes,
        factors: &[(u32, Pauli)],
        st: Option<&Structure>,
    ) -> Vec<Shape> {
        let mut qs: Vec<u32> = factors.iter().map(|x| x.0).collect();
        qs.sort_unstable();
        let check = st.and_then(|st| {
            st.checks.iter().find(|c| {
                c.ancilla.is_none() && {
                    let mut cq: Vec<u32> = c.support.iter().map(|q| q.qubit).collect();
                    cq.sort_unstable();
                    cq == qs
                }
            })
        });
        let (centre, pts): (Point, Vec<Point>) = match check {
            Some(c) => (c.at, c.support.iter().map(|q| q.at).collect()),
            None => {
                let pts: Vec<Point> = qs.iter().map(|&q| self.at(q)).collect();
                let n = pts.len().max(1) as f64;
                (
                    pts.iter()
                        .fold((0.0, 0.0), |a, p| (a.0 + p.0 / n, a.1 + p.1 / n)),
                    pts,
                )
            }
        };
        let mut out = Vec::new();
        let h = hull(&pts);
        let ring: Vec<Px> = if h.is_empty() {
            pts.iter().map(|&p| f.p(p)).collect()
        } else {
            h.iter().map(|&p| f.p(p)).collect()
        };
        if ring.len() >= 2 {
            out.push(Shape::Polygon {
                pts: ring,
                paint: Paint::stroke(VERMILLION, 3.0),
            });
        }
        out.extend(op_badge(f.p(centre), "M", s.small.max(13.0), VERMILLION));
        out
    }
}
