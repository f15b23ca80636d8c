#!/usr/bin/env bash
# `cx=rotation` cost: `bias` on the distance-3 repetition code over many rounds, with the rotation
# implementation against the ideal one in the same run (the ratio is what to read; the machine is
# shared). Each distinct gate and fault's mid-gate distribution is integrated once, so the
# rotation should cost about what the ideal gate does.
# Usage: bash bench/rotation.sh [ROUNDS]   (builds in release first; BIN=path skips the build)
set -euo pipefail
cd "$(dirname "$0")/.."
rounds=${1:-5000}
if [ -z "${BIN:-}" ]; then
  cargo build --release --quiet
  BIN=${CARGO_TARGET_DIR:-target}/release/slant
fi
t() { { /usr/bin/time -f "%e" "$@" 2>&1 >/dev/null || true; } | tail -1; }
ideal=$(t "$BIN" bias circuits/repetition_d3.slant --set rounds="$rounds" \
  --noise "circuit p=0.001 bias=100 cx=ideal")
rot=$(t "$BIN" bias circuits/repetition_d3.slant --set rounds="$rounds" \
  --noise "circuit p=0.001 bias=100 cx=rotation")
echo "bias, $rounds rounds: cx=ideal ${ideal} s, cx=rotation ${rot} s, ratio $(echo "$rot / $ideal" | bc -l | cut -c1-5)"
