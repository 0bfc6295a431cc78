#!/usr/bin/env bash
# (For a nightly plan of many studies split over an array, see examples/slurm-batch-array.sh.)
# A study of 400 replicates as a Slurm job array of 8 shards, then one merge.
#
#   sbatch --array=0-7 examples/slurm-array.sh            # the shards, in parallel
#   sbatch --dependency=afterok:<array job id> --wrap \
#     "forebear merge parts/shard-* --out dossier"          # the merge, once all shards succeed
#
# Every shard computes the same full-data search and its own replicates; replicate k is drawn from
# (seed, k) alone, so the merged digest equals that of one single run with the same settings.
#SBATCH --job-name=forebear-shard
#SBATCH --cpus-per-task=4
#SBATCH --time=02:00:00
set -euo pipefail

DATA=${DATA:-study.csv}
TARGET=${TARGET:-assay_potency}   # the outcome column of your study
REPLICATES=${REPLICATES:-400}    # 2B for complementary pairs: even
SHARDS=${SHARDS:-8}
SEED=${SEED:-20261201}

per=$(( (REPLICATES + SHARDS - 1) / SHARDS ))
start=$(( SLURM_ARRAY_TASK_ID * per ))
end=$(( start + per )); (( end > REPLICATES )) && end=$REPLICATES

forebear --threads "${SLURM_CPUS_PER_TASK}" analyze "$DATA" --target "$TARGET" \
  --replicates "$REPLICATES" --seed "$SEED" \
  --replicate-range "${start}..${end}" --out "parts/shard-${SLURM_ARRAY_TASK_ID}"
