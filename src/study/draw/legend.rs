//! The legend: one entry per kind of mark a picture uses, each with a swatch drawn by the same
//! code as the mark itself (`marks.rs`) and a line of text.

use crate::base::Gate;

use super::canvas::{text, Entry, Sizes, BLACK, BLUE, DARK, GREEN, OUTLINE, VERMILLION, WHITE};
use super::marks::{
    badge, check_fill, check_stroke, detector, event, fault_ring, gate_line, image, op_badge, qubit,
};
use super::model::{CheckKind, Role};
use super::scene::{Anchor, Paint, Px, Shape};

/// Legend entries, in the order they are listed.
#[allow(missing_docs)]
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub(super) enum Key {
    Data,
    Ancilla,
    AncillaLetter,
    Flag,
    Other,
    Image,
    Outline,
    CheckX,
    CheckY,
    CheckZ,
    CheckMixed,
    Gate(Gate),
    Step,
    ProductStep,
    Corner,
    Reset,
    Measure,
    Gate1,
    High,
    Low,
    Spread,
    Detector,
    Event,
    Pair,
    Across,
    Boundary,
}

pub(super) fn check_key(k: CheckKind) -> Key {
    match k {
        CheckKind::X => Key::CheckX,
        CheckKind::Y => Key::CheckY,
        CheckKind::Z => Key::CheckZ,
        CheckKind::Mixed => Key::CheckMixed,
    }
}

pub(super) fn role_key(r: Role) -> Key {
    match r {
        Role::Data => Key::Data,
        Role::Ancilla => Key::Ancilla,
        Role::Flag => Key::Flag,
        Role::Other => Key::Other,
    }
}

/// Draws a swatch in the 36 × 22 box at a top-left corner.
type Swatch = Box<dyn Fn(Px) -> Vec<Shape>>;

/// The legend entry of a kind of mark.
pub(super) fn entry(key: Key) -> Entry {
    let s = Sizes::for_spacing(100.0);
    let mid = |o: Px| (o.0 + 18.0, o.1 + 11.0);
    let (class, text_, swatch): (&str, String, Swatch) = match key {
        Key::Data => (
            "legend-data",
            "data qubit".into(),
            Box::new(move |o| qubit(Role::Data, mid(o), 9.0, false)),
        ),
        Key::Ancilla => (
            "legend-ancilla",
            "ancilla qubit".into(),
            Box::new(move |o| qubit(Role::Ancilla, mid(o), 9.0, false)),
        ),
        Key::AncillaLetter => (
            "legend-ancilla",
            "ancilla qubit (letter: the type of its check)".into(),
            Box::new(move |o| {
                let mut v = qubit(Role::Ancilla, mid(o), 9.0, false);
                v.push(text(mid(o), "X", 10.5, Anchor::Middle, WHITE, true));
                v
            }),
        ),
        Key::Outline => (
            "legend-outline",
            "outline of the data qubits".into(),
            Box::new(move |o: Px| {
                vec![Shape::Path {
                    pts: vec![(o.0, o.1 + 11.0), (o.0 + 36.0, o.1 + 11.0)],
                    paint: Paint::stroke(OUTLINE, 1.2),
                }]
            }),
        ),
        Key::Flag => (
            "legend-flag",
            "flag qubit".into(),
            Box::new(move |o| qubit(Role::Flag, mid(o), 9.0, false)),
        ),
        Key::Other => (
            "legend-other",
            "qubit without a known role".into(),
            Box::new(move |o| qubit(Role::Other, mid(o), 9.0, false)),
        ),
        Key::Image => (
            "legend-image",
            "a qubit seen across the periodic boundary".into(),
            Box::new(move |o| image(mid(o), 9.0)),
        ),
        Key::CheckX | Key::CheckY | Key::CheckZ | Key::CheckMixed => {
            let kind = match key {
                Key::CheckX => CheckKind::X,
                Key::CheckY => CheckKind::Y,
                Key::CheckZ => CheckKind::Z,
                _ => CheckKind::Mixed,
            };
            let (fill, a) = check_fill(kind);
            let class = match kind {
                CheckKind::X => "legend-check-x",
                CheckKind::Y => "legend-check-y",
                CheckKind::Z => "legend-check-z",
                CheckKind::Mixed => "legend-check-mixed",
            };
            (
                class,
                kind.name().into(),
                Box::new(move |o: Px| {
                    vec![Shape::Polygon {
                        pts: vec![
                            (o.0 + 2.0, o.1 + 1.0),
                            (o.0 + 34.0, o.1 + 1.0),
                            (o.0 + 34.0, o.1 + 21.0),
                            (o.0 + 2.0, o.1 + 21.0),
                        ],
                        paint: Paint::both(fill, check_stroke(kind), 1.5).opacity(a),
                    }]
                }),
            )
        }
        Key::Gate(g) => {
            let what = match g {
                Gate::Cx => "cx gate (arrow: control → target)".to_string(),
                Gate::Cy => "cy gate (arrow: control → target)".to_string(),
                Gate::Cz => "cz gate".to_string(),
                g => format!("{} gate", g.name()),
            };
            let class = format!("legend-gate-{}", g.name());
            return Entry {
                class,
                swatch: Box::new(move |o: Px| {
                    gate_line(
                        g,
                        (o.0, o.1 + 11.0),
                        (o.0 + 36.0, o.1 + 11.0),
                        0.0,
                        0.0,
                        2.2,
                        BLACK,
                    )
                }),
                text: what,
            };
        }
        Key::Step => (
            "legend-step",
            "step of the round at which the ancilla meets the qubit".into(),
            Box::new(move |o| badge(mid(o), "2", &s)),
        ),
        Key::ProductStep => (
            "legend-product-step",
            "step of the round at which the product is measured".into(),
            Box::new(move |o| badge(mid(o), "2", &s)),
        ),
        Key::Corner => (
            "legend-corner",
            "Pauli a mixed check measures on that qubit".into(),
            Box::new(move |o| vec![text(mid(o), "X", 14.0, Anchor::Middle, DARK, true)]),
        ),
        Key::Reset => (
            "legend-reset",
            "reset in basis x, y or z".into(),
            Box::new(move |o| op_badge(mid(o), "Rx", 12.0, BLUE)),
        ),
        Key::Measure => (
            "legend-measure",
            "measurement (M at a product's centre)".into(),
            Box::new(move |o| op_badge(mid(o), "Mz", 12.0, VERMILLION)),
        ),
        Key::Gate1 => (
            "legend-gate1",
            "one-qubit gate".into(),
            Box::new(move |o| op_badge(mid(o), "h", 12.0, GREEN)),
        ),
        Key::High => (
            "legend-high",
            "high-rate fault (Z-type at injection)".into(),
            Box::new(move |o| vec![fault_ring(mid(o), 9.0, true)]),
        ),
        Key::Low => (
            "legend-low",
            "low-rate fault".into(),
            Box::new(move |o| vec![fault_ring(mid(o), 9.0, false)]),
        ),
        Key::Spread => (
            "legend-spread",
            "the Pauli it has become on a data qubit by the end of its round".into(),
            Box::new(move |o| {
                let c = mid(o);
                vec![
                    Shape::Circle {
                        c,
                        r: 9.0,
                        paint: Paint::stroke(BLACK, 2.2).dashed(2.0, 4.0),
                    },
                    Shape::Circle {
                        c: (c.0 - 7.0, c.1 - 5.0),
                        r: 7.0,
                        paint: Paint::both(DARK, WHITE, 1.0),
                    },
                    text(
                        (c.0 - 7.0, c.1 - 5.0),
                        "X",
                        10.0,
                        Anchor::Middle,
                        WHITE,
                        true,
                    ),
                ]
            }),
        ),
        Key::Detector => (
            "legend-detector",
            "detector the edge flips (t: its time)".into(),
            Box::new(move |o| detector(mid(o), 9.0)),
        ),
        Key::Event => (
            "legend-event",
            "detection event".into(),
            Box::new(move |o| event(mid(o), 8.0)),
        ),
        Key::Pair => (
            "legend-pair",
            "matched pair (same time)".into(),
            Box::new(move |o| {
                vec![Shape::Path {
                    pts: vec![(o.0, o.1 + 11.0), (o.0 + 36.0, o.1 + 11.0)],
                    paint: Paint::stroke(BLUE, 4.0),
                }]
            }),
        ),
        Key::Across => (
            "legend-across",
            "matched to an event at another time t (ring: same place)".into(),
            Box::new(move |o| {
                vec![Shape::Path {
                    pts: vec![(o.0, o.1 + 11.0), (o.0 + 36.0, o.1 + 11.0)],
                    paint: Paint::stroke(BLUE, 3.0).dashed(7.0, 4.0),
                }]
            }),
        ),
        Key::Boundary => (
            "legend-boundary",
            "matched to the boundary".into(),
            Box::new(move |o| {
                vec![
                    Shape::Path {
                        pts: vec![(o.0, o.1 + 11.0), (o.0 + 32.0, o.1 + 11.0)],
                        paint: Paint::stroke(BLUE, 4.0),
                    },
                    Shape::Path {
                        pts: vec![(o.0 + 32.0, o.1 + 2.0), (o.0 + 32.0, o.1 + 20.0)],
                        paint: Paint::stroke(BLUE, 4.0),
                    },
                ]
            }),
        ),
    };
    Entry {
        class: class.to_string(),
        swatch,
        text: text_,
    }
}
