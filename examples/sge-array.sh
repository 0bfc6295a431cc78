#!/usr/bin/env bash
# A study of 400 replicates as a Grid Engine (SGE) array job of 8 tasks, then one merge.
#
#   qsub -N forebear-shard examples/sge-array.sh                          # the shards
#   qsub -hold_jid forebear-shard -b y -cwd forebear merge 'parts/shard-*' --out dossier
#
# Grid Engine numbers the tasks from 1 (SGE_TASK_ID, 1..8 below), so shard SGE_TASK_ID-1 of 8
# runs; NSLOTS is the number of slots of the parallel environment.
#$ -t 1-8
#$ -cwd
#$ -pe smp 4
#$ -l h_rt=02:00:00
set -euo pipefail

SHARDS=${SHARDS:-8}   # keep equal to the number of tasks
THREADS=${NSLOTS:-1} exec sh "${EXAMPLES:-examples}/replicate-shard.sh" \
  "$(( SGE_TASK_ID - 1 ))" "$SHARDS"
