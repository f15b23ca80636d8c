//! Device models in studies: biased and per-basis resets and measurements, durations only where
//! used, and settings after a model file (scales, `p=`, model keys by path).

use crate::support::{load, slant, Runner};
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

/// A small cat-like model for end-to-end runs (scaled by the sweeps' and compares' `p`).
const CAT: &str = "p = 0.001\nbias = 100\ntime_unit = \"us\"\n\
[gates.default]\nduration = 0.1\n\
[gates.cx]\nduration = 0.5\np = 0.002\nimplementation = \"bias-preserving\"\n\
[gates.cz]\nduration = 0.5\np = 0.002\n\
[measure]\nduration = 1.0\nflip = 0.002\nbias = 100\n\
[reset]\nduration = 1.0\np = 0.001\nbias = 100\n\
[idle]\nt_bitflip = 1e6\nt2 = 500.0\n";

/// `(task, chunk, shots, failures)` of every row of a store, sorted.
fn store_table(path: &std::path::Path) -> Vec<(String, u64, u64, u64)> {
    let mut t: Vec<_> = slant::study::read_store(path)
        .unwrap()
        .into_iter()
        .map(|r| (r.task, r.chunk, r.shots, r.failures))
        .collect();
    t.sort();
    t
}

/// `(stdout, stderr)` of a run that must succeed.
fn ok(cmd: &mut std::process::Command) -> (String, String) {
    let out = cmd.run();
    let (code, stdout, stderr) = crate::support::parts(&out);
    assert_eq!(code, 0, "{stderr}");
    (stdout, stderr)
}

/// A sweep on a model file (path relative to the spec) with a varied model key runs, resumes
/// (saying which tasks it skipped), shards and merges to the single run's store, and plots
/// the threshold against the varied key.
#[test]
fn model_sweep_resumes_merges_and_plots_against_the_varied_key() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::create_dir(dir.path().join("models")).unwrap();
    model_file(&dir.path().join("models"), "cat.toml", CAT);
    let spec = dir.path().join("spec.toml");
    std::fs::write(
        &spec,
        "shots = 3000\nchunk = 1000\n[[grid]]\nlabel = \"xzzx cat\"\nfamily = \"xzzx\"\n\
         basis = \"x\"\ndistances = [3, 5]\nnoise = \"models/cat.toml\"\np = [0.01, 0.03]\n\
         [grid.vary]\n\"bias,reset.bias,measure.bias\" = [10, 1000]\n",
    )
    .unwrap();
    let sweep = |store: &str, extra: &[&str]| {
        ok(slant()
            .current_dir(dir.path())
            .args(["sweep", "spec.toml", "--store", store, "--jobs", "1"])
            .args(extra))
    };
    sweep("whole.jsonl", &[]);
    let whole = store_table(&dir.path().join("whole.jsonl"));
    assert_eq!(
        whole.len(),
        8 * 3,
        "2 biases × 2 distances × 2 p, 3 chunks each"
    );
    // The varied keys are part of the task key.
    assert!(whole.iter().any(|r| r.0.contains("reset.bias=1000")));

    // Shard 1 of 2, then the whole spec on the same store: the shard's tasks are skipped.
    sweep("resumed.jsonl", &["--shard", "1/2"]);
    std::fs::copy(
        dir.path().join("resumed.jsonl"),
        dir.path().join("s1.jsonl"),
    )
    .unwrap();
    let (_, stderr) = sweep("resumed.jsonl", &[]);
    assert!(
        stderr.contains("skipped 4 of 8 tasks, complete in `resumed.jsonl`"),
        "{stderr}"
    );
    assert_eq!(stderr.matches("  skipped task ").count(), 4, "{stderr}");
    assert_eq!(store_table(&dir.path().join("resumed.jsonl")), whole);

    // Shards merge to the single run's store.
    sweep("s2.jsonl", &["--shard", "2/2"]);
    ok(slant().current_dir(dir.path()).args([
        "merge",
        "s1.jsonl",
        "s2.jsonl",
        "-o",
        "merged.jsonl",
    ]));
    assert_eq!(store_table(&dir.path().join("merged.jsonl")), whole);

    // Plots: one panel per bias, and the threshold against the varied key.
    let (stdout, _) = ok(slant().current_dir(dir.path()).args([
        "plot",
        "merged.jsonl",
        "-o",
        "rates.svg",
        "--summary",
        "summary.png",
    ]));
    assert!(
        stdout.contains("threshold against bias,reset.bias,measure.bias"),
        "{stdout}"
    );
    let svg = std::fs::read_to_string(dir.path().join("rates.svg")).unwrap();
    assert!(svg.contains("physical error per operation"), "model x axis");
    assert!(svg.contains("bias &amp; reset.bias &amp; measure.bias = 1000"));
    let png = std::fs::read(dir.path().join("summary.png")).unwrap();
    assert_eq!(&png[1..4], b"PNG");
}

/// `compare --p` on a model file scales it to each physical error per operation: the counts
/// equal those of `estimate` on the model written scaled by hand (same seed); a model without
/// a top-level `p` has no reference to scale from and is refused.
#[test]
fn compare_p_scales_a_model_file() {
    let dir = tempfile::tempdir().unwrap();
    let m = model_file(dir.path(), "cat.toml", CAT);
    let scaled = model_file(
        dir.path(),
        "cat10.toml",
        &CAT.replace("p = 0.001\n", "p = 0.01\n")
            .replace("p = 0.002\n", "p = 0.02\n")
            .replace("flip = 0.002\n", "flip = 0.02\n")
            .replace("t_bitflip = 1e6\nt2 = 500.0", "t_bitflip = 1e5\nt2 = 50.0"),
    );
    let circuit = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/circuits/xzzx_d3_hook_safe.slant"
    );
    let (cmp, _) = ok(slant().args([
        "compare", circuit, "--noise", &m, "--p", "0.01", "--shots", "3000", "--seed", "7",
        "--json",
    ]));
    let cmp: serde_json::Value = serde_json::from_str(&cmp).unwrap();
    let (est, _) = ok(slant().args([
        "estimate", circuit, "--noise", &scaled, "--shots", "3000", "--seed", "7", "--json",
    ]));
    let est: serde_json::Value = serde_json::from_str(&est).unwrap();
    let rate = &cmp["rows"][0]["rates"][0];
    assert!(est["failures"].as_u64().unwrap() > 0);
    assert_eq!(rate["failures"], est["failures"], "{rate} vs {est}");
    assert_eq!(rate["shots"], est["shots"]);

    let bare = model_file(
        dir.path(),
        "bare.toml",
        &CAT.replacen("p = 0.001\nbias", "bias", 1)
            .replace("duration = 0.1\n", "duration = 0.1\np = 0.001\n"),
    );
    let out = slant()
        .args(["compare", circuit, "--noise", &bare, "--p", "0.01"])
        .run();
    let (code, _, stderr) = crate::support::parts(&out);
    assert_eq!(code, 1, "{stderr}");
    assert!(stderr.contains("top-level `p`"), "{stderr}");
}

/// Long commands draw no progress line when standard error is not a terminal (a log or a pipe
/// stays clean), and do draw one, with the rate, the failures and an ETA, on a terminal (run
/// under `script`, which gives the command a pseudo-terminal, where it is installed).
#[test]
fn progress_is_drawn_only_on_a_terminal() {
    let dir = tempfile::tempdir().unwrap();
    let circuit = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/circuits/surface_d3_hook_safe.slant"
    );
    let spec = dir.path().join("spec.toml");
    std::fs::write(
        &spec,
        "shots = 8192\nchunk = 4096\n[[grid]]\nfamily = \"repetition\"\ndistances = [3]\n\
         noise = \"phenomenological\"\np = [0.05]\n",
    )
    .unwrap();
    let store = dir.path().join("s.jsonl");
    let noise = ["--noise", "circuit p=0.005"];
    let runs: Vec<Vec<&str>> = vec![
        [&["estimate", circuit, "--shots", "20000"][..], &noise].concat(),
        [
            &["shots", circuit, "--shots", "20000", "--format", "bits"][..],
            &noise,
        ]
        .concat(),
        [&["distance", circuit][..], &noise].concat(),
        [&["graph", circuit, "--format", "json"][..], &noise].concat(),
        [
            &[
                "compare",
                "--family",
                "repetition",
                "--vary",
                "distance=3,5",
            ][..],
            &[
                "--noise",
                "circuit p=0.01",
                "--p",
                "0.01",
                "--shots",
                "8192",
            ],
        ]
        .concat(),
        vec![
            "sweep",
            spec.to_str().unwrap(),
            "--store",
            store.to_str().unwrap(),
        ],
    ];
    for args in &runs {
        let (_, stderr) = ok(slant().args(args));
        assert!(
            !stderr.contains('\r') && !stderr.contains('\u{1b}') && !stderr.contains("eta "),
            "{args:?} drew progress into a pipe: {stderr:?}"
        );
    }
    let script = std::path::Path::new("/usr/bin/script");
    if !script.exists() {
        eprintln!("no `script` here: the terminal half of this test is skipped");
        return;
    }
    let command = format!(
        "{} estimate {circuit} --noise 'circuit p=0.005' --shots 40000 > /dev/null",
        env!("CARGO_BIN_EXE_slant")
    );
    let typescript = dir.path().join("typescript");
    let out = std::process::Command::new(script)
        .args(["-qec", &command])
        .arg(&typescript)
        .stdin(std::process::Stdio::null())
        .output()
        .unwrap();
    assert!(out.status.success(), "{out:?}");
    let seen = std::fs::read_to_string(&typescript).unwrap();
    assert!(
        seen.contains("/40,000 shots, ") && seen.contains("/s, eta ") && seen.contains(" failures"),
        "{seen}"
    );
}

/// The cluster recipe's driver (`scripts/cluster/local.sh`: the job array's `shard.sh` for
/// every shard as background processes, then `merge.sh`) ends with the store a single run
/// writes.
#[test]
fn cluster_driver_run_locally_merges_to_the_single_run() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(
        dir.path().join("spec.toml"),
        "shots = 6000\nchunk = 2000\n[[grid]]\nfamily = \"repetition\"\nflip = \"z\"\n\
         distances = [3, 5]\nnoise = \"phenomenological\"\np = [0.05, 0.08]\nbias = [inf]\n",
    )
    .unwrap();
    ok(slant()
        .current_dir(dir.path())
        .args(["sweep", "spec.toml", "--store", "single.jsonl"]));
    let script = concat!(env!("CARGO_MANIFEST_DIR"), "/scripts/cluster/local.sh");
    let out = std::process::Command::new("bash")
        .args([script, "spec.toml", "res", "3"])
        .current_dir(dir.path())
        .env("SLANT", env!("CARGO_BIN_EXE_slant"))
        .stdin(std::process::Stdio::null())
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    for k in 1..=3 {
        assert!(dir.path().join(format!("res.{k}.jsonl")).exists());
    }
    let single = store_table(&dir.path().join("single.jsonl"));
    assert_eq!(single.len(), 4 * 3);
    assert_eq!(store_table(&dir.path().join("res.jsonl")), single);
}

/// A model's warnings about a circuit reach the user of a sweep too (each text once, however
/// many tasks share it), and do not stop the sweep: an override naming a qubit the generated
/// circuits lack.
#[test]
fn model_warnings_reach_a_sweep_once() {
    let dir = tempfile::tempdir().unwrap();
    let model = format!(
        "{CAT}[[override]]\nqubit = \"chip[7]\"\nidle = {{ t_bitflip = 1e6, t2 = 20.0 }}\n"
    );
    model_file(dir.path(), "chip.toml", &model);
    std::fs::write(
        dir.path().join("spec.toml"),
        "shots = 500\nchunk = 500\n[[grid]]\nfamily = \"repetition\"\ndistances = [3, 5]\n\
         noise = \"chip.toml\"\np = [0.01, 0.02]\n",
    )
    .unwrap();
    let (_, stderr) = ok(slant().current_dir(dir.path()).args([
        "sweep",
        "spec.toml",
        "--store",
        "s.jsonl",
        "--jobs",
        "1",
    ]));
    assert_eq!(
        stderr.matches("this override matches no qubit").count(),
        1,
        "{stderr}"
    );
    assert_eq!(store_table(&dir.path().join("s.jsonl")).len(), 4);
}
