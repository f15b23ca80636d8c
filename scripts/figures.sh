#!/usr/bin/env bash
# Regenerates every figure in docs/ from the current binary (built here in release).
#
#   scripts/figures.sh                 every group
#   scripts/figures.sh device compare  only these groups
#
# One shell function per figure group, named figures_GROUP; a new group is a new function plus
# its name in FIGURE_GROUPS. Sweeps write resumable stores under target/figures/, so a rerun (or a run
# after an interruption) only samples what is missing and then redraws.
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --quiet
bin="${CARGO_TARGET_DIR:-target}/release/slant"
out=target/figures
mkdir -p "$out" docs

# `slant compare` figures of the README (200 000 shots × 3 p × 2 variants each).
figures_compare() {
  "$bin" compare --family surface --with distance=5 --vary order=hook-safe,hook-aligned \
    --noise 'circuit p=0.001' --p 0.002,0.004,0.006 --shots 200000 \
    --plot docs/compare_orders.svg > "$out/compare_orders.txt"
  "$bin" compare --family xzzx --with distance=5 --vary entangler=native,cx \
    --noise 'circuit p=0.001 bias=100 cx=bias-preserving' --p 0.002,0.004,0.006 --shots 200000 \
    --plot docs/compare_entanglers.svg > "$out/compare_entanglers.txt"
}

# Threshold sweeps of bench/thresholds/: code capacity and phenomenological at full size (d up to
# 15, minutes), the circuit-level ones at reduced size (QUICK=1: 3 smallest distances, 20 000
# shots per point): docs/threshold_NAME.svg.
figures_thresholds() {
  SPECS="surface_capacity surface_phenomenological" bash bench/thresholds.sh
  QUICK=1 SPECS="repetition_phenomenological xzzx_biased surface_circuit" bash bench/thresholds.sh
}

# The device study: XZZX threshold against bias under the cat model with biased resets and
# measurements (bench/device/xzzx_cat_bias.toml): one panel per bias, both biases overlaid, and
# the threshold against bias.
figures_device() {
  local spec=bench/device/xzzx_cat_bias.toml store=target/device/xzzx_cat_bias.jsonl
  mkdir -p target/device
  nice -n 10 "$bin" sweep "$spec" --store "$store"
  "$bin" plot "$store" -o docs/device_xzzx_cat_bias.png \
    --summary docs/device_xzzx_cat_threshold_vs_bias.png > "$out/device.txt"
  "$bin" plot "$store" -o docs/device_xzzx_cat_bias_overlay.svg --overlay > /dev/null
  cat "$out/device.txt"
}

# Pictures of the bundled circuits (`slant draw`): docs/draw/, see scripts/figures-draw.sh.
figures_draw() {
  # shellcheck source=scripts/figures-draw.sh
  . scripts/figures-draw.sh
  draw_figures "$bin"
}

FIGURE_GROUPS=(compare thresholds device draw)
for group in "${@:-${FIGURE_GROUPS[@]}}"; do
  if ! declare -F "figures_$group" > /dev/null; then
    echo "$0: no figure group \`$group\` (groups: ${FIGURE_GROUPS[*]})" >&2
    exit 2
  fi
  echo "== $group"
  "figures_$group"
done
