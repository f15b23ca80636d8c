//! `slant shots` (in progress).

use crate::cli::CliError;

/// Arguments of `slant shots`.
#[derive(Debug, clap::Args)]
pub struct Args {}

/// Runs `slant shots`.
pub fn run(_args: Args) -> Result<(), CliError> {
    Err(CliError::Internal("`shots` is not built yet".into()))
}
