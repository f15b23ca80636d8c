#!/usr/bin/env bash
# Front-end benchmark (issue: language, parser, checked circuit model): parse + expand + check of
# a distance-25, 25-round rotated surface code memory. Target: <= 2 s and <= 1 GiB on 2 cores.
# Usage: bash bench/check.sh   (builds in release first)
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --quiet
bin=${CARGO_TARGET_DIR:-target}/release/slant

tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
"$bin" new surface --distance 25 --rounds 25 -o "$tmp/d25.slant"
echo "circuit: $(wc -l < "$tmp/d25.slant") lines (loops), $(wc -c < "$tmp/d25.slant") bytes"
for run in 1 2 3; do
  /usr/bin/time -f "run $run: %e s wall, %M KiB peak RSS" "$bin" check "$tmp/d25.slant" > /dev/null
done
echo "generate + check through a pipe:"
/usr/bin/time -f "pipe: %e s wall, %M KiB peak RSS (check side)" \
  sh -c "'$bin' new surface --distance 25 --rounds 25 | '$bin' check - > /dev/null"
