//! `slant fmt`: print a circuit in canonical form.

use std::path::PathBuf;

use crate::base::{write_atomic, Diagnostic};
use crate::cli::common::read_source;
use crate::cli::CliError;

/// Arguments of `slant fmt`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Circuit files (`-` reads standard input).
    #[arg(required = true)]
    pub files: Vec<PathBuf>,
    /// Do not print; exit with code 3 if a file is not in canonical form.
    #[arg(long, conflicts_with = "write")]
    pub check: bool,
    /// Rewrite the files in place (atomically).
    #[arg(long)]
    pub write: bool,
}

/// Runs `slant fmt`.
pub fn run(args: Args) -> Result<(), CliError> {
    if args.write && args.files.iter().any(|f| f.as_os_str() == "-") {
        return Err(CliError::Usage(Diagnostic::bare(
            "`--write` rewrites files in place and standard input (`-`) is not a file; \
             leave out `--write` to print the canonical form",
        )));
    }
    let mut differs = false;
    let mut errors = Vec::new();
    for path in &args.files {
        let source = match read_source(path) {
            Ok(s) => s,
            Err(d) => {
                errors.push(d);
                continue;
            }
        };
        let ast = match crate::lang::parse(&source) {
            Ok(a) => a,
            Err(d) => {
                errors.extend(d);
                continue;
            }
        };
        let text = crate::lang::print(&ast);
        // The canonical form has no byte-order mark: `--check` flags one, `--write` drops it.
        let canonical = text == source.text && !source.had_bom();
        if args.check {
            if !canonical {
                differs = true;
                outln!(
                    "{}: not in canonical form (run `slant fmt --write`)",
                    path.display()
                );
            }
        } else if args.write {
            if !canonical {
                write_atomic(path, text.as_bytes()).map_err(|d| CliError::Rejected(vec![d]))?;
            }
        } else {
            out!("{text}");
        }
    }
    if !errors.is_empty() {
        return Err(CliError::Rejected(errors));
    }
    if differs {
        return Err(CliError::No);
    }
    Ok(())
}
