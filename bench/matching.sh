#!/usr/bin/env bash
# Sparse MWPM speed (issue 14): µs per shot over d = 5..25 and circuit p = 0.001..0.007 on the
# real surface-code circuit graphs (d rounds), one thread, release build, with the reference
# MWPM (time-budgeted) and union-find in the same run. Targets: d = 9, p = 0.005: <= 60 µs/shot;
# p = 0.001: <= 10 µs/shot; exponent of time vs events (d = 9..25, p = 0.005) <= 1.2; max shot
# <= 100x the median; union-find faster than MWPM at every point.
# Extra arguments go to the benchmark, e.g. `bench/matching.sh --d 9 --p 0.005 --shots 5000`.
set -euo pipefail
cd "$(dirname "$0")/.."
RAYON_NUM_THREADS=1 cargo bench --bench decode -- --grid "$@"
