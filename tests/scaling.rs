//! Sub-threshold scaling from one sweep spec: splitting tasks in `slant sweep`, their rows in the
//! store (resumed, merged) and the slopes `slant plot` fits to them, checked against the exact
//! failure probability of majority vote.

use std::path::Path;

use crate::support::{parts, slant, stdout_of, Runner};
use serde_json::Value;

/// `Σ_{k>d/2} C(d,k) p^k (1−p)^{d−k}`: the failure probability of majority vote over `d` bits
/// that flip independently with probability `p` (binomial tail, any probability textbook).
fn binomial_tail(d: u32, p: f64) -> f64 {
    let choose = |n: u32, k: u32| (0..k).fold(1.0, |acc, i| acc * (n - i) as f64 / (i + 1) as f64);
    (d / 2 + 1..=d)
        .map(|k| choose(d, k) * p.powi(k as i32) * (1.0 - p).powi((d - k) as i32))
        .sum()
}

/// The phase-flip repetition code under code-capacity dephasing (`bias=inf`: every data qubit
/// flips with probability p, one round, perfect measurements): decoding is majority vote. The
/// splitting grid and a sampled grid share a label, so they form one curve group.
const SPEC: &str = r#"
seed = 3
[[grid]]
label = "phase-flip repetition"
family = "repetition"
flip = "z"
rounds = 1
distances = [3, 5]
noise = "capacity"
bias = [inf]
p = [0.001, 0.003, 0.01]
method = "splitting"
chains = 4
sweeps = 50

[[grid]]
label = "phase-flip repetition"
family = "repetition"
flip = "z"
rounds = 1
distances = [3, 5]
noise = "capacity"
bias = [inf]
p = [0.03, 0.06]
shots = 20000
chunk = 10000
"#;

fn rows(store: &Path) -> Vec<Value> {
    std::fs::read_to_string(store)
        .unwrap()
        .lines()
        .skip(1)
        .map(|l| serde_json::from_str(l).unwrap())
        .collect()
}

#[test]
fn a_splitting_sweep_follows_the_binomial_tail_and_resumes_and_merges() {
    let dir = tempfile::tempdir().unwrap();
    let spec = dir.path().join("spec.toml");
    std::fs::write(&spec, SPEC).unwrap();
    let store = dir.path().join("s.jsonl");
    let out = slant()
        .arg("sweep")
        .arg(&spec)
        .arg("--store")
        .arg(&store)
        .run();
    let (code, stdout, stderr) = parts(&out);
    assert_eq!(code, 0, "{stderr}");
    // The run ends with the slope table.
    assert!(stdout.contains("sub-threshold scaling"), "{stdout}");
    let written = rows(&store);
    let split: Vec<&Value> = written
        .iter()
        .filter(|r| r["method"] == "splitting")
        .collect();
    assert_eq!(split.len(), 6, "one row per splitting task");
    assert_eq!(written.len(), 6 + 4 * 2, "and two chunks per sampled task");
    for r in &split {
        let (d, p) = (
            r["distance"].as_u64().unwrap() as u32,
            r["p"].as_f64().unwrap(),
        );
        let exact = binomial_tail(d, p);
        let est = &r["per_shot"];
        let (low, high) = (est["low"].as_f64().unwrap(), est["high"].as_f64().unwrap());
        // The exact tail lies inside the stated 95% interval (a fixed seed).
        assert!(
            low <= exact && exact <= high,
            "d={d} p={p}: [{low:e}, {high:e}] against the binomial tail {exact:e}"
        );
        assert_eq!(r["chunk"], 0);
        assert_eq!(r["circuit_distance"]["value"], d);
        assert_eq!(r["expected_exponent"], d.div_ceil(2));
    }
    // The fitted slopes of the plot: within ±0.3 of ⌈d/2⌉, the exponent of the binomial tail's
    // leading term.
    let png = dir.path().join("scaling.png");
    let json = stdout_of(
        slant()
            .arg("plot")
            .arg(&store)
            .arg("-o")
            .arg(&png)
            .args(["--per-round", "--json"]),
    );
    let report: Value = serde_json::from_slice(&json).unwrap();
    let group = &report["groups"][0];
    let slopes = group["slopes"].as_array().unwrap();
    assert_eq!(slopes.len(), 2, "{report}");
    for s in slopes {
        let d = s["distance"].as_u64().unwrap() as u32;
        let k = s["slope"].as_f64().unwrap();
        assert!((k - d.div_ceil(2) as f64).abs() < 0.3, "d={d}: slope {k}");
        assert_eq!(s["expected"], d.div_ceil(2));
        assert_eq!(s["points"], 3);
        assert!(s["error"].as_f64().unwrap() < 0.2, "{s}");
    }
    assert!(std::fs::read(&png).unwrap().starts_with(b"\x89PNG"));
    let svg = dir.path().join("scaling.svg");
    let text = String::from_utf8(stdout_of(
        slant().arg("plot").arg(&store).arg("-o").arg(&svg),
    ))
    .unwrap();
    assert!(text.contains("ceil(d_circ/2)"), "{text}");
    let image = std::fs::read_to_string(&svg).unwrap();
    assert!(
        image.contains("d = 5: slope") && image.contains("sampled"),
        "{image}"
    );

    // Resuming: every task is found complete, nothing is appended.
    let before = std::fs::read(&store).unwrap();
    let out = slant()
        .arg("sweep")
        .arg(&spec)
        .arg("--store")
        .arg(&store)
        .run();
    let (code, _, stderr) = parts(&out);
    assert_eq!(code, 0, "{stderr}");
    assert!(stderr.contains("skipped 10 of 10 tasks"), "{stderr}");
    assert!(stderr.contains("splitting, "), "{stderr}");
    assert_eq!(std::fs::read(&store).unwrap(), before);

    // Merging the store with itself keeps one row per splitting task.
    let merged = dir.path().join("m.jsonl");
    let out = slant()
        .arg("merge")
        .arg(&store)
        .arg(&store)
        .arg("-o")
        .arg(&merged)
        .run();
    assert!(out.status.success());
    assert_eq!(rows(&merged), written);
    // A store whose splitting row differs is refused, naming both estimates.
    let text = String::from_utf8(before).unwrap();
    let first = text
        .lines()
        .find(|l| l.contains("\"method\":\"splitting\""))
        .unwrap();
    let mut row: Value = serde_json::from_str(first).unwrap();
    // Doctored through the JSON, not the text: the same number may be written elsewhere in
    // the row (the last rung of the ladder is the target).
    row["per_shot"]["rate"] = serde_json::json!(1.5e-5);
    let other = dir.path().join("o.jsonl");
    std::fs::write(&other, format!("{row}\n")).unwrap();
    let out = slant()
        .arg("merge")
        .arg(&store)
        .arg(&other)
        .arg("-o")
        .arg(&merged)
        .run();
    let (code, _, stderr) = parts(&out);
    assert_eq!(code, 1, "{stderr}");
    assert!(
        stderr.contains("splitting task") && stderr.contains("1.5000e-5"),
        "{stderr}"
    );
}

#[test]
fn shards_split_splitting_tasks_by_their_grid_index() {
    let dir = tempfile::tempdir().unwrap();
    let spec = dir.path().join("spec.toml");
    std::fs::write(&spec, SPEC).unwrap();
    let list = |shard: &str| -> Vec<String> {
        String::from_utf8(stdout_of(
            slant()
                .arg("sweep")
                .arg(&spec)
                .args(["--list", "--shard", shard]),
        ))
        .unwrap()
        .lines()
        .map(str::to_string)
        .collect()
    };
    let (a, b) = (list("1/2"), list("2/2"));
    assert_eq!((a.len(), b.len()), (5, 5));
    assert!(a[0].starts_with("0\t") && a[0].contains("method=splitting"));
    assert!(b[0].starts_with("1\t"));
    // The same again: the split is deterministic.
    assert_eq!(list("1/2"), a);
}
