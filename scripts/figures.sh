#!/usr/bin/env bash
# Redraws the pictures of the bundled circuits in docs/draw/ (shown in the README) with
# `slant draw`: layouts and gate orders, the layers of a round, logical errors, one fault-graph
# edge and one sampled shot. Look at every PNG after a change.
#
#   scripts/figures.sh                  builds release and uses target/release/slant
#   scripts/figures.sh path/to/slant    uses that binary
set -euo pipefail
cd "$(dirname "$0")/.."
slant="${1:-}"
if [ -z "$slant" ]; then
  cargo build --release --quiet
  slant="${CARGO_TARGET_DIR:-target}/release/slant"
fi
out=docs/draw
mkdir -p "$out"

draw() { # OUTPUT CIRCUIT [ARGS...]
  local name="$1" circuit="$2"
  shift 2
  "$slant" draw "circuits/$circuit.slant" -o "$out/$name" "$@" >/dev/null
  echo "wrote $out/$name"
}

depolarizing="circuit p=0.001"
biased="circuit p=0.001 bias=100 cx=bias-preserving"

# Layouts and gate orders: the rotated surface code, XZZX (square, rectangular, torus) and the
# repetition code.
draw surface_d3_hook_aligned.png surface_d3_hook_aligned
draw surface_d3_product.png surface_d3_product
draw xzzx_d3_hook_aligned.png xzzx_d3_hook_aligned
draw xzzx_3x5_hook_safe.png xzzx_3x5_hook_safe
draw xzzx_torus_3x4.png xzzx_torus_3x4
draw repetition_d5.png repetition_d5 --labels

# The time view of one round.
draw surface_d3_hook_aligned_layers.png surface_d3_hook_aligned --layers

# The two extraction orders with their shortest logical error: two faults (one a hook on an
# ancilla) against three.
draw surface_d3_hook_aligned_shortest.png surface_d3_hook_aligned --noise "$depolarizing" --show shortest
draw surface_d3_hook_aligned_shortest.svg surface_d3_hook_aligned --noise "$depolarizing" --show shortest
draw surface_d3_hook_safe_shortest.png surface_d3_hook_safe --noise "$depolarizing" --show shortest

# Under Z-biased noise with bias-preserving CX: the XZZX code's shortest logical error made of
# high-rate faults alone, and its most likely one under the cat-qubit model file.
draw xzzx_d3_cx_high_rate.png xzzx_d3_cx --noise "$biased" --show high-rate
draw xzzx_d3_hook_aligned_cat_likely.png xzzx_d3_hook_aligned \
  --noise circuits/models/cat-bias-preserving.toml --show likely

# One fault-graph edge (a hook: numbered as `slant graph --format text` lists them) and one
# sampled shot with the matching decoder's pairs.
draw surface_d3_hook_aligned_edge.png surface_d3_hook_aligned --noise "$depolarizing" --show edge:17
draw surface_d3_hook_aligned_shot.png surface_d3_hook_aligned --noise "circuit p=0.006" --show shot:22
