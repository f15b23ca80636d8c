//! `slant graph` (in progress).

use crate::cli::CliError;

/// Arguments of `slant graph`.
#[derive(Debug, clap::Args)]
pub struct Args {}

/// Runs `slant graph`.
pub fn run(_args: Args) -> Result<(), CliError> {
    Err(CliError::Internal("`graph` is not built yet".into()))
}
