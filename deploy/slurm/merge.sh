#!/bin/bash
# Merge the shards of one run once every array task has finished:
#
#   JOB=$(sbatch --parsable --array=0-15 deploy/slurm/evaluate-array.sh b1.toml reference 1000000 shards)
#   sbatch --dependency=afterok:$JOB deploy/slurm/merge.sh shards result.json
#
# Writes the JSON a single run prints (`wearout evaluate --json`) to RESULT
# and the readable table to the job's log. If a share is missing or
# damaged, the merge says which (exit status 2); rerun that share alone.
#SBATCH --job-name=wearout-merge
#SBATCH --cpus-per-task=1
#SBATCH --mem=2G
#SBATCH --time=00:30:00
#SBATCH --output=wearout-merge-%j.log
set -euo pipefail

if [ $# -ne 2 ]; then
    echo "usage: sbatch deploy/slurm/merge.sh SHARD_DIR RESULT.json" >&2
    exit 2
fi
DIR=$1
RESULT=$2
WEAROUT=${WEAROUT:-wearout}

"$WEAROUT" merge "$DIR"/*.shard --json > "$RESULT.tmp"
mv "$RESULT.tmp" "$RESULT"
"$WEAROUT" merge "$DIR"/*.shard
