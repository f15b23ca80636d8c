#!/usr/bin/env bash
# Rare-event targets (issue 15): `slant estimate --method splitting` on the hook-safe rotated
# surface code, d rounds, circuit depolarizing noise, union-find decoder, release build.
#   d = 7,  p = 0.001:  per-round rate with <= 20% relative uncertainty in <= 10 minutes
#   d = 11, p = 0.0005: reached (rate ~1e-10 or below) in <= 30 minutes
# Baseline in the same run: direct sampling (`--method sampling`) of 200k shots at the same
# point gives the shot rate; the speed-up is the time direct sampling would need for the same
# relative uncertainty, (1 - P)/(P u^2) shots, over the splitting run's time.
#
#   bench/rare.sh                 both targets (about 10-20 CPU-minutes)
#   POINTS="7:0.001" bench/rare.sh    one point; DECODER=mwpm to change the decoder
# Extra arguments go to every splitting run (e.g. `--chains 16 --sweeps 200`).
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --quiet
bin="${CARGO_TARGET_DIR:-target}/release/slant"
out="target/rare"
mkdir -p "$out"
decoder="${DECODER:-uf}"
points="${POINTS:-7:0.001 11:0.0005}"
printf '%-4s %-8s %-10s %-11s %-8s %-9s %-9s %-12s %-9s\n' \
  d p per_round per_shot rel_unc wall_s cpu_s direct_s speedup
for point in $points; do
  d="${point%%:*}"; p="${point##*:}"
  circuit="$out/surface_d$d.slant"
  "$bin" new surface --distance "$d" --rounds "$d" -o "$circuit"
  json="$out/splitting_d${d}_p$p.json"
  start=$(date +%s.%N)
  /usr/bin/env time -f '%U %S' -o "$out/time.txt" \
    "$bin" estimate "$circuit" --noise "circuit p=$p" --decoder "$decoder" \
    --method splitting --json "$@" > "$json"
  end=$(date +%s.%N)
  wall=$(echo "$end - $start" | bc -l)
  cpu=$(awk '{print $1+$2}' "$out/time.txt")
  # Baseline: direct sampling throughput at the same point.
  bstart=$(date +%s.%N)
  "$bin" estimate "$circuit" --noise "circuit p=$p" --decoder "$decoder" --shots 200000 \
    --json > "$out/direct_d${d}_p$p.json"
  bend=$(date +%s.%N)
  python3 - "$json" "$d" "$p" "$wall" "$cpu" "$(echo "$bend - $bstart" | bc -l)" <<'PY'
import json, sys
r = json.load(open(sys.argv[1]))
d, p, wall, cpu, base = sys.argv[2], sys.argv[3], float(sys.argv[4]), float(sys.argv[5]), float(sys.argv[6])
P, u = r["per_shot"]["rate"], r["uncertainty"]
shots = (1 - P) / (P * u * u)
direct = base / 200000 * shots
print(f"{d:<4} {p:<8} {r['per_round']['rate']:<10.3e} {P:<11.3e} {100*u:<7.1f}% {wall:<9.1f} {cpu:<9.1f} {direct:<12.3e} {direct/wall:<9.3g}")
e = r["exponent"]
print(f"     rungs {len(r['ladder'])}, top {r['top']['scale']}x, exponent {e['exponent']:.2f} +- {e['error']:.2f}, "
      f"expected {r['expected_exponent']}, fault edges {r['fault_edges']}")
PY
done
