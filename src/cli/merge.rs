//! `slant merge`: combine results stores (e.g. of the shards of a sweep) into one.
//!
//! Rows are read from every store in the order given; a `(task, chunk)` seen before is dropped
//! (see [`crate::study::merge_rows`]). Two rows of one chunk with different counts (or two
//! different rows of one splitting task) mean the stores do not belong together: merge refuses them unless `--prefer` says which store wins.
//! A torn last row (a run killed while appending) is dropped and reported. The output is
//! written atomically, so it may also be one of the inputs.

use std::path::PathBuf;

use crate::base::{write_atomic, Diagnostic};
use crate::cli::CliError;
use crate::study::{load_store, merge_rows, STORE_HEADER};

/// Which row a conflicting chunk keeps.
#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum Prefer {
    /// The row of the store given first.
    First,
    /// The row of the store given last.
    Last,
}

/// Arguments of `slant merge`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Stores to combine.
    #[arg(required = true)]
    pub stores: Vec<PathBuf>,
    /// The combined store.
    #[arg(short, long, value_name = "STORE")]
    pub output: PathBuf,
    /// When two stores disagree on a chunk, keep this one's row (default: refuse to merge).
    #[arg(long, value_enum)]
    pub prefer: Option<Prefer>,
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
        let store = load_store(s)?;
        if store.torn_bytes > 0 {
            eprintln!(
                "warning: `{}` ends in a half-written row ({} bytes, a run killed while \
                 writing it); it is not merged",
                s.display(),
                store.torn_bytes
            );
        }
        lists.push(store.rows);
    }
    let read: usize = lists.iter().map(Vec::len).sum();
    if args.prefer == Some(Prefer::Last) {
        lists.reverse();
    }
    let (rows, conflicts) = merge_rows(lists);
    if let Some(c) = conflicts.first() {
        let store = |k: usize| {
            let k = if args.prefer == Some(Prefer::Last) {
                args.stores.len() - 1 - k
            } else {
                k
            };
            args.stores[k].display().to_string()
        };
        let what = match c.rates {
            Some((kept, dropped)) => format!(
                "{} chunks disagree between stores; the first: splitting task `{}` estimates \
                 {kept:.4e} per shot in `{}` but {dropped:.4e} in `{}`",
                conflicts.len(),
                c.task,
                store(c.kept.0),
                store(c.dropped.0),
            ),
            None => format!(
                "{} chunks disagree between stores; the first: chunk {} of task `{}` has {} \
                 failures in {} shots in `{}` but {} in {} in `{}`",
                conflicts.len(),
                c.chunk,
                c.task,
                c.kept.2,
                c.kept.1,
                store(c.kept.0),
                c.dropped.2,
                c.dropped.1,
                store(c.dropped.0),
            ),
        };
        if args.prefer.is_none() {
            return Err(Diagnostic::bare(format!("cannot merge: {what}"))
                .with_hint(
                    "were the stores made from different specs? `--prefer first` or \
                     `--prefer last` says which store's rows to keep",
                )
                .into());
        }
        let which = if args.prefer == Some(Prefer::Last) {
            "last"
        } else {
            "first"
        };
        eprintln!("warning: {what}; kept the rows of the store given {which}");
    }
    let mut text = format!("{STORE_HEADER}\n");
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
    Ok(())
}
