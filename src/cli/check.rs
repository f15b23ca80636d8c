//! `slant check` (in progress).

use crate::cli::CliError;

/// Arguments of `slant check`.
#[derive(Debug, clap::Args)]
pub struct Args {}

/// Runs `slant check`.
pub fn run(_args: Args) -> Result<(), CliError> {
    Err(CliError::Internal("`check` is not built yet".into()))
}
