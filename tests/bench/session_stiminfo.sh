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

case $what in
make)
  # The session's arguments (4 labels x 50 trials of 10 s, the units' tuning) are stiminfo_session.py's.
  here=$(cd "$(dirname "$0")" && pwd)
  # shellcheck disable=SC2046
  "$rastrum" $(/usr/bin/python3 -c 'import sys; sys.dont_write_bytecode = True; sys.path.insert(0, sys.argv[1])
import stiminfo_session; print(" ".join(stiminfo_session.session_synth(sys.argv[2])))' "$here" "$session") ;;
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
