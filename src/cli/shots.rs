//! `slant shots`: sample detection events, observable flips and measurement results.
//!
//! Loads the circuit, writes `--noise` into it, runs the noiseless reference and streams batches
//! from the Pauli-frame sampler ([`crate::sim::Sampler`]) to `.npy` files (or to stdout with
//! `--format bits`). Files are filled through temporary siblings and renamed into place only when
//! every batch is written, so a killed run leaves no partial `.npy` behind. Memory stays bounded:
//! a few batches per thread are held at once, whatever `--shots` is.

use std::io::Write;
use std::path::PathBuf;
use std::time::Instant;

use crate::base::{npy_header, Diagnostic, OutputSet};
use crate::cli::common::{CircuitArgs, NoiseArgs};
use crate::cli::progress::Progress;
use crate::cli::CliError;
use crate::ir::Circuit;
use crate::sim::reference_run;
use crate::sim::{
    append_shot_rows, row_bytes, xor_baseline, Batch, BitTable, Outputs, Sampler, BATCH_SHOTS,
};

const AFTER_HELP: &str = "\
Output (`--format npy`, the default): DIR/detectors.npy and DIR/observables.npy, NumPy .npy
version 1.0, dtype uint8, shape (shots, count); `--measurements` adds DIR/measurements.npy
(shape (shots, results), the raw results: 1 = eigenvalue -1). A detection event is 1 when the
detector's parity differs from its noiseless value; an observable entry is 1 when it flipped.

With `--packed`, each row is packed into ceil(count/8) bytes, item k at bit k%8 of byte k/8
(little-endian bit order): `np.unpackbits(np.load(f), axis=1, bitorder='little')[:, :count]`
recovers the unpacked array.

`--format bits` prints one shot per line to stdout instead: detector bits, a space, observable
bits (and, with `--measurements`, a space and the measurement bits).

The same `--seed` gives the same bytes for any number of threads (RAYON_NUM_THREADS).";

/// Output formats of `slant shots`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum Format {
    /// NumPy `.npy` files in `--out`.
    Npy,
    /// One line of `0`/`1` per shot on stdout.
    Bits,
}

/// Arguments of `slant shots`.
#[derive(Debug, clap::Args)]
#[command(after_help = AFTER_HELP)]
pub struct Args {
    /// The circuit.
    #[command(flatten)]
    pub circuit: CircuitArgs,
    /// Noise to add.
    #[command(flatten)]
    pub noise: NoiseArgs,
    /// Number of shots (at least 1).
    #[arg(long, value_name = "N", value_parser = clap::value_parser!(u64).range(1..))]
    pub shots: u64,
    /// Seed of the random generator; the same seed gives the same output.
    #[arg(long, value_name = "S", default_value_t = 0)]
    pub seed: u64,
    /// Directory for the `.npy` files (created if missing).
    #[arg(long, value_name = "DIR", default_value = ".")]
    pub out: PathBuf,
    /// Also write the raw measurement results.
    #[arg(long)]
    pub measurements: bool,
    /// Pack 8 entries per byte along each row (see below).
    #[arg(long)]
    pub packed: bool,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Npy)]
    pub format: Format,
    /// Benchmark the sampler on one thread instead of writing output (used by bench/shots.sh).
    #[arg(long, hide = true)]
    pub bench: bool,
}

/// Runs `slant shots`.
pub fn run(args: Args) -> Result<(), CliError> {
    if args.packed && args.format == Format::Bits {
        return Err(Diagnostic::bare(
            "`--packed` applies to .npy output; `--format bits` writes one character per bit",
        )
        .into());
    }
    let pipeline = args.circuit.load_noisy(args.noise.noise.as_deref())?;
    let circuit = pipeline.noisy();
    if args.bench {
        bench(circuit, args.shots, args.seed);
        return Ok(());
    }
    let sampler = pipeline.sampler()?;
    let what = Outputs {
        detectors: true,
        observables: true,
        measurements: args.measurements,
    };
    let counts = [
        circuit.detectors.len(),
        circuit.observables.len(),
        circuit.records.len(),
    ];
    let mut progress = Progress::new(args.shots, "shots");
    match args.format {
        Format::Bits => {
            let mut out = crate::cli::out::Stdout::lock();
            let mut result = Ok(());
            let mut line = Vec::new();
            sampler.sample(args.shots, args.seed, what, |b| {
                if result.is_err() {
                    return;
                }
                for s in 0..b.shots {
                    line.clear();
                    push_bits(&b, &b.detectors, counts[0], s, &mut line);
                    line.push(b' ');
                    push_bits(&b, &b.observables, counts[1], s, &mut line);
                    if args.measurements {
                        line.push(b' ');
                        push_bits(&b, &b.measurements, counts[2], s, &mut line);
                    }
                    line.push(b'\n');
                    if let Err(e) = out.write_all(&line) {
                        result = Err(e);
                        return;
                    }
                }
                progress.advance(b.shots as u64);
            });
            progress.finish();
            result
                .and_then(|()| out.flush())
                .or_else(|e| {
                    // A closed pipe (`| head`) is a normal way to stop reading.
                    if e.kind() == std::io::ErrorKind::BrokenPipe {
                        Ok(())
                    } else {
                        Err(e)
                    }
                })
                .map_err(|e| Diagnostic::bare(format!("cannot write to standard output: {e}")))?;
        }
        Format::Npy => {
            let mut names = vec!["detectors.npy", "observables.npy"];
            if args.measurements {
                names.push("measurements.npy");
            }
            // The arrays are one set: a reader can tell (`slant-set.json`) whether they came
            // from one run.
            let mut files = OutputSet::create(&args.out, &names, crate::cli::run_description())?;
            for (k, &count) in counts.iter().enumerate().take(names.len()) {
                let cols = row_bytes(count, args.packed) as u64;
                files.write(k, &npy_header("|u1", &[args.shots, cols]))?;
            }
            let mut failure: Option<Diagnostic> = None;
            let mut buf = Vec::new();
            sampler.sample(args.shots, args.seed, what, |b| {
                if failure.is_some() {
                    return;
                }
                let tables = [&b.detectors, &b.observables, &b.measurements];
                for k in 0..names.len() {
                    buf.clear();
                    append_shot_rows(
                        tables[k].as_raw_slice(),
                        counts[k],
                        b.words,
                        b.shots,
                        args.packed,
                        &mut buf,
                    );
                    if let Err(d) = files.write(k, &buf) {
                        failure = Some(d);
                        return;
                    }
                }
                progress.advance(b.shots as u64);
            });
            progress.finish();
            if let Some(d) = failure {
                return Err(d.into());
            }
            files.commit()?;
        }
    }
    Ok(())
}

fn push_bits(b: &Batch, table: &BitTable, count: usize, shot: usize, line: &mut Vec<u8>) {
    line.extend((0..count).map(|k| if b.get(table, k, shot) { b'1' } else { b'0' }));
}

/// Single-thread benchmark: reference run time, sampling throughput (detection events and
/// observable flips kept bit-packed, nothing written), and the sampler's word operations per
/// second against a plain XOR loop over the same amount of memory.
///
/// Like with like: a *word operation* is one `u64` written by a dense loop. In the sampler that is
/// a frame, record or output word receiving an XOR of another word (gates, measurement parities,
/// gauge copies, detector parities), a clear, a random fill, or half a swap, counted from the
/// compiled program by [`Sampler::word_ops_per_word`]; sparse fault insertion is not counted (its
/// expected count is printed beside it). In the baseline it is one `a[i] ^= f(b[i])` over as many
/// words as one batch's frame, records and outputs (so both work sets live in the same cache
/// level), repeated until it has done as many word operations as the sampler. The sampler's time
/// includes everything (allocation, fault sampling, random fills, output assembly).
fn bench(circuit: &Circuit, shots: u64, seed: u64) {
    let t0 = Instant::now();
    let reference = reference_run(circuit);
    let reference_s = t0.elapsed().as_secs_f64();
    std::hint::black_box(&reference);
    let sampler = Sampler::new(circuit);
    let batches = shots.div_ceil(BATCH_SHOTS as u64);
    let mut events = 0u64;
    let t1 = Instant::now();
    for b in 0..batches {
        let batch = sampler.run_batch(b, BATCH_SHOTS, seed, Outputs::syndromes());
        events += batch.detectors.count_ones() as u64;
    }
    let sample_s = t1.elapsed().as_secs_f64();
    let sampled = batches * BATCH_SHOTS as u64;
    let words = (BATCH_SHOTS / 64) as u64;
    let word_ops = sampler.word_ops_per_word() * words * batches;
    let mem = sampler.batch_memory_words();
    let reps = ((word_ops as usize) / mem.max(1)).max(1);
    let xor_rate = xor_baseline(mem, reps);
    let rate = word_ops as f64 / sample_s;
    outln!("qubits: {}", circuit.qubits.len());
    outln!("operations: {}", circuit.op_count());
    outln!("results: {}", circuit.records.len());
    outln!("detectors: {}", circuit.detectors.len());
    outln!("reference_seconds: {reference_s:.6}");
    outln!("shots: {sampled}");
    outln!("sample_seconds: {sample_s:.6}");
    outln!("shots_per_second: {:.0}", sampled as f64 / sample_s);
    outln!(
        "detection_events_per_shot: {:.4}",
        events as f64 / sampled as f64
    );
    outln!(
        "sampler_word_ops_per_shot: {:.1}",
        word_ops as f64 / sampled as f64
    );
    outln!("sparse_faults_per_shot: {:.3}", sampler.faults_per_shot());
    outln!("baseline_memory_words: {mem}");
    outln!("sampler_word_ops_per_second: {rate:.4e}");
    outln!("xor_loop_words_per_second: {xor_rate:.4e}");
    outln!("fraction_of_xor_loop: {:.3}", rate / xor_rate);
}
