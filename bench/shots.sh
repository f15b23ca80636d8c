#!/usr/bin/env bash
# Sampler benchmark (issue 4): d=5, 5-round rotated surface code under `circuit p=0.001`.
# Prints single-thread shots/s (detection events kept bit-packed, nothing written), the sampler's
# word operations per second as a fraction of a plain 64-bit XOR loop over the same memory in the
# same run, the tableau reference-run time for d=25, 25 rounds, and a full `slant shots` run that
# writes packed .npy files.
#
# Word operation (both sides): one u64 written by a dense loop. Sampler: frame/record/output words
# receiving an XOR of another word, a clear, a random fill or half a swap, counted from the compiled
# program; sparse fault insertions are not counted (their expected number per shot is printed).
# Baseline: one `a[i] ^= f(b[i])` over as many words as one batch's frame + records + outputs,
# repeated to the same total count. The sampler's time includes all of its work. The machine is
# shared, so run it a few times: the fraction is measured within one run and is the stabler number.
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --quiet
bin="${CARGO_TARGET_DIR:-target}/release/slant"
circuit=bench/surface_d5.slant

echo "== d=5, 5 rounds, circuit p=0.001, one thread (targets: >= 1e6 shots/s, >= 0.20 of XOR loop)"
RAYON_NUM_THREADS=1 "$bin" shots "$circuit" --noise 'circuit p=0.001' --shots 2000000 --bench

echo "== d=25, 25 rounds: tableau reference run (target: well under 1 s)"
"$bin" shots "$circuit" --set d=25 --set rounds=25 --noise 'circuit p=0.001' --shots 4096 --bench \
    | grep -E 'qubits|operations|reference_seconds'

out=$(mktemp -d)
trap 'rm -rf "$out"' EXIT
echo "== end to end: 1e6 shots to packed .npy, all threads"
/usr/bin/time -f "wall %e s, max RSS %M KiB" \
    "$bin" shots "$circuit" --noise 'circuit p=0.001' --shots 1000000 --packed --out "$out"
ls -l "$out"
