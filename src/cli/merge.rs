//! `slant merge`: combine results stores (e.g. of the shards of a sweep) into one.
//!
//! Rows are read from every store in the order given; a `(task, chunk)` seen before is dropped
//! (see [`crate::study::merge_rows`]). The output is written atomically, so it may also be
//! one of the inputs.

use std::path::PathBuf;

use crate::base::{write_atomic, Diagnostic};
use crate::cli::CliError;
use crate::study::{merge_rows, read_store};

/// Arguments of `slant merge`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Stores to combine.
    #[arg(required = true)]
    pub stores: Vec<PathBuf>,
    /// The combined store.
    #[arg(short, long, value_name = "STORE")]
    pub output: PathBuf,
}

/// Runs `slant merge`.
pub fn run(args: Args) -> Result<(), CliError> {
    let mut lists = Vec::new();
    for s in &args.stores {
        if !s.exists() {
            return Err(
                Diagnostic::bare(format!("cannot read `{}`: no such file", s.display())).into(),
            );
        }
        lists.push(read_store(s)?);
    }
    let read: usize = lists.iter().map(Vec::len).sum();
    let (rows, conflicts) = merge_rows(lists);
    let mut text = String::new();
    for r in &rows {
        let line = serde_json::to_string(r)
            .map_err(|e| CliError::Internal(format!("cannot encode a row: {e}")))?;
        text.push_str(&line);
        text.push('\n');
    }
    write_atomic(&args.output, text.as_bytes())?;
    eprintln!(
        "merged {} stores: {read} rows read, {} kept, {} duplicates dropped",
        args.stores.len(),
        rows.len(),
        read - rows.len()
    );
    if conflicts > 0 {
        eprintln!(
            "warning: {conflicts} duplicate chunks had different counts than the kept row; \
             were the stores made from different specs?"
        );
    }
    Ok(())
}
