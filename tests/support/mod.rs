//! Shared test helpers: the one way to run the binary, the one way to load a circuit, and golden
//! files.

pub mod golden;
pub mod statevector;

use std::io::Write;
use std::process::{Command, Output, Stdio};

use slant::base::{Diagnostic, Source};
use slant::ir::Circuit;

/// The real `slant` binary, ready for arguments. `NO_COLOR` is set so diagnostics compare as
/// plain text whatever the terminal.
pub fn slant() -> Command {
    let mut cmd = Command::new(env!("CARGO_BIN_EXE_slant"));
    cmd.env("NO_COLOR", "1");
    cmd
}

/// Running a `slant()` command to completion.
pub trait Runner {
    /// Runs with no standard input and returns what it printed and its status.
    fn run(&mut self) -> Output;
    /// Runs with `input` on standard input.
    fn run_with_input(&mut self, input: &str) -> Output;
}

impl Runner for Command {
    fn run(&mut self) -> Output {
        self.stdin(Stdio::null()).output().expect("slant runs")
    }

    fn run_with_input(&mut self, input: &str) -> Output {
        let mut child = self
            .stdin(Stdio::piped())
            .stdout(Stdio::piped())
            .stderr(Stdio::piped())
            .spawn()
            .expect("slant runs");
        // A command that exits before reading everything closes the pipe; that is its answer.
        let _ = child
            .stdin
            .take()
            .expect("piped stdin")
            .write_all(input.as_bytes());
        child.wait_with_output().expect("slant runs")
    }
}

/// Runs `cmd`, fails the test with its standard error unless it succeeds, and returns its
/// standard output.
pub fn stdout_of(cmd: &mut Command) -> Vec<u8> {
    let out = cmd.run();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    out.stdout
}

/// `(exit code, stdout, stderr)` of a run, the texts decoded lossily.
pub fn parts(out: &Output) -> (i32, String, String) {
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// Runs the binary with `args` and optional standard input; returns `(exit code, stdout,
/// stderr)`.
pub fn run_cli(args: &[&str], stdin: Option<&str>) -> (i32, String, String) {
    let mut cmd = slant();
    cmd.args(args);
    parts(&match stdin {
        Some(text) => cmd.run_with_input(text),
        None => cmd.run(),
    })
}

/// Loads a circuit text as a file named `name` would be; `Err` holds every diagnostic.
pub fn try_load(name: &str, text: &str) -> Result<Circuit, Vec<Diagnostic>> {
    try_load_with(name, text, &[])
}

/// [`try_load`] with parameter overrides.
pub fn try_load_with(
    name: &str,
    text: &str,
    set: &[(&str, i64)],
) -> Result<Circuit, Vec<Diagnostic>> {
    let set: Vec<(String, i64)> = set.iter().map(|(k, v)| (k.to_string(), *v)).collect();
    slant::ir::load_source(&Source::new(name, text), &set)
}

/// Loads a circuit text that must be valid; fails the test with the rendered diagnostics.
pub fn load(name: &str, text: &str) -> Circuit {
    load_with(name, text, &[])
}

/// [`load`] with parameter overrides.
pub fn load_with(name: &str, text: &str, set: &[(&str, i64)]) -> Circuit {
    try_load_with(name, text, set).unwrap_or_else(|d| {
        panic!(
            "{name} rejected:\n{}\n{text}",
            d.iter().map(|d| d.render()).collect::<String>()
        )
    })
}
