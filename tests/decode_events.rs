//! `slant decode`: detection events written by `slant shots` decoded back, against `slant
//! estimate` on the same seed, and every kind of bad input refused with nothing written.

use std::path::{Path, PathBuf};

use crate::support::{run_cli, slant, stdout_of};

const CIRCUIT: &str = concat!(
    env!("CARGO_MANIFEST_DIR"),
    "/circuits/surface_d3_hook_safe.slant"
);
const NOISE: &str = "circuit p=0.01";

fn json(text: &str) -> serde_json::Value {
    serde_json::from_str(text).unwrap_or_else(|e| panic!("{e}: {text}"))
}

/// `slant shots` into `dir` with `extra` flags.
fn shots(dir: &Path, n: &str, seed: &str, extra: &[&str]) {
    let out = dir.to_str().unwrap();
    let mut args = vec![
        "shots", CIRCUIT, "--noise", NOISE, "--shots", n, "--seed", seed, "--out", out,
    ];
    args.extend_from_slice(extra);
    stdout_of(slant().args(&args));
}

fn decode(events: &Path, extra: &[&str]) -> (i32, String, String) {
    let mut args = vec![
        "decode",
        CIRCUIT,
        "--noise",
        NOISE,
        "--events",
        events.to_str().unwrap(),
    ];
    args.extend_from_slice(extra);
    run_cli(&args, None)
}

/// `(descr, shape, data)` of an `.npy` file.
fn read_npy(path: &Path) -> (String, Vec<u64>, Vec<u8>) {
    let bytes = std::fs::read(path).unwrap();
    let h = slant::base::read_npy_header(&mut &bytes[..]).unwrap();
    (h.descr, h.shape, bytes[h.data_offset as usize..].to_vec())
}

/// Same seed, same shots: the failures `slant decode` counts on the events `slant shots` wrote
/// (unpacked, packed, bits text) are those `slant estimate` counts when it samples them itself,
/// for both decoders; the predictions file says which shots those are.
#[test]
fn round_trip_with_shots_counts_the_failures_of_estimate() {
    let dir = tempfile::tempdir().unwrap();
    let (n, seed) = ("3000", "11");
    let plain = dir.path().join("plain");
    let packed = dir.path().join("packed");
    shots(&plain, n, seed, &[]);
    shots(&packed, n, seed, &["--packed"]);
    let bits = dir.path().join("shots.txt");
    let text = stdout_of(slant().args([
        "shots", CIRCUIT, "--noise", NOISE, "--shots", n, "--seed", seed, "--format", "bits",
    ]));
    std::fs::write(&bits, text).unwrap();
    for decoder in ["mwpm", "uf"] {
        let (code, out, err) = run_cli(
            &[
                "estimate",
                CIRCUIT,
                "--noise",
                NOISE,
                "--shots",
                n,
                "--seed",
                seed,
                "--decoder",
                decoder,
                "--json",
            ],
            None,
        );
        assert_eq!(code, 0, "{err}");
        let want = json(&out);
        assert!(want["failures"].as_u64().unwrap() > 10, "{want}");
        for (events, layout) in [(&plain, "npy"), (&packed, "npy packed"), (&bits, "bits")] {
            let out_dir = dir
                .path()
                .join(format!("pred-{decoder}-{}", layout.replace(' ', "-")));
            let (code, out, err) = decode(
                events,
                &[
                    "--decoder",
                    decoder,
                    "--out",
                    out_dir.to_str().unwrap(),
                    "--json",
                ],
            );
            assert_eq!(code, 0, "{err}");
            let got = json(&out);
            assert_eq!(got["format"], "slant-decode");
            assert_eq!(got["layout"], layout);
            for key in [
                "shots",
                "failures",
                "unmatched",
                "per_shot",
                "per_round",
                "detectors",
            ] {
                assert_eq!(got[key], want[key], "{key} ({decoder}, {layout})");
            }
            let (descr, shape, data) = read_npy(&out_dir.join("predictions.npy"));
            assert_eq!(descr, "|u1");
            assert_eq!(shape, vec![3000, 1]);
            // Every prediction that differs from the observed flip is a failure (no shot is
            // unmatched on this graph).
            assert_eq!(got["unmatched"], 0);
            let (_, _, observed) = read_npy(&plain.join("observables.npy"));
            let wrong = data.iter().zip(&observed).filter(|(a, b)| a != b).count();
            assert_eq!(wrong as u64, got["failures"].as_u64().unwrap());
        }
    }
    // Without `--out`, the predictions go beside the events; without observables.npy, there is
    // no failure count.
    std::fs::remove_file(plain.join("observables.npy")).unwrap();
    let (code, out, err) = decode(&plain, &[]);
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("no failure count"), "{out}");
    assert!(plain.join("predictions.npy").is_file());
}

/// Runs `slant decode` on `events` with `--out` a fresh path, and checks the refusal: exit code
/// 1, `message` on standard error, and nothing written (not even the output directory).
fn refused(events: &Path, message: &str) {
    let out_dir = events.parent().unwrap().join("never");
    let (code, out, err) = decode(events, &["--out", out_dir.to_str().unwrap()]);
    assert_eq!(code, 1, "{out}{err}");
    assert!(err.contains(message), "expected `{message}` in:\n{err}");
    assert!(!out_dir.exists(), "an output directory was created");
    if events.is_dir() {
        assert!(!events.join("predictions.npy").exists());
    }
}

/// A directory of `slant shots` output with one file replaced by `bytes`.
fn with_file(dir: &Path, name: &str, bytes: Vec<u8>) -> PathBuf {
    let events = dir.join("events");
    shots(&events, "100", "1", &[]);
    std::fs::write(events.join(name), bytes).unwrap();
    events
}

fn npy(descr: &str, shape: &[u64], data: &[u8]) -> Vec<u8> {
    let mut b = slant::base::npy_header(descr, shape);
    b.extend_from_slice(data);
    b
}

#[test]
fn wrong_shape_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let events = with_file(dir.path(), "detectors.npy", npy("|u1", &[24], &[0; 24]));
    refused(
        &events,
        "has shape (24,); expected two dimensions (shots, detectors)",
    );
    let events = with_file(
        dir.path(),
        "observables.npy",
        npy("|u1", &[100, 2], &[0; 200]),
    );
    refused(&events, "but the circuit has 1 observable");
    let events = with_file(
        dir.path(),
        "observables.npy",
        npy("|u1", &[99, 1], &[0; 99]),
    );
    refused(&events, "both must hold the same shots");
}

#[test]
fn wrong_dtype_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let events = with_file(
        dir.path(),
        "detectors.npy",
        npy("<f8", &[100, 24], &[0; 19200]),
    );
    refused(&events, "has dtype `<f8`; expected `uint8`");
    let mut data = vec![0u8; 2400];
    data[24 * 7 + 5] = 2;
    let events = with_file(dir.path(), "detectors.npy", npy("|u1", &[100, 24], &data));
    refused(&events, "shot 7, column 5: value 2; expected 0 or 1");
}

#[test]
fn detector_count_that_does_not_match_the_circuit_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    // The events of the distance-5 circuit given to the distance-3 one.
    let events = dir.path().join("d5");
    let d5 = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/circuits/surface_d5_hook_safe.slant"
    );
    stdout_of(slant().args([
        "shots",
        d5,
        "--noise",
        NOISE,
        "--shots",
        "10",
        "--out",
        events.to_str().unwrap(),
    ]));
    refused(
        &events,
        "but the circuit has 24 detectors; expected 24 columns, or 3 when packed",
    );
    let bits = dir.path().join("short.txt");
    std::fs::write(
        &bits,
        format!("{} 0\n{} 0\n", "0".repeat(24), "0".repeat(23)),
    )
    .unwrap();
    refused(&bits, "short.txt:2:1");
    refused(&bits, "23 bits, but the circuit has 24 detectors");
}

#[test]
fn missing_files_are_refused() {
    let dir = tempfile::tempdir().unwrap();
    refused(&dir.path().join("nowhere"), "cannot read");
    let empty = dir.path().join("empty");
    std::fs::create_dir(&empty).unwrap();
    refused(&empty, "has no `detectors.npy`");
    let truncated = with_file(
        dir.path(),
        "detectors.npy",
        npy("|u1", &[100, 24], &[0; 2000]),
    );
    refused(&truncated, "the file is truncated or has extra bytes");
}
