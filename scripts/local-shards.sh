#!/bin/bash
# Run one evaluation as N shard processes in parallel on this machine (as a
# scheduler's array tasks would), merge them, and check that the merge
# equals the single-process run byte for byte.
#
#   scripts/local-shards.sh [SCENARIO] [POLICY] [TRIALS] [SHARDS]
#   scripts/local-shards.sh scenarios/b1.toml reference 20000 8
#
# Uses target/release/wearout (built if missing) or $WEAROUT.
set -euo pipefail

SCENARIO=${1:-scenarios/b1.toml}
POLICY=${2:-reference}
TRIALS=${3:-20000}
SHARDS=${4:-8}
HERE=$(cd "$(dirname "$0")/.." && pwd)
WEAROUT=${WEAROUT:-$HERE/target/release/wearout}
if [ ! -x "$WEAROUT" ]; then
    (cd "$HERE" && cargo build --release)
fi
WORK=$(mktemp -d)
trap 'rm -rf "$WORK"' EXIT

echo "single process: $TRIALS trials of $SCENARIO, policy $POLICY"
"$WEAROUT" evaluate "$SCENARIO" --policy "$POLICY" --trials "$TRIALS" --json > "$WORK/single.json"

echo "$SHARDS shard processes in parallel"
pids=()
for ((k = 0; k < SHARDS; k++)); do
    "$WEAROUT" evaluate "$SCENARIO" --policy "$POLICY" --trials "$TRIALS" --threads 1 \
        --shard "$k/$SHARDS" --out "$WORK/part-$k.shard" > "$WORK/part-$k.log" &
    pids+=($!)
done
for pid in "${pids[@]}"; do
    wait "$pid"
done
cat "$WORK"/part-*.log

"$WEAROUT" merge "$WORK"/part-*.shard --json > "$WORK/merged.json"
if cmp -s "$WORK/single.json" "$WORK/merged.json"; then
    echo "merge of $SHARDS shards equals the single run, byte for byte"
else
    echo "MISMATCH between the merge and the single run:" >&2
    diff "$WORK/single.json" "$WORK/merged.json" >&2 || true
    exit 1
fi
