#!/usr/bin/env bash
# The job array of sweep-array.sbatch on one machine: N shards as background processes running
# the same driver (shard.sh), then the same merge (merge.sh). Used by the test that checks the
# merged store equals a single run's.
#
#   scripts/cluster/local.sh SPEC PREFIX N
set -euo pipefail
if [ $# -ne 3 ]; then
  echo "usage: $0 SPEC PREFIX N" >&2
  exit 2
fi
spec=$1 prefix=$2 n=$3
here=$(dirname "$0")
pids=()
for k in $(seq 1 "$n"); do
  bash "$here/shard.sh" "$spec" "$prefix" "$k" "$n" 2> "$prefix.$k.log" &
  pids+=($!)
done
failed=0
for k in $(seq 1 "$n"); do
  if ! wait "${pids[$((k - 1))]}"; then
    echo "$0: shard $k/$n failed (see $prefix.$k.log); rerun it to resume" >&2
    failed=1
  fi
done
[ "$failed" -eq 0 ] || exit 1
bash "$here/merge.sh" "$prefix" "$n"
