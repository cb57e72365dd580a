#!/usr/bin/env bash
# Stimulus information over a 1,000-unit session: every unit alone and its 999 neighbouring pairs
# (u1,u2 ... u999,u1000), count code over the whole 10 s trial, default shuffles and resamples.
# notes/performance.md, "Stimulus information over a 1,000-unit session", has the figures.
#   tests/bench/session_stiminfo.sh make RASTRUM SESSION.h5      make the session (200 trials x 10 s)
#   tests/bench/session_stiminfo.sh run RASTRUM SESSION.h5 OUT.json [UNITS [THREADS]]
# `run` times `rastrum stiminfo` on the first UNITS units and their UNITS - 1 pairs (default 1000, the
# whole session; a unit's and a pair's records do not depend on the others, so a subset's cost is
# its share of the whole) under GNU time (Debian package `time`) and prints
# "wall_s user_s sys_s peak_KiB".
set -euo pipefail
what=$1 rastrum=$2 session=$3

# Session: 4 labels x 50 trials of 10 s; unit i fires a Poisson count of mean 100 (1 + d cos(2 pi
# (c - p) / 4)) spikes in label c = 0..3 (10 Hz on average), with tuning depth d = 0.05 (i mod 5)
# (every fifth unit untuned) and preferred label p = i mod 4.
session_means() {
  /usr/bin/python3 -c '
import math
for i in range(1000):
    d, p = (i % 5) * 0.05, i % 4
    print("--means " + ",".join("%.4g" % (100 * (1 + d * math.cos(2 * math.pi * (c - p) / 4))) for c in range(4)))'
}

case $what in
make)
  # shellcheck disable=SC2046
  "$rastrum" synth conditions --out "$session" --seed 63 --labels a,b,c,d --trials-per-condition 50 \
    --duration-s 10 $(session_means) ;;
run)
  out=$4 units=${5:-1000} threads=${6:-1}
  args=()
  for ((i = 1; i <= units; ++i)); do args+=(--unit "u$i"); done
  for ((i = 1; i < units; ++i)); do args+=(--population "u$i,u$((i + 1))"); done
  timing=$(mktemp)
  trap 'rm -f "$timing"' EXIT
  /usr/bin/time -f "%e %U %S %M" -o "$timing" "$rastrum" stiminfo "$session" --window-ms 0:10000 --code count \
    "${args[@]}" --threads "$threads" --quiet --json "$out"
  cat "$timing" ;;
*)
  echo "usage: $0 make|run RASTRUM SESSION.h5 ..." >&2; exit 2 ;;
esac
