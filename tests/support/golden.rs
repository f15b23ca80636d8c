//! Golden files: whole outputs kept under `tests/golden/`, compared byte for byte.
//!
//! Run with `SLANT_BLESS=1` to write the current outputs as the new golden files (then review
//! the diff with `git diff tests/golden/` before committing).

use std::path::PathBuf;

/// Compares `actual` with `tests/golden/<name>`; with `SLANT_BLESS=1` in the environment, writes
/// it there instead. A mismatch fails with a line diff (`-` golden, `+` actual).
pub fn check(name: &str, actual: &str) {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/golden")
        .join(name);
    if std::env::var_os("SLANT_BLESS").is_some_and(|v| v == "1") {
        std::fs::create_dir_all(path.parent().unwrap()).unwrap();
        std::fs::write(&path, actual).unwrap();
        return;
    }
    let expected = std::fs::read_to_string(&path).unwrap_or_else(|e| {
        panic!(
            "cannot read the golden file {}: {e}\nrun the tests with SLANT_BLESS=1 to create it",
            path.display()
        )
    });
    if expected != actual {
        panic!(
            "output differs from {} (- golden, + actual); if the change is intended, re-run with \
             SLANT_BLESS=1 and review `git diff tests/golden/`:\n{}",
            path.display(),
            diff(&expected, actual)
        );
    }
}

/// A line diff by longest common subsequence, unchanged lines prefixed by two spaces.
fn diff(a: &str, b: &str) -> String {
    let a: Vec<&str> = a.lines().collect();
    let b: Vec<&str> = b.lines().collect();
    let mut lcs = vec![vec![0usize; b.len() + 1]; a.len() + 1];
    for i in (0..a.len()).rev() {
        for j in (0..b.len()).rev() {
            lcs[i][j] = if a[i] == b[j] {
                lcs[i + 1][j + 1] + 1
            } else {
                lcs[i + 1][j].max(lcs[i][j + 1])
            };
        }
    }
    let (mut i, mut j) = (0, 0);
    let mut out = String::new();
    while i < a.len() || j < b.len() {
        if i < a.len() && j < b.len() && a[i] == b[j] {
            out += &format!("  {}\n", a[i]);
            i += 1;
            j += 1;
        } else if j < b.len() && (i == a.len() || lcs[i][j + 1] > lcs[i + 1][j]) {
            out += &format!("+ {}\n", b[j]);
            j += 1;
        } else {
            out += &format!("- {}\n", a[i]);
            i += 1;
        }
    }
    out
}

#[test]
fn diff_marks_changed_lines() {
    assert_eq!(diff("a\nb\nc\n", "a\nx\nc\n"), "  a\n- b\n+ x\n  c\n");
    assert_eq!(diff("a\n", "a\nb\n"), "  a\n+ b\n");
}
