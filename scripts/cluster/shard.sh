#!/usr/bin/env bash
# One shard of a sweep: the unit of work of a job array. The same script runs under a batch
# scheduler (sweep-array.sbatch) and locally (local.sh).
#
#   scripts/cluster/shard.sh SPEC PREFIX K N
#
# runs the tasks of SPEC whose grid index is K-1 mod N into the store PREFIX.K.jsonl. Rerunning
# it after a kill, a timeout or a preemption resumes the shard where it stopped. Environment:
# SLANT (the binary, default `slant`), JOBS (worker threads, default 1).
set -euo pipefail
if [ $# -ne 4 ]; then
  echo "usage: $0 SPEC PREFIX K N" >&2
  exit 2
fi
spec=$1 prefix=$2 k=$3 n=$4
exec "${SLANT:-slant}" sweep "$spec" --shard "$k/$n" --store "$prefix.$k.jsonl" --jobs "${JOBS:-1}"
