#!/usr/bin/env bash
# A nightly batch plan as a Slurm job array of 3 shards, then one collect step.
#
#   jid=$(sbatch --parsable --array=0-2 examples/slurm-batch-array.sh)      # the shards
#   sbatch --dependency=afterok:$jid --wrap \
#     "forebear batch plans/nightly.toml --collect nightly/shard-* --out nightly/today \
#        --previous nightly/yesterday --fail-on-drift"                        # index, summary, drift
#
# Shard i of N runs the (study, target) pairs whose position in the plan (studies by name, targets
# as listed) modulo N is i. The collect step checks that every shard of this plan is there once,
# copies the dossiers and writes the same index.html, index.md and summary.json, byte for byte, as
# one unsharded run would. A shard whose study failed exits 2 with its other dossiers complete
# (collect lists the failure in the index), so the script below counts that as done; a bad plan
# (exit 2 before anything ran, no summary.json) and a bug (exit 3) fail the task.
#SBATCH --job-name=forebear-batch
#SBATCH --cpus-per-task=4
#SBATCH --time=04:00:00
set -euo pipefail

PLAN=${PLAN:-plans/nightly.toml}
SHARDS=${SHARDS:-3}   # keep equal to the --array size

out="nightly/shard-${SLURM_ARRAY_TASK_ID}"
rm -rf "$out"   # so that a summary.json below is tonight's
forebear --threads "${SLURM_CPUS_PER_TASK}" batch "$PLAN" \
  --shard "${SLURM_ARRAY_TASK_ID}/${SHARDS}" --out "$out" \
  || { status=$?; [ "$status" -eq 2 ] && [ -f "$out/summary.json" ]; }
