//! Pictures of the patch: qubits at their coordinates, the checks of each round with the order
//! in which each ancilla meets its qubits, the layers of a round one by one, and faults on the
//! chip (a logical error from the distance search, one fault-graph edge, or one sampled shot
//! with the decoder's matching).
//!
//! In: a [`Pipeline`] (the noisy circuit, its fault graph, sampler and matching graph) and
//! [`DrawOptions`]. Out: a [`Drawing`] — plain data in circuit coordinates that tests read —
//! and, through [`render`], SVG or PNG bytes; writing the file is the caller's job.
//!
//! Layers of the work, each its own file:
//! - `place.rs`: where qubits go (coordinates, or rows by role when asked), spacing, outline,
//!   unwrapping of checks across a periodic boundary;
//! - `time.rs`: which round and step each layer is;
//! - `checks.rs`: the checks of each round, read off the gates and measurements;
//! - `overlay.rs` and `shot.rs`: faults, edges and shots placed on the patch;
//! - `model.rs`: the types of all of the above;
//! - `canvas.rs` (page, palette, label placement), `marks.rs` (the shape of each mark),
//!   `paint.rs` (patch panels), `overlay_paint.rs` (faults, shots, layers), `legend.rs`: the
//!   model as shapes in pixels ([`Scene`]) with a legend entry for every mark used;
//! - `svg.rs`, `png.rs`: the two renderers of a scene.
//!
//! Results shown on a picture (distances, logical errors, shots) are estimates under the stated
//! noise model, like every other output of slant.

mod canvas;
mod checks;
mod legend;
mod marks;
mod model;
mod overlay;
mod overlay_paint;
mod paint;
mod place;
mod png;
mod scene;
mod shot;
mod svg;
mod time;

pub use model::{
    Check, CheckKind, Coupling, DetectorMark, Drawing, FaultMark, FaultOverlay, LayerKind, LayerOp,
    LayerPanel, LayerTime, Layout, Placement, Point, QubitMark, Role, ShotOverlay, Structure,
    SupportQubit, Timeline, View,
};
pub use paint::Style;
pub(crate) use scene::ensure_fonts;
pub use scene::{Anchor, Group, Paint, Px, Rgb, Scene, Shape};

use std::path::Path;

use crate::analysis::{distances, DistanceOptions};
use crate::base::Diagnostic;
use crate::faults::ExtractOptions;
use crate::ir::{Circuit, OpKind};
use crate::study::Pipeline;

/// What to draw on the patch besides its layout.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Show {
    /// The shortest logical error (the circuit-level distance).
    Shortest,
    /// The shortest logical error made of high-rate faults only.
    HighRate,
    /// The most likely logical error (least total weight).
    Likely,
    /// One fault-graph edge by index, as `slant graph` lists them.
    Edge(usize),
    /// The first shot of this seed with the decoder's matching.
    Shot(u64),
}

impl std::str::FromStr for Show {
    type Err = String;

    fn from_str(s: &str) -> Result<Show, String> {
        let number = |v: &str, what: &str| {
            v.trim()
                .parse::<u64>()
                .map_err(|_| format!("`{v}` is not a {what} (a non-negative integer)"))
        };
        match s.split_once(':') {
            None => match s {
                "shortest" => Ok(Show::Shortest),
                "high-rate" => Ok(Show::HighRate),
                "likely" => Ok(Show::Likely),
                "edge" | "shot" => Err(format!(
                    "`{s}` needs a number: `{s}:{}`",
                    if s == "edge" { "K" } else { "SEED" }
                )),
                _ => Err(format!(
                    "unknown overlay `{s}` (expected `shortest`, `high-rate`, `likely`, \
                     `edge:K` or `shot:SEED`)"
                )),
            },
            Some(("edge", k)) => number(k, "edge index").map(|k| Show::Edge(k as usize)),
            Some(("shot", k)) => number(k, "seed").map(Show::Shot),
            Some((other, _)) => Err(format!(
                "unknown overlay `{other}:` (expected `edge:K` or `shot:SEED`)"
            )),
        }
    }
}

/// What to draw.
#[derive(Clone, Debug, Default)]
pub struct DrawOptions {
    /// An overlay on the patch.
    pub show: Option<Show>,
    /// The time view: one panel per layer of [`DrawOptions::round`].
    pub layers: bool,
    /// The round of the time view (default: the first).
    pub round: Option<u32>,
    /// Place qubits in rows by role when the circuit gives no coordinates.
    pub rows: bool,
    /// Fault classes of the graph (for the overlays).
    pub extract: ExtractOptions,
}

/// Why a drawing could not be made.
#[derive(Debug)]
pub enum DrawError {
    /// The input or the request was rejected.
    Rejected(Vec<Diagnostic>),
    /// A bug (e.g. a logical error that does not verify).
    Internal(String),
}

impl From<Diagnostic> for DrawError {
    fn from(d: Diagnostic) -> DrawError {
        DrawError::Rejected(vec![d])
    }
}

/// The output format, by file extension.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Format {
    /// An SVG document.
    Svg,
    /// A PNG image.
    Png,
}

impl Format {
    /// The format of an output path: `.svg` or `.png` (any case); anything else is refused.
    pub fn of(path: &Path) -> Result<Format, Diagnostic> {
        match path
            .extension()
            .and_then(|e| e.to_str())
            .map(str::to_ascii_lowercase)
            .as_deref()
        {
            Some("svg") => Ok(Format::Svg),
            Some("png") => Ok(Format::Png),
            _ => Err(Diagnostic::bare(format!(
                "`{}`: pictures are written as SVG or PNG",
                path.display()
            ))
            .with_hint("name the output FILE.svg or FILE.png")),
        }
    }
}

/// The layout of a circuit: places, outline and the checks of each round structure.
pub fn layout(c: &Circuit, rows: bool) -> Result<(Layout, Timeline), Diagnostic> {
    let places = place::Places::new(c, rows)?;
    let tl = time::timeline(c);
    let structures = checks::structures(c, &tl, &places);
    let qubits: Vec<QubitMark> = c
        .qubits
        .iter()
        .enumerate()
        .map(|(i, q)| QubitMark {
            index: i as u32,
            name: q.name.clone(),
            at: places.at[i],
            role: Role::of(&q.roles),
        })
        .collect();
    let data: Vec<Point> = qubits
        .iter()
        .filter(|q| q.role == Role::Data)
        .map(|q| q.at)
        .collect();
    Ok((
        Layout {
            source: c.source.name.clone(),
            outline: place::hull(&data),
            qubits,
            placement: places.placement,
            structures,
            spacing: places.spacing,
        },
        tl,
    ))
}

/// The time view of one round (the first by default; the whole circuit when it has no rounds).
fn layers_view(c: &Circuit, tl: &Timeline, round: Option<u32>) -> Result<View, Diagnostic> {
    let rounds: Vec<u32> = {
        let mut r: Vec<u32> = c.layers.iter().filter_map(|l| l.round).collect();
        r.dedup();
        r
    };
    let chosen = match (round, rounds.first()) {
        (Some(r), _) if !rounds.contains(&r) => {
            return Err(Diagnostic::bare(if rounds.is_empty() {
                format!("there is no round {r}: the circuit has no `round` blocks")
            } else {
                format!(
                    "there is no round {r}: the circuit has rounds {}..{}",
                    rounds[0],
                    rounds[rounds.len() - 1] + 1
                )
            }))
        }
        (Some(r), _) => Some(r),
        (None, first) => first.copied(),
    };
    let panels = c
        .layers
        .iter()
        .enumerate()
        .filter(|(_, l)| l.round == chosen)
        .filter_map(|(i, l)| {
            let ops: Vec<LayerOp> = l
                .ops
                .iter()
                .flat_map(|op| -> Vec<LayerOp> {
                    match &op.kind {
                        OpKind::Gate(g) if g.arity() == 2 => op
                            .targets
                            .chunks(2)
                            .map(|p| LayerOp::Gate2 {
                                gate: *g,
                                a: p[0],
                                b: p[1],
                            })
                            .collect(),
                        OpKind::Gate(g) => op
                            .targets
                            .iter()
                            .map(|&q| LayerOp::Gate1 { gate: *g, qubit: q })
                            .collect(),
                        OpKind::Reset(b) => op
                            .targets
                            .iter()
                            .map(|&q| LayerOp::Reset {
                                basis: *b,
                                qubit: q,
                            })
                            .collect(),
                        OpKind::Measure { .. } => vec![LayerOp::Measure {
                            factors: op
                                .targets
                                .iter()
                                .copied()
                                .zip(op.paulis.iter().copied())
                                .collect(),
                        }],
                        OpKind::Noise(_) => Vec::new(),
                    }
                })
                .collect();
            (!ops.is_empty()).then(|| LayerPanel {
                layer: i as u32,
                label: tl.layers[i].long.clone(),
                ops,
            })
        })
        .collect();
    Ok(View::Layers {
        title: match chosen {
            Some(r) => format!("the layers of round {r}"),
            None => "the layers of the circuit".into(),
        },
        round: chosen,
        panels,
    })
}

/// Builds the drawing model of a pipeline's noisy circuit.
pub fn drawing(p: &Pipeline, o: &DrawOptions) -> Result<Drawing, DrawError> {
    let c = p.noisy();
    let (layout, tl) = layout(c, o.rows)?;
    let mut notes = Vec::new();
    if layout.placement == Placement::Rows {
        notes.push(
            "the circuit gives no coordinates: data qubits in the top row, ancillas below, \
             other qubits at the bottom, each row in declaration order"
                .to_string(),
        );
    }
    let view = if o.layers {
        layers_view(c, &tl, o.round)?
    } else {
        match o.show {
            None => View::Patch(None),
            Some(Show::Shot(seed)) => View::Shot(shot::shot(p, &tl, &layout, seed)?),
            Some(show) => {
                let graph = p.graph(&o.extract);
                if graph.edges.is_empty() {
                    return Err(shot::no_noise().into());
                }
                let ctx = overlay::Context {
                    circuit: c,
                    timeline: &tl,
                    layout: &layout,
                    graph: &graph,
                };
                let overlay = match show {
                    Show::Edge(k) => {
                        if k >= graph.edges.len() {
                            let n = graph.edges.len();
                            return Err(Diagnostic::bare(format!(
                                "there is no edge {k}: the fault graph has {n} (0..{n})"
                            ))
                            .with_hint(
                                "list the edges with `slant graph FILE --format text` and the \
                                 same `--noise`",
                            )
                            .into());
                        }
                        ctx.edge(k)
                    }
                    _ => logical_overlay(&ctx, &graph, show)?,
                };
                notes.push(match show {
                    Show::Edge(_) => "every circuit fault giving this edge is marked; tag: Pauli \
                                      term and time (rR sS: round R, step S; start, end: \
                                      before, after the rounds)"
                        .to_string(),
                    _ => {
                        format!(
                        "one circuit fault per edge (the most likely {}of those giving it); tag: \
                         number, Pauli term, time (rR sS: round R, step S; start, end: before, \
                         after the rounds)",
                        if show == Show::HighRate { "high-rate one " } else { "" }
                    )
                    }
                });
                View::Patch(Some(overlay))
            }
        }
    };
    Ok(Drawing {
        layout,
        view,
        notes,
    })
}

/// The overlay of a logical error from the distance search.
fn logical_overlay(
    ctx: &overlay::Context,
    graph: &crate::faults::FaultGraph,
    show: Show,
) -> Result<FaultOverlay, DrawError> {
    let r = distances(graph, &DistanceOptions::default()).map_err(DrawError::Internal)?;
    let obs = |e: &crate::analysis::LogicalError| {
        e.observables
            .iter()
            .map(|&o| format!("`{}`", graph.observables[o as usize]))
            .collect::<Vec<_>>()
            .join(", ")
    };
    let count = |c: &crate::analysis::Count| {
        if c.exact() {
            c.value.to_string()
        } else {
            format!("at most {}, at least {}", c.value, c.lower)
        }
    };
    let (found, unproven, what) = match show {
        Show::Shortest => (
            r.distance.as_ref().map(|c| {
                (
                    format!(
                        "shortest logical error: {} edges (distance {}), flips {}",
                        c.error.edges.len(),
                        count(c),
                        obs(&c.error)
                    ),
                    &c.error,
                )
            }),
            r.unresolved.distance,
            "logical error",
        ),
        Show::HighRate => (
            r.high_rate.as_ref().map(|c| {
                (
                    format!(
                        "shortest logical error of high-rate faults: {} edges (high-rate distance \
                         {}), flips {}",
                        c.error.edges.len(),
                        count(c),
                        obs(&c.error)
                    ),
                    &c.error,
                )
            }),
            r.unresolved.high_rate,
            "logical error made of high-rate faults alone",
        ),
        _ => (
            r.weighted.as_ref().map(|w| {
                (
                    format!(
                        "most likely logical error: {} edges, probability product {:.2e}, flips {}",
                        w.error.edges.len(),
                        w.probability,
                        obs(&w.error)
                    ),
                    &w.error,
                )
            }),
            r.unresolved.weighted,
            "logical error",
        ),
    };
    match found {
        Some((title, e)) => Ok(ctx.logical(title, e, show == Show::HighRate)),
        None => Err(Diagnostic::bare(match unproven {
            None => format!("no {what} exists (proven), so there is nothing to draw"),
            Some(u) => format!("no {what} was found: {}", u.describe()),
        })
        .into()),
    }
}

/// The picture of a drawing in a format.
pub fn render(d: &Drawing, style: Style, format: Format) -> Result<Vec<u8>, String> {
    let scene = paint::scene(d, style);
    match format {
        Format::Svg => Ok(svg::svg(&scene).into_bytes()),
        Format::Png => png::png(&scene),
    }
}

/// The scene of a drawing, for tests and other renderers.
pub fn scene(d: &Drawing, style: Style) -> Scene {
    paint::scene(d, style)
}

#[cfg(test)]
mod tests;
