//! Settings after a model file in a noise text: `chip.toml p=0.002 idle.t2=50 scale.idle=2`.
//!
//! In: the words after the model path (each `KEY=VALUE`, spanned in the noise text) and the
//! model file's text. Out: a [`NoiseModel`] read from the file with the settings applied, or a
//! [`Diagnostic`] pointing at the setting at fault.
//!
//! Three kinds of setting, applied in this order:
//! - a **model key** by its dotted path (`idle.t2`, `gates.cx.duration`, `gates.cx.bias`,
//!   `bias`, `reset.z.p`, `override.0.idle.t2`, the index counting `[[override]]` tables from
//!   0) sets that key in the file's text before it is read, exactly as if the file said so, so
//!   every check of the reader applies and sections that inherit the key follow it;
//! - **`scale=S`** multiplies every fault probability of the model by `S` and divides every
//!   time constant (`t1`, `t2`, `t_bitflip`) by `S`, so rates derived from times scale too;
//!   durations are unchanged. **`scale.gates`**, **`scale.idle`**, **`scale.reset`** and
//!   **`scale.measure`** do the same for one kind only (overrides included) and multiply with
//!   `scale`;
//! - **`p=P`** is the physical error per operation: the same as `scale=P/p_ref`, with `p_ref`
//!   the model's top-level `p` (refused when the model has none, and together with `scale`).
//!
//! A scaled probability above 1 (or explicit terms adding up to more) is refused. Because the
//! settings are part of the noise text, they are part of every sweep task key built from it.

use std::sync::Arc;

use toml_edit::{DocumentMut, Item, Table, Value};

use crate::base::{did_you_mean, Basis, Diagnostic, Gate, Pauli, Source, Span};
use crate::noise::model::{GateNoise, IdleNoise, NoiseModel, Rate, SpamNoise};
use crate::noise::reader::MODEL_KEYS;

/// The kinds a per-kind scale can name (`scale.KIND`).
pub const SCALE_KINDS: [&str; 4] = ["gates", "idle", "measure", "reset"];

/// Scale factors of one noise text: global and per kind.
#[derive(Clone, Copy, Debug, PartialEq)]
struct Scale {
    gates: f64,
    idle: f64,
    measure: f64,
    reset: f64,
}

/// One `KEY=VALUE` word with its place in the noise text.
#[derive(Clone, Debug)]
pub struct Setting {
    /// The key (a dotted path, `p`, `scale` or `scale.KIND`).
    pub key: String,
    /// The value as written.
    pub value: String,
    /// The whole word in the noise text.
    pub span: Span,
}

/// Splits the words of `text` after byte `start` into settings; a word without `=` is refused.
pub fn split_settings(source: &Arc<Source>, start: usize) -> Result<Vec<Setting>, Diagnostic> {
    let text = source.text.as_str();
    let mut out = Vec::new();
    let mut offset = start;
    for word in text[start..].split(char::is_whitespace) {
        let here = offset;
        offset += word.len() + 1;
        if word.is_empty() {
            continue;
        }
        let span = Span::new(here, here + word.len());
        let Some((key, value)) = word.split_once('=') else {
            return Err(Diagnostic::error(
                source,
                span,
                format!("`{word}` is not a setting of the model"),
            )
            .with_hint(
                "after a model file come settings `KEY=VALUE`: `p=0.002`, `scale=2`, `scale.idle=0.5` or a model key such as `idle.t2=50`",
            ));
        };
        if key.is_empty() || value.is_empty() {
            return Err(Diagnostic::error(
                source,
                span,
                format!("`{word}` needs a key and a value"),
            )
            .with_hint("write `KEY=VALUE`, e.g. `idle.t2=50`"));
        }
        if out.iter().any(|s: &Setting| s.key == key) {
            return Err(Diagnostic::error(
                source,
                span,
                format!("`{key}` is set twice"),
            ));
        }
        out.push(Setting {
            key: key.to_string(),
            value: value.to_string(),
            span,
        });
    }
    Ok(out)
}

/// Reads the model file `name` (text `body`) with `settings` applied (module docs).
/// Diagnostics about a setting point into `source`, the noise text.
pub fn read_with_settings(
    source: &Arc<Source>,
    name: &str,
    body: String,
    settings: &[Setting],
) -> Result<NoiseModel, Diagnostic> {
    let number = |s: &Setting| -> Result<f64, Diagnostic> {
        match s.value.parse::<f64>() {
            Ok(v) if v.is_finite() && v > 0.0 => Ok(v),
            _ => Err(Diagnostic::error(
                source,
                s.span,
                format!("`{}` must be a positive number, found `{}`", s.key, s.value),
            )),
        }
    };
    let mut scale = Scale {
        gates: 1.0,
        idle: 1.0,
        measure: 1.0,
        reset: 1.0,
    };
    let mut global: Option<(f64, &Setting)> = None;
    let mut per_op: Option<(f64, &Setting)> = None;
    let mut keys: Vec<&Setting> = Vec::new();
    for s in settings {
        match s.key.as_str() {
            "scale" => global = Some((number(s)?, s)),
            "p" => per_op = Some((number(s)?, s)),
            k if k.starts_with("scale.") => {
                let kind = &k["scale.".len()..];
                let v = number(s)?;
                match kind {
                    "gates" => scale.gates = v,
                    "idle" => scale.idle = v,
                    "measure" => scale.measure = v,
                    "reset" => scale.reset = v,
                    _ => {
                        let mut d = Diagnostic::error(
                            source,
                            s.span,
                            format!("unknown kind `{kind}` in `{k}`"),
                        );
                        d = d.with_hint(match did_you_mean(kind, SCALE_KINDS) {
                            Some(x) => format!("did you mean `scale.{x}`?"),
                            None => "a scale per kind is `scale.gates`, `scale.idle`, `scale.measure` or `scale.reset`".into(),
                        });
                        return Err(d);
                    }
                }
            }
            _ => keys.push(s),
        }
    }
    if let (Some((_, a)), Some(_)) = (global, per_op) {
        return Err(Diagnostic::error(
            source,
            a.span,
            "`scale` and `p` both scale the whole model",
        )
        .with_hint("give one: `p=P` is `scale=P/p` with `p` the model's top-level `p`"));
    }
    let text = if keys.is_empty() {
        body
    } else {
        let mut doc: DocumentMut = body.parse().map_err(|e: toml_edit::TomlError| {
            Diagnostic::bare(format!(
                "`{name}` is not valid TOML: {}",
                e.message().lines().next().unwrap_or("invalid TOML")
            ))
        })?;
        for s in &keys {
            set_key(&mut doc, s, source)?;
        }
        doc.to_string()
    };
    let shown = if keys.is_empty() {
        name.to_string()
    } else {
        let list: Vec<String> = keys
            .iter()
            .map(|s| format!("{}={}", s.key, s.value))
            .collect();
        format!("{name} [{}]", list.join(" "))
    };
    let mut model = NoiseModel::parse(&Source::new(shown, text))?;
    let factor = match (global, per_op) {
        (Some((s, _)), _) => Some((s, global.map(|g| g.1))),
        (None, Some((p, at))) => {
            let Some(p_ref) = model.base_p else {
                return Err(Diagnostic::error(
                    source,
                    at.span,
                    format!(
                        "`p=` sets the physical error per operation of a model by scaling it from its top-level `p`, and `{name}` has none"
                    ),
                )
                .with_hint("give the model a top-level `p = ...` (the rate its other values are written for), or scale it with `scale=S`"));
            };
            if p_ref <= 0.0 {
                return Err(Diagnostic::error(
                    source,
                    at.span,
                    format!("`{name}` has top-level `p = 0`, which no scale can move"),
                ));
            }
            Some((p / p_ref, Some(at)))
        }
        (None, None) => None,
    };
    let all = factor.map_or(1.0, |f| f.0);
    let scale = Scale {
        gates: scale.gates * all,
        idle: scale.idle * all,
        measure: scale.measure * all,
        reset: scale.reset * all,
    };
    if scale
        != (Scale {
            gates: 1.0,
            idle: 1.0,
            measure: 1.0,
            reset: 1.0,
        })
    {
        let at = factor
            .and_then(|f| f.1)
            .or_else(|| settings.iter().find(|s| s.key.starts_with("scale.")))
            .map_or(Span::new(0, source.text.len()), |s| s.span);
        model.scale(&scale).map_err(|what| {
            Diagnostic::error(source, at, format!("this scale makes {what} more than 1"))
                .with_hint("a probability cannot exceed 1: use a smaller scale")
        })?;
        if let Some(p) = &mut model.base_p {
            *p *= all;
        }
    }
    Ok(model)
}

/// The keys a section path accepts, from [`MODEL_KEYS`] (gate sections add their Pauli term
/// names).
fn section_keys(section: &str, gate: Option<Gate>) -> Vec<String> {
    let mut keys: Vec<String> = MODEL_KEYS
        .iter()
        .find(|(s, _)| *s == section)
        .map(|(_, k)| k.iter().map(|k| k.to_string()).collect())
        .unwrap_or_default();
    match gate {
        Some(g) if g.arity() == 2 => keys.extend((1..16).map(|k| {
            Pauli::pair_from_index(k)
                .iter()
                .map(|p| p.letter().to_ascii_lowercase())
                .collect::<String>()
        })),
        Some(_) => keys.extend(["x", "y", "z"].map(String::from)),
        None => {}
    }
    keys
}

/// Sets the key at the dotted path of `s` in `doc`, creating tables on the way.
fn set_key(doc: &mut DocumentMut, s: &Setting, source: &Arc<Source>) -> Result<(), Diagnostic> {
    let parts: Vec<&str> = s.key.split('.').collect();
    let bad = |msg: String, choices: Vec<String>, word: &str| {
        let mut d = Diagnostic::error(source, s.span, msg);
        d = match did_you_mean(word, choices.iter().map(String::as_str)) {
            Some(x) => d.with_hint(format!("did you mean `{x}`?")),
            None => d.with_hint(format!(
                "keys here are {}",
                choices
                    .iter()
                    .map(|c| format!("`{c}`"))
                    .collect::<Vec<_>>()
                    .join(", ")
            )),
        };
        d
    };
    // Walk the path: (table path so far, remaining parts).
    let (prefix, rest): (Vec<String>, &[&str]) = if parts[0] == "override" {
        let count = doc
            .get("override")
            .and_then(Item::as_array_of_tables)
            .map_or(0, |a| a.len());
        let Some(index) = parts.get(1).and_then(|i| i.parse::<usize>().ok()) else {
            return Err(Diagnostic::error(
                source,
                s.span,
                format!(
                    "`{}`: an override is named by its index, e.g. `override.0.idle.t2`",
                    s.key
                ),
            ));
        };
        if index >= count {
            return Err(Diagnostic::error(
                source,
                s.span,
                format!(
                    "`{}`: the model has {count} `[[override]]` table{}",
                    s.key,
                    if count == 1 { "" } else { "s" }
                ),
            )
            .with_hint("overrides are counted from 0 in file order"));
        }
        (vec!["override".into(), index.to_string()], &parts[2..])
    } else {
        (Vec::new(), &parts[..])
    };
    let in_override = !prefix.is_empty();
    let top: Vec<String> = if in_override {
        section_keys("override", None)
    } else {
        section_keys("top level", None)
    };
    let Some(&first) = rest.first() else {
        return Err(Diagnostic::error(
            source,
            s.span,
            format!("`{}` names no key", s.key),
        ));
    };
    if !top.iter().any(|k| k == first) {
        return Err(bad(format!("unknown model key `{}`", s.key), top, first));
    }
    // The section's keys and the depth of the full path.
    let leaf_keys: Vec<String> = match (first, rest.len()) {
        ("gates", 3) => {
            let name = rest[1];
            let gate = Gate::from_name(name);
            if gate.is_none() && name != "default" {
                let names: Vec<String> = Gate::ALL
                    .iter()
                    .map(|g| g.name().to_string())
                    .chain(["default".to_string()])
                    .collect();
                let mut d = bad(format!("unknown gate `{name}` in `{}`", s.key), names.clone(), name);
                if let Some(g) = Gate::from_alias(name) {
                    d.hint = Some(format!("did you mean `{}`?", g.name()));
                }
                return Err(d);
            }
            section_keys("gates.NAME", gate)
        }
        ("measure" | "reset", 3) => {
            if Basis::ALL.iter().all(|b| b.name() != rest[1]) {
                return Err(bad(
                    format!("unknown basis `{}` in `{}`", rest[1], s.key),
                    vec!["x".into(), "y".into(), "z".into()],
                    rest[1],
                ));
            }
            section_keys(&format!("{first}.BASIS"), None)
        }
        ("measure" | "reset" | "idle", 2) => section_keys(first, None),
        (k, 1) if !matches!(k, "gates" | "measure" | "reset" | "idle" | "override") => Vec::new(),
        _ => {
            return Err(Diagnostic::error(
                source,
                s.span,
                format!("`{}` does not name one value of the model", s.key),
            )
            .with_hint(
                "name a value by its path: `bias`, `idle.t2`, `gates.cx.duration`, `reset.z.p`, `override.0.idle.t2`",
            ))
        }
    };
    let leaf = *rest.last().unwrap_or(&"");
    if rest.len() > 1 && !leaf_keys.iter().any(|k| k == leaf) {
        return Err(bad(
            format!("unknown key `{leaf}` in `{}`", s.key),
            leaf_keys,
            leaf,
        ));
    }
    if in_override && rest.len() == 1 {
        return Err(Diagnostic::error(
            source,
            s.span,
            format!("`{}` selects qubits; it cannot be varied", s.key),
        ));
    }
    let value = toml_value(&s.value);
    // Descend, creating implicit tables.
    let mut table: &mut Table = doc.as_table_mut();
    let path: Vec<String> = prefix
        .iter()
        .cloned()
        .chain(rest[..rest.len() - 1].iter().map(|p| p.to_string()))
        .collect();
    let mut k = 0;
    while k < path.len() {
        let part = &path[k];
        if part == "override" {
            let index: usize = path[k + 1].parse().unwrap_or(0);
            let Some(t) = table
                .get_mut("override")
                .and_then(Item::as_array_of_tables_mut)
                .and_then(|a| a.get_mut(index))
            else {
                return Err(Diagnostic::bare("override index out of range"));
            };
            table = t;
            k += 2;
            continue;
        }
        let entry = table.entry(part).or_insert_with(|| {
            let mut t = Table::new();
            t.set_implicit(true);
            Item::Table(t)
        });
        // An inline table (`idle = { t1 = 1 }`) becomes a normal table so it can be extended.
        if let Some(inline) = entry.as_inline_table().cloned() {
            *entry = Item::Table(inline.into_table());
        }
        let Some(t) = entry.as_table_mut() else {
            return Err(Diagnostic::error(
                source,
                s.span,
                format!("`{}`: `{part}` of the model is not a table", s.key),
            ));
        };
        table = t;
        k += 1;
    }
    table.insert(leaf, Item::Value(value));
    Ok(())
}

/// A setting's value as TOML: an integer, a float, or a string (`inf`, implementation names).
fn toml_value(text: &str) -> Value {
    if let Ok(i) = text.parse::<i64>() {
        return Value::from(i);
    }
    match text.parse::<f64>() {
        Ok(f) if f.is_finite() => Value::from(f),
        _ => Value::from(text),
    }
}

impl NoiseModel {
    /// Multiplies the fault probabilities of each kind by its factor and divides time constants
    /// by the idle factor (module docs). `Err` names a probability the scale pushes above 1.
    fn scale(&mut self, s: &Scale) -> Result<(), String> {
        for (g, n) in &mut self.gates {
            scale_gate(n, s.gates, *g)?;
        }
        scale_spam(&mut self.measure, s.measure, "`measure`")?;
        scale_spam(&mut self.reset, s.reset, "`reset`")?;
        scale_idle(&mut self.idle, s.idle)?;
        for o in &mut self.overrides {
            for (g, n) in &mut o.gates {
                scale_gate(n, s.gates, *g)?;
            }
            if let Some(m) = &mut o.measure {
                scale_spam(m, s.measure, "an override's `measure`")?;
            }
            if let Some(r) = &mut o.reset {
                scale_spam(r, s.reset, "an override's `reset`")?;
            }
            if let Some(i) = &mut o.idle {
                scale_idle(i, s.idle)?;
            }
        }
        Ok(())
    }
}

fn checked(p: f64, what: &str) -> Result<f64, String> {
    if p > 1.0 {
        Err(format!("{what} = {p}"))
    } else {
        Ok(p)
    }
}

fn scale_rate(r: &mut Rate, s: f64, what: &str) -> Result<(), String> {
    match r {
        Rate::Total { p, .. } => *p = checked(*p * s, what)?,
        Rate::One(x, y, z) => {
            (*x, *y, *z) = (*x * s, *y * s, *z * s);
            checked(*x + *y + *z, &format!("the sum of the terms of {what}"))?;
        }
        Rate::Two(t) => {
            for v in t.iter_mut() {
                *v *= s;
            }
            checked(t.iter().sum(), &format!("the sum of the terms of {what}"))?;
        }
    }
    Ok(())
}

fn scale_gate(n: &mut GateNoise, s: f64, g: Option<Gate>) -> Result<(), String> {
    let name = g.map_or("default", Gate::name);
    scale_rate(&mut n.rate, s, &format!("`gates.{name}`"))
}

fn scale_spam(n: &mut SpamNoise, s: f64, what: &str) -> Result<(), String> {
    n.p = checked(n.p * s, what)?;
    for t in n.bases.iter_mut().flatten() {
        t.flip = checked(t.flip * s, &format!("a basis table of {what}"))?;
    }
    Ok(())
}

fn scale_idle(n: &mut IdleNoise, s: f64) -> Result<(), String> {
    match n {
        IdleNoise::None => {}
        IdleNoise::Rate(r) => scale_rate(r, s, "`idle`")?,
        IdleNoise::Decoherence { t1, t2 } => {
            *t1 /= s;
            *t2 /= s;
        }
        IdleNoise::Cat { t_bitflip, t2 } => {
            *t_bitflip /= s;
            *t2 /= s;
        }
    }
    Ok(())
}
