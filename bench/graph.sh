#!/usr/bin/env bash
# Fault-graph extraction benchmark (issue 5): rotated surface code memory, d rounds, uniform
# circuit-level depolarizing noise p = 0.001, one thread.
#   - extraction time (from `slant graph --timings`, without writing): wall time and the
#     thread's CPU time (the machine is shared, so wall time includes waiting for a core);
#     best of $REPS runs per distance;
#   - time over d = 5..25 fitted against circuit volume = qubits × layers of the noiseless
#     circuit (from `slant check`; least squares on logs);
#   - peak memory (/usr/bin/time -v, whole process) and JSON streaming time at d = 25.
# Targets: extraction ≤ 1 s and ≤ 1 GiB at d = 25; exponent ≤ 1.1; JSON ≤ 1 s more.
# Usage: bench/graph.sh   (builds with --release into $CARGO_TARGET_DIR or target/)
set -euo pipefail
cd "$(dirname "$0")/.."
export RAYON_NUM_THREADS=1
REPS=${REPS:-3}
cargo build --release --quiet
bin="${CARGO_TARGET_DIR:-target}/release/slant"
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
noise='circuit p=0.001'

echo "d  volume  wall_s  cpu_s  edges  faults"
: > "$tmp/fit"
for d in 5 9 13 17 21 25; do
  "$bin" new surface --distance "$d" --rounds "$d" -o "$tmp/s$d.slant"
  info=$("$bin" check "$tmp/s$d.slant")
  qubits=$(sed -nE 's/^ +qubits +([0-9]+).*/\1/p' <<<"$info")
  layers=$(sed -nE 's/^ +layers +([0-9]+).*/\1/p' <<<"$info")
  volume=$((qubits * layers))
  best_w=; best_c=
  for _ in $(seq "$REPS"); do
    line=$("$bin" graph "$tmp/s$d.slant" --noise "$noise" --format text --timings -o /dev/null 2>&1 | grep '^timings')
    w=$(sed -E 's/.*extract ([0-9.]+) s.*/\1/' <<<"$line")
    c=$(sed -nE 's/.*\(cpu ([0-9.]+) s\).*/\1/p' <<<"$line")
    c=${c:-$w}
    best_w=$(python3 -c "print(min(float('$w'), float('${best_w:-inf}')))")
    best_c=$(python3 -c "print(min(float('$c'), float('${best_c:-inf}')))")
  done
  mech=$(sed -E 's/.*; ([0-9]+) edges.*/\1/' <<<"$line")
  faults=$(sed -E 's/.* ([0-9]+) faults/\1/' <<<"$line")
  echo "$d  $volume  $best_w  $best_c  $mech  $faults"
  echo "$volume $best_w $best_c" >> "$tmp/fit"
done
python3 - "$tmp/fit" <<'PY'
import math, sys
pts = [tuple(map(float, l.split())) for l in open(sys.argv[1])]
def fit(col):
    # Times print with millisecond resolution: a point that rounds to zero cannot be fitted.
    use = [p for p in pts if p[col] > 0]
    xs = [math.log(p[0]) for p in use]; ys = [math.log(p[col]) for p in use]
    n = len(xs); mx = sum(xs) / n; my = sum(ys) / n
    return sum((x - mx) * (y - my) for x, y in zip(xs, ys)) / sum((x - mx) ** 2 for x in xs)
print(f"fitted exponent against volume (qubits x layers): wall {fit(1):.2f}, cpu {fit(2):.2f} (target <= 1.1)")
PY

echo "--- d = 25, JSON streamed to a file (render + write + fsync), peak memory of the whole process"
/usr/bin/time -v "$bin" graph "$tmp/s25.slant" --noise "$noise" --format json --timings \
  -o "$tmp/g.json" 2> "$tmp/time.txt" || { cat "$tmp/time.txt"; exit 1; }
grep -E '^timings' "$tmp/time.txt"
grep -E 'Maximum resident set size|User time|System time|Elapsed' "$tmp/time.txt"
ls -l "$tmp/g.json" | awk '{print "json bytes:", $5}'
