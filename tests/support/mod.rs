//! Shared test helpers.

pub mod statevector;

use std::process::Command;

/// The real `slant` binary, ready for arguments.
pub fn slant() -> Command {
    Command::new(env!("CARGO_BIN_EXE_slant"))
}

/// Runs `cmd`, fails the test with its standard error unless it succeeds, and returns its
/// standard output.
pub fn stdout_of(cmd: &mut Command) -> Vec<u8> {
    let out = cmd.output().expect("slant runs");
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    out.stdout
}
