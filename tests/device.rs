//! Device models in studies: biased and per-basis resets and measurements, durations only where
//! used, and settings after a model file (scales, `p=`, model keys by path).

use crate::support::load;
use slant::base::{Basis, Source};
use slant::faults::{ExtractOptions, FaultGraph};
use slant::ir::{Channel, Circuit, OpKind};
use slant::noise::{apply, compile, NoiseModel, NoiseSpec};

fn model(text: &str) -> NoiseModel {
    NoiseModel::parse(&Source::new("m.toml", text)).unwrap()
}

fn xzzx() -> Circuit {
    load(
        "xzzx_d3_hook_safe.slant",
        include_str!("../circuits/xzzx_d3_hook_safe.slant"),
    )
}

/// `(detectors, observables, probability)` of every edge, sorted.
fn priors(g: &FaultGraph) -> Vec<(Vec<u32>, Vec<u32>, f64)> {
    let mut v: Vec<_> = g
        .edges
        .iter()
        .map(|m| (m.detectors.clone(), m.observables.clone(), m.probability))
        .collect();
    v.sort_by(|a, b| (&a.0, &a.1).cmp(&(&b.0, &b.1)));
    v
}

fn graph_of(c: &Circuit, spec: &NoiseSpec) -> Vec<(Vec<u32>, Vec<u32>, f64)> {
    priors(&slant::faults::extract(
        &apply(c, spec).unwrap(),
        &ExtractOptions::default(),
    ))
}

fn assert_same_priors(a: &[(Vec<u32>, Vec<u32>, f64)], b: &[(Vec<u32>, Vec<u32>, f64)]) {
    assert_eq!(a.len(), b.len(), "edge counts differ");
    assert!(!a.is_empty());
    for (x, y) in a.iter().zip(b) {
        assert_eq!((&x.0, &x.1), (&y.0, &y.1));
        assert!((x.2 - y.2).abs() <= 1e-12, "{x:?} vs {y:?}");
    }
}

/// A model file written into a temporary directory, for noise texts that name it.
fn model_file(dir: &std::path::Path, name: &str, text: &str) -> String {
    let path = dir.join(name);
    std::fs::write(&path, text).unwrap();
    path.display().to_string()
}

/// A model touching every kind of value a scale changes: gate rates as p + bias and as explicit
/// terms, biased and per-basis resets and measurements, T1/T2 idle noise and an override.
const FULL: &str = "p = 0.001\nbias = 50\ntime_unit = \"us\"\n\
[gates.default]\nduration = 0.1\n\
[gates.cx]\nduration = 0.5\nzi = 0.002\niz = 0.002\nzz = 0.001\nxx = 0.0001\n\
[gates.cz]\nduration = 0.4\np = 0.003\n\
[measure]\nduration = 1.0\nflip = 0.004\nbias = 20\n[measure.z]\nflip = 0.0002\n\
[reset]\nduration = 1.0\np = 0.002\nbias = 100\n[reset.x]\np = 0.0015\n\
[idle]\nt1 = 200.0\nt2 = 100.0\n\
[[override]]\nrole = \"ancilla\"\nidle = { t1 = 100.0, t2 = 60.0 }\nmeasure = { flip = 0.006 }\n";

/// The same model with every probability multiplied by 2.5 and every time constant divided
/// by 2.5, written by hand; durations unchanged.
const FULL_TIMES_2_5: &str = "p = 0.0025\nbias = 50\ntime_unit = \"us\"\n\
[gates.default]\nduration = 0.1\n\
[gates.cx]\nduration = 0.5\nzi = 0.005\niz = 0.005\nzz = 0.0025\nxx = 0.00025\n\
[gates.cz]\nduration = 0.4\np = 0.0075\n\
[measure]\nduration = 1.0\nflip = 0.01\nbias = 20\n[measure.z]\nflip = 0.0005\n\
[reset]\nduration = 1.0\np = 0.005\nbias = 100\n[reset.x]\np = 0.00375\n\
[idle]\nt1 = 80.0\nt2 = 40.0\n\
[[override]]\nrole = \"ancilla\"\nidle = { t1 = 40.0, t2 = 24.0 }\nmeasure = { flip = 0.015 }\n";

/// Scaling a model by s gives the fault graph of the model written with every probability
/// multiplied by s and every time constant divided by s (the documented scaling rule), to
/// 1e-12 in every prior; `p=P` is the scale `P / p_ref`.
#[test]
fn scaling_a_model_equals_writing_it_scaled() {
    let dir = tempfile::tempdir().unwrap();
    let base = model_file(dir.path(), "full.toml", FULL);
    let by_hand = model_file(dir.path(), "scaled.toml", FULL_TIMES_2_5);
    let c = xzzx();
    let want = graph_of(&c, &NoiseSpec::parse(&by_hand).unwrap());
    let scaled = graph_of(&c, &NoiseSpec::parse(&format!("{base} scale=2.5")).unwrap());
    assert_same_priors(&scaled, &want);
    let per_op = graph_of(&c, &NoiseSpec::parse(&format!("{base} p=0.0025")).unwrap());
    assert_same_priors(&per_op, &want);
    // Per-kind scales multiply only their kind; all four together are the global scale.
    let kinds = format!("{base} scale.gates=2.5 scale.idle=2.5 scale.reset=2.5 scale.measure=2.5");
    assert_same_priors(&graph_of(&c, &NoiseSpec::parse(&kinds).unwrap()), &want);
    let unscaled = graph_of(&c, &NoiseSpec::parse(&base).unwrap());
    let idle_only = graph_of(
        &c,
        &NoiseSpec::parse(&format!("{base} scale.idle=2.5")).unwrap(),
    );
    assert_ne!(
        idle_only.iter().map(|e| e.2).collect::<Vec<_>>(),
        unscaled.iter().map(|e| e.2).collect::<Vec<_>>()
    );
    // Scale 1 changes nothing.
    let one = graph_of(&c, &NoiseSpec::parse(&format!("{base} scale=1")).unwrap());
    assert_same_priors(&one, &unscaled);
}

/// A model key set by its dotted path equals the file with that key edited; mistakes in a path
/// are located in the noise text with a suggestion.
#[test]
fn model_keys_set_by_path_equal_the_edited_file() {
    let dir = tempfile::tempdir().unwrap();
    let base = model_file(dir.path(), "full.toml", FULL);
    let edited = model_file(
        dir.path(),
        "edited.toml",
        &FULL
            .replace("t1 = 200.0\nt2 = 100.0", "t1 = 200.0\nt2 = 70.0")
            .replace(
                "[gates.cz]\nduration = 0.4\n",
                "[gates.cz]\nduration = 0.4\nbias = 7\n",
            )
            .replace(
                "idle = { t1 = 100.0, t2 = 60.0 }",
                "idle = { t1 = 100.0, t2 = 30.0 }",
            ),
    );
    let c = xzzx();
    let want = graph_of(&c, &NoiseSpec::parse(&edited).unwrap());
    let text = format!("{base} idle.t2=70 gates.cz.bias=7 override.0.idle.t2=30");
    assert_same_priors(&graph_of(&c, &NoiseSpec::parse(&text).unwrap()), &want);
    // Scaling applies after the keys are set.
    let both = format!("{edited} scale=2");
    let keys_then_scale =
        format!("{base} idle.t2=70 gates.cz.bias=7 override.0.idle.t2=30 scale=2");
    assert_same_priors(
        &graph_of(&c, &NoiseSpec::parse(&keys_then_scale).unwrap()),
        &graph_of(&c, &NoiseSpec::parse(&both).unwrap()),
    );
    let refused = |setting: &str| {
        let text = format!("{base} {setting}");
        let d = NoiseSpec::parse(&text).expect_err(setting);
        let (name, line, col) = d.location().unwrap();
        assert_eq!((name.as_str(), line), ("--noise", 1), "{setting}");
        assert_eq!(col, base.len() + 2, "{setting}: {}", d.message);
        (d.message, d.hint.unwrap_or_default())
    };
    let (msg, hint) = refused("idle.t3=5");
    assert_eq!(msg, "unknown key `t3` in `idle.t3`");
    assert_eq!(hint, "did you mean `t1`?");
    let (msg, hint) = refused("gates.cnot.duration=5");
    assert_eq!(msg, "unknown gate `cnot` in `gates.cnot.duration`");
    assert_eq!(hint, "did you mean `cx`?");
    let (msg, hint) = refused("idel.t2=5");
    assert_eq!(msg, "unknown model key `idel.t2`");
    assert_eq!(hint, "did you mean `idle`?");
    let (msg, _) = refused("override.3.idle.t2=5");
    assert!(
        msg.contains("the model has 1 `[[override]]` table"),
        "{msg}"
    );
    let (msg, _) = refused("scale.gate=2");
    assert_eq!(msg, "unknown kind `gate` in `scale.gate`");
    let (msg, _) = refused("scale=4000");
    assert!(msg.contains("more than 1"), "{msg}");
    let (msg, _) = refused("t2");
    assert_eq!(msg, "`t2` is not a setting of the model");
    // The reader's own checks apply to a set value, located in the edited model.
    let d = NoiseSpec::parse(&format!("{base} idle.t2=500")).unwrap_err();
    assert!(d.message.contains("is more than 2·`t1`"), "{}", d.message);
    // `p=` needs the model's top-level `p`.
    let bare = model_file(dir.path(), "bare.toml", "[gates.default]\np = 0.001\n");
    let d = NoiseSpec::parse(&format!("{bare} p=0.002")).unwrap_err();
    assert!(d.message.contains("has none"), "{}", d.message);
}

/// The flip probability a compiled circuit gives each reset (the channel after it) and each
/// measurement, in circuit order, with the basis.
fn spam_flips(c: &Circuit) -> (Vec<(Basis, f64)>, Vec<f64>) {
    let mut resets = Vec::new();
    let mut measures = Vec::new();
    for layer in &c.layers {
        let mut last_reset: Option<Basis> = None;
        for op in &layer.ops {
            match &op.kind {
                OpKind::Reset(b) => last_reset = Some(*b),
                OpKind::Noise(Channel::BitFlip(p) | Channel::Dephasing(p)) => {
                    if let Some(b) = last_reset.take() {
                        resets.push((b, *p));
                    }
                }
                OpKind::Measure { flip, .. } => measures.push(*flip),
                _ => last_reset = None,
            }
        }
    }
    (resets, measures)
}

/// Under a biased reset the z-basis preparation suffers only the X/Y part of the channel and the
/// x-basis preparation the Z/Y part (bias convention of "Ultrahigh error threshold for surface
/// codes with biased noise", PRL 120, 050505 (2018)); basis tables replace one basis.
#[test]
fn biased_resets_and_measurements_act_per_basis() {
    let c = load(
        "one.slant",
        "qubit c role data\nqubit t role data\nreset x c\nreset z t\nmeasure x c -> mc\nmeasure z t -> mt\n",
    );
    let m = model("p = 0.001\n[reset]\np = 0.0101\nbias = 100\n[measure]\nflip = 0.02\n[measure.z]\nflip = 1e-5\n");
    let out = compile(&c, &m).unwrap();
    let (resets, measures) = spam_flips(&out.circuit);
    // eta = 100: pX = pY = 0.0101/202 = 5e-5, pZ = 0.0101·100/101 = 0.01.
    assert_eq!(resets.len(), 2);
    assert_eq!(resets[0].0, Basis::X);
    assert!((resets[0].1 - (0.01 + 5e-5)).abs() < 1e-15, "{resets:?}");
    assert_eq!(resets[1].0, Basis::Z);
    assert!((resets[1].1 - 1e-4).abs() < 1e-15, "{resets:?}");
    assert_eq!(measures, vec![0.02, 1e-5]);
}

/// Idle noise from times needs the durations of the operations the circuit uses, and only
/// those: a circuit without measurements needs no measurement duration.
#[test]
fn durations_are_needed_only_where_used() {
    let m = model("p = 0.001\n[gates.default]\nduration = 1\n[reset]\nduration = 2\n[idle]\nt1 = 100\nt2 = 100\n");
    let no_measure = load(
        "prep.slant",
        "qubit a\nqubit b\nreset z a, b\ncx a b\nh a\n",
    );
    compile(&no_measure, &m).expect("no measurement, no measurement duration");
    let measured = load(
        "meas.slant",
        "qubit a\nqubit b\nreset z a, b\ncx a b\nmeasure z a -> m\nmeasure z b -> n\ndetector = m ^ n\n",
    );
    let errs = compile(&measured, &m).expect_err("measurement without duration");
    assert_eq!(errs.len(), 1, "one error per section");
    assert_eq!(
        errs[0].message,
        "the noise model `m.toml` gives no `duration` for `measure`"
    );
    assert_eq!(errs[0].location().unwrap(), ("meas.slant".into(), 5, 1));
    assert!(
        errs[0].hint.as_deref().unwrap().contains("`[measure.z]`"),
        "{:?}",
        errs[0].hint
    );
}
