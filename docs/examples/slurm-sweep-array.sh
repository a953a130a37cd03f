#!/bin/bash
#SBATCH --job-name=rx-mc
#SBATCH --array=1-16
#SBATCH --cpus-per-task=8
#SBATCH --time=01:00:00
# One shard per array task; every task runs the same study definition. The
# shard count is the array's size, so `sbatch --array=1-4` makes 4 shards.
# RUNS (default 100000) and SHARDS (default shards/) may be set in the
# environment sbatch passes on; tools/test-cluster sets a small RUNS.
set -euo pipefail
mkdir -p "${SHARDS:-shards}"
rxtrain sweep cases/liquid-tank-then-tube.yaml \
  --sample 'reactions.add.rate.A=lognormal(4.5e-2 L/(mol*min),0.2)' \
  --sample 'feed.T=normal(40degC,2degC)' \
  --runs "${RUNS:-100000}" --seed 7 --jobs "${SLURM_CPUS_PER_TASK:-1}" \
  --shard "$SLURM_ARRAY_TASK_ID/$SLURM_ARRAY_TASK_COUNT" \
  --csv "${SHARDS:-shards}/mc-$SLURM_ARRAY_TASK_ID.csv"
