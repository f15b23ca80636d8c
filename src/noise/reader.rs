//! The reader of noise-model files: TOML text in, a checked [`NoiseModel`] out, or one
//! [`Diagnostic`] at `file:line:col` (unknown key with a suggestion, value of the wrong type or out
//! of range, `t2 > 2·t1`, missing rate). The schema and what each key means are documented with the
//! types in `model.rs`; this file only walks the TOML tree.

use std::sync::Arc;

use toml_edit::{ImDocument, Item, TableLike, Value};

use crate::base::{did_you_mean, Basis, Diagnostic, Gate, Pauli, Source, Span};
use crate::noise::implement::{
    angle_text, parse_angle, parse_polynomial, Generator, Implementation, GATE_TOLERANCE,
    MAX_WINDING,
};
use crate::noise::model::{
    canonical_qubit_name, BasisSpam, GateNoise, IdleNoise, NoiseModel, Override, Rate, Selector,
    SpamNoise, TIME_UNITS,
};

impl NoiseModel {
    /// Parses a model file.
    pub fn parse(source: &Arc<Source>) -> Result<NoiseModel, Diagnostic> {
        parse_model(source)
    }
}

fn parse_model(source: &Arc<Source>) -> Result<NoiseModel, Diagnostic> {
    let doc = ImDocument::parse(source.text.clone()).map_err(|e| {
        let span = e.span().unwrap_or(0..0);
        let msg = e.message().lines().next().unwrap_or("invalid TOML").trim();
        Diagnostic::error(
            source,
            Span::new(span.start, span.end.max(span.start + 1)),
            format!("invalid TOML: {msg}"),
        )
    })?;
    let p = Parser { source };
    let root = doc.as_table();
    let whole = Span::new(0, source.text.len());
    p.known_keys(root, &TOP_KEYS, "the top level")?;
    let time_unit = p.time_unit(root)?;
    let base = p.base_rate(root, None)?;
    let gates = match root.get("gates") {
        None => Vec::new(),
        Some(item) => p.gates(item, &base)?,
    };
    let measure = p.spam(root.get("measure"), &base, None, whole, "measure")?;
    let reset = p.spam(root.get("reset"), &base, None, whole, "reset")?;
    let idle = match root.get("idle") {
        None => IdleNoise::None,
        Some(item) => p.idle(item, &base)?,
    };
    let mut overrides = Vec::new();
    if let Some(item) = root.get("override") {
        let Some(array) = item.as_array_of_tables() else {
            return Err(p.err(
                item.span(),
                "`override` must be an array of tables, written `[[override]]`",
            ));
        };
        for t in array.iter() {
            overrides.push(p.override_table(t, &base, &measure, &reset)?);
        }
    }
    let model = NoiseModel {
        source: source.clone(),
        gates,
        measure,
        reset,
        idle,
        overrides,
        time_unit,
        base_p: p.number(root, "p")?,
    };
    Ok(model)
}

/// Base `p` and `bias` inherited by sections that give none.
#[derive(Clone, Debug, Default)]
struct Base {
    p: Option<f64>,
    bias: Option<f64>,
}

struct Parser<'a> {
    source: &'a Arc<Source>,
}

fn span_of(r: Option<std::ops::Range<usize>>) -> Option<Span> {
    r.map(|r| Span::new(r.start, r.end))
}

/// Keys of the top level of a model file.
const TOP_KEYS: [&str; 8] = [
    "bias",
    "gates",
    "idle",
    "measure",
    "override",
    "p",
    "reset",
    "time_unit",
];
/// Keys of `[measure]`.
const MEASURE_KEYS: [&str; 6] = ["bias", "duration", "flip", "x", "y", "z"];
/// Keys of `[reset]`.
const RESET_KEYS: [&str; 6] = ["bias", "duration", "p", "x", "y", "z"];
/// Keys of a measurement basis table (`[measure.x]`, `[measure.y]`, `[measure.z]`).
const MEASURE_BASIS_KEYS: [&str; 2] = ["duration", "flip"];
/// Keys of a reset basis table (`[reset.x]`, `[reset.y]`, `[reset.z]`).
const RESET_BASIS_KEYS: [&str; 2] = ["duration", "p"];
/// Keys of `[idle]`.
const IDLE_KEYS: [&str; 8] = ["bias", "p", "t1", "t2", "t_bitflip", "x", "y", "z"];
/// Keys of `[[override]]`.
const OVERRIDE_KEYS: [&str; 6] = ["gates", "idle", "measure", "qubit", "reset", "role"];

/// Every section of a model file with the keys it accepts, for the reference page's test.
/// `gates.NAME` lists the keys of every gate; one-qubit gates add `x y z`, two-qubit gates the
/// fifteen names `ix` … `zz`.
pub const MODEL_KEYS: [(&str, &[&str]); 8] = [
    ("top level", &TOP_KEYS),
    ("gates.NAME", &GATE_KEYS),
    ("measure", &MEASURE_KEYS),
    ("measure.BASIS", &MEASURE_BASIS_KEYS),
    ("reset", &RESET_KEYS),
    ("reset.BASIS", &RESET_BASIS_KEYS),
    ("idle", &IDLE_KEYS),
    ("override", &OVERRIDE_KEYS),
];

/// Keys of every gate section; one-qubit gates add `x`, `y`, `z`, two-qubit gates the 15 term
/// names.
const GATE_KEYS: [&str; 6] = [
    "angle",
    "bias",
    "duration",
    "generator",
    "implementation",
    "p",
];

impl Parser<'_> {
    fn err(&self, span: Option<std::ops::Range<usize>>, msg: impl Into<String>) -> Diagnostic {
        let s = span_of(span).unwrap_or(Span::new(0, 0));
        Diagnostic::error(self.source, s, msg)
    }

    fn key_span(&self, t: &dyn TableLike, key: &str) -> Option<std::ops::Range<usize>> {
        t.key(key)
            .and_then(|k| k.span())
            .or_else(|| t.get(key).and_then(|i| i.span()))
    }

    fn known_keys(&self, t: &dyn TableLike, keys: &[&str], what: &str) -> Result<(), Diagnostic> {
        for (k, _) in t.iter() {
            if !keys.contains(&k) {
                let mut d = self.err(self.key_span(t, k), format!("unknown key `{k}` in {what}"));
                d = match did_you_mean(k, keys.iter().copied()) {
                    Some(s) => d.with_hint(format!("did you mean `{s}`?")),
                    None => d.with_hint(format!(
                        "{what} takes {}",
                        keys.iter()
                            .map(|k| format!("`{k}`"))
                            .collect::<Vec<_>>()
                            .join(", ")
                    )),
                };
                return Err(d);
            }
        }
        Ok(())
    }

    fn number(&self, t: &dyn TableLike, key: &str) -> Result<Option<f64>, Diagnostic> {
        let Some(item) = t.get(key) else {
            return Ok(None);
        };
        let v = match item.as_value() {
            Some(Value::Float(f)) => *f.value(),
            Some(Value::Integer(i)) => *i.value() as f64,
            Some(Value::String(s)) if s.value() == "inf" => f64::INFINITY,
            _ => return Err(self.err(item.span(), format!("`{key}` must be a number"))),
        };
        if v.is_nan() {
            return Err(self.err(item.span(), format!("`{key}` must be a number")));
        }
        Ok(Some(v))
    }

    fn time_unit(&self, t: &dyn TableLike) -> Result<Option<&'static str>, Diagnostic> {
        let Some(item) = t.get("time_unit") else {
            return Ok(None);
        };
        let units = TIME_UNITS
            .iter()
            .map(|u| format!("`{u}`"))
            .collect::<Vec<_>>()
            .join(", ");
        let Some(s) = item.as_str() else {
            return Err(self
                .err(item.span(), "`time_unit` must be a string")
                .with_hint(format!(
                    "write e.g. `time_unit = \"ns\"`; units are {units}"
                )));
        };
        match TIME_UNITS.iter().find(|u| **u == s) {
            Some(u) => Ok(Some(*u)),
            // No did-you-mean: edit distance would offer `s` for `µs`.
            None => Err(self
                .err(item.span(), format!("unknown time unit `{s}`"))
                .with_hint(format!(
                    "units are {units} (`us` for microseconds); write every duration and time in it"
                ))),
        }
    }

    fn probability(&self, t: &dyn TableLike, key: &str) -> Result<Option<f64>, Diagnostic> {
        let v = self.number(t, key)?;
        if let Some(x) = v {
            if !(0.0..=1.0).contains(&x) {
                return Err(self.err(
                    t.get(key).and_then(|i| i.span()),
                    format!("`{key}` = {x} is outside [0, 1]"),
                ));
            }
        }
        Ok(v)
    }

    fn positive(
        &self,
        t: &dyn TableLike,
        key: &str,
        allow_zero: bool,
    ) -> Result<Option<f64>, Diagnostic> {
        let v = self.number(t, key)?;
        if let Some(x) = v {
            if x < 0.0 || (!allow_zero && x == 0.0) || (x.is_infinite() && key == "duration") {
                let what = if allow_zero {
                    "non-negative and finite"
                } else {
                    "positive"
                };
                return Err(self.err(
                    t.get(key).and_then(|i| i.span()),
                    format!("`{key}` = {x} must be {what}"),
                ));
            }
        }
        Ok(v)
    }

    fn base_rate(&self, t: &dyn TableLike, inherit: Option<&Base>) -> Result<Base, Diagnostic> {
        let p = self.probability(t, "p")?;
        let bias = self.positive(t, "bias", false)?;
        let inherit = inherit.cloned().unwrap_or_default();
        Ok(Base {
            p: p.or(inherit.p),
            bias: bias.or(inherit.bias),
        })
    }

    fn table<'b>(&self, item: &'b Item, name: &str) -> Result<&'b dyn TableLike, Diagnostic> {
        item.as_table_like()
            .ok_or_else(|| self.err(item.span(), format!("`{name}` must be a table")))
    }

    /// A rate: explicit terms, or `p` + `bias` (inheriting the base).
    fn rate(
        &self,
        t: &dyn TableLike,
        base: &Base,
        two: bool,
        at: Span,
        what: &str,
    ) -> Result<Rate, Diagnostic> {
        if two {
            let mut terms = [0.0; 15];
            let mut any = false;
            for k in 1..16 {
                let v = Pauli::pair_from_index(k);
                let name: String = v.iter().map(|p| p.letter().to_ascii_lowercase()).collect();
                if let Some(x) = self.probability(t, &name)? {
                    terms[k - 1] = x;
                    any = true;
                }
            }
            if any {
                if t.contains_key("p") {
                    return Err(self.err(
                        self.key_span(t, "p"),
                        format!("{what} gives both `p` and named terms"),
                    ));
                }
                if terms.iter().sum::<f64>() > 1.0 {
                    return Err(Diagnostic::error(
                        self.source,
                        at,
                        format!("the terms of {what} add up to more than 1"),
                    ));
                }
                return Ok(Rate::Two(Box::new(terms)));
            }
        } else {
            let (x, y, z) = (
                self.probability(t, "x")?,
                self.probability(t, "y")?,
                self.probability(t, "z")?,
            );
            if x.is_some() || y.is_some() || z.is_some() {
                if t.contains_key("p") {
                    return Err(self.err(
                        self.key_span(t, "p"),
                        format!("{what} gives both `p` and `x`/`y`/`z`"),
                    ));
                }
                let (x, y, z) = (x.unwrap_or(0.0), y.unwrap_or(0.0), z.unwrap_or(0.0));
                if x + y + z > 1.0 {
                    return Err(Diagnostic::error(
                        self.source,
                        at,
                        format!("`x + y + z` of {what} is more than 1"),
                    ));
                }
                return Ok(Rate::One(x, y, z));
            }
        }
        let b = self.base_rate(t, Some(base))?;
        let Some(p) = b.p else {
            return Err(
                Diagnostic::error(self.source, at, format!("{what} has no error rate"))
                    .with_hint("give `p = ...` here or at the top level of the model"),
            );
        };
        Ok(Rate::Total { p, bias: b.bias })
    }

    fn gates(
        &self,
        item: &Item,
        base: &Base,
    ) -> Result<Vec<(Option<Gate>, GateNoise)>, Diagnostic> {
        let t = self.table(item, "gates")?;
        let mut out = Vec::new();
        let names: Vec<&str> = Gate::ALL
            .iter()
            .map(|g| g.name())
            .chain(["default"])
            .collect();
        for (name, sub) in t.iter() {
            let gate = match Gate::from_name(name) {
                Some(g) => Some(g),
                None if name == "default" => None,
                None => {
                    let mut d = self.err(
                        self.key_span(t, name),
                        format!("unknown gate `{name}` in `gates`"),
                    );
                    let suggestion = Gate::from_alias(name)
                        .map(Gate::name)
                        .or_else(|| did_you_mean(name, names.iter().copied()));
                    d = d.with_hint(match suggestion {
                        Some(s) => format!("did you mean `{s}`?"),
                        None => format!(
                            "gate sections are named as the circuit language names gates: {}, or `default`",
                            Gate::ALL.iter().map(|g| format!("`{}`", g.name())).collect::<Vec<_>>().join(", ")
                        ),
                    });
                    return Err(d);
                }
            };
            out.push((gate, self.gate(sub, name, gate, base)?));
        }
        Ok(out)
    }

    fn gate(
        &self,
        item: &Item,
        name: &str,
        gate: Option<Gate>,
        base: &Base,
    ) -> Result<GateNoise, Diagnostic> {
        let t = self.table(item, &format!("gates.{name}"))?;
        let at = span_of(item.span())
            .or_else(|| span_of(self.key_span(t, "p")))
            .unwrap_or(Span::new(0, 0));
        let two = gate.is_some_and(|g| g.arity() == 2);
        let mut keys: Vec<&str> = GATE_KEYS.to_vec();
        let pair_names: Vec<String> = (1..16)
            .map(|k| {
                Pauli::pair_from_index(k)
                    .iter()
                    .map(|p| p.letter().to_ascii_lowercase())
                    .collect()
            })
            .collect();
        if two {
            keys.extend(pair_names.iter().map(|s| s.as_str()));
        } else if gate.is_some() {
            keys.extend(["x", "y", "z"]);
        }
        self.known_keys(t, &keys, &format!("`gates.{name}`"))?;
        let implementation = match t.get("implementation") {
            None => Implementation::Ideal,
            Some(i) => {
                let s = i.as_str().unwrap_or("");
                Implementation::from_name(s).ok_or_else(|| {
                    let mut d = self.err(i.span(), format!("unknown implementation `{s}`"));
                    d = d.with_hint(
                        match did_you_mean(s, Implementation::ALL.iter().map(|i| i.name())) {
                            Some(x) => format!("did you mean `{x}`?"),
                            None => "implementations are `ideal`, `rotation` and `bias-preserving`"
                                .into(),
                        },
                    );
                    d
                })?
            }
        };
        Ok(GateNoise {
            duration: self.positive(t, "duration", true)?,
            rate: self.rate(t, base, two, at, &format!("`gates.{name}`"))?,
            implementation,
            generator: self.generator(t, name, gate, implementation)?,
            span: at,
        })
    }

    /// The span of `range` (byte offsets into the string value of `item`) in the file. Offsets
    /// map one to one only when the value is written literally between one-character quotes
    /// with no escapes; otherwise the whole value is the best place to point at.
    fn in_string(&self, item: &Item, range: std::ops::Range<usize>) -> Span {
        let Some(span) = item.span() else {
            return Span::new(0, 0);
        };
        let raw = &self.source.text[span.clone()];
        let literal = item
            .as_str()
            .is_some_and(|v| raw.len() == v.len() + 2 && &raw[1..raw.len() - 1] == v);
        if literal {
            let start = span.start + 1 + range.start;
            Span::new(start, (span.start + 1 + range.end).max(start + 1))
        } else {
            Span::new(span.start, span.end)
        }
    }

    /// `generator` and `angle` of a gate section: a rotation `exp(i·angle·G)` replacing the
    /// default generator. Refused unless it belongs to one gate implemented as a rotation, parses,
    /// and its rotation is the gate up to a global phase.
    fn generator(
        &self,
        t: &dyn TableLike,
        name: &str,
        gate: Option<Gate>,
        implementation: Implementation,
    ) -> Result<Option<Generator>, Diagnostic> {
        let (g_item, a_item) = (t.get("generator"), t.get("angle"));
        let given = if g_item.is_some() {
            "generator"
        } else {
            "angle"
        };
        if g_item.is_none() && a_item.is_none() {
            return Ok(None);
        }
        let Some(gate) = gate else {
            return Err(self
                .err(
                    self.key_span(t, given),
                    format!("`{given}` describes one gate, not `gates.default`"),
                )
                .with_hint("give it in the section of the gate it implements, e.g. `[gates.cx]`"));
        };
        let example = Generator::default_for(gate);
        let example = format!(
            "`{}` is, for example, `generator = \"{}\"` with `angle = \"{}\"`",
            gate.name(),
            example.text(gate.arity()),
            angle_text(example.theta)
        );
        if implementation != Implementation::Rotation {
            return Err(self
                .err(
                    self.key_span(t, given),
                    format!(
                        "`{given}` applies only to `implementation = \"rotation\"`, and `gates.{name}` is `{}`",
                        implementation.name()
                    ),
                )
                .with_hint("set `implementation = \"rotation\"` or remove the generator"));
        }
        let (Some(g_item), Some(a_item)) = (g_item, a_item) else {
            let (has, lacks) = if g_item.is_some() {
                ("generator", "angle")
            } else {
                ("angle", "generator")
            };
            return Err(self
                .err(
                    self.key_span(t, has),
                    format!("`{has}` needs `{lacks}` in `gates.{name}`: the gate is exp(i·angle·generator)"),
                )
                .with_hint(example));
        };
        let Some(text) = g_item.as_str() else {
            return Err(self
                .err(g_item.span(), "`generator` must be a string")
                .with_hint(example));
        };
        let terms = parse_polynomial(text, gate.arity()).map_err(|(range, msg)| {
            Diagnostic::error(self.source, self.in_string(g_item, range), msg).with_hint(
                "write a sum of Pauli strings with real coefficients, e.g. `II - ZI - IX + ZX` or `0.5 XX + 0.5 YY`",
            )
        })?;
        let angle_hint =
            "write radians as a number, or a multiple of pi such as `\"pi/4\"` or `\"-3*pi/4\"`";
        let theta = match a_item.as_value() {
            Some(Value::Float(f)) if f.value().is_finite() => *f.value(),
            Some(Value::Integer(i)) => *i.value() as f64,
            Some(Value::String(s)) => parse_angle(s.value()).ok_or_else(|| {
                self.err(a_item.span(), format!("`{}` is not an angle", s.value()))
                    .with_hint(angle_hint)
            })?,
            _ => {
                return Err(self
                    .err(
                        a_item.span(),
                        "`angle` must be a finite number or a multiple of pi",
                    )
                    .with_hint(angle_hint))
            }
        };
        let generator = Generator { terms, theta };
        let winding = generator.winding();
        if winding > MAX_WINDING {
            return Err(self
                .err(
                    a_item.span(),
                    format!(
                        "the rotation winds too far: |angle|·Σ|coefficients| = {winding:.3}·pi is more than {MAX_WINDING}·pi"
                    ),
                )
                .with_hint(example));
        }
        let deviation = generator.deviation_from(gate);
        if deviation.is_nan() || deviation > GATE_TOLERANCE {
            return Err(self
                .err(
                    g_item.span(),
                    format!(
                        "this generator does not implement `{}`: exp(i·angle·G) differs from the gate by {deviation:.1e} (largest matrix entry, up to a global phase)",
                        gate.name()
                    ),
                )
                .with_label(
                    self.source,
                    span_of(a_item.span()).unwrap_or(Span::new(0, 0)),
                    "with this angle",
                )
                .with_hint(example));
        }
        Ok(Some(generator))
    }

    /// A `[reset]` or `[measure]` section (`what`), its probability key `pkey` (`p` or `flip`).
    /// Missing keys come from `inherit` (an override inherits the model's section per key), the
    /// probability from the base `p` at the top level.
    fn spam(
        &self,
        item: Option<&Item>,
        base: &Base,
        inherit: Option<&SpamNoise>,
        at: Span,
        what: &str,
    ) -> Result<SpamNoise, Diagnostic> {
        let (keys, pkey, table_keys): (&[&str], &str, &[&str]) = if what == "measure" {
            (&MEASURE_KEYS, "flip", &MEASURE_BASIS_KEYS)
        } else {
            (&RESET_KEYS, "p", &RESET_BASIS_KEYS)
        };
        let Some(item) = item else {
            return Ok(match inherit {
                Some(s) => s.clone(),
                None => SpamNoise::flat(base.p.unwrap_or(0.0)),
            });
        };
        let t = self.table(item, what)?;
        self.known_keys(t, keys, &format!("`{what}`"))?;
        let p = self.probability(t, pkey)?;
        let bias = self.positive(t, "bias", false)?;
        let duration = self.positive(t, "duration", true)?;
        let Some(p) = p.or(inherit.map(|s| s.p)).or(base.p) else {
            return Err(Diagnostic::error(
                self.source,
                span_of(item.span()).unwrap_or(at),
                format!("`{what}` has no error probability `{pkey}`"),
            )
            .with_hint(format!(
                "give `{pkey} = ...` here or a base `p` at the top level"
            )));
        };
        let mut out = SpamNoise {
            duration: duration.or(inherit.and_then(|s| s.duration)),
            p,
            bias: bias.or(inherit.and_then(|s| s.bias)),
            bases: inherit.map_or([None, None, None], |s| s.bases.clone()),
        };
        for (k, basis) in Basis::ALL.into_iter().enumerate() {
            let name = basis.name();
            let Some(sub) = t.get(name) else { continue };
            let section = format!("{what}.{name}");
            let Some(st) = sub.as_table_like() else {
                return Err(self
                    .err(sub.span(), format!("`{section}` must be a table"))
                    .with_hint(format!(
                        "write the {what} noise of the {name} basis as `[{section}]` with `{pkey}` and `duration`"
                    )));
            };
            self.known_keys(st, table_keys, &format!("`{section}`"))?;
            let flip = self.probability(st, pkey)?;
            let d = self.positive(st, "duration", true)?;
            let inherited = inherit.and_then(|s| s.bases[k].clone());
            out.bases[k] = Some(BasisSpam {
                duration: d
                    .or(inherited.as_ref().and_then(|b| b.duration))
                    .or(out.duration),
                // Without its own value the basis keeps the section's flip in that basis.
                flip: flip
                    .or(inherited.as_ref().map(|b| b.flip))
                    .unwrap_or_else(|| out.channel_flip(basis)),
            });
        }
        Ok(out)
    }

    fn idle(&self, item: &Item, base: &Base) -> Result<IdleNoise, Diagnostic> {
        let t = self.table(item, "idle")?;
        self.known_keys(t, &IDLE_KEYS, "`idle`")?;
        let t1 = self.positive(t, "t1", false)?;
        let t2 = self.positive(t, "t2", false)?;
        let tb = self.positive(t, "t_bitflip", false)?;
        let timed = t1.is_some() || t2.is_some() || tb.is_some();
        if timed {
            for k in ["p", "bias", "x", "y", "z"] {
                if t.contains_key(k) {
                    return Err(self.err(self.key_span(t, k), format!("`idle` gives both times and the rate `{k}`"))
                        .with_hint("idle noise comes either from `t1`/`t2` (or `t_bitflip`/`t2`) or from a rate"));
                }
            }
            let at = span_of(item.span()).unwrap_or(Span::new(0, 0));
            let Some(t2v) = t2 else {
                return Err(Diagnostic::error(
                    self.source,
                    at,
                    "`idle` needs `t2` with `t1` or `t_bitflip`",
                ));
            };
            return match (t1, tb) {
                (Some(_), Some(_)) => Err(self.err(self.key_span(t, "t_bitflip"), "`idle` gives both `t1` and `t_bitflip`")
                    .with_hint("`t_bitflip` describes cat-like qubits, whose bit flips do not come from T1")),
                (Some(t1v), None) => {
                    if t2v > 2.0 * t1v {
                        return Err(self.err(t.get("t2").and_then(|i| i.span()), format!("`t2` = {t2v} is more than 2·`t1` = {}", 2.0 * t1v))
                            .with_hint("physical qubits have T2 ≤ 2·T1 (pure dephasing only shortens T2)"));
                    }
                    Ok(IdleNoise::Decoherence { t1: t1v, t2: t2v })
                }
                (None, Some(tbv)) => Ok(IdleNoise::Cat { t_bitflip: tbv, t2: t2v }),
                (None, None) => Err(Diagnostic::error(self.source, at, "`idle` gives `t2` without `t1` or `t_bitflip`")),
            };
        }
        let at = span_of(item.span()).unwrap_or(Span::new(0, 0));
        let r = self.rate(t, base, false, at, "`idle`")?;
        Ok(IdleNoise::Rate(r))
    }

    fn override_table(
        &self,
        t: &toml_edit::Table,
        base: &Base,
        measure: &SpamNoise,
        reset: &SpamNoise,
    ) -> Result<Override, Diagnostic> {
        self.known_keys(t, &OVERRIDE_KEYS, "`override`")?;
        let at = span_of(t.span()).unwrap_or(Span::new(0, 0));
        let str_of = |k: &str| -> Result<Option<String>, Diagnostic> {
            match t.get(k) {
                None => Ok(None),
                Some(i) => i
                    .as_str()
                    .map(|s| Some(s.to_string()))
                    .ok_or_else(|| self.err(i.span(), format!("`{k}` must be a string"))),
            }
        };
        let selector = match (str_of("qubit")?, str_of("role")?) {
            (Some(q), None) => Selector::Qubit(canonical_qubit_name(&q).ok_or_else(|| {
                self.err(
                    t.get("qubit").and_then(|i| i.span()),
                    format!("`{q}` is not a qubit name"),
                )
                .with_hint("write the name as the circuit does, e.g. `a[0]` or `d[1, 2]`")
            })?),
            (None, Some(r)) => Selector::Role(r),
            (Some(_), Some(_)) => {
                return Err(self.err(
                    self.key_span(t, "role"),
                    "an override selects by `qubit` or by `role`, not both",
                ))
            }
            (None, None) => {
                return Err(Diagnostic::error(
                    self.source,
                    at,
                    "an override needs `qubit = \"NAME\"` or `role = \"ROLE\"`",
                ))
            }
        };
        let selector_span = span_of(
            t.get("qubit")
                .or_else(|| t.get("role"))
                .and_then(|i| i.span()),
        )
        .unwrap_or(at);
        Ok(Override {
            selector,
            selector_span,
            gates: match t.get("gates") {
                None => Vec::new(),
                Some(i) => self.gates(i, base)?,
            },
            measure: match t.get("measure") {
                None => None,
                Some(i) => Some(self.spam(Some(i), base, Some(measure), at, "measure")?),
            },
            reset: match t.get("reset") {
                None => None,
                Some(i) => Some(self.spam(Some(i), base, Some(reset), at, "reset")?),
            },
            idle: match t.get("idle") {
                None => None,
                Some(i) => Some(self.idle(i, base)?),
            },
            span: at,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn read(text: &str) -> Result<NoiseModel, Diagnostic> {
        NoiseModel::parse(&Source::new("m.toml", text))
    }

    /// `(message, line, column)` of a refusal.
    fn refusal(text: &str) -> (String, usize, usize) {
        let d = read(text).expect_err(text);
        let (_, l, c) = d.location().unwrap();
        (d.message, l, c)
    }

    #[test]
    fn sections_inherit_the_base_rate() {
        let m = read("p = 0.002\nbias = 10\n[gates.cx]\n[gates.h]\np = 0.001\n").unwrap();
        let cx = &m.gates.iter().find(|g| g.0 == Some(Gate::Cx)).unwrap().1;
        assert_eq!(
            cx.rate,
            Rate::Total {
                p: 0.002,
                bias: Some(10.0)
            }
        );
        let h = &m.gates.iter().find(|g| g.0 == Some(Gate::H)).unwrap().1;
        assert_eq!(
            h.rate,
            Rate::Total {
                p: 0.001,
                bias: Some(10.0)
            }
        );
        // Measurement flips and reset errors default to the base `p`; no idle table, no idle
        // noise.
        assert_eq!((m.measure.p, m.reset.p), (0.002, 0.002));
        assert_eq!(m.idle, IdleNoise::None);
    }

    #[test]
    fn explicit_terms_and_times_are_read() {
        let m = read(
            "[gates.cz]\nzz = 0.01\niz = 0.002\nduration = 2\n[gates.h]\nz = 0.003\nduration = 1\n[measure]\nflip = 0.02\n\
             duration = 5\n[reset]\np = 0\nduration = 1\n[gates.default]\np = 0.001\nduration = 1\n\
             [idle]\nt1 = 100\nt2 = 150\n",
        )
        .unwrap();
        let cz = &m.gates.iter().find(|g| g.0 == Some(Gate::Cz)).unwrap().1;
        let Rate::Two(t) = &cz.rate else {
            panic!("{:?}", cz.rate)
        };
        assert_eq!(t[Pauli::pair_index("zz").unwrap() - 1], 0.01);
        assert!((t.iter().sum::<f64>() - 0.012).abs() < 1e-15);
        assert_eq!(cz.duration, Some(2.0));
        let h = &m.gates.iter().find(|g| g.0 == Some(Gate::H)).unwrap().1;
        assert_eq!(h.rate, Rate::One(0.0, 0.0, 0.003));
        assert_eq!(
            m.idle,
            IdleNoise::Decoherence {
                t1: 100.0,
                t2: 150.0
            }
        );
        assert_eq!(m.measure.duration, Some(5.0));
    }

    #[test]
    fn mistakes_are_located_with_a_suggestion() {
        let (msg, l, c) = refusal("p = 0.001\n[mesure]\nflip = 0.1\n");
        assert_eq!(
            (msg.as_str(), l, c),
            ("unknown key `mesure` in the top level", 2, 2)
        );
        let d = read("p = 0.001\n[mesure]\n").unwrap_err();
        assert_eq!(d.hint.as_deref(), Some("did you mean `measure`?"));
        assert_eq!(
            refusal("[gates.cx]\np = 1.5\n"),
            ("`p` = 1.5 is outside [0, 1]".into(), 2, 5)
        );
        let (msg, l, _) = refusal("p = 0.1\n[idle]\nt1 = 10\nt2 = 30\n");
        assert!(msg.contains("is more than 2·`t1`"), "{msg}");
        assert_eq!(l, 4);
        let (msg, ..) = refusal("[gates.cnot]\np = 0.1\n");
        assert_eq!(msg, "unknown gate `cnot` in `gates`");
        let d = read("[gates.cnot]\np = 0.1\n").unwrap_err();
        assert_eq!(d.hint.as_deref(), Some("did you mean `cx`?"));
        let d = read("[gates.hadamard]\np = 0.1\n").unwrap_err();
        assert_eq!(d.hint.as_deref(), Some("did you mean `h`?"));
        let (msg, ..) = refusal("[gates.h]\n");
        assert_eq!(msg, "`gates.h` has no error rate");
    }

    /// A biased reset or measurement acts with the part of its Pauli channel that flips the
    /// basis (bias convention of PRL 120, 050505 (2018)); basis tables replace it per basis.
    #[test]
    fn biased_and_per_basis_spam() {
        let m = read(
            "p = 0.001\n[reset]\np = 0.002\nbias = 99\nduration = 3\n[reset.z]\np = 1e-6\n\
             [measure]\nflip = 0.01\nbias = \"inf\"\n[measure.x]\nduration = 2\n",
        )
        .unwrap();
        // eta = 99: pX = pY = 0.002/200 = 1e-5, pZ = 0.002·0.99 = 1.98e-3.
        assert!((m.reset.flip(Basis::X) - (1.98e-3 + 1e-5)).abs() < 1e-15);
        assert!((m.reset.flip(Basis::Y) - (1.98e-3 + 1e-5)).abs() < 1e-15);
        assert_eq!(m.reset.flip(Basis::Z), 1e-6);
        assert_eq!(m.reset.duration_in(Basis::Z), Some(3.0));
        // Pure Z noise never flips a z measurement; the x table keeps the channel's flip.
        assert_eq!(m.measure.flip(Basis::Z), 0.0);
        assert_eq!(m.measure.flip(Basis::X), 0.01);
        assert_eq!(m.measure.duration_in(Basis::X), Some(2.0));
        assert_eq!(m.measure.duration_in(Basis::Z), None);
        // A product flips when an odd number of its factors do.
        let f = m.measure.product_flip(&[Pauli::X, Pauli::X]);
        assert!((f - 2.0 * 0.01 * 0.99).abs() < 1e-15);
        // No bias, no table: one flip per result, whatever is measured.
        let plain = read("p = 0.003\n").unwrap();
        assert_eq!(plain.measure.product_flip(&[Pauli::X, Pauli::Z]), 0.003);
        assert_eq!(plain.reset.flip(Basis::X), 0.003);
        let (msg, l, c) = refusal("[measure.q]\nflip = 0.1\n");
        assert_eq!(
            (msg.as_str(), l, c),
            ("unknown key `q` in `measure`", 1, 10)
        );
        let (msg, ..) = refusal("[reset]\np = 0.1\nz = 0.2\n");
        assert_eq!(msg, "`reset.z` must be a table");
    }

    #[test]
    fn override_selectors_are_read() {
        let m = read(
            "p = 0.001\n[[override]]\nqubit = \"d[1, 2]\"\nmeasure = { flip = 0.5 }\n\
             [[override]]\nrole = \"ancilla\"\nreset = { p = 0.25 }\n",
        )
        .unwrap();
        assert_eq!(m.overrides.len(), 2);
        assert_eq!(m.overrides[0].selector, Selector::Qubit("d[1,2]".into()));
        assert_eq!(m.overrides[0].measure.as_ref().unwrap().p, 0.5);
        assert_eq!(m.overrides[1].selector, Selector::Role("ancilla".into()));
        assert_eq!(m.overrides[1].reset.as_ref().unwrap().p, 0.25);
        let (msg, ..) = refusal("[[override]]\nqubit = \"a\"\nrole = \"b\"\n");
        assert_eq!(msg, "an override selects by `qubit` or by `role`, not both");
    }
}
