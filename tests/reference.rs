//! `docs/reference.md` against the program: every key a table there lists is accepted (model
//! files) or written (JSON outputs, store rows), and every key accepted or written is listed.

use std::collections::BTreeSet;
use std::path::Path;

use crate::support::{slant, stdout_of, Runner};
use serde_json::Value;

fn reference() -> String {
    std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("docs/reference.md"))
        .unwrap()
}

/// The keys of the table after `<!-- keys: NAME -->`: the first column's backticked text.
fn documented(name: &str) -> BTreeSet<String> {
    let doc = reference();
    let marker = format!("<!-- keys: {name} -->");
    let start = doc
        .find(&marker)
        .unwrap_or_else(|| panic!("no table `{name}`"))
        + marker.len();
    doc[start..]
        .lines()
        .skip_while(|l| l.trim().is_empty())
        .take_while(|l| l.starts_with('|'))
        .filter_map(|l| {
            let cell = l.split('|').nth(1)?.trim();
            cell.strip_prefix('`')?
                .strip_suffix('`')
                .map(str::to_string)
        })
        .collect()
}

/// Every key path of a JSON value: `a.b`, with `[]` for array elements.
fn paths(v: &Value, prefix: &str, out: &mut BTreeSet<String>) {
    match v {
        Value::Object(map) => {
            for (k, x) in map {
                let p = if prefix.is_empty() {
                    k.clone()
                } else {
                    format!("{prefix}.{k}")
                };
                out.insert(p.clone());
                paths(x, &p, out);
            }
        }
        Value::Array(items) => {
            let p = format!("{prefix}[]");
            for x in items {
                paths(x, &p, out);
            }
        }
        _ => {}
    }
}

/// The leaf-or-object paths written, without the paths of arrays and objects that only hold
/// listed keys (the tables list the keys inside them, not the containers).
fn written(values: &[Value]) -> BTreeSet<String> {
    let mut all = BTreeSet::new();
    for v in values {
        paths(v, "", &mut all);
    }
    let containers: BTreeSet<String> = all
        .iter()
        .filter(|p| {
            let dot = format!("{p}.");
            let arr = format!("{p}[].");
            all.iter()
                .any(|q| q.starts_with(&dot) || q.starts_with(&arr))
        })
        .cloned()
        .collect();
    all.difference(&containers).cloned().collect()
}

fn assert_same(name: &str, doc: &BTreeSet<String>, out: &BTreeSet<String>) {
    let missing: Vec<_> = out.difference(doc).collect();
    let stale: Vec<_> = doc.difference(out).collect();
    assert!(
        missing.is_empty() && stale.is_empty(),
        "{name}: written but not documented {missing:?}; documented but not written {stale:?}"
    );
}

fn json_of(args: &[&str]) -> Value {
    let mut cmd = slant();
    cmd.current_dir(env!("CARGO_MANIFEST_DIR")).args(args);
    serde_json::from_slice(&stdout_of(&mut cmd)).unwrap()
}

#[test]
fn model_file_keys_are_the_documented_ones() {
    for (section, keys) in slant::noise::MODEL_KEYS {
        let doc = documented(&format!("model {section}"));
        let accepted: BTreeSet<String> = keys.iter().map(|k| k.to_string()).collect();
        assert_same(section, &doc, &accepted);
    }
}

#[test]
fn fault_graph_keys_are_the_documented_ones() {
    // A circuit with a hyperedge that splits, so `splits` has parts, and a measurement flip.
    let full = json_of(&[
        "graph",
        "circuits/surface_d3_hook_safe.slant",
        "--noise",
        "circuit p=0.001",
        "--format",
        "json",
    ]);
    assert!(!full["splits"].as_array().unwrap().is_empty());
    assert_same("fault graph", &documented("fault graph"), &written(&[full]));
    let matching = json_of(&[
        "graph",
        "circuits/surface_d3_hook_safe.slant",
        "--noise",
        "circuit p=0.001",
        "--format",
        "json",
        "--matching",
    ]);
    assert_same(
        "matching graph",
        &documented("matching graph"),
        &written(&[matching]),
    );
}

#[test]
fn estimate_keys_are_the_documented_ones() {
    let v = json_of(&[
        "estimate",
        "circuits/repetition_d3.slant",
        "--noise",
        "circuit p=0.01",
        "--shots",
        "4096",
        "--json",
    ]);
    assert_same("estimate", &documented("estimate"), &written(&[v]));
}

#[test]
fn decode_keys_are_the_documented_ones() {
    let dir = tempfile::tempdir().unwrap();
    let events = dir.path().to_str().unwrap();
    let circuit = concat!(env!("CARGO_MANIFEST_DIR"), "/circuits/repetition_d3.slant");
    let common = [circuit, "--noise", "circuit p=0.01"];
    stdout_of(
        slant()
            .args(["shots"])
            .args(common)
            .args(["--shots", "100", "--out", events]),
    );
    let with_failures =
        json_of(&[&["decode"][..], &common, &["--events", events, "--json"]].concat());
    std::fs::remove_file(dir.path().join("observables.npy")).unwrap();
    let without = json_of(&[&["decode"][..], &common, &["--events", events, "--json"]].concat());
    assert_same(
        "decode",
        &documented("decode"),
        &written(&[with_failures, without]),
    );
}

#[test]
fn budget_keys_are_the_documented_ones() {
    // Both ways of estimating a removal, so every key of `removed` is written.
    let v = json_of(&[
        "budget",
        "circuits/repetition_d3.slant",
        "--noise",
        "circuit p=0.02",
        "--shots",
        "4096",
        "--min-effective",
        "100",
        "--json",
    ]);
    let methods: BTreeSet<&str> = v["sources"]
        .as_array()
        .unwrap()
        .iter()
        .map(|s| s["removed"]["method"].as_str().unwrap())
        .collect();
    assert_eq!(methods.len(), 2, "{methods:?}");
    // The splitting method adds its ladder, and a removal it cannot estimate.
    let low = json_of(&[
        "budget",
        "circuits/repetition_d3.slant",
        "--set",
        "rounds=1",
        "--noise",
        "capacity p=0.001",
        "--method",
        "splitting",
        "--json",
    ]);
    assert_eq!(low["method"], "splitting");
    assert_eq!(low["sources"][0]["removed"]["method"], "not estimable");
    assert_same("budget", &documented("budget"), &written(&[v, low]));
}

#[test]
fn compare_keys_are_the_documented_ones() {
    // Rates at one p; a hyperedge-heavy product circuit (whose searches stop unproven) adds the
    // `unproven` form of the distances.
    let with_rates = json_of(&[
        "compare",
        "circuits/repetition_d3.slant",
        "circuits/repetition_d5.slant",
        "--noise",
        "circuit p=0.001",
        "--p",
        "0.01",
        "--shots",
        "4096",
        "--json",
    ]);
    // A bias-breaking schedule has a finite high-rate distance (the first run's are absent).
    let high_rate = json_of(&[
        "compare",
        "circuits/xzzx_d3_cx.slant",
        "--noise",
        "circuit p=0.001 bias=100 cx=bias-preserving",
        "--json",
    ]);
    assert!(high_rate["rows"][0]["high_rate_distance"]["value"].is_u64());
    let doc = documented("compare");
    let mut out = written(&[with_rates, high_rate]);
    // The `unproven` form needs a search that cannot finish, which no small bundled circuit
    // gives; it is written by the same code as `slant distance --json` (tested there).
    for key in [
        "rows[].distance.unproven",
        "rows[].high_rate_distance.unproven",
    ] {
        out.insert(key.to_string());
    }
    assert_same("compare", &doc, &out);
}

#[test]
fn store_row_keys_are_the_documented_ones() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(
        dir.path().join("spec.toml"),
        "shots = 4096\nchunk = 4096\n[[grid]]\nfamily = \"repetition\"\ndistances = [3]\n\
         noise = \"phenomenological\"\np = [0.05]\nbias = [10]\n\
         [[grid]]\nfamily = \"repetition\"\ndistances = [3]\nnoise = \"m.toml\"\np = [0.02]\n\
         [grid.vary]\nbias = [10]\n\
         [[grid]]\nfamily = \"repetition\"\ndistances = [3]\nnoise = \"phenomenological\"\n\
         p = [0.01, 0.02]\nrounds = 1\nmethod = \"splitting\"\nchains = 2\nsweeps = 5\n",
    )
    .unwrap();
    std::fs::write(dir.path().join("m.toml"), "p = 0.01\n[gates.default]\n").unwrap();
    let mut cmd = slant();
    cmd.current_dir(dir.path())
        .args(["sweep", "spec.toml", "--store", "s.jsonl", "--jobs", "1"]);
    stdout_of(&mut cmd);
    let text = std::fs::read_to_string(dir.path().join("s.jsonl")).unwrap();
    let rows: Vec<Value> = text
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect();
    // `vary` maps each varied model key to its value: one documented entry for them all.
    let keys: BTreeSet<String> = written(&rows)
        .into_iter()
        .map(|k| {
            if k.starts_with("vary.") {
                "vary.KEY".to_string()
            } else {
                k
            }
        })
        .collect();
    assert!(keys.contains("vary.KEY"), "a grid with `vary` writes it");
    assert!(
        keys.contains("ladder[].scale"),
        "a splitting grid writes its ladder"
    );
    assert_same("store", &documented("store"), &keys);

    // `slant plot --json` on the same store with sampled points that cross (synthetic rows,
    // 0.1 (p/0.02)^((d+1)/2)), so every key of the report is written.
    let mut text = text;
    for d in [3u32, 5] {
        for p in [0.01, 0.015, 0.025, 0.03] {
            let shots = 1_000_000u64;
            let rate = 0.1 * (p / 0.02f64).powf((d as f64 + 1.0) / 2.0);
            let row = serde_json::json!({
                "version": 4, "task": format!("synthetic d={d} p={p}"), "chunk": 0,
                "shots": shots, "failures": (rate * shots as f64).round() as u64, "seed": 0,
                "label": "synthetic", "family": "surface", "distance": d, "rounds": d, "p": p,
                "noise": format!("capacity p={p}"), "decoder": "mwpm", "method": "sampling",
            });
            text += &format!("{row}\n");
        }
    }
    std::fs::write(dir.path().join("s.jsonl"), text).unwrap();
    let mut cmd = slant();
    cmd.current_dir(dir.path()).args([
        "plot",
        "s.jsonl",
        "-o",
        "p.svg",
        "--json",
        "--fit-below",
        "0.5",
    ]);
    let report: Value = serde_json::from_slice(&stdout_of(&mut cmd)).unwrap();
    assert_same("plot", &documented("plot"), &written(&[report]));
}

#[test]
fn bias_keys_are_the_documented_ones() {
    // A schedule that loses the bias, so `lost_at` and `converters` have elements; the command
    // exits 3 for it, so read its output without the success check.
    let out = slant()
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .args([
            "bias",
            "circuits/xzzx_d3_cx.slant",
            "--noise",
            "circuit p=0.001 bias=100 cx=bias-preserving",
            "--json",
        ])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(3));
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["kept"], Value::Bool(false));
    assert_same("bias", &documented("bias"), &written(&[v]));
}

/// Rows of the form `a.*`: "the same keys as another prefix", expanded against the keys written.
fn expand_same_as(doc: &mut BTreeSet<String>, alias: &str, like: &str) {
    let pattern = format!("{alias}.*");
    if doc.remove(&pattern) {
        let keys: Vec<String> = doc
            .iter()
            .filter_map(|k| k.strip_prefix(&format!("{like}.")).map(str::to_string))
            .collect();
        for k in keys {
            doc.insert(format!("{alias}.{k}"));
        }
    }
}

#[test]
fn distance_keys_are_the_documented_ones() {
    // A bias-breaking schedule has a high-rate distance; a CSS patch under unbiased noise has
    // none, so both forms of `high_rate_distance` are written.
    let with_high = json_of(&[
        "distance",
        "circuits/xzzx_d3_cx.slant",
        "--noise",
        "circuit p=0.001 bias=100 cx=bias-preserving",
        "--json",
    ]);
    assert!(with_high["high_rate_distance"]["value"].is_u64());
    let without = json_of(&[
        "distance",
        "circuits/surface_d3_hook_safe.slant",
        "--noise",
        "circuit p=0.001",
        "--json",
    ]);
    assert!(without["high_rate_distance"].is_null());
    let mut doc = documented("distance");
    expand_same_as(&mut doc, "high_rate_distance", "distance");
    expand_same_as(&mut doc, "lexicographic.error", "distance.error");
    expand_same_as(&mut doc, "weighted.error", "distance.error");
    // The objects of an unproven search need a search that cannot finish, which no small
    // bundled circuit gives; they are null here and the table lists them as such leaves.
    assert_same("distance", &doc, &written(&[with_high, without]));
}

#[test]
fn splitting_estimate_keys_are_the_documented_ones() {
    // A phase-flip repetition code under pure dephasing: a short ladder from a top forced at 4x.
    let dir = tempfile::tempdir().unwrap();
    let circuit = dir.path().join("r.slant");
    let out = slant()
        .args([
            "new",
            "repetition",
            "-d",
            "3",
            "--rounds",
            "1",
            "--flip",
            "z",
            "-o",
        ])
        .arg(&circuit)
        .run();
    assert!(out.status.success());
    let v = json_of(&[
        "estimate",
        circuit.to_str().unwrap(),
        "--noise",
        "capacity p=0.02 bias=inf",
        "--method",
        "splitting",
        "--top",
        "4",
        "--sweeps",
        "50",
        "--until-failures",
        "200",
        "--json",
    ]);
    assert_eq!(v["method"], "splitting");
    assert!(v["ladder"].as_array().unwrap().len() >= 2);
    assert_same(
        "estimate splitting",
        &documented("estimate splitting"),
        &written(&[v]),
    );
}
