//! `slant trace` (in progress).

use crate::cli::CliError;

/// Arguments of `slant trace`.
#[derive(Debug, clap::Args)]
pub struct Args {}

/// Runs `slant trace`.
pub fn run(_args: Args) -> Result<(), CliError> {
    Err(CliError::Internal("`trace` is not built yet".into()))
}
