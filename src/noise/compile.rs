//! The noise compiler: [`NoiseModel`] × [`Circuit`] → [`Circuit`] with every channel explicit.
//!
//! In: a checked circuit (its own noise statements are kept) and a model. Out: a [`Compiled`]
//! circuit plus one [`Note`] per inserted channel saying what produced it, and
//! [`to_text`], which writes the result as a flat, loop-free program in slant's language with
//! each noise line commented.
//!
//! Placement (the same as the `circuit` preset, so a model with the preset's meaning gives the
//! same circuit): in every layer holding at least one gate, reset or measurement —
//! right after each gate its effective channel ([`crate::noise::implement::effective_channel_with`]
//! of the gate section's rate, implementation and generator); right after each reset the orthogonal flip;
//! each measurement's flip combined with the model's (`f ⊕ q = f + q − 2fq`); at the end of the
//! layer the idle channel on every qubit that no gate, reset or measurement of the layer touches.
//! The layer's duration is the longest duration of its operations (0 when the model gives
//! none); idle noise from `t1`/`t2` uses it. Qubits whose operation is shorter than the layer
//! get no extra idle noise (their section's rate is taken to cover the whole layer). Idle qubits
//! with equal channels share one operation. Layers holding only noise are left alone.

use std::fmt::Write as _;

use crate::base::{xor_prob, Basis, ChannelKind, Diagnostic, Gate, Pauli};
use crate::ir::{Channel, Circuit, Op, OpKind};
use crate::noise::implement::{effective_channel_with, Implementation};
use crate::noise::model::NoiseModel;
use crate::noise::note::Note;

/// A circuit with the model's noise written in.
#[derive(Clone, Debug)]
pub struct Compiled {
    /// The circuit with explicit channels.
    pub circuit: Circuit,
    /// One note per inserted noise operation.
    pub notes: Vec<Note>,
    /// Total duration: the sum of the layer durations.
    pub duration: f64,
    /// Warnings about the model against this circuit (e.g. an override for a role the circuit
    /// does not use); callers show them.
    pub warnings: Vec<Diagnostic>,
}

/// Writes the model's noise into a copy of `circuit`.
pub fn compile(circuit: &Circuit, model: &NoiseModel) -> Result<Compiled, Vec<Diagnostic>> {
    let n = circuit.qubits.len();
    let mut out = circuit.clone();
    let mut notes = Vec::new();
    let (mut errors, warnings): (Vec<Diagnostic>, Vec<Diagnostic>) = model
        .unmatched_overrides(circuit)
        .into_iter()
        .partition(|d| d.severity == crate::base::Severity::Error);
    // Idle noise from times needs the duration of every operation that shares a layer with an
    // idling qubit; durations of operations the circuit does not use are never needed.
    let timed = circuit
        .qubits
        .iter()
        .any(|q| model.idle_for(q).needs_durations());
    let mut missing: Vec<Gate> = Vec::new();
    let mut total = 0.0;
    let mut touched = vec![false; n];
    let model_name = &model.source.name;
    let missing_duration = |errors: &mut Vec<Diagnostic>, section: &str, what: &str, at| {
        missing_duration_at(errors, circuit, model, section, what, at)
    };
    for (li, layer) in out.layers.iter_mut().enumerate() {
        if layer
            .ops
            .iter()
            .all(|op| matches!(op.kind, OpKind::Noise(_)))
        {
            continue;
        }
        touched.fill(false);
        let mut duration: f64 = 0.0;
        let mut ops = Vec::with_capacity(2 * layer.ops.len() + 1);
        for mut op in std::mem::take(&mut layer.ops) {
            let mut extra: Vec<(Vec<u32>, Channel, Note)> = Vec::new();
            let mut measured: Option<(f64, String)> = None;
            match &mut op.kind {
                OpKind::Noise(_) => {}
                OpKind::Gate(g) => {
                    let g = *g;
                    for app in op.targets.chunks(g.arity()) {
                        let qs: Vec<_> = app.iter().map(|&q| &circuit.qubits[q as usize]).collect();
                        let Some((over, sec)) = model.gate_from(g, &qs) else {
                            if !missing.contains(&g) {
                                missing.push(g);
                                errors.push(
                                    Diagnostic::error(&circuit.source, op.span, format!("the noise model `{model_name}` gives no noise for gate `{}`", g.name()))
                                        .with_hint(format!("add a `[gates.{}]` (or `[gates.default]`) table to the model", g.name())),
                                );
                            }
                            continue;
                        };
                        if timed && sec.duration.is_none() {
                            let section = if model.gates.iter().any(|(k, _)| *k == Some(g)) {
                                format!("`[gates.{}]`", g.name())
                            } else {
                                format!(
                                    "`[gates.default]` (or a `[gates.{}]` of its own)",
                                    g.name()
                                )
                            };
                            missing_duration(&mut errors, &section, g.name(), op.span);
                        }
                        duration = duration.max(sec.duration.unwrap_or(0.0));
                        let input = if g.arity() == 2 {
                            sec.rate.two()
                        } else {
                            sec.rate.one()
                        };
                        let Some(input) = input else {
                            errors.push(Diagnostic::error(
                                &model.source,
                                sec.span,
                                format!(
                                    "the rate for `{}` has the wrong number of qubits",
                                    g.name()
                                ),
                            ));
                            continue;
                        };
                        let ch = effective_channel_with(
                            g,
                            sec.implementation,
                            sec.generator.as_ref(),
                            &input,
                        );
                        let text = format!(
                            "{} after `{}` ({}{})",
                            model_name,
                            g.name(),
                            sec.implementation.name(),
                            if sec.generator.is_some() {
                                " by the model's generator"
                            } else {
                                ""
                            }
                        );
                        extra.push((
                            app.to_vec(),
                            ch,
                            Note {
                                layer: li,
                                op: 0,
                                class: g.name().to_string(),
                                gate: Some(g),
                                implementation: sec.implementation,
                                generator: sec.generator.clone(),
                                input,
                                section: NoiseModel::section_path(
                                    over,
                                    &format!("gates.{}", g.name()),
                                ),
                                text,
                            },
                        ));
                    }
                }
                OpKind::Reset(basis) => {
                    let basis = *basis;
                    for &q in &op.targets {
                        let (over, r) = model.reset_from(&circuit.qubits[q as usize]);
                        let d = r.duration_in(basis);
                        if timed && d.is_none() {
                            missing_duration(
                                &mut errors,
                                &format!("`[reset]` or `[reset.{}]`", basis.name()),
                                "reset",
                                op.span,
                            );
                        }
                        duration = duration.max(d.unwrap_or(0.0));
                        // Only the flip of the prepared state acts: X (or Y) after a z reset, Z
                        // after an x reset, X after a y reset (see `SpamNoise`).
                        let p = r.flip(basis);
                        let ch = if basis == Basis::X {
                            Channel::Dephasing(p)
                        } else {
                            Channel::BitFlip(p)
                        };
                        let text =
                            format!("{} reset error after `reset {}`", model_name, basis.name());
                        extra.push((
                            vec![q],
                            ch.clone(),
                            Note {
                                layer: li,
                                op: 0,
                                class: "reset".into(),
                                gate: None,
                                implementation: Implementation::Ideal,
                                generator: None,
                                input: ch,
                                section: NoiseModel::section_path(over, "reset"),
                                text,
                            },
                        ));
                    }
                }
                OpKind::Measure { flip, .. } => {
                    let qs: Vec<_> = op
                        .targets
                        .iter()
                        .map(|&q| &circuit.qubits[q as usize])
                        .collect();
                    let (over, m) = model.measure_from(&qs);
                    let d = m.product_duration(&op.paulis);
                    if timed && d.is_none() {
                        let basis = match op.paulis.as_slice() {
                            [p] => Basis::of_pauli(*p).map_or("", |b| b.name()),
                            _ => "",
                        };
                        let section = if basis.is_empty() {
                            "`[measure]`".to_string()
                        } else {
                            format!("`[measure]` or `[measure.{basis}]`")
                        };
                        missing_duration(&mut errors, &section, "measure", op.span);
                    }
                    duration = duration.max(d.unwrap_or(0.0));
                    let q = m.product_flip(&op.paulis);
                    *flip = xor_prob(*flip, q);
                    if q > 0.0 {
                        measured = Some((q, NoiseModel::section_path(over, "measure")));
                    }
                }
            }
            if !matches!(op.kind, OpKind::Noise(_)) {
                for &q in &op.targets {
                    touched[q as usize] = true;
                }
            }
            let span = op.span;
            if let Some((q, section)) = measured {
                notes.push(Note {
                    layer: li,
                    op: ops.len(),
                    class: "measure".into(),
                    gate: None,
                    implementation: Implementation::Ideal,
                    generator: None,
                    input: Channel::BitFlip(q),
                    section,
                    text: format!("{model_name} measurement flip"),
                });
            }
            ops.push(op);
            // Merge applications with equal channels into one operation, as the preset does.
            let mut merged: Vec<(Vec<u32>, Channel, Note)> = Vec::new();
            for (t, ch, note) in extra {
                if ch.total() <= 0.0 {
                    continue;
                }
                match merged
                    .iter_mut()
                    .find(|m| m.1 == ch && m.2.text == note.text && m.2.section == note.section)
                {
                    Some(m) => m.0.extend(t),
                    None => merged.push((t, ch, note)),
                }
            }
            for (targets, ch, mut note) in merged {
                note.op = ops.len();
                notes.push(note);
                ops.push(Op {
                    kind: OpKind::Noise(ch),
                    targets,
                    paulis: Vec::new(),
                    span,
                });
            }
        }
        let mut idle: Vec<(Vec<u32>, Channel, Option<usize>)> = Vec::new();
        for (q, qubit) in circuit.qubits.iter().enumerate() {
            if touched[q] {
                continue;
            }
            let (over, noise) = model.idle_from(qubit);
            let Some(ch) = noise.channel(duration) else {
                continue;
            };
            if ch.total() <= 0.0 {
                continue;
            }
            match idle.iter_mut().find(|i| i.1 == ch && i.2 == over) {
                Some(i) => i.0.push(q as u32),
                None => idle.push((vec![q as u32], ch, over)),
            }
        }
        for (targets, ch, over) in idle {
            notes.push(Note {
                layer: li,
                op: ops.len(),
                class: "idle".into(),
                gate: None,
                implementation: Implementation::Ideal,
                generator: None,
                input: ch.clone(),
                section: NoiseModel::section_path(over, "idle"),
                text: match model.time_unit {
                    Some(unit) => format!("{model_name} idle for {duration} {unit}"),
                    None => format!("{model_name} idle for {duration}"),
                },
            });
            ops.push(Op {
                kind: OpKind::Noise(ch),
                targets,
                paulis: Vec::new(),
                span: layer.span,
            });
        }
        total += duration;
        layer.ops = ops;
    }
    if !errors.is_empty() {
        return Err(errors);
    }
    Ok(Compiled {
        circuit: out,
        notes,
        duration: total,
        warnings,
    })
}

/// Records, once per model section, that an operation of the circuit needs a duration the
/// model does not give.
fn missing_duration_at(
    errors: &mut Vec<Diagnostic>,
    circuit: &Circuit,
    model: &NoiseModel,
    section: &str,
    what: &str,
    at: crate::base::Span,
) {
    let message = format!(
        "the noise model `{}` gives no `duration` for `{what}`",
        model.source.name
    );
    if errors.iter().any(|e| e.message == message) {
        return;
    }
    errors.push(
        Diagnostic::error(&circuit.source, at, message).with_hint(format!(
            "its idle noise comes from `t1`/`t2` (or `t_bitflip`), which needs the duration of every operation the circuit uses: add `duration` to {section}"
        )),
    );
}

/// A number as the language reads it: shortest round-trip decimal, never `NaN` or infinite.
fn num(x: f64) -> String {
    let s = format!("{x:?}");
    // `{:?}` gives forms like `1e-5` and `0.001`, both valid FLOAT tokens; keep integers plain.
    s.strip_suffix(".0").map_or(s.clone(), |t| t.to_string())
}

fn channel_text(ch: &Channel) -> String {
    let name = ch.keyword();
    match ch {
        Channel::BitFlip(p)
        | Channel::Dephasing(p)
        | Channel::Depolarizing(p)
        | Channel::PairDepolarizing(p)
        | Channel::Joint { p, .. } => format!("{name} p={}", num(*p)),
        Channel::Pauli { px, py, pz } => {
            format!("{name} x={} y={} z={}", num(*px), num(*py), num(*pz))
        }
        Channel::PairPauli(t) => {
            let mut s = name.to_string();
            for (k, &p) in t.iter().enumerate() {
                if p > 0.0 {
                    let v = Pauli::pair_from_index(k + 1);
                    let name: String = v.iter().map(|p| p.letter().to_ascii_lowercase()).collect();
                    let _ = write!(s, " {name}={}", num(p));
                }
            }
            if t.iter().all(|&p| p == 0.0) {
                s.push_str(" zz=0");
            }
            s
        }
    }
}

/// Writes `circuit` as a flat program in slant's language: qubit declarations, one `layer { }`
/// per layer (inside `round { }` blocks as marked), detectors and observables. `notes` become
/// comments on the noise lines they describe; `header` lines start the file as comments.
pub fn to_text(circuit: &Circuit, notes: &[Note], header: &[String]) -> String {
    let mut s = String::new();
    for h in header {
        let _ = writeln!(s, "# {h}");
    }
    let name = |q: u32| circuit.qubits[q as usize].name.clone();
    for q in &circuit.qubits {
        let _ = write!(s, "qubit {}", q.name);
        if !q.coords.is_empty() {
            let c: Vec<String> = q.coords.iter().map(|&x| num(x)).collect();
            let _ = write!(s, " at ({})", c.join(", "));
        }
        if !q.roles.is_empty() {
            let _ = write!(s, " role {}", q.roles.join(", "));
        }
        s.push('\n');
    }
    let mut round: Option<u32> = None;
    for (li, layer) in circuit.layers.iter().enumerate() {
        if layer.ops.is_empty() {
            continue;
        }
        if layer.round != round {
            if round.is_some() {
                s.push_str("}\n");
            }
            if layer.round.is_some() {
                s.push_str("round {\n");
            }
            round = layer.round;
        }
        let ind = if round.is_some() { "  " } else { "" };
        let _ = writeln!(s, "{ind}layer {{");
        for (oi, op) in layer.ops.iter().enumerate() {
            let line = match &op.kind {
                OpKind::Gate(g) => {
                    let groups: Vec<String> = op
                        .targets
                        .chunks(g.arity())
                        .map(|c| c.iter().map(|&q| name(q)).collect::<Vec<_>>().join(" "))
                        .collect();
                    format!("{} {}", g.name(), groups.join(", "))
                }
                OpKind::Reset(b) => format!(
                    "reset {} {}",
                    b.name(),
                    op.targets
                        .iter()
                        .map(|&q| name(q))
                        .collect::<Vec<_>>()
                        .join(", ")
                ),
                OpKind::Measure { record, flip } => {
                    let product: Vec<String> = op
                        .targets
                        .iter()
                        .zip(&op.paulis)
                        .map(|(&q, p)| format!("{} {}", p.letter().to_ascii_lowercase(), name(q)))
                        .collect();
                    let mut l = format!(
                        "measure {} -> {}",
                        product.join(" * "),
                        circuit.records[*record as usize].name
                    );
                    if *flip > 0.0 {
                        let _ = write!(l, " flip {}", num(*flip));
                    }
                    l
                }
                OpKind::Noise(Channel::Joint { p, paulis }) => {
                    let product: Vec<String> = op
                        .targets
                        .iter()
                        .zip(paulis)
                        .map(|(&q, p)| format!("{} {}", p.letter().to_ascii_lowercase(), name(q)))
                        .collect();
                    format!(
                        "noise {} p={} {}",
                        ChannelKind::Joint.name(),
                        num(*p),
                        product.join(" * ")
                    )
                }
                OpKind::Noise(ch) => {
                    let groups: Vec<String> = op
                        .targets
                        .chunks(ch.arity())
                        .map(|c| c.iter().map(|&q| name(q)).collect::<Vec<_>>().join(" "))
                        .collect();
                    let mut l = format!("noise {} {}", channel_text(ch), groups.join(", "));
                    if let Some(note) = notes.iter().find(|n| n.layer == li && n.op == oi) {
                        let (line, _) = circuit.source.line_col(op.span.start);
                        let _ = write!(
                            l,
                            "  # {} (from {}:{})",
                            note.text, circuit.source.name, line
                        );
                    }
                    l
                }
            };
            let _ = writeln!(s, "{ind}  {line}");
        }
        let _ = writeln!(s, "{ind}}}");
    }
    if round.is_some() {
        s.push_str("}\n");
    }
    let recs = |rs: &[u32]| {
        rs.iter()
            .map(|&r| circuit.records[r as usize].name.clone())
            .collect::<Vec<_>>()
            .join(" ^ ")
    };
    for d in &circuit.detectors {
        s.push_str("detector");
        if !d.name.starts_with("detector#") {
            let _ = write!(s, " {}", d.name);
        }
        if !d.coords.is_empty() {
            let c: Vec<String> = d.coords.iter().map(|&x| num(x)).collect();
            let _ = write!(s, " at ({})", c.join(", "));
        }
        let _ = writeln!(s, " = {}", recs(&d.records));
    }
    for o in &circuit.observables {
        let _ = writeln!(s, "observable {} = {}", o.name, recs(&o.records));
    }
    s
}
