//! Hardware noise models, the noise compiler and the bias report (gate implementations on their
//! own are in `implement.rs`).

use std::sync::Arc;

use crate::support::{load, slant, Runner};
use slant::analysis::analyze_bias as analyze;
use slant::base::{Gate, Pauli, Source};
use slant::faults::{ExtractOptions, FaultGraph};
use slant::gen::{generate, Entangler, Family, GenSpec};
use slant::ir::{Channel, Circuit};
use slant::noise::{apply, NoiseSpec};
use slant::noise::{compile, to_text};
use slant::noise::{effective_channel, Implementation};
use slant::noise::{twirled_decoherence, NoiseModel};

pub(crate) fn model(text: &str) -> Result<NoiseModel, slant::base::Diagnostic> {
    NoiseModel::parse(&Source::new("m.toml", text))
}

/// Each model text must be refused with a message containing the given words at line:col.
pub(crate) fn assert_refused(cases: &[(&str, &str, usize, usize)]) {
    for &(text, msg, line, col) in cases {
        let d = model(text).expect_err(text);
        assert!(d.message.contains(msg), "{text}: {}", d.message);
        let (_, l, c) = d.location().unwrap();
        assert_eq!((l, c), (line, col), "{text}: {}", d.message);
    }
}

fn idx(name: &str) -> usize {
    Pauli::pair_index(name).unwrap()
}

/// Edges as comparable tuples.
fn edges(g: &FaultGraph) -> Vec<(Vec<u32>, Vec<u32>, f64)> {
    g.edges
        .iter()
        .map(|m| (m.detectors.clone(), m.observables.clone(), m.probability))
        .collect()
}

fn assert_same_graph(a: &Circuit, b: &Circuit) {
    let (ga, gb) = (
        slant::faults::extract(a, &ExtractOptions::default()),
        slant::faults::extract(b, &ExtractOptions::default()),
    );
    let (ma, mb) = (edges(&ga), edges(&gb));
    assert_eq!(ma.len(), mb.len(), "edge counts differ");
    assert!(!ma.is_empty());
    for (x, y) in ma.iter().zip(&mb) {
        assert_eq!((&x.0, &x.1), (&y.0, &y.1));
        assert!(
            (x.2 - y.2).abs() < 1e-12 * x.2.max(1e-300) + 1e-18,
            "{x:?} vs {y:?}"
        );
    }
}

pub(crate) const ONE_CX: &str = "qubit c role data\nqubit t role data\nreset x c\nreset z t\ncx c t\nmeasure x c -> mc\nmeasure z t -> mt\n";

/// Two-level qubits, generic (rotation) CX, pure dephasing equally on both qubits: a control Z
/// stays Z-type, a target Z is Z-type with weight 3/8 + 3/8 (check values above), so the
/// residual Z-type share is (1 + 3/4)/2 = 7/8.
#[test]
fn rotation_cx_residual_z_share_is_seven_eighths() {
    let circuit = load("one.slant", ONE_CX);
    let m = model("[gates.cx]\nzi = 0.001\niz = 0.001\nimplementation = \"rotation\"\n[measure]\nflip = 0\n[reset]\np = 0\n")
        .unwrap();
    let compiled = compile(&circuit, &m).unwrap();
    let report = analyze(&compiled.circuit, &compiled.notes);
    let cx = report.classes.iter().find(|c| c.class == "cx").unwrap();
    assert!(
        (cx.output_z_share() - 7.0 / 8.0).abs() < 1e-9,
        "{}",
        cx.output_z_share()
    );
    assert!(cx.input_eta().is_infinite());
    // The mid-gate conversion is reported at the gate.
    assert!(report.converters[0].what.contains("mid-gate cx"));
    assert!(report.converters[0].location.starts_with("one.slant:5:"));
    // Direct check of the effective channel.
    let ch = effective_channel(
        Gate::Cx,
        Implementation::Rotation,
        &m.gates[0].1.rate.two().unwrap(),
    );
    let Channel::PairPauli(t) = ch else { panic!() };
    assert!((t[idx("IY") - 1] - 0.001 / 8.0).abs() < 1e-12);
}

fn xzzx(entangler: Entangler) -> Circuit {
    let mut spec = GenSpec::new(Family::Xzzx, 3);
    spec.rounds = 2;
    spec.entangler = Some(entangler);
    load("xzzx.slant", &generate(&spec).unwrap())
}

/// XZZX memory with CZ + bias-preserving CX keeps the bias; with Hadamards on the data
/// (`--entangler cx`) it is lost and the report names the Hadamards ("The XZZX surface code",
/// Nat. Commun. 12, 2172 (2021) for the code; the gate facts are the tests above).
#[test]
fn xzzx_bias_kept_with_native_gates_and_lost_with_hadamards() {
    let spec = NoiseSpec::parse("circuit p=0.001 bias=1000 cx=bias-preserving").unwrap();
    let NoiseSpec::Model(m) = &spec else {
        panic!("expected a model")
    };
    let native = xzzx(Entangler::Native);
    let c = compile(&native, m).unwrap();
    let r = analyze(&c.circuit, &c.notes);
    assert!(r.high_faults > 100);
    assert_eq!(r.converters, vec![], "{:?}", r.converters.first());
    assert_eq!(r.converted_probability, 0.0);
    assert_eq!(r.verdict(), "bias kept");
    for rb in &r.rounds {
        assert_eq!(rb.xy_from_high, 0.0);
    }

    let with_h = xzzx(Entangler::Cx);
    let c = compile(&with_h, m).unwrap();
    let r = analyze(&c.circuit, &c.notes);
    assert!(r.converted_probability > 0.0);
    assert_eq!(r.converters[0].what, "h", "{:?}", r.converters);
    assert!(
        r.verdict().starts_with("bias lost at xzzx.slant:"),
        "{}",
        r.verdict()
    );
    assert!(r.verdict().ends_with("(h)"));

    // Under pure Z code-capacity noise the XZZX graph is chains.
    let spec = NoiseSpec::parse("capacity p=0.01 bias=inf").unwrap();
    let noisy = apply(&native, &spec).unwrap();
    let r = analyze(&noisy, &[]);
    assert!(!r.components.is_empty());
    assert!(r.all_chains(), "{:?}", r.components);
    assert!((r.high_only_share - 1.0).abs() < 1e-12);
}

/// `compile` output, parsed back, gives the same fault graph as compiling on the fly.
#[test]
fn compiled_text_matches_on_the_fly() {
    let circuit = xzzx(Entangler::Cx);
    for spec in ["circuit p=0.001 bias=100 cx=rotation", "circuit p=0.002"] {
        let s = NoiseSpec::parse(spec).unwrap();
        let noisy = apply(&circuit, &s).unwrap();
        let text = to_text(&noisy, &[], &["test".into()]);
        let back = load("compiled.slant", &text);
        assert_same_graph(&noisy, &back);
    }
}

const PRESET_MODEL: &str =
    "p = 0.001\nbias = 10\n[idle]\n[gates.default]\n[gates.cx]\nimplementation = \"rotation\"\n";

/// A model file and a preset with the same meaning give the same fault graph.
#[test]
fn model_file_equals_preset() {
    let circuit = xzzx(Entangler::Native);
    let preset = apply(
        &circuit,
        &NoiseSpec::parse("circuit p=0.001 bias=10 cx=rotation").unwrap(),
    )
    .unwrap();
    let m = compile(&circuit, &model(PRESET_MODEL).unwrap()).unwrap();
    assert_same_graph(&preset, &m.circuit);
    let ideal = apply(
        &circuit,
        &NoiseSpec::parse("circuit p=0.001 bias=10").unwrap(),
    )
    .unwrap();
    let m = compile(
        &circuit,
        &model("p = 0.001\nbias = 10\n[idle]\n[gates.default]\n").unwrap(),
    )
    .unwrap();
    assert_same_graph(&ideal, &m.circuit);
}

/// Bad model files are rejected at file:line:col.
#[test]
fn bad_models_are_located() {
    let cases: &[(&str, &str, usize, usize)] = &[
        (
            "p = 0.1\n[gates.cx]\nduraton = 3\n",
            "unknown key `duraton`",
            3,
            1,
        ),
        ("p = 1.5\n", "outside [0, 1]", 1, 5),
        ("[idle]\nt1 = 10\nt2 = 30\n", "more than 2", 3, 6),
        ("[gates.cxx]\np = 0.1\n", "unknown gate `cxx`", 1, 8),
        (
            "[gates.cx]\nimplementation = \"rotaton\"\n",
            "unknown implementation",
            2,
            18,
        ),
        ("[gates.h]\nduration = 1\n", "no error rate", 1, 1),
        ("p = = 3\n", "invalid TOML", 1, 5),
    ];
    assert_refused(cases);
    let d = model("p = 0.1\n[gates.cx]\nduraton = 3\n").unwrap_err();
    assert_eq!(d.hint.as_deref(), Some("did you mean `duration`?"));
    // Missing gate: reported at the circuit's gate when compiling.
    let circuit = load("one.slant", ONE_CX);
    let errs = compile(&circuit, &model("p = 0.01\n[gates.h]\n").unwrap()).unwrap_err();
    assert!(errs[0].message.contains("no noise for gate `cx`"));
    assert_eq!(errs[0].location().unwrap().1, 5);
}

/// Overrides: ancillas worse than data; T1/T2 idle noise follows the layer duration.
#[test]
fn overrides_and_timed_idle() {
    let text = "p = 0.001\n[gates.default]\nduration = 1\n[measure]\nduration = 10\n[reset]\nduration = 10\n\
[idle]\nt1 = 100\nt2 = 100\n[[override]]\nrole = \"ancilla\"\nidle = { t1 = 50, t2 = 20 }\n";
    let m = model(text).unwrap();
    let circuit = load(
        "t.slant",
        "qubit d role data\nqubit a role ancilla\nqubit e role data\nreset z d, a, e\nlayer { cx d a }\nlayer { measure z a -> m }\n",
    );
    let c = compile(&circuit, &m).unwrap();
    let idle: Vec<_> = c.notes.iter().filter(|n| n.class == "idle").collect();
    // Layer 2 (cx, duration 1): only e idles with T1 = T2 = 100.
    let l = &c.circuit.layers[1];
    let op = &l.ops[idle[0].op];
    assert_eq!(op.targets, vec![2]);
    let (px, _, pz) = twirled_decoherence(1.0, 100.0, 100.0);
    assert_eq!(
        op.kind,
        slant::ir::OpKind::Noise(Channel::Pauli { px, py: px, pz })
    );
    // Layer 3 (measurement, duration 10): d and e idle with the data times.
    let l = &c.circuit.layers[2];
    let last = l.ops.last().unwrap();
    assert_eq!(last.targets, vec![0, 2]);
    let (px, _, pz) = twirled_decoherence(10.0, 100.0, 100.0);
    assert_eq!(
        last.kind,
        slant::ir::OpKind::Noise(Channel::Pauli { px, py: px, pz })
    );
    // Ancilla override applies when the ancilla idles (it never does here, so check the lookup).
    let q = &circuit.qubits[1];
    assert_eq!(
        m.idle_for(q).channel(1.0),
        Some(Channel::Pauli {
            px: twirled_decoherence(1.0, 50.0, 20.0).0,
            py: twirled_decoherence(1.0, 50.0, 20.0).1,
            pz: twirled_decoherence(1.0, 50.0, 20.0).2,
        })
    );
    let _ = Arc::strong_count(&circuit.source);
}

/// Every shipped model parses and compiles onto a generated circuit.
#[test]
fn shipped_models_compile() {
    let dir = concat!(env!("CARGO_MANIFEST_DIR"), "/circuits/models");
    let circuit = xzzx(Entangler::Native);
    let mut n = 0;
    for e in std::fs::read_dir(dir).unwrap() {
        let p = e.unwrap().path();
        if p.extension().is_some_and(|x| x == "toml") {
            let text = std::fs::read_to_string(&p).unwrap();
            let m = NoiseModel::parse(&Source::new(p.display().to_string(), text))
                .unwrap_or_else(|d| panic!("{}", d.render()));
            compile(&circuit, &m).unwrap_or_else(|d| panic!("{}", d[0].render()));
            n += 1;
        }
    }
    assert!(n >= 2);
}

/// The CLI: `compile` writes a file that `check` accepts; `bias` exits 0 with a verdict.
#[test]
fn cli_compile_and_bias() {
    let dir = tempfile::tempdir().unwrap();
    let src = dir.path().join("one.slant");
    std::fs::write(&src, ONE_CX).unwrap();
    let out = dir.path().join("out.slant");
    let st = slant()
        .args([
            "compile",
            src.to_str().unwrap(),
            "--noise",
            "circuit p=0.01 cx=rotation",
            "-o",
            out.to_str().unwrap(),
        ])
        .run();
    assert!(
        st.status.success(),
        "{}",
        String::from_utf8_lossy(&st.stderr)
    );
    let text = std::fs::read_to_string(&out).unwrap();
    assert!(
        text.lines()
            .any(|l| l.trim_start().starts_with("noise pauli ") && l.contains(" zz="))
            && text.contains("# --noise after `cx` (rotation)"),
        "{text}"
    );
    let st = slant().args(["check", out.to_str().unwrap()]).run();
    assert!(
        st.status.success(),
        "{}",
        String::from_utf8_lossy(&st.stderr)
    );
    let st = slant()
        .args([
            "bias",
            src.to_str().unwrap(),
            "--noise",
            "circuit p=0.01 bias=100 cx=rotation",
        ])
        .run();
    // A lost bias is a "no": exit 3, after the whole report.
    assert_eq!(st.status.code(), Some(3));
    let stdout = String::from_utf8_lossy(&st.stdout);
    assert!(stdout.contains("verdict: bias lost at"), "{stdout}");
}

/// An override whose role is close to one the circuit declares is a typo, refused at its
/// selector value; a qubit the circuit lacks, or a role it does not use, is skipped with a located
/// warning (one chip model serves circuits of every size); the CLI exits 1 only on the error.
#[test]
fn unmatched_overrides_are_located() {
    let circuit = load("one.slant", ONE_CX);
    let cases: &[(&str, &str, usize, usize, Option<&str>)] = &[(
        "p = 0.01\n[gates.default]\n\n[[override]]\n  role   =   \"dta\"\nidle = { p = 0.1 }\n",
        "has no role `dta`",
        5,
        14,
        Some("did you mean `data`?"),
    )];
    for &(text, msg, line, col, hint) in cases {
        let m = model(text).unwrap();
        let errs = compile(&circuit, &m).expect_err(text);
        assert_eq!(errs.len(), 1, "{text}");
        assert!(errs[0].message.contains(msg), "{text}: {}", errs[0].message);
        assert_eq!(
            errs[0].location().unwrap(),
            ("m.toml".to_string(), line, col),
            "{text}"
        );
        if let Some(h) = hint {
            assert_eq!(errs[0].hint.as_deref(), Some(h), "{text}");
        }
    }
    // A qubit the circuit lacks is skipped with a located warning.
    let lacking =
        "p = 0.01\n[gates.default]\n[[override]]\nqubit = \"zz[9]\"\nmeasure = { flip = 0.1 }\n";
    let compiled = compile(&circuit, &model(lacking).unwrap()).expect("a warning only");
    assert_eq!(compiled.warnings.len(), 1);
    let w = &compiled.warnings[0];
    assert!(w.message.contains("has no qubit `zz[9]`"), "{}", w.message);
    assert!(
        w.message.ends_with("the override is skipped"),
        "{}",
        w.message
    );
    assert_eq!(w.location().unwrap(), ("m.toml".to_string(), 4, 9));
    // A role the circuit does not use at all is skipped with a located warning: one hardware
    // model serves circuits with and without ancillas.
    let unused = "p = 0.01\n[gates.default]\n[[override]]\nrole = \"nosuchrole\"\nmeasure = { flip = 0.1 }\n";
    let compiled = compile(&circuit, &model(unused).unwrap()).expect("a warning only");
    assert_eq!(compiled.warnings.len(), 1);
    let w = &compiled.warnings[0];
    assert!(
        w.message.contains("has no role `nosuchrole`"),
        "{}",
        w.message
    );
    assert_eq!(w.location().unwrap(), ("m.toml".to_string(), 4, 8));
    assert_eq!(w.hint.as_deref(), Some("the circuit's roles are `data`"));
    // The same through the binary: located at the file, exit code 1.
    let dir = tempfile::tempdir().unwrap();
    let src = dir.path().join("one.slant");
    std::fs::write(&src, ONE_CX).unwrap();
    let m = dir.path().join("m.toml");
    let bias = || {
        slant()
            .args([
                "bias",
                src.to_str().unwrap(),
                "--noise",
                m.to_str().unwrap(),
            ])
            .run()
    };
    std::fs::write(&m, cases[0].0).unwrap();
    let st = bias();
    assert_eq!(st.status.code(), Some(1));
    let stderr = String::from_utf8_lossy(&st.stderr);
    assert!(
        stderr.contains(&format!("{}:5:14", m.display())),
        "{stderr}"
    );
    std::fs::write(&m, unused).unwrap();
    let st = bias();
    assert_eq!(st.status.code(), Some(0));
    let stderr = String::from_utf8_lossy(&st.stderr);
    assert!(
        stderr.contains("warning: this override matches no qubit"),
        "{stderr}"
    );
    assert!(stderr.contains(&format!("{}:4:8", m.display())), "{stderr}");
}

/// A qubit name written with spaces, as in the source, selects the same qubit as the printed
/// form; a name that is not one is refused at the value.
#[test]
fn override_qubit_names_are_normalised() {
    let circuit = load(
        "grid.slant",
        "qubit a[0..2, 0..3] role data\nlayer { reset z a[0..2, 0..3] }\nlayer { measure z a[1, 2] -> m }\n",
    );
    let q = circuit
        .qubits
        .iter()
        .find(|q| q.name == "a[1,2]")
        .expect("the expander names the qubit `a[1,2]`");
    for written in ["a[1,2]", "a[1, 2]", " a[ 1 ,2 ] ", "a [1,\t2]", "a[01, +2]"] {
        let text = format!(
            "p = 0.01\n[gates.default]\n[[override]]\nqubit = \"{written}\"\nmeasure = {{ flip = 0.25 }}\n"
        );
        let m = model(&text).unwrap_or_else(|d| panic!("{written}: {}", d.render()));
        assert_eq!(m.measure_for(&[q]).p, 0.25, "{written}");
        assert_eq!(m.measure_for(&[&circuit.qubits[0]]).p, 0.01, "{written}");
        compile(&circuit, &m).unwrap_or_else(|d| panic!("{written}: {}", d[0].render()));
    }
    for bad in ["a[1 2]", "a[1,]", "a[x]", "1a", "a[1"] {
        let text = format!("[[override]]\nqubit = \"{bad}\"\n");
        let d = model(&text).expect_err(bad);
        assert!(
            d.message.contains("is not a qubit name"),
            "{bad}: {}",
            d.message
        );
        let (_, line, col) = d.location().unwrap();
        assert_eq!((line, col), (2, 9), "{bad}");
    }
}

/// `time_unit` names one of a few units and is shown in the compiled comments; anything else is
/// refused at the value instead of being ignored.
#[test]
fn time_unit_is_checked_and_shown() {
    for unit in ["s", "ms", "us", "ns"] {
        let m = model(&format!("time_unit = \"{unit}\"\np = 0.01\n")).unwrap();
        assert_eq!(m.time_unit, Some(unit));
    }
    assert_eq!(model("p = 0.01\n").unwrap().time_unit, None);
    let cases: &[(&str, &str, usize, usize)] = &[
        (
            "p = 0.01\ntime_unit = \"hours\"\n",
            "unknown time unit `hours`",
            2,
            13,
        ),
        ("time_unit = \"µs\"\n", "unknown time unit `µs`", 1, 13),
        ("time_unit = 5\n", "`time_unit` must be a string", 1, 13),
    ];
    assert_refused(cases);
    // The unit appears next to the layer duration in the idle comments.
    let m = model(
        "time_unit = \"ns\"\np = 0.001\n[gates.default]\nduration = 20\n[measure]\nduration = 300\n\
[reset]\nduration = 100\n[idle]\nt1 = 1000\nt2 = 1000\n",
    )
    .unwrap();
    let c = compile(&load("one.slant", ONE_CX), &m).unwrap();
    let idle: Vec<&str> = c
        .notes
        .iter()
        .filter(|n| n.class == "idle")
        .map(|n| n.text.as_str())
        .collect();
    assert!(idle.contains(&"m.toml idle for 300 ns"), "{idle:?}");
}

/// A `--noise` value that looks like a path but names no file says so, instead of calling it an
/// unknown preset; preset typos still get the preset hint.
#[test]
fn missing_model_file_is_named() {
    let dir = tempfile::tempdir().unwrap();
    let gone = dir.path().join("gone.toml");
    let no_ext = dir.path().join("model");
    for text in [
        gone.to_str().unwrap().to_string(),
        no_ext.to_str().unwrap().to_string(),
        "models/cat".to_string(),
        "  cat.toml".to_string(),
    ] {
        let d = NoiseSpec::parse(&text).expect_err(&text);
        let name = text.trim();
        assert_eq!(
            d.message,
            format!("the noise model file `{name}` does not exist"),
            "{text}"
        );
        assert_eq!(
            d.location().unwrap(),
            ("--noise".to_string(), 1, text.find(name).unwrap() + 1)
        );
        assert!(d.hint.as_deref().unwrap().contains("path of a model file"));
    }
    let d = NoiseSpec::parse("circiut p=0.1").unwrap_err();
    assert!(d.message.contains("unknown noise preset"), "{}", d.message);
    // Through the binary: exit 1 with the message.
    let src = dir.path().join("one.slant");
    std::fs::write(&src, ONE_CX).unwrap();
    let st = slant()
        .args(["bias", src.to_str().unwrap(), "--noise", "models/cat"])
        .run();
    assert_eq!(st.status.code(), Some(1));
    let stderr = String::from_utf8_lossy(&st.stderr);
    assert!(
        stderr.contains("the noise model file `models/cat` does not exist"),
        "{stderr}"
    );
}

/// Bias-report classes name what produced a channel the same way whether the noise came from a
/// plain preset, a preset with a gate implementation or a model file: idle noise is `idle`
/// everywhere, and `noise` is left for channels written in the circuit.
#[test]
fn bias_classes_agree_between_presets_and_models() {
    // `s` idles in the cx layer; the circuit's own channel on `s` has a layer to itself.
    let text = "qubit c role data\nqubit t role data\nqubit s role data\nreset z c, t, s\n\
layer { cx c t }\nlayer { noise dephasing p=0.01 s }\nmeasure z c -> a, z t -> b, z s -> e\n";
    let circuit = load("idle.slant", text);
    let classes = |spec: &str| -> Vec<String> {
        let s = NoiseSpec::parse(spec).unwrap();
        let c = slant::noise::apply_noted(&circuit, &s).unwrap();
        let mut v: Vec<String> = analyze(&c.circuit, &c.notes)
            .classes
            .into_iter()
            .map(|c| c.class)
            .collect();
        v.sort();
        v
    };
    let expected = ["cx", "idle", "noise", "reset"];
    assert_eq!(classes("circuit p=0.01 bias=10"), expected);
    assert_eq!(classes("circuit p=0.01 bias=10 cx=rotation"), expected);
    assert_eq!(
        classes("circuit p=0.01 bias=10 cx=bias-preserving"),
        expected
    );
    let m = compile(
        &circuit,
        &model("p = 0.01\nbias = 10\n[idle]\n[gates.default]\n").unwrap(),
    )
    .unwrap();
    let mut v: Vec<String> = analyze(&m.circuit, &m.notes)
        .classes
        .into_iter()
        .map(|c| c.class)
        .collect();
    v.sort();
    assert_eq!(v, expected);
    // The idle class carries the same probabilities either way.
    let idle = |notes_from: &str| {
        let s = NoiseSpec::parse(notes_from).unwrap();
        let c = slant::noise::apply_noted(&circuit, &s).unwrap();
        let r = analyze(&c.circuit, &c.notes);
        let i = r.classes.iter().find(|c| c.class == "idle").unwrap();
        (i.input_high, i.input_low)
    };
    let (a, b) = (
        idle("circuit p=0.01 bias=10"),
        idle("circuit p=0.01 bias=10 cx=rotation"),
    );
    assert!(
        (a.0 - b.0).abs() < 1e-15 && (a.1 - b.1).abs() < 1e-15,
        "{a:?} {b:?}"
    );
    // Code-capacity noise is its own class.
    let s = NoiseSpec::parse("capacity p=0.01").unwrap();
    let c = slant::noise::apply_noted(&xzzx(Entangler::Native), &s).unwrap();
    let r = analyze(&c.circuit, &c.notes);
    let names: Vec<&str> = r.classes.iter().map(|c| c.class.as_str()).collect();
    assert_eq!(names, ["round-start"]);
}

/// Without `round` blocks the per-round section says why it is empty; without a `data` role the
/// report says every qubit counted as data. Neither line appears when the circuit has both.
#[test]
fn bias_report_explains_missing_rounds_and_data() {
    let dir = tempfile::tempdir().unwrap();
    let run = |name: &str, text: &str| -> String {
        let src = dir.path().join(name);
        std::fs::write(&src, text).unwrap();
        let st = slant()
            .args([
                "bias",
                src.to_str().unwrap(),
                "--noise",
                "circuit p=0.01 bias=10",
            ])
            .run();
        assert!(
            st.status.success(),
            "{}",
            String::from_utf8_lossy(&st.stderr)
        );
        String::from_utf8(st.stdout).unwrap()
    };
    let no_rounds =
        "effective bias at the data per round: not reported, the circuit has no `round { }` blocks";
    let no_data = "note: the circuit declares no `data` role, so every qubit is counted as data";
    let plain = run(
        "plain.slant",
        "qubit c\nqubit t\nreset x c\nreset z t\ncx c t\nmeasure x c -> mc\nmeasure z t -> mt\n",
    );
    assert!(plain.contains(no_rounds), "{plain}");
    assert!(plain.contains(no_data), "{plain}");
    assert!(!plain.contains("(eta = pZ / pX,Y):"), "{plain}");
    let with_data = run("data.slant", ONE_CX);
    assert!(with_data.contains(no_rounds), "{with_data}");
    assert!(!with_data.contains(no_data), "{with_data}");
    let generated = run(
        "xzzx.slant",
        &generate(&{
            let mut spec = GenSpec::new(Family::Xzzx, 3);
            spec.rounds = 2;
            spec
        })
        .unwrap(),
    );
    assert!(!generated.contains(no_rounds) && !generated.contains(no_data));
    assert!(generated.contains("  round 1 "), "{generated}");
    // Edges but none high-rate-only (a bit-flip code under biased noise): the share is
    // printed as zero, not as a negative zero.
    let repetition = run(
        "repetition.slant",
        include_str!("../circuits/repetition_d3.slant"),
    );
    assert!(
        repetition.contains("high-rate-only edges: 0.0000\n"),
        "{repetition}"
    );
    // The value itself is a positive zero (the JSON prints it; `f64::max` with a negative zero
    // depends on the optimisation level, so the text alone cannot be trusted to catch it).
    let c = load(
        "repetition.slant",
        include_str!("../circuits/repetition_d3.slant"),
    );
    let n = slant::noise::apply_noted(&c, &NoiseSpec::parse("circuit p=0.01 bias=10").unwrap())
        .unwrap();
    let share = analyze(&n.circuit, &n.notes).high_only_share;
    assert!(share == 0.0 && share.is_sign_positive(), "{share:?}");
    // The JSON carries the same facts.
    let c = load(
        "plain.slant",
        "qubit c\nqubit t\nreset x c\nreset z t\ncx c t\nmeasure x c -> mc\nmeasure z t -> mt\n",
    );
    let s = NoiseSpec::parse("circuit p=0.01").unwrap();
    let n = slant::noise::apply_noted(&c, &s).unwrap();
    let r = analyze(&n.circuit, &n.notes);
    assert!(r.all_qubits_data);
    assert_eq!(r.circuit_rounds, 0);
}

/// Every shipped model compiles onto every bundled circuit (overrides for roles a circuit does
/// not use are skipped with a warning, never an error), and the result still passes the checks.
#[test]
fn shipped_models_compile_onto_every_bundled_circuit() {
    let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("circuits");
    let files = |dir: &std::path::Path, ext: &str| {
        let mut v: Vec<std::path::PathBuf> = std::fs::read_dir(dir)
            .unwrap()
            .flatten()
            .map(|e| e.path())
            .filter(|p| p.extension().is_some_and(|e| e == ext))
            .collect();
        v.sort();
        v
    };
    let models = files(&root.join("models"), "toml");
    let circuits = files(&root, "slant");
    assert!(!models.is_empty() && !circuits.is_empty());
    for m in &models {
        let text = std::fs::read_to_string(m).unwrap();
        let model = NoiseModel::parse(&Source::new(m.display().to_string(), text)).unwrap();
        for c in &circuits {
            let circuit = load(
                &c.display().to_string(),
                &std::fs::read_to_string(c).unwrap(),
            );
            let compiled = compile(&circuit, &model).unwrap_or_else(|e| {
                panic!("{} on {}: {}", m.display(), c.display(), e[0].render())
            });
            assert!(
                compiled.warnings.iter().all(
                    |w| w.message.contains("has no role") || w.message.contains("has no qubit")
                ),
                "{} on {}",
                m.display(),
                c.display()
            );
            let text = to_text(&compiled.circuit, &compiled.notes, &[]);
            slant::ir::load_source(&Source::new("compiled.slant", text), &[]).unwrap_or_else(|e| {
                panic!("{} on {}: {}", m.display(), c.display(), e[0].render())
            });
        }
    }
}

/// Every subcommand that writes a model file into a circuit shows the model's warnings, and the
/// same way: `compare` (which once printed none) says exactly what `distance` says.
#[test]
fn model_warnings_are_shown_by_every_study() {
    let dir = tempfile::tempdir().unwrap();
    let m = dir.path().join("m.toml");
    std::fs::write(
        &m,
        "p = 0.001\n[gates.default]\n[[override]]\nrole = \"nosuchrole\"\nmeasure = { flip = 0.1 }\n",
    )
    .unwrap();
    let m = m.to_str().unwrap();
    let circuit = concat!(env!("CARGO_MANIFEST_DIR"), "/circuits/repetition_d3.slant");
    let stderr = |args: &[&str]| -> String {
        let out = slant().args(args).run();
        assert!(
            out.status.success(),
            "{args:?}: {}",
            String::from_utf8_lossy(&out.stderr)
        );
        String::from_utf8(out.stderr).unwrap()
    };
    let distance = stderr(&["distance", circuit, "--noise", m]);
    assert!(
        distance.starts_with("warning: this override matches no qubit"),
        "{distance}"
    );
    assert!(distance.contains(&format!("{m}:4:8")), "{distance}");
    assert_eq!(distance.matches("warning:").count(), 1, "{distance}");
    let others: [&[&str]; 7] = [
        &["compare", circuit, "--noise", m],
        &["bias", circuit, "--noise", m],
        &["compile", circuit, "--noise", m],
        &["graph", circuit, "--noise", m, "--format", "text"],
        &["trace", circuit, "--noise", m, "--edge", "0"],
        &["estimate", circuit, "--noise", m, "--shots", "64"],
        &[
            "shots", circuit, "--noise", m, "--shots", "4", "--format", "bits",
        ],
    ];
    for args in others {
        assert_eq!(stderr(args), distance, "{args:?}");
    }
}
