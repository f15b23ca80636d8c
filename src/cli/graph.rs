//! `slant graph`: extract the fault graph of a noisy circuit and write it in one format.

use std::io::Write;
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

use crate::base::{write_atomic_with, Diagnostic, OutputSet};
use crate::cli::common::{CircuitArgs, NoiseArgs};
use crate::cli::progress::Progress;
use crate::cli::CliError;
use crate::faults::{render, write_one, ExtractOptions, FaultGraph, Format, View};

/// Arguments of `slant graph`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// The circuit.
    #[command(flatten)]
    pub circuit: CircuitArgs,
    /// Noise written into the circuit before extraction (explicit noise is kept as well).
    #[command(flatten)]
    pub noise: NoiseArgs,
    /// Output format.
    #[arg(long, value_enum)]
    pub format: Format,
    /// Export the matching graph (hyperedges split, parallel edges merged) instead of every
    /// edge.
    #[arg(long)]
    pub matching: bool,
    /// Tag measurement flips as high-rate faults.
    #[arg(long)]
    pub high_rate_flips: bool,
    /// Print the time of each phase (load, extract, render, write) to standard error; one-file
    /// formats stream, so their render time is counted under write.
    #[arg(long)]
    pub timings: bool,
    /// Output path (a directory for `mtx`); `-` or absent prints to standard output.
    #[arg(short = 'o', long = "output", value_name = "PATH")]
    pub output: Option<PathBuf>,
}

/// Runs `slant graph`.
pub fn run(args: Args) -> Result<(), CliError> {
    let clock = Instant::now();
    let pipeline = args.circuit.load_noisy(args.noise.noise.as_deref())?;
    let loaded = clock.elapsed();
    let opts = ExtractOptions {
        high_rate_flips: args.high_rate_flips,
    };
    let mut progress = Progress::steps(2);
    progress.step(1, "fault graph");
    let cpu_before = thread_cpu();
    let graph = pipeline.graph(&opts);
    let extracted = clock.elapsed();
    let extract_cpu = thread_cpu()
        .zip(cpu_before)
        .map(|(b, a)| b.saturating_sub(a));
    if args.output.as_deref().is_none_or(|p| p.as_os_str() == "-") {
        // The graph goes to standard output, perhaps the same terminal: no line under it.
        progress.finish();
    }
    progress.step(2, "writing");
    let (rendered, written) = write(&graph, args.format, args.matching, args.output.as_deref())?;
    progress.finish();
    if args.timings {
        // On a shared machine wall time includes waiting for a core; the thread's own CPU
        // time is what the extractor costs.
        let cpu = extract_cpu.map_or(String::new(), |c| {
            format!(" (cpu {:.6} s)", c.as_secs_f64())
        });
        eprintln!(
            "timings: load {:.6} s, extract {:.6} s{cpu}, render {:.6} s, write {:.6} s; {} edges, {} faults",
            loaded.as_secs_f64(),
            (extracted - loaded).as_secs_f64(),
            rendered.as_secs_f64(),
            written.as_secs_f64(),
            graph.edges.len(),
            graph.provenance.len() + graph.silent.count,
        );
    }
    Ok(())
}

/// CPU time of the calling thread (`CLOCK_THREAD_CPUTIME_ID`, nanosecond resolution; the
/// scheduler's own statistics only advance at context switches and ticks, too coarse for the
/// few milliseconds a small graph takes); `None` off Unix.
#[cfg(unix)]
fn thread_cpu() -> Option<Duration> {
    let mut ts = libc::timespec {
        tv_sec: 0,
        tv_nsec: 0,
    };
    // SAFETY: clock_gettime writes one timespec through a valid, exclusive pointer.
    let rc = unsafe { libc::clock_gettime(libc::CLOCK_THREAD_CPUTIME_ID, &mut ts) };
    (rc == 0).then(|| Duration::new(ts.tv_sec as u64, ts.tv_nsec as u32))
}

#[cfg(not(unix))]
fn thread_cpu() -> Option<Duration> {
    None
}

fn write(
    graph: &FaultGraph,
    format: Format,
    matchable: bool,
    out: Option<&Path>,
) -> Result<(Duration, Duration), CliError> {
    let clock = Instant::now();
    let matching;
    let view = if matchable {
        matching = graph.matching_graph();
        View::Matching(graph, &matching.0, &matching.1)
    } else {
        View::Full(graph)
    };
    let to_stdout = out.is_none_or(|p| p.as_os_str() == "-");
    if format != Format::Mtx {
        // One-file formats stream into the (atomic) output: a JSON graph of a million faults
        // is never held in memory as one string. Render and write are then one phase.
        match out {
            Some(path) if !to_stdout => {
                write_atomic_with(path, |w| write_one(&view, format, w).map(drop))?
            }
            _ => {
                // A failure (a full disk; a closed pipe is no failure) reaches the exit code
                // through `cli::out::finish`.
                let mut stdout = crate::cli::out::Stdout::lock();
                let _ = write_one(&view, format, &mut stdout).and_then(|_| stdout.flush());
            }
        }
        return Ok((Duration::ZERO, clock.elapsed()));
    }
    let files = render(&view, format);
    let rendered = clock.elapsed();
    let dir = out.filter(|_| !to_stdout).ok_or_else(|| {
        Diagnostic::bare("`--format mtx` writes a directory: give it with `-o DIR`")
    })?;
    // The matrices and priors are one set (`slant-set.json`): two noise strengths give the
    // same `H.mtx`, so a mixture of two runs would otherwise go unnoticed.
    let names: Vec<&str> = files.iter().map(|(n, _)| n.as_str()).collect();
    let mut set = OutputSet::create(dir, &names, crate::cli::run_description())?;
    for (k, (_, bytes)) in files.iter().enumerate() {
        set.write(k, bytes)?;
    }
    set.commit()?;
    Ok((rendered, clock.elapsed() - rendered))
}
