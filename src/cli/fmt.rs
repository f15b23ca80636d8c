//! `slant fmt` (in progress).

use crate::cli::CliError;

/// Arguments of `slant fmt`.
#[derive(Debug, clap::Args)]
pub struct Args {}

/// Runs `slant fmt`.
pub fn run(_args: Args) -> Result<(), CliError> {
    Err(CliError::Internal("`fmt` is not built yet".into()))
}
