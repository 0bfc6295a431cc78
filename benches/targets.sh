#!/bin/sh
# Several targets in one run against one run per target, side by side (docs/benchmarks.md,
# "Several targets"). By hand: benches/targets.sh [DATA] [REPLICATES]
# Builds nothing: run `cargo build --release` first. Compares user+sys CPU seconds (the machine
# may be shared; CPU time is what the sharing saves) and checks that every target's result digest
# is the same both ways.
set -eu
DATA=${1:-/work/shared/reference-data/sem/alarm_nonlinear_n5000_seed1.csv}
REPLICATES=${2:-0}
BIN=${FOREBEAR:-target/release/forebear}
WORK=${TMPDIR:-/tmp}/forebear-bench-targets-$$
mkdir -p "$WORK"
trap 'rm -rf "$WORK"' EXIT
echo "machine: $(nproc) cores, $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2 | sed 's/^ //')"
echo "load before: $(cut -d' ' -f1-3 /proc/loadavg)"
TARGETS=$(head -1 "$DATA" | tr -d '\r' | tr ',' ' ')
cpu() { # prints "wall user sys" of the command
    /usr/bin/time -f '%e %U %S' -o "$WORK/time" "$@" >/dev/null 2>&1
    cat "$WORK/time"
}
one=$(cpu "$BIN" analyze "$DATA" --all-targets --replicates "$REPLICATES" --out "$WORK/one")
sep_wall=0; sep_user=0; sep_sys=0
for t in $TARGETS; do
    set -- $(cpu "$BIN" analyze "$DATA" --target "$t" --replicates "$REPLICATES" --out "$WORK/sep/$t")
    sep_wall=$(echo "$sep_wall + $1" | bc); sep_user=$(echo "$sep_user + $2" | bc); sep_sys=$(echo "$sep_sys + $3" | bc)
done
echo "load after: $(cut -d' ' -f1-3 /proc/loadavg)"
set -- $one
echo "one run, all targets:  wall $1 s, user $2 s, sys $3 s"
echo "one run per target:    wall $sep_wall s, user $sep_user s, sys $sep_sys s"
echo "CPU ratio (separate / shared): $(echo "scale=2; ($sep_user + $sep_sys) / ($2 + $3)" | bc)"
echo "wall ratio (separate / shared): $(echo "scale=2; $sep_wall / $1" | bc)"
same=0; differ=0
for t in $TARGETS; do
    a=$(grep -m1 '^  "digest"' "$WORK/one/$t/result.json")
    b=$(grep -m1 '^  "digest"' "$WORK/sep/$t/result.json")
    if [ "$a" = "$b" ]; then same=$((same + 1)); else differ=$((differ + 1)); echo "DIFFERS: $t"; fi
done
echo "digests: $same identical, $differ different"
