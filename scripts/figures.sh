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

# Sub-threshold scaling from one spec (bench/scaling/surface_hook_safe.toml): every point of the
# hook-safe surface code at d = 3, 5, 7 by the splitting method, the per-round rate against p
# with the fitted slope per distance next to ceil(d_circ/2). The wall time of the sweep goes to
# target/figures/scaling.txt with the slope table.
figures_scaling() {
  local spec=bench/scaling/surface_hook_safe.toml store=target/scaling/surface_hook_safe.jsonl
  mkdir -p target/scaling
  local start end
  start=$(date +%s)
  nice -n 10 "$bin" sweep "$spec" --store "$store" > /dev/null
  end=$(date +%s)
  "$bin" plot "$store" -o docs/scaling_surface.png --per-round \
    --title "surface code, hook-safe order, circuit depolarizing: p_L per round by splitting" \
    > "$out/scaling.txt"
  echo "sweep wall time: $((end - start)) s (0 when every task was already in the store)" >> "$out/scaling.txt"
  cat "$out/scaling.txt"
}

# Pictures of the bundled circuits (`slant draw`): docs/draw/, see scripts/figures-draw.sh.
figures_draw() {
  # shellcheck source=scripts/figures-draw.sh
  . scripts/figures-draw.sh
  draw_figures "$bin"
}

FIGURE_GROUPS=(compare thresholds device scaling draw)
for group in "${@:-${FIGURE_GROUPS[@]}}"; do
  if ! declare -F "figures_$group" > /dev/null; then
    echo "$0: no figure group \`$group\` (groups: ${FIGURE_GROUPS[*]})" >&2
    exit 2
  fi
  echo "== $group"
  "figures_$group"
done
