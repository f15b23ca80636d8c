#!/usr/bin/env bash
# Threshold sweeps at full size (issue 8): rotated surface code (code capacity, phenomenological
# and circuit-level depolarizing), repetition code (phenomenological), XZZX vs CSS under a
# Z-biased circuit model.
# Each spec in bench/thresholds/*.toml names its model and the published value it checks.
#
#   bench/thresholds.sh            full size (hours on a workstation; resumable: rerun after a kill)
#   QUICK=1 bench/thresholds.sh    reduced (3 smallest distances, 20k shots per point, minutes)
#   SPECS="surface_capacity" bench/thresholds.sh    only some specs
#
# Stores go to target/thresholds/NAME.jsonl; plots (SVG) to docs/threshold_NAME.svg, and the
# printed crossings and scaling fits to target/thresholds/NAME.txt. Extra arguments are passed to
# `slant sweep` (e.g. `--jobs 8` or `--shard 2/4`).
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --quiet
bin="${CARGO_TARGET_DIR:-target}/release/slant"
out="target/thresholds"
mkdir -p "$out" docs
specs="${SPECS:-surface_capacity surface_phenomenological repetition_phenomenological xzzx_biased surface_circuit}"
for name in $specs; do
  spec="bench/thresholds/$name.toml"
  if [ -n "${QUICK:-}" ]; then
    # Fewer shots and the three smallest distances; a separate store, so quick and full runs
    # never mix (their task keys differ anyway through the chunk size).
    quick="$out/$name.quick.toml"
    sed -e 's/^shots = .*/shots = 20000/' -e 's/^until_failures = .*/until_failures = 300/' \
        -e 's/^chunk = .*/chunk = 10000/' \
        -e 's/^distances = \[\([0-9]*\), *\([0-9]*\), *\([0-9]*\).*\]/distances = [\1, \2, \3]/' \
        "$spec" > "$quick"
    spec="$quick"
    store="$out/$name.quick.jsonl"
  else
    store="$out/$name.jsonl"
  fi
  echo "== $name"
  "$bin" sweep "$spec" --store "$store" "$@"
  "$bin" plot "$store" -o "docs/threshold_$name.svg" | tee "$out/$name.txt"
done
