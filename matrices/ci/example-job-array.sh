#!/usr/bin/env bash
# Example batch-scheduler job array (Slurm syntax; PBS/SGE array indices are read too):
# one array task per shard of a slabbench sweep, then one merge step.
#
#   sbatch --array=1-4 matrices/ci/example-job-array.sh matrices/suite.json
#   # after every task has finished (or: sbatch --dependency=afterok:<array job id> …):
#   MERGE=1 SHARDS=4 bash matrices/ci/example-job-array.sh matrices/suite.json
#
# Without a scheduler, the same script runs one shard by hand:
#   SHARD_INDEX=2 SHARDS=4 bash matrices/ci/example-job-array.sh matrices/suite.json
#
#SBATCH --job-name=slabbench-sweep
#SBATCH --cpus-per-task=2
#SBATCH --time=02:00:00
#SBATCH --output=slabbench-%A_%a.log
set -euo pipefail

SUITE=${1:-matrices/suite.json}
OUT=${OUT:-sweep-shards}
SLABBENCH=${SLABBENCH:-node dist/cli/bin.js}
# Number of shards: the array size when the scheduler says so, else SHARDS (default 4).
N=${SHARDS:-${SLURM_ARRAY_TASK_COUNT:-4}}

if [ "${MERGE:-0}" = "1" ]; then
  # merge checks that all N shards are there and that no pair is missing or duplicated.
  $SLABBENCH merge "$OUT"/shard-*/results.json --out "$OUT/merged"
  exit 0
fi

# 1-based shard index from Slurm, PBS Pro, Torque or SGE (or SHARD_INDEX by hand).
K=${SHARD_INDEX:-${SLURM_ARRAY_TASK_ID:-${PBS_ARRAY_INDEX:-${PBS_ARRAYID:-${SGE_TASK_ID:-}}}}}
if [ -z "$K" ]; then
  echo "example-job-array.sh: no array index (run under a job array, or set SHARD_INDEX)" >&2
  exit 2
fi

# Generated matrices go to a cache shared by the tasks (identical content if two tasks build the same
# case; files are written atomically). Worker threads: one per allocated CPU.
$SLABBENCH sweep "$SUITE" \
  --shard "$K/$N" \
  --out "$OUT/shard-$K" \
  --cache "$OUT/cache" \
  --jobs "${SLURM_CPUS_PER_TASK:-1}" \
  --quiet --no-report
