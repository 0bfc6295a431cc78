#!/bin/sh
# Creates the input of the full-analysis benchmark (benches/core.rs, case d): 10^4 rows of
# continuous nonlinear structural-equation data on the published CHILD network structure
# (20 nodes), seed 1. Needs python3 with numpy. The output is generated, never committed.
set -eu
root=$(cd "$(dirname "$0")/.." && pwd)
out_dir="$root/target/bench-data"
mkdir -p "$out_dir"
# sem_on_dag.py appends ".csv" (and ".truth.json") to the output stem it is given.
python3 /work/shared/tools/sem_on_dag.py \
    /work/shared/reference-data/networks/child.graph.json 10000 1 "$out_dir/child-10000-seed1"
echo "$out_dir/child-10000-seed1.csv"
