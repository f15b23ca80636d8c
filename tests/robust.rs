//! Robustness: no output is lost or silently wrong. Standard output failures reach the exit
//! code, multi-file outputs are written as a set, stores are recognised as stores, bad option
//! values share one exit code, and slow or memory-hungry inputs are refused early.

use std::fs;
use std::path::Path;
use std::process::Stdio;

use crate::support::{parts, slant, Runner};

const REPETITION: &str = "circuits/repetition_d3.slant";

/// Every subcommand that prints to standard output, with arguments that make it print.
fn printing_commands(dir: &Path) -> Vec<Vec<String>> {
    let spec = dir.join("spec.toml");
    fs::write(
        &spec,
        "shots = 64\nchunk = 64\n\n[[grid]]\nfamily = \"repetition\"\ndistances = [3]\n\
         noise = \"capacity\"\np = [0.05]\n",
    )
    .unwrap();
    let store = dir.join("store.jsonl");
    let ok = slant()
        .args(["sweep", spec.to_str().unwrap(), "--store"])
        .arg(&store)
        .args(["--jobs", "1"])
        .run();
    assert!(ok.status.success(), "{}", parts(&ok).2);
    let svg = dir.join("plot.svg");
    let picture = dir.join("patch.svg");
    let noisy = ["--noise", "circuit p=0.01"];
    let events = dir.join("events");
    let ok = slant()
        .args([
            "shots", REPETITION, noisy[0], noisy[1], "--shots", "64", "--out",
        ])
        .arg(&events)
        .run();
    assert!(ok.status.success(), "{}", parts(&ok).2);
    let mut cmds: Vec<Vec<&str>> = vec![
        vec!["new", "repetition", "--distance", "3"],
        vec!["check", REPETITION],
        vec!["fmt", REPETITION],
        vec!["compile", REPETITION, noisy[0], noisy[1]],
        vec!["sweep", spec.to_str().unwrap(), "--list"],
        vec!["estimate", REPETITION, noisy[0], noisy[1], "--shots", "256"],
        vec!["distance", REPETITION, noisy[0], noisy[1]],
        vec!["bias", REPETITION, noisy[0], noisy[1]],
        vec!["trace", REPETITION, noisy[0], noisy[1], "--detectors", "0"],
        vec![
            "compare", REPETITION, REPETITION, noisy[0], noisy[1], "--shots", "256",
        ],
        vec!["graph", REPETITION, noisy[0], noisy[1], "--format", "json"],
        vec![
            "shots", REPETITION, noisy[0], noisy[1], "--shots", "64", "--format", "bits",
        ],
        vec!["plot", store.to_str().unwrap(), "-o", svg.to_str().unwrap()],
        vec!["draw", REPETITION, "-o", picture.to_str().unwrap()],
        vec!["budget", REPETITION, noisy[0], noisy[1], "--shots", "256"],
        vec![
            "estimate",
            REPETITION,
            noisy[0],
            noisy[1],
            "--method",
            "splitting",
            "--chains",
            "2",
            "--sweeps",
            "2",
        ],
        vec![
            "decode",
            REPETITION,
            noisy[0],
            noisy[1],
            "--events",
            events.to_str().unwrap(),
        ],
    ];
    cmds.iter_mut()
        .map(|c| c.iter().map(|s| s.to_string()).collect())
        .collect()
}

/// `> /dev/full`: the output is lost, so the run fails with exit 1 and says why; it never
/// panics (exit 4) and never claims success (exit 0).
#[cfg(target_os = "linux")]
#[test]
fn a_full_standard_output_fails_every_subcommand_cleanly() {
    if !Path::new("/dev/full").exists() {
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    for args in printing_commands(dir.path()) {
        let full = fs::OpenOptions::new()
            .write(true)
            .open("/dev/full")
            .unwrap();
        let out = slant()
            .current_dir(env!("CARGO_MANIFEST_DIR"))
            .args(&args)
            .stdout(Stdio::from(full))
            .stderr(Stdio::piped())
            .stdin(Stdio::null())
            .output()
            .unwrap();
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(
            out.status.code(),
            Some(1),
            "slant {}: {err}",
            args.join(" ")
        );
        assert!(
            err.contains("cannot write to standard output"),
            "slant {}: {err}",
            args.join(" ")
        );
        assert!(!err.contains("panicked"), "slant {}: {err}", args.join(" "));
    }
}

/// A reader that stops early (`| head`) is no failure: the run ends quietly.
#[cfg(unix)]
#[test]
fn a_closed_pipe_ends_quietly() {
    let mut child = slant()
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .args(["new", "surface", "--distance", "15"])
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .stdin(Stdio::null())
        .spawn()
        .unwrap();
    drop(child.stdout.take());
    let out = child.wait_with_output().unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        !err.contains("panicked") && !err.contains("internal"),
        "{err}"
    );
    assert_ne!(out.status.code(), Some(4));
}

fn run_in(dir: &Path, args: &[&str]) -> (i32, String, String) {
    parts(&slant().current_dir(dir).args(args).run())
}

fn manifest_dir() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

/// The arrays of one `shots` run are a set: a manifest names each file's size and hash, so an
/// array left from another run (a kill between two renames) is caught; the hidden temporary
/// files of a killed run are removed by the next run.
#[test]
fn multi_file_outputs_are_written_as_a_set() {
    let dir = tempfile::tempdir().unwrap();
    let circuit = manifest_dir().join(REPETITION);
    let c = circuit.to_str().unwrap();
    let shots = |out: &str, seed: &str| {
        let r = run_in(
            dir.path(),
            &[
                "shots",
                c,
                "--noise",
                "circuit p=0.05",
                "--shots",
                "100",
                "--seed",
                seed,
                "--measurements",
                "--out",
                out,
            ],
        );
        assert_eq!(r.0, 0, "{}", r.2);
    };
    // A killed run's temporary file (its process is gone) is removed by the next run.
    let dead = std::process::Command::new("true").spawn().unwrap();
    let pid = dead.id();
    let mut dead = dead;
    dead.wait().unwrap();
    fs::create_dir_all(dir.path().join("a")).unwrap();
    let stale = dir.path().join(format!("a/.detectors.npy.tmp{pid}"));
    fs::write(&stale, vec![0u8; 4096]).unwrap();
    shots("a", "1");
    assert!(!stale.exists(), "stale temporary left behind");
    let manifest = slant::base::check_output_set(&dir.path().join("a")).unwrap();
    let names: Vec<&str> = manifest["files"]
        .as_array()
        .unwrap()
        .iter()
        .map(|f| f["name"].as_str().unwrap())
        .collect();
    assert_eq!(
        names,
        ["detectors.npy", "observables.npy", "measurements.npy"]
    );
    assert!(manifest["about"]["arguments"]
        .as_array()
        .unwrap()
        .iter()
        .any(|a| a == "--seed"));
    // Another run's array beside this run's others: the set says so.
    shots("b", "2");
    fs::copy(
        dir.path().join("b/measurements.npy"),
        dir.path().join("a/measurements.npy"),
    )
    .unwrap();
    let err = slant::base::check_output_set(&dir.path().join("a"))
        .unwrap_err()
        .render();
    assert!(err.contains("`measurements.npy` is not the file"), "{err}");
    // The graph's matrices too.
    let r = run_in(
        dir.path(),
        &[
            "graph",
            c,
            "--noise",
            "circuit p=0.01",
            "--format",
            "mtx",
            "-o",
            "g",
        ],
    );
    assert_eq!(r.0, 0, "{}", r.2);
    slant::base::check_output_set(&dir.path().join("g")).unwrap();
}

/// An output named through a symbolic link is written through it: the link stays.
#[cfg(unix)]
#[test]
fn fmt_write_keeps_symbolic_links_and_refuses_standard_input() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(
        dir.path().join("real.slant"),
        "qubit   a\nmeasure z a -> m\n",
    )
    .unwrap();
    std::os::unix::fs::symlink("real.slant", dir.path().join("link.slant")).unwrap();
    let r = run_in(dir.path(), &["fmt", "--write", "link.slant"]);
    assert_eq!(r.0, 0, "{}", r.2);
    let link = fs::symlink_metadata(dir.path().join("link.slant")).unwrap();
    assert!(link.file_type().is_symlink(), "the link was replaced");
    assert_eq!(
        fs::read_to_string(dir.path().join("real.slant")).unwrap(),
        "qubit a\nmeasure z a -> m\n"
    );
    // `--write -` is a usage error, and writes no file named `-`.
    let r = parts(
        &slant()
            .current_dir(dir.path())
            .args(["fmt", "--write", "-"])
            .run_with_input("qubit   a\n"),
    );
    assert_eq!(r.0, 2, "{}", r.2);
    assert!(r.2.contains("standard input"), "{}", r.2);
    assert!(!dir.path().join("-").exists());
}

/// Bad values exit 2 whichever option carries them (`--distance 4` exited 1 and
/// `--distance 0` 2); `shots --shots 0` is refused as `estimate --shots 0` is.
#[test]
fn bad_option_values_share_one_exit_code() {
    for args in [
        &["new", "surface", "--distance", "4"][..],
        &["new", "surface", "--distance", "0"],
        &["new", "xzzx", "--periodic", "--dx", "4", "--dz", "6"],
        &["shots", REPETITION, "--shots", "0", "--format", "bits"],
        &["estimate", REPETITION, "--shots", "0"],
    ] {
        let r = run_in(manifest_dir(), args);
        assert_eq!(r.0, 2, "{args:?}: {}", r.2);
        assert!(r.1.is_empty(), "{args:?}");
    }
}

/// A megabyte-long name is not echoed whole.
#[test]
fn long_names_are_not_echoed_whole() {
    let name = "q".repeat(1 << 20);
    let text = format!("qubit a\ncx a {name}\n");
    let r = parts(&slant().args(["check", "-"]).run_with_input(&text));
    assert_eq!(r.0, 1, "{}", &r.2[..r.2.len().min(500)]);
    assert!(r.2.len() < 2000, "{} bytes of diagnostics", r.2.len());
    assert!(r.2.contains("(1048576 characters)"), "{}", r.2);
}

/// `--store` on a file that is not a store refuses it and leaves it as it was (a one-line note
/// without a newline was taken for a torn row and cut to nothing).
#[test]
fn sweep_refuses_a_store_that_is_not_one() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(
        dir.path().join("spec.toml"),
        "shots = 64\nchunk = 64\n\n[[grid]]\nfamily = \"repetition\"\ndistances = [3]\n\
         noise = \"capacity\"\np = [0.05]\n",
    )
    .unwrap();
    fs::write(dir.path().join("notes.txt"), "remember the milk").unwrap();
    let r = run_in(dir.path(), &["sweep", "spec.toml", "--store", "notes.txt"]);
    assert_eq!(r.0, 1, "{}", r.2);
    assert!(r.2.contains("is not a slant results store"), "{}", r.2);
    assert_eq!(
        fs::read_to_string(dir.path().join("notes.txt")).unwrap(),
        "remember the milk"
    );
    // A new store starts with its marker.
    let r = run_in(
        dir.path(),
        &["sweep", "spec.toml", "--store", "s.jsonl", "--jobs", "1"],
    );
    assert_eq!(r.0, 0, "{}", r.2);
    let store = fs::read_to_string(dir.path().join("s.jsonl")).unwrap();
    assert!(store.starts_with(slant::study::STORE_HEADER), "{store}");
}

/// `merge` says when it drops a half-written row, and refuses stores that disagree on a chunk
/// unless told which one wins.
#[test]
fn merge_reports_torn_rows_and_refuses_conflicts() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(
        dir.path().join("spec.toml"),
        "shots = 128\nchunk = 64\n\n[[grid]]\nfamily = \"repetition\"\ndistances = [3]\n\
         noise = \"capacity\"\np = [0.05]\n",
    )
    .unwrap();
    let r = run_in(
        dir.path(),
        &["sweep", "spec.toml", "--store", "a.jsonl", "--jobs", "1"],
    );
    assert_eq!(r.0, 0, "{}", r.2);
    let a = fs::read_to_string(dir.path().join("a.jsonl")).unwrap();
    // b: the same chunks with one count changed, and a torn last row.
    let changed = a.replacen("\"failures\":", "\"failures\":1", 1);
    assert_ne!(changed, a);
    fs::write(
        dir.path().join("b.jsonl"),
        format!("{changed}{{\"task\":\"x"),
    )
    .unwrap();
    let r = run_in(
        dir.path(),
        &["merge", "a.jsonl", "b.jsonl", "-o", "m.jsonl"],
    );
    assert_eq!(r.0, 1, "{}", r.2);
    assert!(r.2.contains("half-written row"), "{}", r.2);
    assert!(r.2.contains("disagree"), "{}", r.2);
    assert!(!dir.path().join("m.jsonl").exists());
    for (prefer, want) in [("first", &a), ("last", &changed)] {
        let r = run_in(
            dir.path(),
            &[
                "merge", "a.jsonl", "b.jsonl", "-o", "m.jsonl", "--prefer", prefer,
            ],
        );
        assert_eq!(r.0, 0, "{}", r.2);
        let rows = slant::study::read_store(&dir.path().join("m.jsonl")).unwrap();
        let expect = slant::study::parse_rows(&slant::base::Source::new("w", want.to_string()))
            .unwrap()
            .0;
        assert_eq!(rows, expect, "--prefer {prefer}");
    }
}

/// The memory budget (`--max-items` × 70 bytes) covers what the item count does not: the
/// tableau of the reference run (quadratic in the qubits), the source text, and the
/// determinism check's sets. Each is refused before it is allocated, with the size it needs.
#[test]
fn the_memory_budget_is_checked_before_allocating() {
    let dir = tempfile::tempdir().unwrap();
    // 11,249 qubits: a 63 MB tableau and the batches, past a 56 MB budget (the distance-401
    // patch asked for 52 GB and aborted).
    let r = run_in(
        dir.path(),
        &[
            "new",
            "surface",
            "--distance",
            "75",
            "--rounds",
            "1",
            "-o",
            "big.slant",
        ],
    );
    assert_eq!(r.0, 0, "{}", r.2);
    let r = run_in(
        dir.path(),
        &[
            "shots",
            "big.slant",
            "--shots",
            "1",
            "--format",
            "bits",
            "--max-items",
            "800000",
        ],
    );
    assert_eq!(r.0, 1, "{}", r.2);
    assert!(r.2.contains("past the memory budget of 56 MB"), "{}", r.2);
    assert!(r.2.contains("11249 qubits"), "{}", r.2);
    // A source larger than the budget allows is refused before it is parsed.
    let mut text = "# padding\n".repeat(40_000);
    text.push_str("qubit a\n");
    fs::write(dir.path().join("long.slant"), &text).unwrap();
    let r = run_in(
        dir.path(),
        &["check", "long.slant", "--max-items", "100000"],
    );
    assert_eq!(r.0, 1, "{}", r.2);
    assert!(r.2.contains("past the limit of 262144 bytes"), "{}", r.2);
    let r = parts(
        &slant()
            .args(["check", "-", "--max-items", "100000"])
            .run_with_input(&text),
    );
    assert_eq!(r.0, 1, "{}", r.2);
    // Many qubits fanned into one that is measured many times: every one of them flips every
    // result, qubits × results ids in the check (5,000 × 200,000 aborted at 3.7 GB).
    let fan = "param n = 1000\nparam m = 15000\nqubit q[0..n]\nqubit t\n\
               for i in 0..n {\n    cx q[i] t\n}\n\
               for r in 0..m {\n    measure z t -> f[r]\n    detector = f[r]\n}\n";
    fs::write(dir.path().join("fan.slant"), fan).unwrap();
    let r = run_in(dir.path(), &["check", "fan.slant", "--max-items", "300000"]);
    assert_eq!(r.0, 1, "{}", r.2);
    assert!(r.2.contains("past the memory budget of 21 MB"), "{}", r.2);
    // Within the budget it passes.
    let r = run_in(
        dir.path(),
        &[
            "check",
            "fan.slant",
            "--set",
            "m=100",
            "--max-items",
            "300000",
        ],
    );
    assert_eq!(r.0, 0, "{}", r.2);
}
