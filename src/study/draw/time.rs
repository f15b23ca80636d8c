//! Time labels of the layers: which round, which step.
//!
//! A *step* is a layer holding an entangling operation (a two-qubit gate or a measurement of a
//! product); steps are numbered from 1 within each block of layers (a round, the layers before
//! the first round, those after the last, or the whole circuit when it has no rounds). Numbers
//! count steps, not layers, so a check's gate order reads the same whatever the reset and
//! measurement layers around it; the time view (`--layers`) shows the same numbers.

use crate::ir::{Circuit, Layer, OpKind};

use super::model::{LayerKind, LayerTime, Timeline};

/// What a layer holds, steps not yet numbered.
fn kind(layer: &Layer) -> LayerKind {
    let mut measure = false;
    let mut reset = false;
    let mut gates = false;
    for op in &layer.ops {
        match &op.kind {
            OpKind::Gate(g) if g.arity() == 2 => return LayerKind::Step(0),
            OpKind::Measure { .. } if op.targets.len() > 1 => return LayerKind::Step(0),
            OpKind::Gate(_) => gates = true,
            OpKind::Measure { .. } => measure = true,
            OpKind::Reset(_) => reset = true,
            OpKind::Noise(_) => {}
        }
    }
    if measure {
        LayerKind::Measure
    } else if reset {
        LayerKind::Reset
    } else if gates {
        LayerKind::Gates
    } else {
        LayerKind::Noise
    }
}

fn word(k: LayerKind) -> String {
    match k {
        LayerKind::Step(s) => format!("step {s}"),
        LayerKind::Measure => "measure".into(),
        LayerKind::Reset => "reset".into(),
        LayerKind::Gates => "one-qubit gates".into(),
        LayerKind::Noise => "noise".into(),
    }
}

fn short_word(k: LayerKind) -> String {
    match k {
        LayerKind::Step(s) => format!("s{s}"),
        LayerKind::Gates => "gates".into(),
        other => word(other),
    }
}

/// Labels every layer of `c`.
pub(super) fn timeline(c: &Circuit) -> Timeline {
    let has_rounds = c.layers.iter().any(|l| l.round.is_some());
    let first_round = c.layers.iter().position(|l| l.round.is_some());
    let mut kinds: Vec<LayerKind> = c.layers.iter().map(kind).collect();
    // Number the steps within each block of layers sharing a round value.
    let mut step = 0;
    for (i, k) in kinds.iter_mut().enumerate() {
        if i > 0 && c.layers[i].round != c.layers[i - 1].round {
            step = 0;
        }
        if let LayerKind::Step(s) = k {
            step += 1;
            *s = step;
        }
    }
    let layers = c
        .layers
        .iter()
        .enumerate()
        .map(|(i, l)| {
            let k = kinds[i];
            let block = |j: &usize| c.layers[*j].round == l.round;
            let step_of = |j: usize| match kinds[j] {
                LayerKind::Step(s) => Some(s),
                _ => None,
            };
            // One-qubit gate and noise layers can be many in a round: they are named after the
            // step before them (or the next layer that does something, before the first step).
            let prev = (0..i).rev().take_while(block).find_map(step_of);
            let next = (i + 1..kinds.len())
                .take_while(block)
                .map(|j| kinds[j])
                .find(|k| *k != LayerKind::Noise);
            let (long_word, short_word) = match (k, prev, next) {
                (LayerKind::Gates | LayerKind::Noise, Some(p), _) => (
                    format!("{} after step {p}", word(k)),
                    format!("{} after s{p}", short_word(k)),
                ),
                (LayerKind::Gates | LayerKind::Noise, None, Some(n)) => (
                    format!("{} before {}", word(k), word(n)),
                    format!("{} before {}", short_word(k), short_word(n)),
                ),
                (LayerKind::Noise, None, None) => {
                    ("noise at the end".to_string(), "noise".to_string())
                }
                (k, _, _) => (word(k), short_word(k)),
            };
            let (short, long) = match l.round {
                Some(r) => (
                    format!("r{r} {short_word}"),
                    format!("round {r}, {long_word}"),
                ),
                None if has_rounds => {
                    let before = first_round.is_some_and(|f| i < f);
                    let (s, w) = if before {
                        ("start", "before the rounds")
                    } else {
                        ("end", "after the rounds")
                    };
                    let short = match k {
                        LayerKind::Step(n) => format!("{s} s{n}"),
                        _ => s.to_string(),
                    };
                    (short, format!("{w}, {long_word}"))
                }
                None => (short_word, format!("layer {i}, {long_word}")),
            };
            LayerTime {
                round: l.round,
                kind: k,
                short,
                long,
            }
        })
        .collect();
    Timeline { layers }
}
