//! Hardware noise models: the schema of a model file (TOML), the types it is read into and what
//! they mean for a circuit's qubits.
//!
//! In: a model file, read by `reader.rs` into a [`NoiseModel`] ([`NoiseModel::parse`]; a bad file
//! gives a [`Diagnostic`] at `file:line:col`). Out: the noise of each gate, measurement, reset
//! and idle qubit, overrides applied. Gates the circuit uses but the model does not describe are
//! reported when the model is compiled into a circuit ([`crate::noise::compile`]).
//!
//! # Schema
//!
//! Every key is optional unless stated. Probabilities are in `[0, 1]`; durations and times are
//! non-negative numbers in one unit of your choice (the same for durations, `t1`, `t2` and
//! `t_bitflip`). A *rate* is either `p` (total probability) with an optional `bias`, or explicit
//! Pauli probabilities.
//!
//! ```toml
//! p = 0.001            # base total error probability, the default of every `p` below
//! bias = 100           # base bias eta = pZ/(pX+pY); absent: depolarizing; "inf": pure Z
//! time_unit = "ns"     # "s", "ms", "us" or "ns": names the unit, converts nothing
//!
//! [gates.cx]           # one table per gate name (`cx`, `cz`, `h`, ...) or `default`
//! duration = 2.0       # needed when idle noise comes from t1/t2 and the circuit uses cx
//! p = 0.002            # after-gate channel: p + bias, or
//! # zz = 0.001, iz = 0.0005, ...   15 named two-qubit terms (one-qubit gates: x, y, z)
//! implementation = "bias-preserving"   # ideal (default) | rotation | bias-preserving
//!
//! [gates.cz]           # a rotation with its own generator G: the gate is exp(i·angle·G)
//! implementation = "rotation"
//! generator = "II - ZI - IZ + ZZ"   # Pauli polynomial, one letter per qubit (first target first)
//! angle = "pi/4"                    # radians: a number, or "pi/4", "-3*pi/4", ...
//!
//! [measure]            # duration and flip probability (default p)
//! duration = 5.0
//! flip = 0.002
//! # bias = 100         # flip is then the total of a biased Pauli channel before the readout
//!
//! [measure.z]          # one basis: its own flip probability and duration
//! flip = 1e-5
//!
//! [reset]              # duration and error probability (default p): the orthogonal flip
//! duration = 5.0
//! # bias = 100         # p is then the total of a biased Pauli channel after the reset
//!
//! [reset.x]            # one basis: its own flip probability and duration
//! p = 0.001
//!
//! [idle]               # qubits no operation touches in a layer, for the layer's duration
//! t1 = 1000.0          # Pauli-twirled amplitude and phase damping, or
//! t2 = 500.0
//! # t_bitflip = 1e6    # cat-like qubit: bit flips with their own time constant (with t2)
//! # p = 0.0001         # a fixed rate per layer (with bias, or x/y/z)
//!
//! [[override]]         # later overrides win; sections replace the model's per key
//! role = "ancilla"     # or qubit = "a[0]"
//! idle = { t1 = 500.0, t2 = 300.0 }
//! measure = { flip = 0.01 }
//! ```
//!
//! # Channels
//! - `p` + `bias` on one qubit: `pZ = p·eta/(eta+1)`, `pX = pY = p/(2(eta+1))`; on two qubits
//!   `ZI`, `IZ`, `ZZ` share `p·eta/(eta+1)` and the other twelve terms share `p/(eta+1)`; no
//!   bias: depolarizing (see [`crate::noise`]). Convention of "Ultrahigh error threshold for
//!   surface codes with biased noise", PRL 120, 050505 (2018).
//! - Reset error: the flip orthogonal to the reset basis (X after a z or y reset, Z after an x
//!   reset), as in the `circuit` preset; measurement error: the result flipped. With `bias`, the
//!   section's `p` (`flip`) is the total of a Pauli channel of that bias and only its terms that
//!   flip the basis act (see [`SpamNoise`]); a basis table (`[reset.z]`, `[measure.x]`) gives one
//!   basis its own flip probability and duration. The top-level `bias` does not reach resets and
//!   measurements, so a model with the `circuit` preset's meaning stays equal to it.
//! - Idle from `t1`, `t2` for a time `t` (Pauli-twirling approximation of amplitude and phase
//!   damping, "Surface code with decoherence", PRA 86, 062318 (2012)):
//!   `px = py = (1 − e^(−t/T1))/4`, `pz = (1 − e^(−t/T2))/2 − (1 − e^(−t/T1))/4`.
//!   Physical models have `T2 ≤ 2·T1`; larger `t2` is rejected.
//! - Idle of a cat-like qubit from `t_bitflip` and `t2`: independent bit flips and phase flips,
//!   each flipping with probability `(1 − e^(−t/T))/2` (so that the flipped expectation decays as
//!   `e^(−t/T)`, as T2 does for phase); combined: `X = a(1−b)`, `Z = b(1−a)`, `Y = ab`.
//!
//! `generator` (with `angle`, in the section of one gate whose `implementation` is `rotation`)
//! replaces [`Generator::default_for`]: terms `[COEFFICIENT[*]]PAULIS` joined by `+`/`-`, a
//! missing coefficient meaning 1 (see [`crate::noise::implement::parse_polynomial`]). Coefficients are real and finite,
//! so `G` is Hermitian and the rotation unitary. The file is refused, at the `generator` value,
//! unless `exp(i·angle·G)` equals the gate up to a global phase (largest matrix entry within
//! [`crate::noise::implement::GATE_TOLERANCE`], so write irrational coefficients to at least eight digits). Generators
//! that implement the same gate can still differ in what a mid-gate fault becomes: that is the
//! point of giving one.
//!
//! `time_unit` only names the unit every duration and time of the file is written in; slant
//! never converts between units (only ratios such as `t/T1` enter the channels), so one
//! unit must be used throughout. It is shown next to layer durations in `slant compile`
//! comments. Other values are refused rather than ignored, so a unit slant would misread cannot
//! slip through.
//!
//! Overrides apply to a qubit when its name equals `qubit` or it carries the role or tag `role`.
//! Qubit names are compared in the form the circuit prints them, so `"d[1, 2]"` selects `d[1,2]`.
//! A gate override applies when any of the gate's qubits matches. An override that selects no
//! qubit of the circuit gives a located warning when the model is compiled onto it (an error
//! only for a role name close to one the circuit declares: a typo).

use std::sync::Arc;

use crate::base::{did_you_mean, xor_prob, Basis, Diagnostic, Gate, Pauli, Severity, Source, Span};
use crate::ir::{Channel, Circuit, Qubit};
use crate::noise::implement::{Generator, Implementation};
use crate::noise::preset::{Preset, PresetKind};

/// A channel as the model writes it.
#[derive(Clone, Debug, PartialEq)]
pub enum Rate {
    /// Explicit single-qubit Pauli probabilities `(px, py, pz)`.
    One(f64, f64, f64),
    /// Total probability and bias (`None`: depolarizing).
    Total {
        /// Total probability.
        p: f64,
        /// `pZ/(pX+pY)`; infinite for pure Z.
        bias: Option<f64>,
    },
    /// Explicit two-qubit Pauli probabilities in the order of [`Channel::PairPauli`].
    Two(Box<[f64; 15]>),
}

impl Rate {
    fn preset(p: f64, bias: Option<f64>) -> Preset {
        Preset {
            kind: PresetKind::Circuit,
            p,
            q: None,
            bias,
        }
    }

    /// The channel on one qubit (`None` for a two-qubit rate).
    pub fn one(&self) -> Option<Channel> {
        match self {
            Rate::One(px, py, pz) => Some(Channel::Pauli {
                px: *px,
                py: *py,
                pz: *pz,
            }),
            Rate::Total { p, bias } => Some(Rate::preset(*p, *bias).one_qubit(*p)),
            Rate::Two(_) => None,
        }
    }

    /// The channel on a pair (`None` for a one-qubit rate).
    pub fn two(&self) -> Option<Channel> {
        match self {
            Rate::Two(t) => Some(Channel::PairPauli(t.clone())),
            Rate::Total { p, bias } => Some(Rate::preset(*p, *bias).two_qubit(*p)),
            Rate::One(..) => None,
        }
    }
}

/// Noise of one gate kind.
#[derive(Clone, Debug, PartialEq)]
pub struct GateNoise {
    /// Duration (model time units).
    pub duration: Option<f64>,
    /// The after-gate channel.
    pub rate: Rate,
    /// How the gate is carried out.
    pub implementation: Implementation,
    /// The rotation's generator when the model gives one (`generator` + `angle`; checked to
    /// implement the gate); `None`: [`Generator::default_for`].
    pub generator: Option<Generator>,
    /// Where the model defines it.
    pub span: Span,
}

/// Error of a reset or a measurement in one basis, given by a basis table (`[reset.z]`,
/// `[measure.x]`): the flip probability of that basis, and its duration.
#[derive(Clone, Debug, PartialEq)]
pub struct BasisSpam {
    /// Duration of a reset or measurement in this basis.
    pub duration: Option<f64>,
    /// Probability that the prepared state (reset) or the result (measurement) is flipped.
    pub flip: f64,
}

/// Reset or measurement noise: one section of a model file (`[reset]` or `[measure]`).
///
/// Without `bias`, `p` is the flip probability in every basis (the `circuit` preset's meaning).
/// With `bias` eta, `p` is the total of a Pauli channel with that bias
/// (`pZ = p·eta/(eta+1)`, `pX = pY = p/(2(eta+1))`), of which only the terms that flip the
/// state act: after a z reset (before a z measurement) `pX + pY`, in the x basis `pZ + pY`, in
/// the y basis `pX + pZ`. A basis table replaces both for its basis.
#[derive(Clone, Debug, PartialEq)]
pub struct SpamNoise {
    /// Duration, for bases without a table of their own.
    pub duration: Option<f64>,
    /// Flip probability (no bias) or the total of the biased channel.
    pub p: f64,
    /// Bias of the channel; `None`: `p` is the flip of every basis.
    pub bias: Option<f64>,
    /// Basis tables `[x, y, z]`.
    pub bases: [Option<BasisSpam>; 3],
}

/// Measurement noise: results are flipped (a classical readout error; the qubit is not
/// disturbed).
pub type MeasureNoise = SpamNoise;

/// Reset noise: the flip of the prepared state, right after the reset.
pub type ResetNoise = SpamNoise;

fn basis_index(b: Basis) -> usize {
    match b {
        Basis::X => 0,
        Basis::Y => 1,
        Basis::Z => 2,
    }
}

impl SpamNoise {
    /// A section with flip probability `p` in every basis and no duration.
    pub fn flat(p: f64) -> SpamNoise {
        SpamNoise {
            duration: None,
            p,
            bias: None,
            bases: [None, None, None],
        }
    }

    /// The flip probability of the section's channel in `basis`, ignoring basis tables.
    pub fn channel_flip(&self, basis: Basis) -> f64 {
        let Some(eta) = self.bias else {
            return self.p;
        };
        let (px, py, pz) = if eta.is_infinite() {
            (0.0, 0.0, self.p)
        } else {
            let low = self.p / (2.0 * (eta + 1.0));
            (low, low, self.p * eta / (eta + 1.0))
        };
        match basis {
            Basis::X => pz + py,
            Basis::Y => px + pz,
            Basis::Z => px + py,
        }
    }

    /// The flip probability in `basis`: its table's, else the section's channel's.
    pub fn flip(&self, basis: Basis) -> f64 {
        match &self.bases[basis_index(basis)] {
            Some(t) => t.flip,
            None => self.channel_flip(basis),
        }
    }

    /// The duration in `basis`: its table's, else the section's.
    pub fn duration_in(&self, basis: Basis) -> Option<f64> {
        self.bases[basis_index(basis)]
            .as_ref()
            .and_then(|t| t.duration)
            .or(self.duration)
    }

    /// The basis table of `basis`, if the section has one.
    pub fn table(&self, basis: Basis) -> Option<&BasisSpam> {
        self.bases[basis_index(basis)].as_ref()
    }

    /// Whether the flip depends on the basis (a bias or a basis table): measurements of
    /// products then flip per measured qubit.
    pub fn per_basis(&self) -> bool {
        self.bias.is_some() || self.bases.iter().any(Option::is_some)
    }

    /// The flip of a measurement of the product of `factors` (one Pauli per measured qubit):
    /// a plain `flip` once per result; with a bias or basis tables, each factor flips
    /// independently in its own basis and the result flips when an odd number do.
    pub fn product_flip(&self, factors: &[Pauli]) -> f64 {
        if !self.per_basis() {
            return self.p;
        }
        factors
            .iter()
            .filter_map(|&f| Basis::of_pauli(f))
            .fold(0.0, |acc, b| xor_prob(acc, self.flip(b)))
    }

    /// The longest duration of a measurement of `factors` (a product waits for its slowest
    /// factor).
    pub fn product_duration(&self, factors: &[Pauli]) -> Option<f64> {
        factors
            .iter()
            .filter_map(|&f| Basis::of_pauli(f))
            .map(|b| self.duration_in(b))
            .try_fold(0.0f64, |acc, d| d.map(|d| acc.max(d)))
            .or(if factors.is_empty() {
                self.duration
            } else {
                None
            })
    }
}

/// Idle noise on qubits no operation of a layer touches.
#[derive(Clone, Debug, PartialEq)]
pub enum IdleNoise {
    /// Cat-like qubit: bit-flip time constant and T2.
    Cat {
        /// Bit-flip time constant.
        t_bitflip: f64,
        /// Phase coherence time.
        t2: f64,
    },
    /// Amplitude and phase damping, Pauli-twirled.
    Decoherence {
        /// Energy relaxation time.
        t1: f64,
        /// Phase coherence time (at most `2·t1`).
        t2: f64,
    },
    /// No idle noise.
    None,
    /// A fixed channel per layer.
    Rate(Rate),
}

/// Pauli-twirled amplitude and phase damping for a time `t` ("Surface code with decoherence",
/// PRA 86, 062318 (2012)): returns `(px, py, pz)`.
pub fn twirled_decoherence(t: f64, t1: f64, t2: f64) -> (f64, f64, f64) {
    let a = 1.0 - (-t / t1).exp();
    let pxy = a / 4.0;
    let pz = (1.0 - (-t / t2).exp()) / 2.0 - a / 4.0;
    (pxy, pxy, pz)
}

/// Independent bit flips (time constant `tb`) and phase flips (`t2`) for a time `t`: returns
/// `(px, py, pz)`.
pub fn cat_idle(t: f64, tb: f64, t2: f64) -> (f64, f64, f64) {
    let a = (1.0 - (-t / tb).exp()) / 2.0;
    let b = (1.0 - (-t / t2).exp()) / 2.0;
    (a * (1.0 - b), a * b, b * (1.0 - a))
}

impl IdleNoise {
    /// The channel for a layer of duration `t`, or `None` when it is noiseless.
    pub fn channel(&self, t: f64) -> Option<Channel> {
        let (px, py, pz) = match self {
            IdleNoise::None => return None,
            IdleNoise::Rate(r) => return r.one(),
            IdleNoise::Decoherence { t1, t2 } => twirled_decoherence(t, *t1, *t2),
            IdleNoise::Cat { t_bitflip, t2 } => cat_idle(t, *t_bitflip, *t2),
        };
        Some(Channel::Pauli { px, py, pz })
    }

    pub(crate) fn needs_durations(&self) -> bool {
        matches!(self, IdleNoise::Decoherence { .. } | IdleNoise::Cat { .. })
    }
}

/// Which qubits an override applies to.
#[derive(Clone, Debug, PartialEq)]
pub enum Selector {
    /// A qubit by display name, in the expander's form `name[i,j]` (see [`canonical_qubit_name`]).
    Qubit(String),
    /// Qubits carrying a role or tag.
    Role(String),
}

/// Per-qubit replacements of the model's sections.
#[derive(Clone, Debug, PartialEq)]
pub struct Override {
    /// Which qubits.
    pub selector: Selector,
    /// Gate sections replaced.
    pub gates: Vec<(Option<Gate>, GateNoise)>,
    /// Measurement noise replaced.
    pub measure: Option<MeasureNoise>,
    /// Reset noise replaced.
    pub reset: Option<ResetNoise>,
    /// Idle noise replaced.
    pub idle: Option<IdleNoise>,
    /// The `[[override]]` table.
    pub span: Span,
    /// The selector's value (`"a[0]"` of `qubit = "a[0]"`), where an override that matches no
    /// qubit of the circuit is reported.
    pub selector_span: Span,
}

/// A parsed noise model.
#[derive(Clone, Debug, PartialEq)]
pub struct NoiseModel {
    /// The file (or the preset text) it came from, for diagnostics and comments.
    pub source: Arc<Source>,
    /// Gate sections: `Some(gate)` or `None` for `default`.
    pub gates: Vec<(Option<Gate>, GateNoise)>,
    /// Measurement noise.
    pub measure: MeasureNoise,
    /// Reset noise.
    pub reset: ResetNoise,
    /// Idle noise.
    pub idle: IdleNoise,
    /// Overrides in file order (later wins).
    pub overrides: Vec<Override>,
    /// The unit durations and times are written in (one of [`TIME_UNITS`]), for display only.
    pub time_unit: Option<&'static str>,
    /// The top-level `p` (times any scale applied): the reference of `p=` settings.
    pub base_p: Option<f64>,
}

/// The values `time_unit` accepts.
pub const TIME_UNITS: [&str; 4] = ["s", "ms", "us", "ns"];

impl NoiseModel {
    /// The model with the same meaning as a `circuit` preset, with `implementation` for `cx`.
    pub fn from_preset(preset: &Preset, cx: Implementation, source: &Arc<Source>) -> NoiseModel {
        let rate = Rate::Total {
            p: preset.p,
            bias: preset.bias,
        };
        let span = Span::new(0, source.text.len());
        let gate = |implementation| GateNoise {
            duration: None,
            rate: rate.clone(),
            implementation,
            generator: None,
            span,
        };
        NoiseModel {
            source: source.clone(),
            gates: vec![
                (None, gate(Implementation::Ideal)),
                (Some(Gate::Cx), gate(cx)),
            ],
            measure: SpamNoise::flat(preset.p),
            reset: SpamNoise::flat(preset.p),
            idle: IdleNoise::Rate(rate.clone()),
            overrides: Vec::new(),
            time_unit: None,
            base_p: Some(preset.p),
        }
    }

    /// The gate section for `gate` (the override for `qubits` if one matches), if any.
    pub fn gate<'a>(&'a self, gate: Gate, qubits: &[&Qubit]) -> Option<&'a GateNoise> {
        self.gate_from(gate, qubits).map(|(_, n)| n)
    }

    /// [`NoiseModel::gate`] with the index of the override it comes from (`None`: the top
    /// level), so the compiler can say which section of the file wrote a channel.
    pub fn gate_from<'a>(
        &'a self,
        gate: Gate,
        qubits: &[&Qubit],
    ) -> Option<(Option<usize>, &'a GateNoise)> {
        let find = |list: &'a [(Option<Gate>, GateNoise)]| {
            list.iter()
                .find(|(g, _)| *g == Some(gate))
                .or_else(|| list.iter().find(|(g, _)| g.is_none()))
                .map(|(_, n)| n)
        };
        for (k, o) in self.overrides.iter().enumerate().rev() {
            if qubits.iter().any(|q| o.selector.matches(q)) {
                if let Some(n) = find(&o.gates) {
                    return Some((Some(k), n));
                }
            }
        }
        find(&self.gates).map(|n| (None, n))
    }

    /// Measurement noise for a product on `qubits`.
    pub fn measure_for(&self, qubits: &[&Qubit]) -> &MeasureNoise {
        self.measure_from(qubits).1
    }

    /// [`NoiseModel::measure_for`] with the index of the override it comes from.
    pub fn measure_from(&self, qubits: &[&Qubit]) -> (Option<usize>, &MeasureNoise) {
        self.overrides
            .iter()
            .enumerate()
            .rev()
            .filter(|(_, o)| qubits.iter().any(|q| o.selector.matches(q)))
            .find_map(|(k, o)| o.measure.as_ref().map(|m| (Some(k), m)))
            .unwrap_or((None, &self.measure))
    }

    /// Reset noise for `qubit`.
    pub fn reset_for(&self, qubit: &Qubit) -> &ResetNoise {
        self.reset_from(qubit).1
    }

    /// [`NoiseModel::reset_for`] with the index of the override it comes from.
    pub fn reset_from(&self, qubit: &Qubit) -> (Option<usize>, &ResetNoise) {
        self.overrides
            .iter()
            .enumerate()
            .rev()
            .filter(|(_, o)| o.selector.matches(qubit))
            .find_map(|(k, o)| o.reset.as_ref().map(|r| (Some(k), r)))
            .unwrap_or((None, &self.reset))
    }

    /// One diagnostic per override that selects no qubit of `circuit`, at the override's
    /// selector value in the model file. A qubit the circuit does not have is a warning: one
    /// hardware model serves every circuit written for a chip, and a small circuit lacks some
    /// of its qubits (the hint suggests a close name, in case of a typo). A role the circuit does
    /// not use is a warning too, unless it is close to one the circuit declares: role names are
    /// few and shared by every circuit, so `dta` for `data` is a typo and an error, since
    /// ignoring it would silently compile the wrong noise.
    pub fn unmatched_overrides(&self, circuit: &Circuit) -> Vec<Diagnostic> {
        let mut out = Vec::new();
        for o in &self.overrides {
            if circuit.qubits.iter().any(|q| o.selector.matches(q)) {
                continue;
            }
            let (what, name, candidates): (&str, &str, Vec<&str>) = match &o.selector {
                Selector::Qubit(n) => (
                    "qubit",
                    n,
                    circuit.qubits.iter().map(|q| q.name.as_str()).collect(),
                ),
                Selector::Role(r) => {
                    let mut roles: Vec<&str> = circuit
                        .qubits
                        .iter()
                        .flat_map(|q| q.roles.iter().map(String::as_str))
                        .collect();
                    roles.sort_unstable();
                    roles.dedup();
                    ("role", r, roles)
                }
            };
            let mut d = Diagnostic::error(
                &self.source,
                o.selector_span,
                format!(
                    "this override matches no qubit: `{}` has no {what} `{name}`",
                    circuit.source.name
                ),
            );
            let suggestion = did_you_mean(name, candidates.iter().copied());
            if what == "qubit" || suggestion.is_none() {
                d.severity = Severity::Warning;
                d.message.push_str("; the override is skipped");
            }
            d = match suggestion {
                Some(s) => d.with_hint(format!("did you mean `{s}`?")),
                None if what == "role" && candidates.is_empty() => {
                    d.with_hint("the circuit declares no roles; add `role NAME` to its qubits")
                }
                None if what == "role" => d.with_hint(format!(
                    "the circuit's roles are {}",
                    candidates
                        .iter()
                        .map(|r| format!("`{r}`"))
                        .collect::<Vec<_>>()
                        .join(", ")
                )),
                None => d.with_hint(
                    "a model for a larger chip may name qubits a small circuit lacks; write names as the circuit declares them, e.g. `a[0]`",
                ),
            };
            out.push(d);
        }
        out
    }

    /// Idle noise for `qubit`.
    pub fn idle_for(&self, qubit: &Qubit) -> &IdleNoise {
        self.idle_from(qubit).1
    }

    /// [`NoiseModel::idle_for`] with the index of the override it comes from.
    pub fn idle_from(&self, qubit: &Qubit) -> (Option<usize>, &IdleNoise) {
        self.overrides
            .iter()
            .enumerate()
            .rev()
            .filter(|(_, o)| o.selector.matches(qubit))
            .find_map(|(k, o)| o.idle.as_ref().map(|i| (Some(k), i)))
            .unwrap_or((None, &self.idle))
    }

    /// The model key path of a section, as settings name it (`gates.cx`, `idle`,
    /// `override.0.measure`): `kind` is the section under the top level or under override `k`.
    pub fn section_path(over: Option<usize>, kind: &str) -> String {
        match over {
            Some(k) => format!("override.{k}.{kind}"),
            None => kind.to_string(),
        }
    }
}

/// The display form the expander gives a qubit (`name` or `name[i,j]`, indices as plain
/// integers separated by bare commas) for a name written as in the source, so `"a[1, 2]"` and
/// `"a[ 1,2 ]"` select the qubit `a[1,2]`. `None` when `text` is not a qubit name.
pub fn canonical_qubit_name(text: &str) -> Option<String> {
    let text = text.trim();
    let (base, rest) = match text.find('[') {
        Some(k) => (text[..k].trim_end(), Some(&text[k + 1..])),
        None => (text, None),
    };
    let mut chars = base.chars();
    let ident = chars
        .next()
        .is_some_and(|c| c.is_ascii_alphabetic() || c == '_')
        && chars.all(|c| c.is_ascii_alphanumeric() || c == '_');
    if !ident {
        return None;
    }
    let Some(rest) = rest else {
        return Some(base.to_string());
    };
    let inside = rest.strip_suffix(']')?;
    // Parsing the indices (rather than deleting spaces) also rejects `a[1 2]` and writes `a[01]`
    // as the expander does, `a[1]`.
    let indices = inside
        .split(',')
        .map(|i| i.trim().parse::<i64>().map(|v| v.to_string()))
        .collect::<Result<Vec<_>, _>>()
        .ok()?;
    Some(format!("{base}[{}]", indices.join(",")))
}

impl Selector {
    /// Whether the selector picks `qubit`.
    pub fn matches(&self, qubit: &Qubit) -> bool {
        match self {
            Selector::Qubit(n) => &qubit.name == n,
            Selector::Role(r) => qubit.has_role(r),
        }
    }
}
