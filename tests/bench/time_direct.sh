#!/usr/bin/env bash
# Whole-process timing of `rastrum direct` on the reference recording of the foundation:
# 100 units x 100 trials x 10 s at 20 Hz (inhomogeneous Poisson), bins 1, 2, 4, 8 ms, letters 1-12.
# Usage: tests/bench/time_direct.sh [build/rastrum] [threads]. Prints wall time, CPU time and peak
# memory from GNU time; figures go to notes/performance.md.
set -euo pipefail
rastrum=${1:-build/rastrum}
threads=${2:-2}
folder=$(mktemp -d)
trap 'rm -rf "$folder"' EXIT
rates=$(printf '20%.0s,' $(seq 100)); rates=${rates%,}
"$rastrum" synth poisson --out "$folder/lab.h5" --seed 7 --trials 100 --duration-s 10 \
  --rate-hz "$rates" --modulation 1 --correlation-ms 15 --resolution-ms 1 2>/dev/null
/usr/bin/time -f "wall %e s, user %U s, system %S s, peak memory %M KiB" \
  "$rastrum" direct "$folder/lab.h5" --bin-ms 1,2,4,8 --letters 1-12 --threads "$threads" \
  --quiet --json "$folder/out.json"
