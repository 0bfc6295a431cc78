#!/usr/bin/env bash
# A study of 400 replicates as an IBM Spectrum LSF job array of 8 shards, then one merge.
#
#   bsub < examples/lsf-array.sh                             # the shards, in parallel
#   bsub -w 'done(forebear-shard)' forebear merge 'parts/shard-*' --out dossier
#
# LSF numbers the array elements from 1 (LSB_JOBINDEX, 1..8 below), so shard LSB_JOBINDEX-1 of 8
# runs; LSB_DJOB_NUMPROC is the number of slots given to the task.
#BSUB -J forebear-shard[1-8]
#BSUB -n 4
#BSUB -W 02:00
#BSUB -o forebear-shard.%J.%I.log
set -euo pipefail

SHARDS=${SHARDS:-8}   # keep equal to the array size
THREADS=${LSB_DJOB_NUMPROC:-1} exec sh "${EXAMPLES:-examples}/replicate-shard.sh" \
  "$(( LSB_JOBINDEX - 1 ))" "$SHARDS"
