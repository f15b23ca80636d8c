//! `slant new` (in progress).

use crate::cli::CliError;

/// Arguments of `slant new`.
#[derive(Debug, clap::Args)]
pub struct Args {}

/// Runs `slant new`.
pub fn run(_args: Args) -> Result<(), CliError> {
    Err(CliError::Internal("`new` is not built yet".into()))
}
