//! `slant draw` from the command line: pictures are written atomically in the asked format, and
//! bad requests are refused with a message, a non-zero exit and no file.

use std::path::Path;

use crate::support::run_cli;

const SURFACE: &str = "circuits/surface_d3_hook_aligned.slant";

fn root(p: &str) -> String {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join(p)
        .display()
        .to_string()
}

/// Runs `slant draw FILE -o OUT ARGS…` and returns `(code, stdout, stderr, whether OUT exists)`.
fn draw(file: &str, out: &Path, args: &[&str]) -> (i32, String, String, bool) {
    let file = root(file);
    let out_s = out.display().to_string();
    let mut all = vec!["draw", file.as_str(), "-o", out_s.as_str()];
    all.extend_from_slice(args);
    let (code, o, e) = run_cli(&all, None);
    (code, o, e, out.exists())
}

#[test]
fn pictures_are_written_in_the_asked_format() {
    let dir = tempfile::tempdir().unwrap();
    let svg = dir.path().join("a.svg");
    let (code, out, err, made) = draw(SURFACE, &svg, &["--labels"]);
    assert_eq!((code, made), (0, true), "{err}");
    assert!(out.contains("picture written to"));
    let text = std::fs::read_to_string(&svg).unwrap();
    assert!(
        text.starts_with("<svg ") && text.contains("<title>d[1,1] (data qubit at 3,3)</title>")
    );
    let png = dir.path().join("a.PNG");
    let (code, _, err, made) = draw(
        SURFACE,
        &png,
        &["--noise", "circuit p=0.001", "--show", "shortest"],
    );
    assert_eq!((code, made), (0, true), "{err}");
    assert_eq!(&std::fs::read(&png).unwrap()[..4], b"\x89PNG");
    // No temporary file is left beside the picture.
    assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 2);
}

#[test]
fn bad_requests_are_refused_without_a_file() {
    let dir = tempfile::tempdir().unwrap();
    let noisy = ["--noise", "circuit p=0.001"];
    // The output name decides the format.
    let (code, _, err, made) = draw(SURFACE, &dir.path().join("a.pdf"), &[]);
    assert_eq!((code, made), (1, false));
    assert!(err.contains("pictures are written as SVG or PNG"), "{err}");
    // An edge that does not exist.
    let out = dir.path().join("e.svg");
    let (code, _, err, made) = draw(
        SURFACE,
        &out,
        &[noisy[0], noisy[1], "--show", "edge:100000"],
    );
    assert_eq!((code, made), (1, false));
    assert!(err.contains("there is no edge 100000"), "{err}");
    // A shot without detection events.
    let (code, _, err, made) = draw(
        SURFACE,
        &out,
        &["--noise", "circuit p=0.0000001", "--show", "shot:3"],
    );
    assert_eq!((code, made), (1, false));
    assert!(err.contains("has no detection events"), "{err}");
    // An overlay on a circuit without noise.
    let (code, _, err, made) = draw(SURFACE, &out, &["--show", "likely"]);
    assert_eq!((code, made), (1, false));
    assert!(err.contains("no noise"), "{err}");
    // A malformed overlay is a usage error.
    let (code, _, err, made) = draw(SURFACE, &out, &["--show", "edge:"]);
    assert_eq!((code, made), (2, false));
    assert!(err.contains("edge index"), "{err}");
    // `--round` belongs to `--layers`.
    let (code, _, _, made) = draw(SURFACE, &out, &["--round", "1"]);
    assert_eq!((code, made), (2, false));
}

#[test]
fn circuits_without_coordinates_are_refused_unless_placed_in_rows() {
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("c.slant");
    std::fs::write(
        &file,
        "qubit q[0..2] role data\nqubit a role ancilla\nlayer { cx q[0] a }\nlayer { cx q[1] a }\n\
         measure z a -> m\ndetector = m\n",
    )
    .unwrap();
    let out = dir.path().join("c.svg");
    let (code, _, err, made) = draw(file.to_str().unwrap(), &out, &[]);
    assert_eq!((code, made), (1, false));
    assert!(
        err.contains("no qubit has coordinates") && err.contains("c.slant:1:7"),
        "{err}"
    );
    let (code, _, err, made) = draw(file.to_str().unwrap(), &out, &["--rows"]);
    assert_eq!((code, made), (0, true), "{err}");
}
