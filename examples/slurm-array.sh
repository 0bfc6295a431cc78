#!/usr/bin/env bash
# (For a nightly plan of many studies split over an array, see examples/slurm-batch-array.sh.)
# A study of 400 replicates as a Slurm job array of 8 shards, then one merge.
#
#   sbatch --array=0-7 examples/slurm-array.sh            # the shards, in parallel
#   sbatch --dependency=afterok:<array job id> --wrap \
#     "forebear merge parts/shard-* --out dossier"          # the merge, once all shards succeed
#
# Slurm numbers the array tasks from 0 (SLURM_ARRAY_TASK_ID) and runs the script in the folder it
# was submitted from. Every shard computes the same full-data search and its own replicates
# (examples/replicate-shard.sh); replicate k is drawn from (seed, k) alone, so the merged digest
# equals that of one single run with the same settings.
#SBATCH --job-name=forebear-shard
#SBATCH --cpus-per-task=4
#SBATCH --time=02:00:00
set -euo pipefail

SHARDS=${SHARDS:-8}   # keep equal to the --array size
THREADS=${SLURM_CPUS_PER_TASK:-1} exec sh "${EXAMPLES:-examples}/replicate-shard.sh" \
  "$SLURM_ARRAY_TASK_ID" "$SHARDS"
