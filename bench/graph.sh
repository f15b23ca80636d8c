#!/usr/bin/env bash
# Fault-graph extraction benchmark (issue 5): rotated surface code memory, d rounds, uniform
# circuit-level depolarizing noise p = 0.001, one thread.
#   - extraction time (from `slant graph --timings`, without writing) and peak memory
#     (/usr/bin/time -v, whole process) at d = 25;
#   - time over d = 5..25 fitted against circuit volume d^3 (least squares on logs);
#   - JSON rendering + writing time at d = 25.
# Targets: extraction ≤ 1 s and ≤ 1 GiB at d = 25; exponent ≤ 1.1; JSON ≤ 1 s more.
# Usage: bench/graph.sh   (builds with --release into $CARGO_TARGET_DIR or target/)
set -euo pipefail
cd "$(dirname "$0")/.."
export RAYON_NUM_THREADS=1
cargo build --release --quiet
bin="${CARGO_TARGET_DIR:-target}/release/slant"
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
noise='circuit p=0.001'

echo "d  volume  extract_s  mechanisms  faults"
: > "$tmp/fit"
for d in 5 9 13 17 21 25; do
  "$bin" new surface --distance "$d" --rounds "$d" -o "$tmp/s$d.slant"
  line=$("$bin" graph "$tmp/s$d.slant" --noise "$noise" --format text --timings -o /dev/null 2>&1 | grep '^timings')
  t=$(sed -E 's/.*extract ([0-9.]+) s.*/\1/' <<<"$line")
  mech=$(sed -E 's/.*; ([0-9]+) mechanisms.*/\1/' <<<"$line")
  faults=$(sed -E 's/.* ([0-9]+) faults/\1/' <<<"$line")
  echo "$d  $((d*d*d))  $t  $mech  $faults"
  echo "$((d*d*d)) $t" >> "$tmp/fit"
done
python3 - "$tmp/fit" <<'PY'
import math, sys
pts = [tuple(map(float, l.split())) for l in open(sys.argv[1])]
xs = [math.log(v) for v, _ in pts]; ys = [math.log(t) for _, t in pts]
n = len(xs); mx = sum(xs) / n; my = sum(ys) / n
k = sum((x - mx) * (y - my) for x, y in zip(xs, ys)) / sum((x - mx) ** 2 for x in xs)
print(f"fitted exponent of extraction time against volume d^3: {k:.2f} (target <= 1.1)")
PY

echo "--- d = 25, JSON written, peak memory of the whole process"
/usr/bin/time -v "$bin" graph "$tmp/s25.slant" --noise "$noise" --format json --timings \
  -o "$tmp/g.json" 2> "$tmp/time.txt" || { cat "$tmp/time.txt"; exit 1; }
grep -E '^timings' "$tmp/time.txt"
grep -E 'Maximum resident set size' "$tmp/time.txt"
ls -l "$tmp/g.json" | awk '{print "json bytes:", $5}'
