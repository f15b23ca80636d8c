#!/usr/bin/env bash
# Sensitivity-set representation (issue 5): the backward sweep with sorted vectors (what slant
# uses) against fixed-width bitsets, on rotated surface code memories (d rounds, `circuit
# p=0.001`), one thread, release build; both must give the same symptoms. Extra arguments go to
# the benchmark, e.g. `bench/sensitivity.sh --distances 5,9 --reps 5`.
set -euo pipefail
cd "$(dirname "$0")/.."
RAYON_NUM_THREADS=1 cargo bench --bench sensitivity -- "$@"
