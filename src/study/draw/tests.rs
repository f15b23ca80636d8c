//! Tests of the drawing model against the codes' definitions, and of the SVG's structure.
//!
//! The circuits are the bundled ones (`circuits/`); what they should contain is checked against
//! the code definitions, not against the generator that wrote them: a rotated distance-d surface
//! code has d² data qubits and d² − 1 checks, (d − 1)² of weight four and 2(d − 1) of weight two,
//! each on the data qubits next to it ("Low-distance surface codes under realistic quantum
//! noise", Tomita and Svore, PRA 90, 062320 (2014), recalled from memory); an XZZX face measures
//! X on two diagonal corners and Z on the other two ("The XZZX surface code", Bonilla Ataides
//! et al., Nat. Commun. 12, 2172 (2021)).

use std::sync::Arc;

use super::*;
use crate::base::{Pauli, Source};
use crate::ir::Limits;

const SURFACE_ALIGNED: &str = include_str!("../../../circuits/surface_d3_hook_aligned.slant");
const SURFACE_SAFE: &str = include_str!("../../../circuits/surface_d3_hook_safe.slant");
const SURFACE_PRODUCT: &str = include_str!("../../../circuits/surface_d3_product.slant");
const REPETITION: &str = include_str!("../../../circuits/repetition_d3.slant");
const TORUS: &str = include_str!("../../../circuits/xzzx_torus_3x4.slant");
const XZZX_3X5: &str = include_str!("../../../circuits/xzzx_3x5_hook_aligned.slant");

fn pipeline(text: &str, noise: Option<&str>) -> Pipeline {
    let src = Arc::new(Source::new("t.slant", text));
    Pipeline::load(&src, &[], &Limits::default())
        .unwrap_or_else(|d| panic!("{}", d[0].render()))
        .noised(noise)
        .unwrap_or_else(|d| panic!("{}", d[0].render()))
}

fn draw(text: &str, noise: Option<&str>, o: &DrawOptions) -> Drawing {
    drawing(&pipeline(text, noise), o).unwrap_or_else(|e| match e {
        DrawError::Rejected(d) => panic!("{}", d[0].render()),
        DrawError::Internal(m) => panic!("{m}"),
    })
}

fn patch(text: &str) -> Layout {
    draw(text, None, &DrawOptions::default()).layout
}

fn dist(a: Point, b: Point) -> f64 {
    ((a.0 - b.0).powi(2) + (a.1 - b.1).powi(2)).sqrt()
}

/// Support qubit indices of a check, sorted.
fn support(c: &Check) -> Vec<u32> {
    let mut v: Vec<u32> = c.support.iter().map(|s| s.qubit).collect();
    v.sort_unstable();
    v
}

#[test]
fn surface_code_checks_are_its_plaquettes() {
    let l = patch(SURFACE_ALIGNED);
    let data: Vec<&QubitMark> = l.qubits.iter().filter(|q| q.role == Role::Data).collect();
    assert_eq!(data.len(), 9);
    assert_eq!(l.structures.len(), 1, "every round has the same checks");
    let st = &l.structures[0];
    assert_eq!((st.rounds.clone(), st.steps), (vec![0, 1, 2], 4));
    assert_eq!(st.checks.len(), 8);
    let weight = |w: usize| st.checks.iter().filter(|c| c.support.len() == w).count();
    assert_eq!((weight(4), weight(2)), (4, 4));
    let kind = |k: CheckKind| st.checks.iter().filter(|c| c.kind == k).count();
    assert_eq!((kind(CheckKind::X), kind(CheckKind::Z)), (4, 4));
    for c in &st.checks {
        // The support is the data qubits next to the ancilla, and the check sits on it.
        let a = c.ancilla.expect("ancilla checks");
        assert_eq!(c.at, l.qubits[a as usize].at);
        let near: Vec<u32> = data
            .iter()
            .filter(|q| dist(q.at, c.at) < 1.5)
            .map(|q| q.index)
            .collect();
        assert_eq!(support(c), near, "check `{}`", c.name);
        // One gate per support qubit, at distinct steps.
        let mut steps: Vec<u32> = c.couplings.iter().map(|g| g.step).collect();
        steps.dedup();
        assert_eq!(steps.len(), c.support.len());
        assert!(c.couplings.iter().all(|g| g.ancilla_first));
    }
}

#[test]
fn gate_steps_follow_the_layers() {
    // The hook-aligned order's X-type check at (4, 4) meets its corners in the order the
    // circuit's four gate layers give: nw, sw, ne, se (read off the file's own comment and gates).
    let l = patch(SURFACE_ALIGNED);
    let c = l.structures[0]
        .checks
        .iter()
        .find(|c| c.name == "a[2,2]")
        .unwrap();
    let order: Vec<(Point, u32, &str)> = c
        .couplings
        .iter()
        .map(|g| (l.qubits[g.qubit as usize].at, g.step, g.gate.name()))
        .collect();
    assert_eq!(
        order,
        vec![
            ((3.0, 3.0), 1, "cx"),
            ((3.0, 5.0), 2, "cx"),
            ((5.0, 3.0), 3, "cx"),
            ((5.0, 5.0), 4, "cx")
        ]
    );
}

#[test]
fn product_measurements_are_the_same_checks() {
    let a = patch(SURFACE_ALIGNED);
    let p = patch(SURFACE_PRODUCT);
    let key = |l: &Layout| {
        let mut v: Vec<(Vec<u32>, CheckKind)> = l.structures[0]
            .checks
            .iter()
            .map(|c| (support(c), c.kind))
            .collect();
        v.sort_by(|x, y| x.0.cmp(&y.0));
        v
    };
    // Data qubits are declared first in both files, so their indices agree.
    assert_eq!(key(&a), key(&p));
    for c in &p.structures[0].checks {
        assert!(c.ancilla.is_none() && c.couplings.is_empty() && c.step.is_some());
    }
}

#[test]
fn repetition_checks_are_zz_with_the_ancilla_as_target() {
    let l = patch(REPETITION);
    let st = &l.structures[0];
    assert_eq!(st.checks.len(), 2);
    for c in &st.checks {
        assert_eq!(c.kind, CheckKind::Z);
        assert_eq!(c.support.len(), 2);
        let steps: Vec<(u32, bool)> = c
            .couplings
            .iter()
            .map(|g| (g.step, g.ancilla_first))
            .collect();
        assert_eq!(steps, vec![(1, false), (2, false)]);
    }
    // Two checks on one line have no area: no outline of the data either.
    assert!(l.outline.is_empty());
}

#[test]
fn torus_faces_are_unwrapped_xzzx_plaquettes() {
    let l = patch(TORUS);
    let st = &l.structures[0];
    assert_eq!(st.checks.len(), 12, "a 3 × 4 torus has 12 faces");
    let mut wrapped = 0;
    for c in &st.checks {
        assert_eq!(c.kind, CheckKind::Mixed);
        assert_eq!(c.support.len(), 4);
        for s in &c.support {
            // Every corner is one diagonal step from the face, on the page too.
            assert!((dist(s.at, c.at) - 2f64.sqrt()).abs() < 1e-9, "{}", c.name);
            let (dx, dy) = (s.at.0 - c.at.0, s.at.1 - c.at.1);
            let want = if dx * dy > 0.0 { Pauli::X } else { Pauli::Z };
            assert_eq!(s.pauli, want, "face {} corner {:?}", c.name, s.at);
            if s.at != l.qubits[s.qubit as usize].at {
                wrapped += 1;
            }
        }
    }
    // Faces on the first column and row reach across: 3 + 4 faces, 1 of them twice.
    assert!(wrapped >= 7, "{wrapped}");
}

#[test]
fn rectangular_xzzx_has_one_check_per_stabilizer() {
    let l = patch(XZZX_3X5);
    let data = l.qubits.iter().filter(|q| q.role == Role::Data).count();
    assert_eq!(data, 15);
    // One logical qubit: n − 1 independent checks.
    assert_eq!(l.structures[0].checks.len(), 14);
    assert!(l.structures[0]
        .checks
        .iter()
        .all(|c| c.kind == CheckKind::Mixed));
}

#[test]
fn circuits_without_coordinates_need_rows() {
    let text = "qubit q[0..3] role data\nqubit a role ancilla\nlayer { cx q[0] a }\n\
                layer { cx q[1] a }\nmeasure z a -> m\ndetector = m\n";
    let p = pipeline(text, None);
    let Err(DrawError::Rejected(d)) = drawing(&p, &DrawOptions::default()) else {
        panic!("accepted a circuit without coordinates");
    };
    assert!(
        d[0].message.contains("no qubit has coordinates"),
        "{}",
        d[0].message
    );
    assert!(d[0].hint.as_deref().unwrap_or("").contains("--rows"));
    let o = DrawOptions {
        rows: true,
        ..DrawOptions::default()
    };
    let dr = drawing(&p, &o).ok().unwrap();
    assert_eq!(dr.layout.placement, Placement::Rows);
    let at: Vec<Point> = dr.layout.qubits.iter().map(|q| q.at).collect();
    assert_eq!(at, vec![(0.0, 0.0), (1.0, 0.0), (2.0, 0.0), (0.5, 1.0)]);
    assert!(!dr.notes.is_empty());
    // Some coordinates but not all: refused even with rows, naming the qubit.
    let half = "qubit a at (0, 0)\nqubit b\nmeasure z a -> m\n";
    let Err(DrawError::Rejected(d)) = drawing(&pipeline(half, None), &o) else {
        panic!("accepted half the coordinates");
    };
    assert!(
        d[0].message.contains("`b` has no coordinates"),
        "{}",
        d[0].message
    );
    assert!(d[0].location().is_some());
}

#[test]
fn layers_are_labelled_by_round_and_step() {
    let l = draw(
        REPETITION,
        None,
        &DrawOptions {
            layers: true,
            round: Some(1),
            ..DrawOptions::default()
        },
    );
    let View::Layers { panels, round, .. } = &l.view else {
        panic!("not the time view")
    };
    assert_eq!(*round, Some(1));
    let labels: Vec<&str> = panels.iter().map(|p| p.label.as_str()).collect();
    assert_eq!(
        labels,
        vec![
            "round 1, step 1",
            "round 1, step 2",
            "round 1, measure",
            "round 1, reset"
        ]
    );
    assert!(matches!(panels[0].ops[0], LayerOp::Gate2 { .. }));
    let bad = drawing(
        &pipeline(REPETITION, None),
        &DrawOptions {
            layers: true,
            round: Some(9),
            ..DrawOptions::default()
        },
    );
    let Err(DrawError::Rejected(d)) = bad else {
        panic!("drew a round that does not exist")
    };
    assert!(d[0]
        .message
        .contains("there is no round 9: the circuit has rounds 0..3"));
}

fn shortest(text: &str) -> FaultOverlay {
    let d = draw(
        text,
        Some("circuit p=0.001"),
        &DrawOptions {
            show: Some(Show::Shortest),
            ..DrawOptions::default()
        },
    );
    let View::Patch(Some(o)) = d.view else {
        panic!("no overlay")
    };
    o
}

/// The hook: with the hook-aligned order one ancilla fault spreads to two data qubits along a
/// logical, so two faults make a logical error; the hook-safe order needs three, as many as
/// the code distance (Tomita and Svore 2014, recalled from memory).
#[test]
fn hook_aligned_order_loses_a_distance_to_one_ancilla_fault() {
    let l = patch(SURFACE_ALIGNED);
    let role = |q: u32| l.qubits[q as usize].role;
    let aligned = shortest(SURFACE_ALIGNED);
    assert_eq!(aligned.marks.len(), 2);
    let hooks: Vec<&FaultMark> = aligned
        .marks
        .iter()
        .filter(|m| m.spread.len() >= 2)
        .collect();
    assert_eq!(hooks.len(), 1, "{:#?}", aligned.marks);
    let hook = hooks[0];
    // It sits on an ancilla, mid-check, and reaches data qubits of that ancilla's check.
    let on: Vec<u32> = hook
        .qubits
        .iter()
        .zip(hook.term.chars())
        .filter(|&(_, p)| p != 'I')
        .map(|(&q, _)| q)
        .collect();
    assert_eq!(on.len(), 1);
    assert_eq!(role(on[0]), Role::Ancilla);
    assert!(hook.on_gate && hook.when.starts_with('r'));
    let check = l.structures[0]
        .checks
        .iter()
        .find(|c| c.ancilla == Some(on[0]))
        .unwrap();
    for (q, _) in &hook.spread {
        assert!(support(check).contains(q));
    }
    let safe = shortest(SURFACE_SAFE);
    assert_eq!(safe.marks.len(), 3);
    assert!(safe.marks.iter().all(|m| m.spread.len() < 2));
}

#[test]
fn fault_marks_sit_on_their_qubits() {
    let o = shortest(SURFACE_ALIGNED);
    let l = patch(SURFACE_ALIGNED);
    for m in &o.marks {
        for (&q, p) in m.qubits.iter().zip(m.term.chars()) {
            let here = m.at.contains(&l.qubits[q as usize].at);
            assert_eq!(here, p != 'I', "{m:?}");
        }
    }
}

#[test]
fn an_edge_shows_all_its_faults_and_detectors() {
    let p = pipeline(SURFACE_ALIGNED, Some("circuit p=0.001"));
    let g = p.graph(&ExtractOptions::default());
    // The edge with the most circuit faults: merging may join some, never lose one's place.
    let k = (0..g.edges.len())
        .max_by_key(|&k| g.contributors(k).len())
        .unwrap();
    let d = drawing(
        &p,
        &DrawOptions {
            show: Some(Show::Edge(k)),
            ..DrawOptions::default()
        },
    )
    .ok()
    .unwrap();
    let View::Patch(Some(o)) = d.view else {
        panic!()
    };
    assert_eq!(
        o.detectors.iter().map(|x| x.index).collect::<Vec<_>>(),
        g.edges[k].detectors
    );
    for c in g.contributors(k) {
        assert!(o
            .marks
            .iter()
            .any(|m| m.layer == c.layer && m.qubits == c.qubits.to_vec()));
    }
    let n = g.edges.len();
    let Err(DrawError::Rejected(e)) = drawing(
        &p,
        &DrawOptions {
            show: Some(Show::Edge(n)),
            ..DrawOptions::default()
        },
    ) else {
        panic!("drew an edge that does not exist")
    };
    assert!(e[0].message.contains(&format!("there is no edge {n}")));
}

#[test]
fn a_shot_shows_its_events_and_a_complete_matching() {
    let p = pipeline(SURFACE_ALIGNED, Some("circuit p=0.01"));
    let seed = (0..50)
        .find(|&s| {
            let b = p
                .sampler()
                .unwrap()
                .run_batch(0, 1, s, crate::sim::Outputs::syndromes());
            (0..p.noisy().detectors.len()).any(|d| b.get(&b.detectors, d, 0))
        })
        .expect("a shot with events at p = 0.01");
    let d = drawing(
        &p,
        &DrawOptions {
            show: Some(Show::Shot(seed)),
            ..DrawOptions::default()
        },
    )
    .ok()
    .unwrap();
    let View::Shot(o) = d.view else { panic!() };
    // The events are the sampler's, each placed at its detector's coordinates.
    let b = p
        .sampler()
        .unwrap()
        .run_batch(0, 1, seed, crate::sim::Outputs::syndromes());
    let want: Vec<u32> = (0..p.noisy().detectors.len())
        .filter(|&k| b.get(&b.detectors, k, 0))
        .map(|k| k as u32)
        .collect();
    assert_eq!(o.events.iter().map(|e| e.index).collect::<Vec<_>>(), want);
    for e in &o.events {
        let c = &p.noisy().detectors[e.index as usize].coords;
        assert_eq!((e.at, e.time), ((c[0], c[1]), c[2]));
    }
    // Every event is matched exactly once.
    let mut seen: Vec<u32> = o
        .pairs
        .iter()
        .flat_map(|&(a, b)| std::iter::once(a).chain(b))
        .collect();
    seen.sort_unstable();
    assert_eq!(seen, want);
    // A quiet shot is refused with a seed to try.
    let quiet = pipeline(SURFACE_ALIGNED, Some("circuit p=0.000001"));
    let Err(DrawError::Rejected(e)) = drawing(
        &quiet,
        &DrawOptions {
            show: Some(Show::Shot(0)),
            ..DrawOptions::default()
        },
    ) else {
        panic!("drew a shot without events")
    };
    assert!(e[0].message.contains("has no detection events"));
}

#[test]
fn overlays_without_noise_are_refused() {
    for show in [Show::Shortest, Show::Shot(1), Show::Edge(0)] {
        let r = drawing(
            &pipeline(REPETITION, None),
            &DrawOptions {
                show: Some(show),
                ..DrawOptions::default()
            },
        );
        let Err(DrawError::Rejected(e)) = r else {
            panic!("{show:?} drawn without noise")
        };
        assert!(e[0].message.contains("no noise"), "{}", e[0].message);
    }
}

#[test]
fn overlay_names_parse() {
    assert_eq!("shortest".parse(), Ok(Show::Shortest));
    assert_eq!("high-rate".parse(), Ok(Show::HighRate));
    assert_eq!("likely".parse(), Ok(Show::Likely));
    assert_eq!("edge:12".parse(), Ok(Show::Edge(12)));
    assert_eq!("shot:7".parse(), Ok(Show::Shot(7)));
    assert!("edge".parse::<Show>().unwrap_err().contains("edge:K"));
    assert!("edge:x".parse::<Show>().is_err());
    assert!("longest"
        .parse::<Show>()
        .unwrap_err()
        .contains("unknown overlay"));
    assert!(Format::of(Path::new("a.PNG")).is_ok());
    assert!(Format::of(Path::new("a.pdf")).is_err());
}

/// `(classes, data attributes, first shape's centre)` of every `<g>` of an SVG.
struct Element {
    class: String,
    data: Vec<(String, String)>,
    title: Option<String>,
    centre: Option<(f64, f64)>,
}

fn attr(tag: &str, name: &str) -> Option<String> {
    let key = format!(" {name}=\"");
    let i = tag.find(&key)? + key.len();
    let j = tag[i..].find('"')? + i;
    Some(tag[i..j].to_string())
}

fn elements(svg: &str) -> Vec<Element> {
    svg.split("<g ")
        .skip(1)
        .map(|g| {
            let head = &g[..g.find('>').unwrap()];
            let data = head
                .split(" data-")
                .skip(1)
                .map(|kv| {
                    let (k, v) = kv.split_once("=\"").unwrap();
                    (k.to_string(), v[..v.find('"').unwrap()].to_string())
                })
                .collect();
            let title = g
                .find("<title>")
                .map(|i| g[i + 7..i + g[i..].find("</title>").unwrap()].to_string());
            let centre = if let Some(i) = g.find("<circle ") {
                let t = &g[i..];
                Some((
                    attr(t, "cx").unwrap().parse().unwrap(),
                    attr(t, "cy").unwrap().parse().unwrap(),
                ))
            } else if let Some(i) = g.find("<polygon ") {
                let pts: Vec<(f64, f64)> = attr(&g[i..], "points")
                    .unwrap()
                    .split(' ')
                    .map(|p| {
                        let (x, y) = p.split_once(',').unwrap();
                        (x.parse().unwrap(), y.parse().unwrap())
                    })
                    .collect();
                let n = pts.len() as f64;
                Some(
                    pts.iter()
                        .fold((0.0, 0.0), |a, p| (a.0 + p.0 / n, a.1 + p.1 / n)),
                )
            } else {
                None
            };
            Element {
                class: attr(&format!(" {head}"), "class").unwrap_or_default(),
                data,
                title,
                centre,
            }
        })
        .collect()
}

fn svg_of(d: &Drawing) -> String {
    String::from_utf8(render(d, Style::default(), Format::Svg).unwrap()).unwrap()
}

fn data<'e>(e: &'e Element, k: &str) -> &'e str {
    &e.data.iter().find(|(x, _)| x == k).unwrap().1
}

fn coords(s: &str) -> (f64, f64) {
    let (x, y) = s.split_once(',').unwrap();
    (x.parse().unwrap(), y.parse().unwrap())
}

#[test]
fn svg_has_one_element_per_qubit_check_and_step_at_its_coordinates() {
    let d = draw(SURFACE_ALIGNED, None, &DrawOptions::default());
    let els = elements(&svg_of(&d));
    let with = |c: &str| els.iter().filter(|e| e.class == c).collect::<Vec<_>>();
    let data_q = with("qubit data");
    assert_eq!((data_q.len(), with("qubit ancilla").len()), (9, 8));
    assert_eq!(
        (with("check check-x").len(), with("check check-z").len()),
        (4, 4)
    );
    // 4 weight-four and 4 weight-two checks: 24 gates, cx for X-type, cz for Z-type.
    assert_eq!(with("step cx").len() + with("step cz").len(), 24);
    // Every qubit's mark is at one scale and offset from its coordinates.
    let qs: Vec<&Element> = els
        .iter()
        .filter(|e| e.class.starts_with("qubit"))
        .collect();
    let a = qs[0];
    let ca = coords(data(a, "at"));
    let b = *qs.iter().find(|q| coords(data(q, "at")).0 != ca.0).unwrap();
    let cb = coords(data(b, "at"));
    let unit = (b.centre.unwrap().0 - a.centre.unwrap().0) / (cb.0 - ca.0);
    for q in &qs {
        let c = coords(data(q, "at"));
        let px = q.centre.unwrap();
        assert!((px.0 - (a.centre.unwrap().0 + (c.0 - ca.0) * unit)).abs() < 0.2);
        assert!((px.1 - (a.centre.unwrap().1 + (c.1 - ca.1) * unit)).abs() < 0.2);
        assert!(q.title.as_deref().unwrap().starts_with(data(q, "qubit")));
    }
    // Checks sit on their ancillas; steps name theirs.
    for c in with("check check-x").iter().chain(&with("check check-z")) {
        let anc = qs
            .iter()
            .find(|q| data(q, "qubit") == data(c, "check"))
            .unwrap();
        assert_eq!(data(c, "at"), data(anc, "at"));
    }
    let s = with("step cx")[0];
    assert!(["1", "2", "3", "4"].contains(&data(s, "step")));
    // Every kind of mark used has its legend entry.
    for (mark, legend) in [
        ("qubit data", "legend legend-data"),
        ("check check-x", "legend legend-check-x"),
        ("check check-z", "legend legend-check-z"),
        ("step cx", "legend legend-gate-cx"),
        ("step cz", "legend legend-gate-cz"),
    ] {
        assert!(
            !with(mark).is_empty() && !with(legend).is_empty(),
            "{legend}"
        );
    }
}

#[test]
fn svg_faults_sit_on_their_qubits_with_a_legend() {
    let d = draw(
        SURFACE_ALIGNED,
        Some("circuit p=0.001"),
        &DrawOptions {
            show: Some(Show::Shortest),
            ..DrawOptions::default()
        },
    );
    let els = elements(&svg_of(&d));
    let faults: Vec<&Element> = els
        .iter()
        .filter(|e| e.class.starts_with("fault"))
        .collect();
    assert_eq!(faults.len(), 2);
    for f in &faults {
        let first = data(f, "at").split(';').next().unwrap();
        let q = els
            .iter()
            .find(|e| e.class.starts_with("qubit") && data(e, "at") == first)
            .expect("a qubit under the fault");
        assert!(data(f, "qubits").contains(data(q, "qubit")));
        let class = f.class.split(' ').nth(1).unwrap();
        assert!(els
            .iter()
            .any(|e| e.class == format!("legend legend-{}", &class[6..])));
    }
}

#[test]
fn png_is_a_png_of_the_scene_size() {
    let d = draw(REPETITION, None, &DrawOptions::default());
    let png = render(&d, Style { labels: true }, Format::Png).unwrap();
    assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n");
    let s = scene(&d, Style { labels: true });
    let w = u32::from_be_bytes(png[16..20].try_into().unwrap());
    let h = u32::from_be_bytes(png[20..24].try_into().unwrap());
    assert_eq!((w, h), (s.width as u32, s.height as u32));
    assert!(s.groups.iter().any(|g| g.class == "label"));
}

#[test]
fn rounds_with_different_gate_orders_get_a_panel_each() {
    // Round 1 meets the two data qubits in the opposite order to rounds 0 and 2.
    let text = "qubit q[0] at (0, 0) role data\nqubit q[1] at (2, 0) role data\n\
        qubit a at (1, 0) role ancilla\n\
        for r in 0..3 {\n    round {\n        layer { reset z a }\n        \
        if r == 1 {\n            layer { cx q[1] a }\n            layer { cx q[0] a }\n        \
        } else {\n            layer { cx q[0] a }\n            layer { cx q[1] a }\n        }\n        \
        layer { measure z a -> m[r] }\n    }\n}\n\
        measure z q[0] -> f[0], z q[1] -> f[1]\n\
        detector = m[0]\ndetector = m[1] ^ m[0]\ndetector = m[2] ^ m[1]\n\
        detector = m[2] ^ f[0] ^ f[1]\nobservable o = f[0]\n";
    let l = patch(text);
    let titles: Vec<String> = l.structures.iter().map(Structure::title).collect();
    assert_eq!(titles, vec!["rounds 0, 2", "round 1"]);
    let first = |st: &Structure| {
        l.qubits[st.checks[0].couplings[0].qubit as usize]
            .name
            .clone()
    };
    assert_eq!(
        (first(&l.structures[0]), first(&l.structures[1])),
        ("q[0]".into(), "q[1]".into())
    );
    // Faults go to the panel of their round.
    let d = draw(
        text,
        Some("circuit p=0.01"),
        &DrawOptions {
            show: Some(Show::Edge(0)),
            ..DrawOptions::default()
        },
    );
    let View::Patch(Some(o)) = d.view else {
        panic!()
    };
    let tl = time::timeline(&pipeline(text, Some("circuit p=0.01")).noisy().clone());
    for m in &o.marks {
        let want = match tl.layers[m.layer as usize].round {
            Some(1) => 1,
            Some(_) => 0,
            None => usize::from(m.when == "end"),
        };
        assert_eq!(m.structure, want, "{m:?}");
    }
}
