//! The stable fuzz driver: the targets of `fuzz/targets.rs` (the same bodies cargo-fuzz runs on
//! nightly) fed with the corpus under `fuzz/corpus/` and deterministic mutations of it.
//!
//! `cargo test` runs a bounded campaign (`SLANT_FUZZ_INPUTS`, default 5000 inputs, at most
//! `SLANT_FUZZ_SECONDS`, default 60) after replaying every saved finding in
//! `fuzz/regressions/`. A longer local campaign runs the same test with larger bounds, e.g.
//! `SLANT_FUZZ_INPUTS=0 SLANT_FUZZ_SECONDS=1800` (0: no input bound), under a memory cap
//! (`prlimit --as=4294967296`). A panic or an input slower than 10 s fails the test; the input
//! is written to `target/fuzz-findings/` to be added to `fuzz/regressions/TARGET/` with its fix.

#[path = "../fuzz/targets.rs"]
mod targets;

use std::path::{Path, PathBuf};
use std::sync::mpsc;
use std::time::{Duration, Instant};

/// An input slower than this is a hang.
const HANG: Duration = Duration::from_secs(10);

fn fuzz_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("fuzz")
}

fn files(dir: &Path) -> Vec<Vec<u8>> {
    let mut paths: Vec<PathBuf> = std::fs::read_dir(dir)
        .map(|d| d.flatten().map(|e| e.path()).collect())
        .unwrap_or_default();
    paths.sort();
    paths
        .iter()
        .filter(|p| p.is_file() && !p.ends_with(".gitkeep"))
        .map(|p| std::fs::read(p).unwrap())
        .collect()
}

fn env_u64(name: &str, default: u64) -> u64 {
    std::env::var(name)
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(default)
}

/// A small deterministic generator (xorshift64*): the same seed gives the same campaign.
struct Rng(u64);

impl Rng {
    fn next(&mut self) -> u64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        self.0.wrapping_mul(0x2545_f491_4f6c_dd1d)
    }

    fn below(&mut self, n: usize) -> usize {
        if n == 0 {
            0
        } else {
            (self.next() % n as u64) as usize
        }
    }
}

/// Tokens that reach deep into the readers: keywords, brackets, edge-case numbers.
const TOKENS: &[&str] = &[
    "qubit ",
    "layer {",
    "round {",
    "}",
    "for i in 0..",
    "if ",
    "else ",
    "param n = ",
    "measure z ",
    "measure x ",
    "reset z ",
    "-> m[",
    "detector = ",
    "observable o = ",
    " ^ ",
    "cx ",
    "cz ",
    "h ",
    "swap ",
    "noise ",
    "depolarizing(",
    "pair_depolarizing",
    "pauli",
    "joint",
    "[",
    "]",
    "(",
    ")",
    ",",
    "=",
    "\n",
    " ",
    "..",
    "0",
    "1",
    "-1",
    "2",
    "999999999",
    "9223372036854775807",
    "-9223372036854775808",
    "1e308",
    "1e-308",
    "nan",
    "inf",
    "0.5",
    "\"",
    "'",
    "#",
    "\t",
    "\r\n",
    "\u{feff}",
    "é",
    "[[grid]]\n",
    "[gates.cx]\n",
    "p = ",
    "bias = ",
    "t1 = ",
    "t2 = ",
    "duration = ",
    "implementation = \"rotation\"\n",
    "{\"task\":",
    "\"chunk\":",
    "\"shots\":",
    "\"failures\":",
    "\"version\":",
    "null",
    "true",
    "{\"slant_results_store\":2}\n",
    "cx=rotation",
    "cx=bias-preserving",
    "q=",
    "p=",
    "bias=",
];

fn mutate(rng: &mut Rng, input: &[u8], corpus: &[Vec<u8>]) -> Vec<u8> {
    let mut out = input.to_vec();
    for _ in 0..1 + rng.below(4) {
        let len = out.len();
        let at = rng.below(len + 1);
        match rng.below(8) {
            0 if len > 0 => out[at.min(len - 1)] ^= 1 << rng.below(8),
            1 => out.insert(at, rng.next() as u8),
            2 if len > 0 => {
                let end = (at + 1 + rng.below(16)).min(len);
                out.drain(at.min(len)..end);
            }
            3 if len > 0 => {
                let start = rng.below(len);
                let end = (start + 1 + rng.below(64)).min(len);
                let piece = out[start..end].to_vec();
                out.splice(at..at, piece);
            }
            4 => {
                let other = &corpus[rng.below(corpus.len())];
                if !other.is_empty() {
                    let start = rng.below(other.len());
                    let end = (start + 1 + rng.below(256)).min(other.len());
                    out.splice(at..at, other[start..end].iter().copied());
                }
            }
            5 => {
                // Replace a run of digits with an edge-case number.
                let digits: Vec<usize> = (0..len).filter(|&i| out[i].is_ascii_digit()).collect();
                if let Some(&i) = digits.get(rng.below(digits.len())) {
                    let mut end = i;
                    while end < len && out[end].is_ascii_digit() {
                        end += 1;
                    }
                    let n =
                        ["0", "1", "3", "64", "65536", "999999", "4294967296", "-7"][rng.below(8)];
                    out.splice(i..end, n.bytes());
                }
            }
            6 if len > 0 => out.truncate(at),
            _ => {
                let t = TOKENS[rng.below(TOKENS.len())];
                out.splice(at..at, t.bytes());
            }
        }
    }
    out.truncate(1 << 16);
    out
}

type Job = (fn(&[u8]), Vec<u8>);
type Outcome = Result<(), String>;

/// One long-lived worker thread (deep stack, as the binary's) that runs the inputs: spawning a
/// thread per input piled up exiting threads' stacks on a loaded machine until a 4 GB
/// address-space cap refused the next one.
struct Worker {
    jobs: mpsc::Sender<Job>,
    done: mpsc::Receiver<Outcome>,
}

impl Worker {
    fn new() -> Worker {
        let (jobs, rx) = mpsc::channel::<Job>();
        let (tx, done) = mpsc::channel();
        std::thread::Builder::new()
            .stack_size(256 << 20)
            .spawn(move || {
                for (target, data) in rx {
                    let r = std::panic::catch_unwind(|| target(&data));
                    let _ = tx.send(r.map_err(|e| {
                        e.downcast_ref::<String>()
                            .cloned()
                            .or_else(|| e.downcast_ref::<&str>().map(|s| s.to_string()))
                            .unwrap_or_default()
                    }));
                }
            })
            .unwrap();
        Worker { jobs, done }
    }

    /// Runs `target` on `input`: `Err` with what went wrong on a panic or a hang. After a hang
    /// the worker is stuck; the caller stops.
    fn run(&self, target: fn(&[u8]), input: &[u8]) -> Result<Duration, String> {
        let start = Instant::now();
        self.jobs
            .send((target, input.to_vec()))
            .map_err(|_| "the worker is gone".to_string())?;
        match self.done.recv_timeout(HANG) {
            Ok(Ok(())) => Ok(start.elapsed()),
            Ok(Err(msg)) => Err(format!("panic: {msg}")),
            Err(_) => Err(format!("hang: more than {} s", HANG.as_secs())),
        }
    }
}

fn save_finding(name: &str, input: &[u8]) -> PathBuf {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("target/fuzz-findings");
    let _ = std::fs::create_dir_all(&dir);
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for &b in input {
        h = (h ^ u64::from(b)).wrapping_mul(0x0100_0000_01b3);
    }
    let path = dir.join(format!("{name}-{h:016x}"));
    let _ = std::fs::write(&path, input);
    path
}

/// Every saved finding and every corpus entry still runs cleanly.
#[test]
fn fuzz_regressions_and_corpus_replay() {
    let mut count = 0;
    let worker = Worker::new();
    for &(name, target) in targets::TARGETS {
        for dir in ["regressions", "corpus"] {
            for input in files(&fuzz_dir().join(dir).join(name)) {
                if let Err(why) = worker.run(target, &input) {
                    let path = save_finding(name, &input);
                    panic!("{name} ({dir}): {why}; input in {}", path.display());
                }
                count += 1;
            }
        }
    }
    assert!(count >= 40, "only {count} corpus entries");
}

/// The bounded campaign: deterministic mutations of the corpus, round robin over the targets.
#[test]
fn fuzz_bounded_campaign() {
    let max_inputs = env_u64("SLANT_FUZZ_INPUTS", 5000);
    let max_time = Duration::from_secs(env_u64("SLANT_FUZZ_SECONDS", 60));
    let mut rng = Rng(env_u64("SLANT_FUZZ_SEED", 0x5eed) | 1);
    let corpora: Vec<Vec<Vec<u8>>> = targets::TARGETS
        .iter()
        .map(|(name, _)| files(&fuzz_dir().join("corpus").join(name)))
        .collect();
    let start = Instant::now();
    let mut done = 0u64;
    let mut slowest = (Duration::ZERO, "");
    let mut findings = Vec::new();
    let worker = Worker::new();
    while (max_inputs == 0 || done < max_inputs) && start.elapsed() < max_time {
        let k = (done % targets::TARGETS.len() as u64) as usize;
        let (name, target) = targets::TARGETS[k];
        let corpus = &corpora[k];
        let base = &corpus[rng.below(corpus.len())];
        let input = mutate(&mut rng, base, corpus);
        match worker.run(target, &input) {
            Ok(t) => {
                if t > slowest.0 {
                    slowest = (t, name);
                }
            }
            Err(why) => {
                let path = save_finding(name, &input);
                eprintln!(
                    "fuzz finding in `{name}`: {why}; input in {}",
                    path.display()
                );
                findings.push(format!("{name}: {why}"));
                if why.starts_with("hang") || findings.len() >= 10 {
                    break;
                }
            }
        }
        done += 1;
    }
    eprintln!(
        "fuzz: {done} inputs in {:.1} s, slowest {:.3} s ({}), {} findings",
        start.elapsed().as_secs_f64(),
        slowest.0.as_secs_f64(),
        slowest.1,
        findings.len()
    );
    assert!(findings.is_empty(), "{findings:#?}");
}
