//! The standard noise presets: `capacity`, `phenomenological` and `circuit`.
//!
//! Placement rules (each inserted operation keeps the span of the operation or layer it belongs
//! to):
//!
//! - `capacity p=P`: before the first layer of each round, a new layer (in that round) with one
//!   single-qubit channel of total `P` on every qubit with role `data`. Measurements stay perfect.
//! - `phenomenological p=P q=Q`: as `capacity`, and every measurement in a layer that belongs to
//!   a round gets flip probability `Q` (default `P`), combined with any flip it already has
//!   (`f ⊕ Q`: `f + Q − 2fQ`).
//! - `circuit p=P`: in every layer with at least one gate, measurement or reset:
//!   right after each gate a channel of total `P` on its qubit (one-qubit gates, including `i`) or
//!   pair (two-qubit gates); right after each reset the orthogonal flip with probability `P`
//!   (X after a Z or Y reset, Z after an X reset); every measurement flip `P` (combined as above);
//!   at the end of the layer a single-qubit channel of total `P` on every qubit of the circuit that
//!   no gate, measurement or reset of the layer touches (idle). Layers holding only noise are left
//!   alone.
//!
//! Channel shapes with and without `bias` are described in the [`crate::noise`] module docs.

use std::sync::Arc;

use crate::base::{did_you_mean, xor_prob, Basis, Diagnostic, Gate, Pauli, Source, Span};
use crate::ir::{Channel, Circuit, Layer, Op, OpKind};
use crate::noise::implement::Implementation;
use crate::noise::note::Note;

/// Which preset.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum PresetKind {
    /// Code capacity: data-qubit errors at the start of each round, perfect measurements.
    Capacity,
    /// Uniform circuit-level noise.
    Circuit,
    /// Data-qubit errors per round plus syndrome measurement flips.
    Phenomenological,
}

impl PresetKind {
    const ALL: [PresetKind; 3] = [
        PresetKind::Capacity,
        PresetKind::Circuit,
        PresetKind::Phenomenological,
    ];

    /// The name written in `--noise`.
    pub fn name(self) -> &'static str {
        match self {
            PresetKind::Capacity => "capacity",
            PresetKind::Circuit => "circuit",
            PresetKind::Phenomenological => "phenomenological",
        }
    }

    fn keys(self) -> &'static [&'static str] {
        match self {
            PresetKind::Phenomenological => &["bias", "p", "q"],
            _ => &["bias", "p"],
        }
    }
}

/// A parsed preset.
#[derive(Clone, Debug, PartialEq)]
pub struct Preset {
    /// Which preset.
    pub kind: PresetKind,
    /// Total probability of each channel.
    pub p: f64,
    /// Measurement flip probability (`phenomenological` only; `None` means `p`).
    pub q: Option<f64>,
    /// `pZ / (pX + pY)`; `None` for depolarizing; may be infinite (pure Z).
    pub bias: Option<f64>,
}

/// Splits text into whitespace-separated tokens with their byte offsets.
fn tokens(text: &str) -> Vec<(usize, &str)> {
    let mut out = Vec::new();
    let mut start = None;
    for (i, c) in text.char_indices() {
        match (c.is_whitespace(), start) {
            (true, Some(s)) => {
                out.push((s, &text[s..i]));
                start = None;
            }
            (false, None) => start = Some(i),
            _ => {}
        }
    }
    if let Some(s) = start {
        out.push((s, &text[s..]));
    }
    out
}

impl Preset {
    /// Parses `NAME key=value ...` from a source holding the option text.
    pub fn parse(src: &Arc<Source>) -> Result<Preset, Diagnostic> {
        let text = src.text.as_str();
        let toks = tokens(text);
        let examples = "e.g. `circuit p=0.001`, `capacity p=0.05 bias=100` or `phenomenological p=0.01 q=0.02`";
        let Some(&(at, name)) = toks.first() else {
            return Err(Diagnostic::error(
                src,
                Span::new(0, text.len()),
                "the noise specification is empty",
            )
            .with_hint(format!("give a preset, {examples}")));
        };
        let span = |start: usize, s: &str| Span::new(start, start + s.len());
        let Some(kind) = PresetKind::ALL.into_iter().find(|k| k.name() == name) else {
            let mut d = Diagnostic::error(
                src,
                span(at, name),
                format!("unknown noise preset `{name}`"),
            );
            d = match did_you_mean(name, PresetKind::ALL.iter().map(|k| k.name())) {
                Some(s) => d.with_hint(format!("did you mean `{s}`?")),
                None => d.with_hint(format!(
                    "presets are `capacity`, `phenomenological` and `circuit`, {examples}"
                )),
            };
            return Err(d);
        };
        let mut preset = Preset {
            kind,
            p: f64::NAN,
            q: None,
            bias: None,
        };
        let mut seen: Vec<&str> = Vec::new();
        for &(at, tok) in &toks[1..] {
            let Some((key, value)) = tok.split_once('=') else {
                return Err(Diagnostic::error(
                    src,
                    span(at, tok),
                    format!("expected `key=value`, found `{tok}`"),
                )
                .with_hint(format!("`{}` takes {}", kind.name(), key_list(kind))));
            };
            if !kind.keys().contains(&key) {
                let mut d = Diagnostic::error(
                    src,
                    span(at, key),
                    format!("unknown key `{key}` for the `{}` preset", kind.name()),
                );
                d = match did_you_mean(key, kind.keys().iter().copied()) {
                    Some(s) => d.with_hint(format!("did you mean `{s}`?")),
                    None => d.with_hint(format!("`{}` takes {}", kind.name(), key_list(kind))),
                };
                return Err(d);
            }
            if seen.contains(&key) {
                return Err(Diagnostic::error(
                    src,
                    span(at, key),
                    format!("key `{key}` is given twice"),
                ));
            }
            seen.push(key);
            let vat = at + key.len() + 1;
            let vspan = Span::new(vat, vat + value.len().max(1));
            let number: f64 = if key == "bias" && value == "inf" {
                f64::INFINITY
            } else {
                match value.parse::<f64>() {
                    Ok(v) if v.is_finite() => v,
                    _ => {
                        return Err(Diagnostic::error(
                            src,
                            vspan,
                            format!("`{value}` is not a number"),
                        )
                        .with_hint("write plain decimals such as `0.001` or `1e-3`"))
                    }
                }
            };
            match key {
                "bias" => {
                    if number <= 0.0 {
                        return Err(Diagnostic::error(src, vspan, format!("bias `{value}` must be positive"))
                            .with_hint("bias is pZ/(pX+pY): 0.5 is depolarizing, large values favour Z, `inf` is pure Z"));
                    }
                    preset.bias = Some(number);
                }
                _ => {
                    if !(0.0..=1.0).contains(&number) {
                        return Err(Diagnostic::error(
                            src,
                            vspan,
                            format!("probability `{value}` is outside [0, 1]"),
                        ));
                    }
                    if key == "p" {
                        preset.p = number;
                    } else {
                        preset.q = Some(number);
                    }
                }
            }
        }
        if preset.p.is_nan() {
            return Err(Diagnostic::error(
                src,
                Span::new(text.trim_end().len(), text.trim_end().len()),
                format!("the `{}` preset needs a probability `p=`", kind.name()),
            )
            .with_hint(format!("e.g. `{} p=0.001`", kind.name())));
        }
        Ok(preset)
    }

    /// The single-qubit channel of total probability `p` (depolarizing, or biased).
    pub fn one_qubit(&self, p: f64) -> Channel {
        match self.bias {
            None => Channel::Depolarizing(p),
            Some(eta) => {
                // PRL 120, 050505 (2018): eta = pZ / (pX + pY).
                let high = if eta.is_infinite() {
                    1.0
                } else {
                    eta / (eta + 1.0)
                };
                Channel::Pauli {
                    px: p * (1.0 - high) / 2.0,
                    py: p * (1.0 - high) / 2.0,
                    pz: p * high,
                }
            }
        }
    }

    /// The two-qubit channel of total probability `p`: depolarizing, or `ZI`, `IZ`, `ZZ` sharing
    /// `p·eta/(eta+1)` and the other twelve terms sharing `p/(eta+1)`.
    pub fn two_qubit(&self, p: f64) -> Channel {
        match self.bias {
            None => Channel::PairDepolarizing(p),
            Some(eta) => {
                let high = if eta.is_infinite() {
                    1.0
                } else {
                    eta / (eta + 1.0)
                };
                let mut probs = [p * (1.0 - high) / 12.0; 15];
                for name in ["zi", "iz", "zz"] {
                    let k = Pauli::pair_index(name).unwrap_or(1);
                    probs[k - 1] = p * high / 3.0;
                }
                Channel::PairPauli(Box::new(probs))
            }
        }
    }

    /// The preset as `--noise` text in canonical form, e.g. `circuit p=0.001 bias=100`.
    pub fn text(&self) -> String {
        let mut s = format!("{} p={}", self.kind.name(), self.p);
        if let Some(q) = self.q {
            s.push_str(&format!(" q={q}"));
        }
        if let Some(b) = self.bias {
            s.push_str(&format!(" bias={b}"));
        }
        s
    }

    /// Writes the preset's noise into a copy of `circuit`.
    pub fn apply(&self, circuit: &Circuit) -> Result<Circuit, Vec<Diagnostic>> {
        self.apply_noted(circuit).map(|(c, _)| c)
    }

    /// Like [`Preset::apply`], with one [`Note`] per inserted channel, classed as the model
    /// compiler classes them (the gate it follows, `reset`, `idle`) or `round-start` for the
    /// data channel of `capacity` and `phenomenological`; the bias report groups channels by
    /// these classes, so presets and model files must agree on them.
    pub fn apply_noted(&self, circuit: &Circuit) -> Result<(Circuit, Vec<Note>), Vec<Diagnostic>> {
        match self.kind {
            PresetKind::Capacity | PresetKind::Phenomenological => self.apply_rounds(circuit),
            PresetKind::Circuit => Ok(self.apply_circuit(circuit)),
        }
    }

    fn note(&self, layer: usize, op: usize, class: &str, input: &Channel, what: &str) -> Note {
        Note {
            layer,
            op,
            class: class.to_string(),
            gate: Gate::from_name(class),
            implementation: Implementation::Ideal,
            generator: None,
            input: input.clone(),
            section: match Gate::from_name(class) {
                Some(g) => format!("gates.{}", g.name()),
                None => class.to_string(),
            },
            text: format!("preset `{}` {what}", self.text()),
        }
    }

    fn apply_rounds(&self, circuit: &Circuit) -> Result<(Circuit, Vec<Note>), Vec<Diagnostic>> {
        let name = self.kind.name();
        let data: Vec<u32> = (0..circuit.qubits.len() as u32)
            .filter(|&q| circuit.qubits[q as usize].has_role("data"))
            .collect();
        let mut errors = Vec::new();
        if data.is_empty() {
            errors.push(
                Diagnostic::bare(format!(
                    "the `{name}` noise preset needs qubits with role `data`, and `{}` has none",
                    circuit.source.name
                ))
                .with_hint("declare data qubits with `role data`, e.g. `qubit q[0..3] role data`"),
            );
        }
        if circuit.layers.iter().all(|l| l.round.is_none()) {
            errors.push(
                Diagnostic::bare(format!(
                    "the `{name}` noise preset needs syndrome rounds, and `{}` marks none",
                    circuit.source.name
                ))
                .with_hint("wrap each syndrome-extraction round in `round { ... }`"),
            );
        }
        if !errors.is_empty() {
            return Err(errors);
        }
        let flip = match self.kind {
            PresetKind::Phenomenological => self.q.unwrap_or(self.p),
            _ => 0.0,
        };
        let mut out = circuit.clone();
        let mut notes = Vec::new();
        out.layers = Vec::with_capacity(circuit.layers.len() + circuit.rounds as usize);
        let mut previous = None;
        for layer in &circuit.layers {
            if layer.round.is_some() && layer.round != previous {
                let ch = self.one_qubit(self.p);
                notes.push(self.note(
                    out.layers.len(),
                    0,
                    "round-start",
                    &ch,
                    "on the data at the start of the round",
                ));
                out.layers.push(Layer {
                    ops: vec![Op {
                        kind: OpKind::Noise(ch),
                        targets: data.clone(),
                        paulis: Vec::new(),
                        span: layer.span,
                    }],
                    round: layer.round,
                    span: layer.span,
                });
            }
            previous = layer.round;
            let mut layer = layer.clone();
            if layer.round.is_some() && flip > 0.0 {
                for (oi, op) in layer.ops.iter_mut().enumerate() {
                    if let OpKind::Measure { flip: f, .. } = &mut op.kind {
                        *f = xor_prob(*f, flip);
                        notes.push(self.note(
                            out.layers.len(),
                            oi,
                            "measure",
                            &Channel::BitFlip(flip),
                            "measurement flip",
                        ));
                    }
                }
            }
            out.layers.push(layer);
        }
        Ok((out, notes))
    }

    fn apply_circuit(&self, circuit: &Circuit) -> (Circuit, Vec<Note>) {
        let p = self.p;
        let n = circuit.qubits.len();
        let mut out = circuit.clone();
        let mut notes = Vec::new();
        let mut touched = vec![false; n];
        for (li, layer) in out.layers.iter_mut().enumerate() {
            let active = layer
                .ops
                .iter()
                .any(|op| !matches!(op.kind, OpKind::Noise(_)));
            if !active || p == 0.0 {
                continue;
            }
            touched.fill(false);
            let mut ops = Vec::with_capacity(2 * layer.ops.len() + 1);
            for mut op in std::mem::take(&mut layer.ops) {
                let extra = match &mut op.kind {
                    OpKind::Noise(_) => None,
                    OpKind::Gate(g) => Some(if g.arity() == 2 {
                        self.two_qubit(p)
                    } else {
                        self.one_qubit(p)
                    }),
                    OpKind::Reset(Basis::X) => Some(Channel::Dephasing(p)),
                    OpKind::Reset(_) => Some(Channel::BitFlip(p)),
                    OpKind::Measure { flip, .. } => {
                        *flip = xor_prob(*flip, p);
                        notes.push(self.note(
                            li,
                            ops.len(),
                            "measure",
                            &Channel::BitFlip(p),
                            "measurement flip",
                        ));
                        None
                    }
                };
                if !matches!(op.kind, OpKind::Noise(_)) {
                    for &q in &op.targets {
                        touched[q as usize] = true;
                    }
                }
                let (targets, span) = (op.targets.clone(), op.span);
                let (class, what) = match &op.kind {
                    OpKind::Gate(g) => (g.name().to_string(), format!("after `{}`", g.name())),
                    OpKind::Reset(b) => (
                        "reset".to_string(),
                        format!("reset error after `reset {}`", b.name()),
                    ),
                    _ => (String::new(), String::new()),
                };
                ops.push(op);
                if let Some(ch) = extra {
                    notes.push(self.note(li, ops.len(), &class, &ch, &what));
                    ops.push(Op {
                        kind: OpKind::Noise(ch),
                        targets,
                        paulis: Vec::new(),
                        span,
                    });
                }
            }
            let idle: Vec<u32> = (0..n as u32).filter(|&q| !touched[q as usize]).collect();
            if !idle.is_empty() {
                let ch = self.one_qubit(p);
                notes.push(self.note(li, ops.len(), "idle", &ch, "idle"));
                ops.push(Op {
                    kind: OpKind::Noise(ch),
                    targets: idle,
                    paulis: Vec::new(),
                    span: layer.span,
                });
            }
            layer.ops = ops;
        }
        (out, notes)
    }
}

fn key_list(kind: PresetKind) -> String {
    kind.keys()
        .iter()
        .map(|k| format!("`{k}=`"))
        .collect::<Vec<_>>()
        .join(", ")
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Parses as `--noise` does for a plain preset (the same source name).
    fn parse(text: &str) -> Result<Preset, Diagnostic> {
        Preset::parse(&Source::new("--noise", text))
    }

    #[test]
    fn parses_presets() {
        let p = parse("circuit p=0.001").unwrap();
        assert_eq!(
            (p.kind, p.p, p.q, p.bias),
            (PresetKind::Circuit, 0.001, None, None)
        );
        let p = parse("  phenomenological   p=0.01 q=0.02 bias=10 ").unwrap();
        assert_eq!(p.kind, PresetKind::Phenomenological);
        assert_eq!((p.q, p.bias), (Some(0.02), Some(10.0)));
        assert_eq!(
            parse("capacity p=1e-2 bias=inf").unwrap().bias,
            Some(f64::INFINITY)
        );
    }

    /// Every rejection names the place in the option text and, where one exists, a suggestion.
    #[test]
    fn rejects_bad_specs_with_located_hints() {
        let cases: &[(&str, &str, usize, Option<&str>)] = &[
            (
                "circiut p=0.1",
                "unknown noise preset `circiut`",
                1,
                Some("did you mean `circuit`?"),
            ),
            (
                "capacity p=0.1 biass=3",
                "unknown key `biass`",
                16,
                Some("did you mean `bias`?"),
            ),
            ("circuit p=0.1 q=0.2", "unknown key `q`", 15, None),
            (
                "circuit p=1.5",
                "probability `1.5` is outside [0, 1]",
                11,
                None,
            ),
            ("circuit p=abc", "`abc` is not a number", 11, None),
            (
                "circuit bias=-2 p=0.1",
                "bias `-2` must be positive",
                14,
                None,
            ),
            ("circuit p=0.1 p=0.2", "key `p` is given twice", 15, None),
            ("circuit bias=3", "needs a probability `p=`", 15, None),
            ("circuit 0.1", "expected `key=value`", 9, None),
            ("", "the noise specification is empty", 1, None),
        ];
        for &(text, message, col, hint) in cases {
            let d = parse(text).expect_err(text);
            assert!(d.message.contains(message), "{text}: {}", d.message);
            let (name, line, c) = d.location().unwrap();
            assert_eq!((name.as_str(), line, c), ("--noise", 1, col), "{text}");
            if let Some(h) = hint {
                assert_eq!(d.hint.as_deref(), Some(h), "{text}");
            }
        }
    }

    /// PRL 120, 050505 (2018) convention: eta = pZ/(pX+pY); eta = 1/2 is depolarizing.
    #[test]
    fn bias_split() {
        let p = parse("circuit p=0.03 bias=100").unwrap();
        let Channel::Pauli { px, py, pz } = p.one_qubit(0.03) else {
            panic!("expected a Pauli channel")
        };
        assert!((pz / (px + py) - 100.0).abs() < 1e-9);
        assert!((px + py + pz - 0.03).abs() < 1e-15);
        let half = parse("circuit p=0.03 bias=0.5").unwrap();
        let Channel::Pauli { px, py, pz } = half.one_qubit(0.03) else {
            panic!("expected a Pauli channel")
        };
        assert!(
            (px - 0.01).abs() < 1e-15 && (py - 0.01).abs() < 1e-15 && (pz - 0.01).abs() < 1e-15
        );
        let Channel::PairPauli(probs) = p.two_qubit(0.03) else {
            panic!("expected a two-qubit Pauli channel")
        };
        let high: f64 = ["zi", "iz", "zz"]
            .iter()
            .map(|n| probs[Pauli::pair_index(n).unwrap() - 1])
            .sum();
        assert!((high - 0.03 * 100.0 / 101.0).abs() < 1e-12);
        assert!((probs.iter().sum::<f64>() - 0.03).abs() < 1e-12);
    }
}
