#!/bin/sh
# One shard of a study's replicates: the command every scheduler example runs (Slurm, LSF, Grid
# Engine, Snakemake; the Kubernetes example holds the same lines in its YAML).
#
#   sh examples/replicate-shard.sh INDEX SHARDS      # INDEX counts from 0, below SHARDS
#
# Shard INDEX of SHARDS computes replicates INDEX*R/SHARDS up to (INDEX+1)*R/SHARDS (R the
# replicates, integer division): the shards cover 0..R exactly once and differ in size by at most
# one. With more shards than replicates some ranges are empty (e.g. 3..3); such a shard writes an
# empty part, which `forebear merge` accepts.
#
# Settings come from the environment: DATA, TARGET, REPLICATES (even, for complementary pairs),
# SEED, PARTS (the folder of the parts) and THREADS.
set -eu

index=$1
shards=$2
DATA=${DATA:-study.csv}
TARGET=${TARGET:-assay_potency}   # the outcome column of your study
REPLICATES=${REPLICATES:-400}
SEED=${SEED:-20261201}
PARTS=${PARTS:-parts}
THREADS=${THREADS:-1}

start=$(( index * REPLICATES / shards ))
end=$(( (index + 1) * REPLICATES / shards ))

exec forebear --threads "$THREADS" analyze "$DATA" --target "$TARGET" \
  --replicates "$REPLICATES" --seed "$SEED" \
  --replicate-range "${start}..${end}" --out "${PARTS}/shard-${index}"
