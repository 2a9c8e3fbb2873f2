#!/bin/bash
# One shard of a wearout evaluation per Slurm array task.
#
#   sbatch --array=0-15 deploy/slurm/evaluate-array.sh SCENARIO POLICY TRIALS OUTDIR
#
# The array index is the share K (count the array from 0); the number of
# shares is $SHARDS if set, else the array's task count. OUTDIR must be on a
# file system every node sees; use a fresh folder per run. A task that is
# cancelled or pre-empted leaves no partial shard (it writes to a hidden
# temporary file and renames it when complete), so it can simply run again:
#
#   sbatch --export=ALL,SHARDS=16 --array=5 deploy/slurm/evaluate-array.sh ...
#
# Set WEAROUT to the binary's path if it is not on PATH.
#SBATCH --job-name=wearout-shard
#SBATCH --cpus-per-task=2
#SBATCH --mem=512M
#SBATCH --time=04:00:00
#SBATCH --output=wearout-shard-%A_%a.log
set -euo pipefail

if [ $# -ne 4 ]; then
    echo "usage: sbatch --array=0-N deploy/slurm/evaluate-array.sh SCENARIO POLICY TRIALS OUTDIR" >&2
    exit 2
fi
SCENARIO=$1
POLICY=$2
TRIALS=$3
OUTDIR=$4
K=${SLURM_ARRAY_TASK_ID:?"run this as an array job: sbatch --array=0-15 ..."}
N=${SHARDS:-${SLURM_ARRAY_TASK_COUNT:?"no SHARDS and no SLURM_ARRAY_TASK_COUNT"}}
WEAROUT=${WEAROUT:-wearout}

mkdir -p "$OUTDIR"
exec "$WEAROUT" evaluate "$SCENARIO" \
    --policy "$POLICY" \
    --trials "$TRIALS" \
    --threads "${SLURM_CPUS_PER_TASK:-1}" \
    --shard "$K/$N" \
    --out "$OUTDIR/part-$K-of-$N.shard"
