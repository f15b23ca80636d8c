#!/usr/bin/env bash
# Memory benchmark of the size budget: circuits built from one kind of item, each just under
# the default limit (20 million items), loaded and checked with `slant check`; the peak RSS
# against the memory budget the same limit sets (70 bytes an item: 1.4 GB). The budget promises
# that nothing under the limit passes it.
# Usage: bash bench/memory.sh   (builds in release first; about a minute, mostly the largest
# circuits' expansion)
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --quiet
bin=${CARGO_TARGET_DIR:-target}/release/slant
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT

limit=20000000
budget=$((limit * 70))
# Each circuit is sized to use most of the limit; `check --json` says how many items it uses.
cat > "$tmp/qubits.slant" <<C
param n = 4850000
qubit q[0..n]
C
cat > "$tmp/lone_gates.slant" <<C
param n = 3200000
qubit a
for i in 0..n { h a }
C
cat > "$tmp/layered_gates.slant" <<C
param n = 1000
qubit q[0..n]
for r in 0..19000 { layer { h q[0..n] } }
C
cat > "$tmp/lone_measurements.slant" <<C
param n = 1930000
qubit a
for i in 0..n { measure z a -> m[i] }
C
cat > "$tmp/layered_measurements.slant" <<C
param n = 1000
qubit q[0..n]
for r in 0..2750 { layer { measure z q[0..n] -> m[r, 0..n] } }
C
cat > "$tmp/detectors.slant" <<C
param n = 1000
qubit q[0..n]
for r in 0..1600 {
    layer { measure z q[0..n] -> m[r, 0..n] }
    for k in 0..n { detector = m[r, k] }
}
C
printf '%-22s %12s %12s %10s %8s\n' circuit items peak_MB bytes/item "peak/budget"
for f in qubits lone_gates layered_gates lone_measurements layered_measurements detectors; do
  /usr/bin/time -f '%M' -o "$tmp/rss" "$bin" check "$tmp/$f.slant" --json > "$tmp/out"
  items=$(sed -n 's/.*"items": \([0-9]*\).*/\1/p' "$tmp/out")
  kib=$(tail -1 "$tmp/rss")
  awk -v f="$f" -v items="$items" -v kib="$kib" -v budget="$budget" 'BEGIN {
    b = kib * 1024; printf "%-22s %12s %12.0f %10.1f %8.2f\n", f, items, b / 1e6, b / items, b / budget }'
done
