#!/usr/bin/env bash
# Redraws the pictures of the bundled circuits in docs/draw/ (shown in the README) with
# `slant draw`: layouts and gate orders, the layers of a round, logical errors, one fault-graph
# edge and one sampled shot. Look at every PNG after a change.
#
#   scripts/figures-draw.sh                  builds release and uses target/release/slant
#   scripts/figures-draw.sh path/to/slant    uses that binary
#   . scripts/figures-draw.sh; draw_figures path/to/slant
#
# The work is the one function `draw_figures SLANT`, run from the repository root, so that a
# script redrawing every figure can source this file and call it.
draw_figures() { # SLANT
  local slant="$1" out=docs/draw
  mkdir -p "$out"

  draw_picture() { # OUTPUT CIRCUIT [ARGS...]
    local name="$1" circuit="$2"
    shift 2
    "$slant" draw "circuits/$circuit.slant" -o "$out/$name" "$@" >/dev/null
    echo "wrote $out/$name"
  }

  local depolarizing="circuit p=0.001"
  local biased="circuit p=0.001 bias=100 cx=bias-preserving"

  # Layouts and gate orders: the rotated surface code, XZZX (square, rectangular, torus) and the
  # repetition code.
  draw_picture surface_d3_hook_aligned.png surface_d3_hook_aligned
  draw_picture surface_d3_product.png surface_d3_product
  draw_picture xzzx_d3_hook_aligned.png xzzx_d3_hook_aligned
  draw_picture xzzx_3x5_hook_safe.png xzzx_3x5_hook_safe
  draw_picture xzzx_torus_3x4.png xzzx_torus_3x4
  draw_picture repetition_d5.png repetition_d5 --labels

  # The time view of one round.
  draw_picture surface_d3_hook_aligned_layers.png surface_d3_hook_aligned --layers

  # The two extraction orders with their shortest logical error: two faults (one a hook on an
  # ancilla) against three.
  draw_picture surface_d3_hook_aligned_shortest.png surface_d3_hook_aligned --noise "$depolarizing" --show shortest
  draw_picture surface_d3_hook_aligned_shortest.svg surface_d3_hook_aligned --noise "$depolarizing" --show shortest
  draw_picture surface_d3_hook_safe_shortest.png surface_d3_hook_safe --noise "$depolarizing" --show shortest

  # Under Z-biased noise with bias-preserving CX: the XZZX code's shortest logical error made of
  # high-rate faults alone, and its most likely one under the cat-qubit model file.
  draw_picture xzzx_d3_cx_high_rate.png xzzx_d3_cx --noise "$biased" --show high-rate
  draw_picture xzzx_d3_hook_aligned_cat_likely.png xzzx_d3_hook_aligned \
    --noise circuits/models/cat-bias-preserving.toml --show likely

  # One fault-graph edge (a hook: numbered as `slant graph --format text` lists them) and one
  # sampled shot with the matching decoder's pairs.
  draw_picture surface_d3_hook_aligned_edge.png surface_d3_hook_aligned --noise "$depolarizing" --show edge:17
  draw_picture surface_d3_hook_aligned_shot.png surface_d3_hook_aligned --noise "circuit p=0.006" --show shot:22
}

if [ "${BASH_SOURCE[0]}" = "$0" ]; then
  set -euo pipefail
  cd "$(dirname "$0")/.."
  slant="${1:-}"
  if [ -z "$slant" ]; then
    cargo build --release --quiet
    slant="${CARGO_TARGET_DIR:-target}/release/slant"
  fi
  draw_figures "$slant"
fi
