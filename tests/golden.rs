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
    let mut cmd: Command = slant();
    let out = cmd.current_dir(dir).args(args).run();
    assert!(
        out.status.success(),
        "slant {}: {}",
        args.join(" "),
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout).expect("UTF-8 output")
}

const REPETITION: &str = "circuits/repetition_d3.slant";

#[test]
fn golden_bias() {
    check(
        "bias.txt",
        &stdout(&[
            "bias",
            "circuits/xzzx_d3_cx.slant",
            "--noise",
            "circuit p=0.001 bias=100",
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
            "01",
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
