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
#
# Measured 2026-12-02 on the shared 2-core machine (load ~13, so wall times are meaningless;
# CPU = user seconds over both rayon threads), default options (8 walks, 100 sweeps), seed 0/1.
# "direct" = CPU time plain sampling needs for the same relative uncertainty, from its measured
# shot rate at the same point (d=7: 2.3e6 uf shots in 7.0 s; 1e5 mwpm shots in 0.72 s; d=11:
# 2e5 uf shots in 1.6 s).
#
# | d  | p      | decoder | per round      | rel. unc. | rungs | CPU s | direct CPU s | exponent (ceil(d/2)) |
# |----|--------|---------|----------------|-----------|-------|-------|--------------|----------------------|
# | 7  | 0.001  | uf      | 2.76e-5        | 10.6%     | 13    | 6.8   | 1.4          | 3.54 ± 0.07 (4)      |
# | 7  | 0.001  | uf, s=1 | 2.11e-5        | 10.2%     | 13    | 7.9   | 1.9          | 3.65 ± 0.06 (4)      |
# | 7  | 0.001  | mwpm    | 7.92e-6        | 8.7%      | 13    | 167   | 17           | 3.84 ± 0.05 (4)      |
# | 11 | 0.0005 | uf      | 4.06e-9        | 19.1%     | 26    | 164   | ~4900        | 6.12 ± 0.13 (6)      |
#
#
# Re-run 2026-12-02 19:44 UTC with the sparse MWPM (now the default decoder), quiet machine
# (load < 1), `DECODER=mwpm`, default options, and again with `--start shortest`:
#
# | d  | p      | start    | per round | rel. unc. | rungs | wall s | CPU s | direct s | speed-up | exponent (ceil(d/2)) |
# |----|--------|----------|-----------|-----------|-------|--------|-------|----------|----------|----------------------|
# | 7  | 0.001  | sampling | 8.60e-6   | 7.8%      | 13    | 2.8    | 5.2   | 2.4      | 0.83     | 3.84 ± 0.06 (4)      |
# | 7  | 0.001  | shortest | 1.00e-5   | 13.6%     | 9     | 1.8    | 3.2   | 0.67     | 0.37     | 3.73 ± 0.10 (4)      |
# | 11 | 0.0005 | sampling | 1.29e-9   | 16.3%     | 26    | 44.0   | 83.8  | 4793     | 109      | 6.00 ± 0.06 (6)      |
# | 11 | 0.0005 | shortest | 1.15e-9   | 16.0%     | 26    | 48.9   | 93.7  | 5783     | 118      | 6.16 ± 0.09 (6)      |
#
# MWPM at d=7 went from 167 CPU s (complete-graph MWPM) to 5.2 CPU s; both targets met with
# MWPM (d=7: 8.6e-6 per round, the issue's direct value 8.7e-6, +-7.8% in 3 s; d=11 at
# p=0.0005: 1.3e-9 per round, +-16%, in 44 s wall, 109x faster than direct sampling would be).
#
# Direct sampling of d=7 at p=0.001 with uf: 1.75e-4 per shot (2.5e-5 per round, 401 failures),
# inside both uf splitting intervals. Targets: d=7 in <= 10 min with <= 20%: met (7 s uf, 167 s
# mwpm); d=11 at p=0.0005 in <= 30 min: met (164 s), at 4e-9 per round with union-find (the
# issue's "~1e-10" guess is below what union-find reaches there). At d=7, p=0.001 plain sampling
# is still cheaper; the ladder pays off below about 1e-6 per shot (d=11: ~30x).
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
