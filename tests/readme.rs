//! The README's examples, re-run: every code block whose info string is `console checked` holds
//! lines `$ slant ...` each followed by the output it prints (standard output and standard error
//! together), and that output must match. In expected output, `[..]` matches any text within a
//! line (for timings) and a line `...` alone matches any number of lines. Commands run in a
//! fresh directory that sees the repository's `circuits/` (and has an empty `docs/` for the
//! plots they write), through `sh`, so quoting and `-o FILE` work as the reader would type them.

use std::path::Path;
use std::process::Command;

/// The checked blocks of the README: `(line of the block, its lines)`.
fn checked_blocks(readme: &str) -> Vec<(usize, Vec<String>)> {
    let mut out = Vec::new();
    let mut current: Option<(usize, Vec<String>)> = None;
    for (i, line) in readme.lines().enumerate() {
        match &mut current {
            None if line.trim() == "```console checked" => current = Some((i + 1, Vec::new())),
            None => {}
            Some(_) if line.trim() == "```" => out.extend(current.take()),
            Some((_, lines)) => lines.push(line.to_string()),
        }
    }
    assert!(current.is_none(), "an unclosed checked block");
    out
}

/// Splits a block into commands (continuation lines joined) and their expected output.
fn commands(lines: &[String]) -> Vec<(String, Vec<String>)> {
    let mut out: Vec<(String, Vec<String>)> = Vec::new();
    let mut continued = false;
    for line in lines {
        if continued {
            let (cmd, _) = out.last_mut().unwrap();
            cmd.push(' ');
            cmd.push_str(line.trim().trim_end_matches('\\'));
            continued = line.ends_with('\\');
        } else if let Some(cmd) = line.strip_prefix("$ ") {
            out.push((cmd.trim_end_matches('\\').to_string(), Vec::new()));
            continued = line.ends_with('\\');
        } else {
            out.last_mut()
                .expect("a checked block starts with `$ slant ...`")
                .1
                .push(line.to_string());
        }
    }
    out
}

/// Whether `line` matches `pattern`, where `[..]` in the pattern matches any text.
fn line_matches(pattern: &str, line: &str) -> bool {
    let parts: Vec<&str> = pattern.split("[..]").collect();
    if parts.len() == 1 {
        return pattern == line;
    }
    let mut rest = line;
    for (i, part) in parts.iter().enumerate() {
        if i == 0 {
            match rest.strip_prefix(part) {
                Some(r) => rest = r,
                None => return false,
            }
        } else if i == parts.len() - 1 {
            return rest.ends_with(part);
        } else {
            match rest.find(part) {
                Some(k) => rest = &rest[k + part.len()..],
                None => return false,
            }
        }
    }
    true
}

/// Whether the output lines match the expected ones (`...` lines match any run of lines).
fn matches(expected: &[String], actual: &[&str]) -> bool {
    match expected.split_first() {
        None => actual.is_empty(),
        Some((first, rest)) if first == "..." => {
            (0..=actual.len()).any(|k| matches(rest, &actual[k..]))
        }
        Some((first, rest)) => actual
            .split_first()
            .is_some_and(|(a, more)| line_matches(first, a) && matches(rest, more)),
    }
}

#[test]
fn readme_examples_print_what_the_readme_shows() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let readme = std::fs::read_to_string(root.join("README.md")).unwrap();
    let blocks = checked_blocks(&readme);
    assert!(blocks.len() >= 2, "the README lost its checked examples");
    let bin = Path::new(env!("CARGO_BIN_EXE_slant")).parent().unwrap();
    let path = format!(
        "{}:{}",
        bin.display(),
        std::env::var("PATH").unwrap_or_default()
    );
    for (at, lines) in blocks {
        let dir = tempfile::tempdir().unwrap();
        std::os::unix::fs::symlink(root.join("circuits"), dir.path().join("circuits")).unwrap();
        // Plots named `docs/...` land in the scratch directory, not in the repository.
        std::fs::create_dir(dir.path().join("docs")).unwrap();
        for (cmd, expected) in commands(&lines) {
            assert!(cmd.starts_with("slant "), "README.md:{at}: `{cmd}`");
            let out = Command::new("sh")
                .arg("-c")
                .arg(format!("{cmd} 2>&1"))
                .current_dir(dir.path())
                .env("PATH", &path)
                .env("NO_COLOR", "1")
                .output()
                .unwrap();
            let text = String::from_utf8(out.stdout).unwrap();
            let actual: Vec<&str> = text.lines().collect();
            let mut expected = expected;
            while expected.last().is_some_and(|l| l.is_empty()) {
                expected.pop();
            }
            assert!(
                matches(&expected, &actual),
                "README.md:{at}: `{cmd}` printed\n{text}\nbut the README shows\n{}",
                expected.join("\n")
            );
        }
    }
}

#[test]
fn the_matcher_sees_placeholders_and_elisions() {
    assert!(line_matches("took [..] s", "took 1.25 s"));
    assert!(!line_matches("took [..] s", "took 1.25 ms!"));
    let exp: Vec<String> = ["a", "...", "d"].iter().map(|s| s.to_string()).collect();
    assert!(matches(&exp, &["a", "b", "c", "d"]));
    assert!(matches(&exp, &["a", "d"]));
    assert!(!matches(&exp, &["a", "b"]));
}
