#!/usr/bin/env bash
# How fast an oversized circuit is refused: the d = 1001 surface patch (past the default limit
# of 20 million items) must be refused in under a second, before anything is built. As a
# baseline in the same run, a full `check` of the distance-25, 25-round memory (half a million
# items, loaded and verified), and optionally another slant binary (BASELINE=path, e.g. an
# older build) refusing the same patch.
# Usage: bash bench/refusal.sh   (builds in release first)
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --quiet
bin=${CARGO_TARGET_DIR:-target}/release/slant
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
"$bin" new surface --distance 1001 --rounds 1 -o "$tmp/d1001.slant"
"$bin" new surface --distance 25 --rounds 25 -o "$tmp/d25.slant"
cpu() { # prints user+sys seconds of a command that may fail
  /usr/bin/time -f '%U %S' -o "$tmp/t" "$@" > /dev/null 2>&1 || true
  tail -1 "$tmp/t" | awk '{ printf "%.3f", $1 + $2 }'
}
for run in 1 2 3; do
  refuse=$(cpu "$bin" check "$tmp/d1001.slant")
  full=$(cpu "$bin" check "$tmp/d25.slant")
  line="run $run: refuse d=1001 ${refuse} s CPU; check d=25 x 25 rounds ${full} s CPU"
  if [ -n "${BASELINE:-}" ]; then
    base=$(cpu "$BASELINE" check "$tmp/d1001.slant")
    line="$line; baseline refuse d=1001 ${base} s CPU ($(awk -v a="$base" -v b="$refuse" 'BEGIN { printf "%.0f", a / (b > 0.001 ? b : 0.001) }')x)"
  fi
  echo "$line"
done
"$bin" check "$tmp/d1001.slant" 2>&1 | head -1
