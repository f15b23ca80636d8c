//! Golden outputs: every subcommand run on a small circuit, its whole standard output (or, for
//! commands that write a file instead, the file) compared with `tests/golden/<command>.txt`.
//!
//! These pin what a user sees, so an unintended change of wording, layout or numbers fails here
//! with a line diff. After an intended change, re-bless: `SLANT_BLESS=1 cargo test golden`, then
//! review `git diff tests/golden/`. Sampled outputs use fixed seeds (the same bytes for any
//! thread count), so they are as stable as the text ones.

use std::path::Path;
use std::process::Command;

use crate::support::golden::check;
use crate::support::{slant, Runner};

/// Runs `slant ARGS` from the repository root and returns its standard output, failing the test
/// on a non-zero exit.
fn stdout(args: &[&str]) -> String {
    stdout_in(Path::new(env!("CARGO_MANIFEST_DIR")), args)
}

fn stdout_in(dir: &Path, args: &[&str]) -> String {
    stdout_with_code(dir, args, 0)
}

/// Runs `slant ARGS` in `dir`, failing the test unless it exits with `code`.
fn stdout_with_code(dir: &Path, args: &[&str], code: i32) -> String {
    let mut cmd: Command = slant();
    let out = cmd.current_dir(dir).args(args).run();
    assert_eq!(
        out.status.code(),
        Some(code),
        "slant {}: {}",
        args.join(" "),
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout).expect("UTF-8 output")
}

const REPETITION: &str = "circuits/repetition_d3.slant";

#[test]
fn golden_bias() {
    // The bias is lost on this circuit: the report is printed and the exit code says no.
    check(
        "bias.txt",
        &stdout_with_code(
            Path::new(env!("CARGO_MANIFEST_DIR")),
            &[
                "bias",
                "circuits/xzzx_d3_cx.slant",
                "--noise",
                "circuit p=0.001 bias=100",
            ],
            3,
        ),
    );
}

#[test]
fn golden_budget() {
    check(
        "budget.txt",
        &stdout(&[
            "budget",
            REPETITION,
            "--noise",
            "circuit p=0.01",
            "--shots",
            "8192",
            "--seed",
            "5",
        ]),
    );
}

#[test]
fn golden_check() {
    check(
        "check.txt",
        &stdout(&["check", REPETITION, "--set", "rounds=2"]),
    );
}

#[test]
fn golden_compare() {
    check(
        "compare.txt",
        &stdout(&[
            "compare",
            REPETITION,
            "circuits/repetition_d5.slant",
            "--noise",
            "circuit p=0.001",
            "--p",
            "0.01",
            "--shots",
            "4096",
            "--seed",
            "3",
        ]),
    );
}

#[test]
fn golden_compile() {
    check(
        "compile.txt",
        &stdout(&[
            "compile",
            REPETITION,
            "--set",
            "rounds=1",
            "--noise",
            "circuit p=0.001",
        ]),
    );
}

#[test]
fn golden_distance() {
    check(
        "distance.txt",
        &stdout(&["distance", REPETITION, "--noise", "circuit p=0.001"]),
    );
}

/// The picture of the repetition code with its shortest logical error: the SVG is the output.
#[test]
fn golden_draw() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("r.svg");
    let printed = stdout(&[
        "draw",
        REPETITION,
        "--noise",
        "circuit p=0.001",
        "--show",
        "shortest",
        "-o",
        out.to_str().unwrap(),
    ]);
    assert!(printed.starts_with("picture written to"));
    check("draw.svg", &std::fs::read_to_string(&out).unwrap());
}

#[test]
fn golden_estimate() {
    check(
        "estimate.txt",
        &stdout(&[
            "estimate",
            REPETITION,
            "--noise",
            "circuit p=0.01",
            "--shots",
            "8192",
            "--seed",
            "5",
        ]),
    );
}

#[test]
fn golden_fmt() {
    check("fmt.txt", &stdout(&["fmt", "circuits/bell.slant"]));
}

#[test]
fn golden_graph() {
    check(
        "graph.txt",
        &stdout(&[
            "graph",
            REPETITION,
            "--set",
            "rounds=1",
            "--noise",
            "circuit p=0.001",
            "--format",
            "text",
            "--matching",
        ]),
    );
}

#[test]
fn golden_new() {
    check(
        "new.txt",
        &stdout(&["new", "xzzx", "--dx", "3", "--dz", "3", "--rounds", "2"]),
    );
}

#[test]
fn golden_shots() {
    check(
        "shots.txt",
        &stdout(&[
            "shots",
            REPETITION,
            "--noise",
            "circuit p=0.02",
            "--shots",
            "12",
            "--seed",
            "7",
            "--format",
            "bits",
        ]),
    );
}

#[test]
fn golden_trace() {
    check(
        "trace.txt",
        &stdout(&[
            "trace",
            REPETITION,
            "--set",
            "rounds=1",
            "--noise",
            "circuit p=0.001",
            "--detectors",
            "0,1",
        ]),
    );
}

const SPEC: &str = "shots = 8192\nchunk = 4096\nseed = 2\n\n[[grid]]\nfamily = \"repetition\"\n\
    distances = [3, 5]\nnoise = \"phenomenological\"\np = [0.05, 0.1]\nflip = \"x\"\n";

/// `sweep --list` prints the task list; a run writes the store, which is its real output (one
/// worker, so rows come in grid order). `merge` writes a store too, and `plot` prints the fits.
#[test]
fn golden_sweep_merge_and_plot() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("spec.toml"), SPEC).unwrap();
    check(
        "sweep-list.txt",
        &stdout_in(dir.path(), &["sweep", "spec.toml", "--list"]),
    );
    let ran = stdout_in(
        dir.path(),
        &["sweep", "spec.toml", "--store", "a.jsonl", "--jobs", "1"],
    );
    assert_eq!(ran, "", "sweep reports on standard error only");
    let store = std::fs::read_to_string(dir.path().join("a.jsonl")).unwrap();
    check("sweep-store.jsonl", &store);
    stdout_in(
        dir.path(),
        &[
            "sweep",
            "spec.toml",
            "--store",
            "b.jsonl",
            "--jobs",
            "1",
            "--shard",
            "2/2",
        ],
    );
    let merged = stdout_in(
        dir.path(),
        &["merge", "b.jsonl", "a.jsonl", "-o", "m.jsonl"],
    );
    assert_eq!(merged, "", "merge reports on standard error only");
    check(
        "merge.jsonl",
        &std::fs::read_to_string(dir.path().join("m.jsonl")).unwrap(),
    );
    check(
        "plot.txt",
        &stdout_in(dir.path(), &["plot", "m.jsonl", "-o", "p.svg"]),
    );
}

/// A store written before the store format's version 2 (rows without `version`, the failure
/// count under its old name) still merges and plots: `merge` writes it in the current format
/// with the same counts, and `plot` prints what it prints for the current-format store.
#[test]
fn version_one_stores_still_merge_and_plot() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let old = std::fs::read_to_string(root.join("tests/fixtures/store-v1.jsonl")).unwrap();
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("old.jsonl"), &old).unwrap();
    stdout_in(dir.path(), &["merge", "old.jsonl", "-o", "new.jsonl"]);
    let new = std::fs::read_to_string(dir.path().join("new.jsonl")).unwrap();
    // The merged store starts with the store header, then the upgraded rows.
    assert_eq!(new.lines().next(), Some(slant::study::STORE_HEADER));
    let (old_rows, new_rows): (Vec<&str>, Vec<&str>) =
        (old.lines().collect(), new.lines().skip(1).collect());
    assert_eq!(old_rows.len(), new_rows.len());
    for (o, n) in old_rows.iter().zip(&new_rows) {
        let o: serde_json::Value = serde_json::from_str(o).unwrap();
        let n: serde_json::Value = serde_json::from_str(n).unwrap();
        assert!(o.get("version").is_none() && o.get("failures").is_none());
        assert_eq!(n["version"], slant::study::STORE_VERSION);
        assert_eq!(n["failures"], o["errors"]);
        assert!(n.get("errors").is_none());
        for key in ["task", "chunk", "shots", "seed", "p", "distance", "decoder"] {
            assert_eq!(n[key], o[key], "{key}");
        }
    }
    let from_old = stdout_in(dir.path(), &["plot", "old.jsonl", "-o", "a.svg"]);
    let from_new = stdout_in(dir.path(), &["plot", "new.jsonl", "-o", "b.svg"]);
    assert!(from_old.contains("crossing"), "{from_old}");
    assert_eq!(
        from_old.replace("a.svg", "X"),
        from_new.replace("b.svg", "X")
    );
}

/// `plot --only` takes a whole label: a part of one matches nothing, and the message lists the
/// labels there are.
#[test]
fn plot_only_matches_whole_labels() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let dir = tempfile::tempdir().unwrap();
    std::fs::copy(
        root.join("tests/fixtures/store-v1.jsonl"),
        dir.path().join("s.jsonl"),
    )
    .unwrap();
    let out = slant()
        .current_dir(dir.path())
        .args(["plot", "s.jsonl", "-o", "p.svg", "--only", "repetition"])
        .run();
    assert_eq!(out.status.code(), Some(1));
    assert_eq!(
        String::from_utf8_lossy(&out.stderr),
        "error: `--only repetition`: no label matches\n  = hint: the labels in `s.jsonl`: \
         `repetition phenomenological`\n"
    );
    assert!(!dir.path().join("p.svg").exists());
    let plotted = stdout_in(
        dir.path(),
        &[
            "plot",
            "s.jsonl",
            "-o",
            "p.svg",
            "--only",
            "repetition phenomenological",
        ],
    );
    assert!(
        plotted.starts_with("repetition phenomenological (mwpm):"),
        "{plotted}"
    );
}
