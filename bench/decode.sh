#!/usr/bin/env bash
# Decoder speed: MWPM and union-find per shot on a distance-9, 9-round surface-code graph, one
# thread, release build. Targets (issue 8): MWPM <= 50 us/shot at p = 1e-3; union-find >= 5x
# faster. Extra arguments go to the benchmark, e.g. `bench/decode.sh --shots 100000`.
set -euo pipefail
cd "$(dirname "$0")/.."
RAYON_NUM_THREADS=1 cargo bench --bench decode -- "$@"
