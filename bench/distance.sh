#!/usr/bin/env bash
# Benchmark: `slant distance` on a distance-15, 15-round rotated surface code memory under
# circuit-level depolarizing noise (issue 7 target: at most 5 s, release build).
# Usage: bench/distance.sh [DISTANCE]   (needs CARGO_TARGET_DIR or the default target dir)
set -euo pipefail
cd "$(dirname "$0")/.."
d="${1:-15}"
cargo build --release --quiet
bin="${CARGO_TARGET_DIR:-target}/release/slant"
tmp="$(mktemp -d)"
trap 'rm -rf "$tmp"' EXIT
"$bin" new surface --distance "$d" --rounds "$d" -o "$tmp/s.slant"
start=$(date +%s.%N)
"$bin" distance "$tmp/s.slant" --noise 'circuit p=0.001' > "$tmp/out.txt"
end=$(date +%s.%N)
head -4 "$tmp/out.txt"
echo "distance d=$d rounds=$d circuit p=0.001: $(echo "$end - $start" | bc) s (includes parse, noise, extraction)"
