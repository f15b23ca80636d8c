#!/usr/bin/env bash
# Merges the N shard stores PREFIX.1.jsonl ... PREFIX.N.jsonl into PREFIX.jsonl, refusing to
# merge when a shard's store is missing (a shard that never started).
#
#   scripts/cluster/merge.sh PREFIX N
set -euo pipefail
if [ $# -ne 2 ]; then
  echo "usage: $0 PREFIX N" >&2
  exit 2
fi
prefix=$1 n=$2
stores=()
for k in $(seq 1 "$n"); do
  if [ ! -f "$prefix.$k.jsonl" ]; then
    echo "$0: shard $k/$n has no store \`$prefix.$k.jsonl\`: rerun it (it resumes) before merging" >&2
    exit 1
  fi
  stores+=("$prefix.$k.jsonl")
done
exec "${SLANT:-slant}" merge "${stores[@]}" -o "$prefix.jsonl"
