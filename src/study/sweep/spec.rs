//! Sweep specs: the TOML text of a sweep, and the [`Task`]s its grids expand to (the format is
//! in the docs of `sweep/mod.rs`).

use std::collections::HashSet;
use std::sync::Arc;

use crate::base::{Diagnostic, Source, Span};
use crate::decode::DecoderKind;
use crate::gen::{Entangler, Family, Flip, GenSpec, LogicalBasis, Order, Style};

/// Default shots per chunk.
pub const DEFAULT_CHUNK: u64 = 16_384;

/// `rounds` in a grid: a number, or `"d"` for the distance.
#[derive(Clone, Debug, serde::Deserialize)]
#[serde(untagged)]
enum Rounds {
    Fixed(u32),
    Name(String),
}

#[derive(Clone, Debug, serde::Deserialize)]
#[serde(deny_unknown_fields)]
struct GridToml {
    basis: Option<String>,
    bias: Option<Vec<f64>>,
    chains: Option<toml::Spanned<i64>>,
    chunk: Option<u64>,
    decoders: Option<Vec<String>>,
    distances: Vec<u32>,
    entangler: Option<String>,
    family: String,
    flip: Option<String>,
    label: Option<String>,
    method: Option<toml::Spanned<String>>,
    until_failures: Option<u64>,
    /// Spanned so that a bad noise text is pointed at.
    noise: toml::Spanned<String>,
    order: Option<String>,
    p: Vec<f64>,
    #[serde(default)]
    periodic: bool,
    rounds: Option<Rounds>,
    shots: Option<u64>,
    style: Option<String>,
    sweeps: Option<toml::Spanned<f64>>,
    top: Option<toml::Spanned<f64>>,
    /// Model keys to vary: `"idle.t2" = [50, 100]`; a key of several paths joined by `,` sets
    /// them together.
    vary: Option<toml::Spanned<toml::Table>>,
}

#[derive(Clone, Debug, serde::Deserialize)]
#[serde(deny_unknown_fields)]
struct SpecToml {
    chains: Option<toml::Spanned<i64>>,
    chunk: Option<u64>,
    decoders: Option<Vec<String>>,
    /// Spanned so that a mistake inside one grid points at that grid.
    grid: Vec<toml::Spanned<GridToml>>,
    method: Option<toml::Spanned<String>>,
    until_failures: Option<u64>,
    seed: Option<u64>,
    shots: Option<u64>,
    store: Option<String>,
    sweeps: Option<toml::Spanned<f64>>,
    top: Option<toml::Spanned<f64>>,
}

/// How a task estimates its logical error rate.
#[derive(Clone, Debug, PartialEq)]
pub enum Method {
    /// Sample the circuit in chunks of shots and decode each shot.
    Sampling,
    /// The splitting method on the fault graph ([`crate::study::splitting`]): one run, one row.
    Splitting(SplittingKnobs),
}

impl Method {
    /// `sampling` or `splitting`, as specs and rows spell it.
    pub fn name(&self) -> &'static str {
        match self {
            Method::Sampling => "sampling",
            Method::Splitting(_) => "splitting",
        }
    }
}

/// The splitting method's settings of a task (the spec keys `chains`, `sweeps` and `top`, as
/// `slant estimate --method splitting` takes them; the task's `shots` and `until_failures`
/// bound direct sampling at the top of the ladder).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SplittingKnobs {
    /// Independent walks per rung.
    pub chains: u64,
    /// Proposals per walk and rung, per fault-graph edge.
    pub sweeps: f64,
    /// The top of the ladder as a multiple of the noise (`None`: chosen by pilot runs).
    pub top: Option<f64>,
}

/// Walks per rung when a spec does not say (as `slant estimate`).
pub const DEFAULT_CHAINS: u64 = 8;
/// Sweeps per rung when a spec does not say (as `slant estimate`).
pub const DEFAULT_SWEEPS: f64 = 100.0;
/// Failures direct sampling collects at the top of a ladder when a spec does not say.
pub const DEFAULT_TOP_FAILURES: u64 = 1000;
/// Most shots of direct sampling at the top of a ladder when a spec does not say.
pub const DEFAULT_TOP_SHOTS: u64 = 100_000_000;

/// One point of the grid: a circuit, a noise model and a decoder, sampled in chunks.
#[derive(Clone, Debug, PartialEq)]
pub struct Task {
    /// Canonical key (see module docs); chunk seeds derive from it.
    pub key: String,
    /// Curve label (plots group by label, decoder and bias).
    pub label: String,
    /// The generator spec.
    pub gen: GenSpec,
    /// Distance (`dz` of the generator spec; the repetition code's length).
    pub distance: u32,
    /// Physical error rate `p` of the noise preset, or the physical error per operation of a
    /// model (its scale from the model's top-level `p`).
    pub p: f64,
    /// Bias, as written in the noise text (`None`: the preset's or the model's own).
    pub bias: Option<String>,
    /// Model keys varied by the grid, `(path, value)` in grid order.
    pub vary: Vec<(String, String)>,
    /// Full noise text as the spec writes it (a model path relative to the spec), shown and
    /// stored.
    pub noise: String,
    /// The noise text to load: `noise` with a model path resolved against the spec's directory.
    pub load_noise: String,
    /// Decoder.
    pub decoder: DecoderKind,
    /// Shots to run at most.
    pub shots: u64,
    /// Early stop after this many failures.
    pub until_failures: Option<u64>,
    /// Shots per chunk.
    pub chunk: u64,
    /// Seed of the sweep.
    pub seed: u64,
    /// Sampling in chunks, or the splitting method (then `shots` and `until_failures` bound
    /// direct sampling at the top of its ladder, and the task is one unit: chunk 0).
    pub method: Method,
}

impl Task {
    /// Number of chunks needed for all shots (1 for a splitting task).
    pub fn chunks(&self) -> u64 {
        match self.method {
            Method::Sampling => self.shots.div_ceil(self.chunk),
            Method::Splitting(_) => 1,
        }
    }

    /// Seed of chunk `c`.
    pub fn chunk_seed(&self, c: u64) -> u64 {
        chunk_seed(&self.key, c)
    }
}

/// A parsed sweep spec.
#[derive(Clone, Debug, PartialEq)]
pub struct SweepSpec {
    /// Store path as written in the spec (relative to the spec's directory), if any.
    pub store: Option<String>,
    /// The expanded task list, in grid order.
    pub tasks: Vec<Task>,
}

fn text_option<T>(
    value: &Option<String>,
    what: &str,
    parse: impl Fn(&str) -> Option<T>,
) -> Result<Option<T>, String> {
    value
        .as_deref()
        .map(|s| parse(s).ok_or_else(|| format!("unknown {what} `{s}`")))
        .transpose()
}

fn fmt_f64(x: f64) -> String {
    if x.is_infinite() {
        "inf".to_string()
    } else {
        format!("{x}")
    }
}

/// FNV-1a of a model file's text, so a task key changes when the model does.
fn content_hash(text: &str) -> String {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for b in text.bytes() {
        h ^= b as u64;
        h = h.wrapping_mul(0x0100_0000_01b3);
    }
    format!("{h:016x}")
}

/// A grid value as a setting: numbers as TOML writes them, `inf`, or a bare string.
fn value_text(v: &toml::Value) -> Option<String> {
    match v {
        toml::Value::Integer(i) => Some(i.to_string()),
        toml::Value::Float(f) => Some(fmt_f64(*f)),
        toml::Value::String(s) if !s.contains(char::is_whitespace) && !s.is_empty() => {
            Some(s.clone())
        }
        _ => None,
    }
}

impl SweepSpec {
    /// Parses and expands a spec whose model paths are relative to the current directory.
    /// Errors point into the TOML text.
    pub fn parse(source: &Arc<Source>) -> Result<SweepSpec, Diagnostic> {
        SweepSpec::parse_in(source, None)
    }

    /// Parses and expands a spec; a model file named by a grid's `noise` is read from `dir`
    /// (the spec's directory) when its path is relative.
    pub fn parse_in(
        source: &Arc<Source>,
        dir: Option<&std::path::Path>,
    ) -> Result<SweepSpec, Diagnostic> {
        let whole = Span::new(0, source.text.as_str().len().min(1));
        let raw: SpecToml = toml::from_str(source.text.as_str()).map_err(|e| {
            let span = e
                .span()
                .map_or(whole, |r| Span::new(r.start, r.end.max(r.start)));
            Diagnostic::error(source, span, e.message().to_string())
        })?;
        let err = |msg: String| Diagnostic::error(source, whole, msg);
        let seed = raw.seed.unwrap_or(0);
        let mut tasks = Vec::new();
        for (gi, spanned) in raw.grid.iter().enumerate() {
            let g = spanned.get_ref();
            let grid_span = Span::new(spanned.span().start, spanned.span().end);
            let at =
                |m: String| Diagnostic::error(source, grid_span, format!("grid {}: {m}", gi + 1));
            let family: Family = g.family.parse().map_err(at)?;
            let method = method_of(source, g, &raw).map_err(|e| e.prefixed(gi))?;
            let shots = match (&method, g.shots.or(raw.shots)) {
                (_, Some(n)) => n,
                (Method::Splitting(_), None) => DEFAULT_TOP_SHOTS,
                (Method::Sampling, None) => {
                    return Err(at("no `shots` (set it at the top or in the grid)".into()))
                }
            };
            if shots == 0 {
                return Err(at("`shots` must be at least 1".into()));
            }
            let chunk = g.chunk.or(raw.chunk).unwrap_or(DEFAULT_CHUNK);
            if chunk == 0 {
                return Err(at("`chunk` must be at least 1".into()));
            }
            let until_failures = g.until_failures.or(raw.until_failures);
            let decoders = g
                .decoders
                .clone()
                .or(raw.decoders.clone())
                .unwrap_or_else(|| vec!["mwpm".into()]);
            let decoders: Vec<DecoderKind> = decoders
                .iter()
                .map(|d| d.parse())
                .collect::<Result<_, String>>()
                .map_err(at)?;
            let style = text_option(&g.style, "style", |s| match s {
                "ancilla" => Some(Style::Ancilla),
                "product" => Some(Style::Product),
                _ => None,
            })
            .map_err(at)?;
            let basis = text_option(&g.basis, "basis", |s| match s {
                "x" => Some(LogicalBasis::X),
                "z" => Some(LogicalBasis::Z),
                _ => None,
            })
            .map_err(at)?;
            let entangler = text_option(&g.entangler, "entangler", |s| match s {
                "cx" => Some(Entangler::Cx),
                "native" => Some(Entangler::Native),
                _ => None,
            })
            .map_err(at)?;
            let flip = text_option(&g.flip, "flip", |s| match s {
                "x" => Some(Flip::X),
                "z" => Some(Flip::Z),
                _ => None,
            })
            .map_err(at)?;
            let order = match &g.order {
                None => None,
                Some(o) => Some(o.parse::<Order>().map_err(at)?),
            };
            let biases: Vec<Option<f64>> = match &g.bias {
                None => vec![None],
                Some(b) => b.iter().map(|&x| Some(x)).collect(),
            };
            if g.distances.is_empty() || g.p.is_empty() {
                return Err(at("`distances` and `p` must not be empty".into()));
            }
            let noise_text = g.noise.get_ref().trim().to_string();
            let noise_span = Span::new(g.noise.span().start, g.noise.span().end);
            let noise_err =
                |m: String| Diagnostic::error(source, noise_span, format!("grid {}: {m}", gi + 1));
            let first = noise_text.split_whitespace().next().unwrap_or("");
            let is_model = crate::noise::is_model_text(&noise_text);
            // A model: the path as written (for keys and rows) and as loaded (against `dir`).
            let (load_prefix, model_hash) = if is_model {
                let path = std::path::Path::new(first);
                let resolved = match dir {
                    Some(d) if path.is_relative() => d.join(path),
                    _ => path.to_path_buf(),
                };
                let body = std::fs::read_to_string(&resolved).map_err(|e| {
                    noise_err(format!(
                        "cannot read the noise model `{}`: {e}",
                        resolved.display()
                    ))
                    .with_hint("a model path in a sweep spec is relative to the spec's directory")
                })?;
                (resolved.display().to_string(), Some(content_hash(&body)))
            } else {
                (first.to_string(), None)
            };
            let load_text = |shown: &str| -> String {
                match shown.split_once(char::is_whitespace) {
                    Some((_, rest)) => format!("{load_prefix} {rest}"),
                    None => load_prefix.clone(),
                }
            };
            let label = g.label.clone().unwrap_or_else(|| {
                let name = if is_model {
                    std::path::Path::new(first)
                        .file_stem()
                        .map_or(first.to_string(), |s| s.to_string_lossy().into_owned())
                } else {
                    first.to_string()
                };
                format!("{} {name}", family.name())
            });
            // The varied keys: each entry a list of paths set together and its values.
            let mut varied: Vec<(Vec<String>, Vec<String>)> = Vec::new();
            if let Some(v) = &g.vary {
                let vary_span = Span::new(v.span().start, v.span().end);
                let vary_err = |m: String| {
                    Diagnostic::error(source, vary_span, format!("grid {}: {m}", gi + 1))
                };
                if !is_model {
                    return Err(vary_err(
                        "`vary` sets keys of a model file, and this grid's noise is a preset"
                            .into(),
                    )
                    .with_hint(
                        "vary `p` and `bias` of a preset with the grid's `p` and `bias` lists",
                    ));
                }
                for (key, values) in v.get_ref() {
                    let paths: Vec<String> = key.split(',').map(|k| k.trim().to_string()).collect();
                    for path in &paths {
                        if path.is_empty() || path == "p" {
                            return Err(vary_err(format!(
                                "`vary` key `{key}`: vary `p` with the grid's own `p` list"
                            )));
                        }
                    }
                    let Some(list) = values.as_array() else {
                        return Err(vary_err(format!(
                            "`vary.\"{key}\"` must be a list of values"
                        )));
                    };
                    let list: Vec<String> = list
                        .iter()
                        .map(|x| {
                            value_text(x).ok_or_else(|| {
                                vary_err(format!(
                                    "`vary.\"{key}\"`: `{x}` is not a number or a word"
                                ))
                            })
                        })
                        .collect::<Result<_, _>>()?;
                    if list.is_empty() {
                        return Err(vary_err(format!("`vary.\"{key}\"` is empty")));
                    }
                    varied.push((paths, list));
                }
            }
            // Every combination of the varied values, in key order.
            let mut combos: Vec<Vec<(String, String)>> = vec![Vec::new()];
            for (paths, values) in &varied {
                let mut next = Vec::new();
                for c in &combos {
                    for v in values {
                        let mut c = c.clone();
                        c.push((paths.join(","), v.clone()));
                        next.push(c);
                    }
                }
                combos = next;
            }
            for &decoder in &decoders {
                for bias in &biases {
                    for combo in &combos {
                        for &d in &g.distances {
                            let mut gen = GenSpec::new(family, d);
                            if g.periodic {
                                gen.dx = d + 1;
                            }
                            gen.rounds = match &g.rounds {
                                None => d,
                                Some(Rounds::Fixed(r)) => *r,
                                Some(Rounds::Name(n)) if n == "d" => d,
                                Some(Rounds::Name(n)) => {
                                    return Err(at(format!(
                                        "`rounds` must be a number or \"d\", found `{n}`"
                                    )))
                                }
                            };
                            gen.style = style;
                            gen.basis = basis;
                            gen.entangler = entangler;
                            gen.flip = flip;
                            gen.order = order.clone();
                            gen.periodic = g.periodic;
                            let command = gen
                                .command_line()
                                .map_err(|e| at(format!("distance {d}: {e}")))?;
                            for &p in &g.p {
                                let mut noise = format!("{noise_text} p={}", fmt_f64(p));
                                if let Some(b) = bias {
                                    noise += &format!(" bias={}", fmt_f64(*b));
                                }
                                for (paths, value) in combo {
                                    for path in paths.split(',') {
                                        noise += &format!(" {path}={value}");
                                    }
                                }
                                let load_noise = load_text(&noise);
                                crate::noise::NoiseSpec::parse(&load_noise).map_err(|e| {
                                    noise_err(format!("noise `{noise}`: {}", e.message)).with_hint(
                                        e.hint.clone().unwrap_or_else(|| {
                                            "see `slant sweep --help` for the noise of a grid"
                                                .into()
                                        }),
                                    )
                                })?;
                                // A sampling key is as it was before splitting existed, so
                                // older stores resume; a splitting key names the method and
                                // every knob instead of the chunk size.
                                let mut key = match &method {
                                    Method::Sampling => format!(
                                        "{label}|{command}|noise={noise}|decoder={}|chunk={chunk}|seed={seed}",
                                        decoder.name()
                                    ),
                                    Method::Splitting(k) => format!(
                                        "{label}|{command}|noise={noise}|decoder={}|method=splitting\
                                         |chains={}|sweeps={}|top={}|top_failures={}|max_shots={shots}\
                                         |seed={seed}",
                                        decoder.name(),
                                        k.chains,
                                        fmt_f64(k.sweeps),
                                        k.top.map_or("auto".into(), fmt_f64),
                                        until_failures.unwrap_or(DEFAULT_TOP_FAILURES),
                                    ),
                                };
                                if let Some(h) = &model_hash {
                                    key += &format!("|model={h}");
                                }
                                tasks.push(Task {
                                    key,
                                    label: label.clone(),
                                    gen: gen.clone(),
                                    distance: d,
                                    p,
                                    bias: bias.map(fmt_f64),
                                    vary: combo.clone(),
                                    noise,
                                    load_noise,
                                    decoder,
                                    shots,
                                    until_failures,
                                    chunk,
                                    seed,
                                    method: method.clone(),
                                });
                            }
                        }
                    }
                }
            }
        }
        let mut seen = HashSet::new();
        for t in &tasks {
            if !seen.insert(&t.key) {
                return Err(err(format!("the grid lists task `{}` twice", t.key)));
            }
        }
        Ok(SweepSpec {
            store: raw.store,
            tasks,
        })
    }
}

/// A mistake in one value of a spec: where, and what.
struct ValueError(Diagnostic);

impl ValueError {
    /// The diagnostic, its message naming grid `gi` (from 0).
    fn prefixed(self, gi: usize) -> Diagnostic {
        let ValueError(d) = self;
        let message = format!("grid {}: {}", gi + 1, d.message);
        Diagnostic { message, ..d }
    }
}

/// The method of a grid (its own keys first, then the spec's top level), each bad value
/// pointed at where it is written.
fn method_of(source: &Arc<Source>, g: &GridToml, raw: &SpecToml) -> Result<Method, ValueError> {
    let at = |span: std::ops::Range<usize>, m: String| {
        ValueError(Diagnostic::error(
            source,
            Span::new(span.start, span.end.max(span.start)),
            m,
        ))
    };
    let method = g.method.as_ref().or(raw.method.as_ref());
    let chains = g.chains.as_ref().or(raw.chains.as_ref());
    let sweeps = g.sweeps.as_ref().or(raw.sweeps.as_ref());
    let top = g.top.as_ref().or(raw.top.as_ref());
    let splitting = match method {
        None => false,
        Some(m) => match m.get_ref().as_str() {
            "sampling" => false,
            "splitting" => true,
            other => {
                return Err(at(
                    m.span(),
                    format!("unknown `method` `{other}`: expected `sampling` or `splitting`"),
                ))
            }
        },
    };
    if !splitting {
        // Knobs of the splitting method in a sampling grid are a mistake, not a default (the
        // top level's knobs are for the grids that split).
        let knob = [
            g.chains.as_ref().map(|c| ("chains", c.span())),
            g.sweeps.as_ref().map(|s| ("sweeps", s.span())),
            g.top.as_ref().map(|t| ("top", t.span())),
        ]
        .into_iter()
        .flatten()
        .next();
        if let Some((name, span)) = knob {
            return Err(at(
                span,
                format!("`{name}` is a setting of `method = \"splitting\"`, and this grid samples"),
            ));
        }
        return Ok(Method::Sampling);
    }
    let chains = match chains {
        None => DEFAULT_CHAINS,
        Some(c) if *c.get_ref() >= 2 => *c.get_ref() as u64,
        Some(c) => {
            return Err(at(
                c.span(),
                format!(
                "`chains` must be at least 2 (independent walks give the uncertainty), found {}",
                c.get_ref()
            ),
            ))
        }
    };
    let sweeps = match sweeps {
        None => DEFAULT_SWEEPS,
        Some(s) if *s.get_ref() > 0.0 && s.get_ref().is_finite() => *s.get_ref(),
        Some(s) => {
            return Err(at(
                s.span(),
                format!("`sweeps` must be a positive number, found {}", s.get_ref()),
            ))
        }
    };
    let top = match top {
        None => None,
        Some(t) if *t.get_ref() >= 1.0 && t.get_ref().is_finite() => Some(*t.get_ref()),
        Some(t) => {
            return Err(at(
                t.span(),
                format!(
                    "`top` is a multiple of the noise, at least 1, found {}",
                    t.get_ref()
                ),
            ))
        }
    };
    Ok(Method::Splitting(SplittingKnobs {
        chains,
        sweeps,
        top,
    }))
}

/// The seed of chunk `c` of the task with key `key`: FNV-1a of the key, mixed with the index by
/// a SplitMix64 finaliser (stable across platforms and Rust versions, unlike `std`'s hasher).
pub fn chunk_seed(key: &str, c: u64) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for b in key.bytes() {
        h ^= b as u64;
        h = h.wrapping_mul(0x0100_0000_01b3);
    }
    let mut v = h ^ c.wrapping_mul(0x9e37_79b9_7f4a_7c15);
    v = (v ^ (v >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
    v = (v ^ (v >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
    v ^ (v >> 31)
}

#[cfg(test)]
mod tests {
    use super::*;

    const SPEC: &str = r#"
shots = 1000
chunk = 300
[[grid]]
family = "repetition"
distances = [3, 5]
noise = "phenomenological"
p = [0.01, 0.02]
bias = [inf]
flip = "z"
"#;

    #[test]
    fn spec_expands_in_grid_order_with_distinct_keys() {
        let spec = SweepSpec::parse(&Source::new("s.toml", SPEC)).unwrap();
        assert_eq!(spec.tasks.len(), 4);
        let t = &spec.tasks[1];
        assert_eq!((t.distance, t.p), (3, 0.02));
        assert_eq!(t.noise, "phenomenological p=0.02 bias=inf");
        assert_eq!(t.chunks(), 4);
        assert_eq!(t.gen.rounds, 3);
        assert!(t.key.contains("--flip z"), "{}", t.key);
        assert_ne!(t.chunk_seed(0), t.chunk_seed(1));
        assert_ne!(t.chunk_seed(0), spec.tasks[0].chunk_seed(0));
    }

    #[test]
    fn splitting_keys_make_one_task_per_point_with_the_knobs_in_its_key() {
        let text = "method = \"splitting\"\nchains = 4\n[[grid]]\nfamily = \"repetition\"\n\
                    distances = [3, 5]\nnoise = \"capacity\"\np = [0.01, 0.02]\nsweeps = 20\n\
                    top = 8\n[[grid]]\nfamily = \"repetition\"\ndistances = [3]\n\
                    noise = \"capacity\"\np = [0.01]\nmethod = \"sampling\"\nshots = 100\n";
        let spec = SweepSpec::parse(&Source::new("s.toml", text)).unwrap();
        assert_eq!(spec.tasks.len(), 5);
        let t = &spec.tasks[0];
        assert_eq!(
            t.method,
            Method::Splitting(SplittingKnobs {
                chains: 4,
                sweeps: 20.0,
                top: Some(8.0)
            })
        );
        // No `shots` needed: direct sampling at the top is bounded by the default.
        assert_eq!((t.shots, t.chunks()), (DEFAULT_TOP_SHOTS, 1));
        for part in [
            "method=splitting",
            "chains=4",
            "sweeps=20",
            "top=8",
            "top_failures=1000",
        ] {
            assert!(t.key.contains(part), "{}", t.key);
        }
        // The sampling grid's point at the same place has its own key, without a method.
        let sampled = &spec.tasks[4];
        assert_eq!(sampled.method, Method::Sampling);
        assert!(!sampled.key.contains("method="), "{}", sampled.key);
        assert_ne!(sampled.key, t.key);
        // Knobs change the key, so rows of other knobs never count as this task's.
        let other = SweepSpec::parse(&Source::new(
            "s.toml",
            text.replace("chains = 4", "chains = 5"),
        ))
        .unwrap();
        assert_ne!(other.tasks[0].key, t.key);
    }

    #[test]
    fn bad_splitting_values_point_at_themselves() {
        let grid = "[[grid]]\nfamily = \"repetition\"\ndistances = [3]\nnoise = \"capacity\"\n\
                    p = [0.01]\n";
        for (line, message, at) in [
            (
                "method = \"splits\"",
                "unknown `method` `splits`",
                "s.toml:7:10",
            ),
            (
                "method = \"splitting\"\nchains = 1",
                "`chains` must be at least 2",
                "s.toml:8:10",
            ),
            (
                "method = \"splitting\"\nsweeps = -3",
                "`sweeps` must be a positive number",
                "s.toml:8:10",
            ),
            (
                "method = \"splitting\"\ntop = 0.5",
                "`top` is a multiple of the noise",
                "s.toml:8:7",
            ),
            (
                "shots = 10\ntop = 4",
                "`top` is a setting of `method = \"splitting\"`",
                "s.toml:8:7",
            ),
        ] {
            let text = format!("seed = 1\n{grid}{line}\n");
            let d = SweepSpec::parse(&Source::new("s.toml", text.as_str())).unwrap_err();
            let r = d.render();
            assert!(r.contains(message) && r.contains("grid 1"), "{r}");
            assert!(r.contains(at), "{line}: {r}");
        }
        // At the top level, the place is the top-level line.
        let text = format!("method = \"splitting\"\nchains = 0\n{grid}");
        let r = SweepSpec::parse(&Source::new("s.toml", text.as_str()))
            .unwrap_err()
            .render();
        assert!(r.contains("s.toml:2:10"), "{r}");
    }

    #[test]
    fn spec_errors_point_into_the_toml() {
        let bad = Source::new(
            "s.toml",
            "shots = 10\n[[grid]]\nfamily = \"surface\"\ndistance = [3]\n",
        );
        let d = SweepSpec::parse(&bad).unwrap_err();
        assert!(d.render().contains("s.toml:4:1"), "{}", d.render());
        let bad = Source::new(
            "s.toml",
            "shots = 10\n[[grid]]\nfamily = \"torus\"\ndistances = [3]\nnoise = \"capacity\"\np = [0.1]\n",
        );
        let text = SweepSpec::parse(&bad).unwrap_err().render();
        assert!(text.contains("unknown family"), "{text}");
        // Mistakes inside a grid point at that grid, not at the top of the file.
        assert!(text.contains("s.toml:2:1"), "{text}");
        let zero = Source::new(
            "s.toml",
            "shots = 10\n[[grid]]\nfamily = \"surface\"\ndistances = [3]\nnoise = \"capacity\"\n\
             p = [0.1]\n\n[[grid]]\nfamily = \"surface\"\ndistances = [3]\nnoise = \"capacity\"\n\
             p = [0.1]\nchunk = 0\n",
        );
        let text = SweepSpec::parse(&zero).unwrap_err().render();
        assert!(
            text.contains("grid 2: `chunk` must be at least 1"),
            "{text}"
        );
        assert!(text.contains("s.toml:8:1"), "{text}");
    }
}
