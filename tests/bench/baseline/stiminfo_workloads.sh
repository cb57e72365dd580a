#!/usr/bin/env bash
# The stimulus-information reference workloads of issue 6 (notes/performance.md, "Reference
# workloads", W2 and W3), to source from other scripts or to run:
#   tests/bench/baseline/stiminfo_workloads.sh make RASTRUM OUT.h5   writes the W2 recording
#   tests/bench/baseline/stiminfo_workloads.sh w3-populations        prints W3's --population options
# W2: an invented session of 200 visual-cortex units while a grating drifts in one of 8 directions,
# 40 trials each (320 trials of 0.5 s, random order, seed 62). Unit i (1-based) fires a Poisson
# number of spikes per trial with mean b (1 + d cos(2 pi (c - p) / 8)) in direction c = 0..7, where
# b = 1 + (i mod 7) spikes (2-14 Hz over the 0.5 s), p = i mod 8 its preferred direction and
# d = (i mod 5) / 4 its tuning depth (0: untuned).
w2_labels=d0,d45,d90,d135,d180,d225,d270,d315

# The --means options of W2, one per unit.
w2_means() {
  awk 'BEGIN { pi = 3.14159265358979
    for (i = 1; i <= 200; i++) {
      b = 1 + i % 7; p = i % 8; d = (i % 5) / 4; row = ""
      for (c = 0; c < 8; c++) row = row (c ? "," : "") sprintf("%.3f", b * (1 + d * cos(2 * pi * (c - p) / 8)))
      print "--means " row } }'
}

# make RASTRUM OUT.h5: the W2 recording (and OUT.answers.json with each unit's exact count information).
w2_make() {
  # shellcheck disable=SC2046
  "$1" synth conditions --out "$2" --overwrite --seed 62 --duration-s 0.5 --labels "$w2_labels" \
    --trials-per-condition 40 $(w2_means) 2>/dev/null
}

# W3's populations: 50 pairs (u1,u2 ... u99,u100) and 20 triplets (u101,u102,u103 ... u158,u159,u160).
w3_populations() {
  for i in $(seq 1 2 99); do printf -- '--population u%d,u%d\n' "$i" $((i + 1)); done
  for i in $(seq 101 3 158); do printf -- '--population u%d,u%d,u%d\n' "$i" $((i + 1)) $((i + 2)); done
}

if [[ "${BASH_SOURCE[0]}" == "$0" ]]; then
  set -euo pipefail
  case "${1:-}" in
    make) w2_make "$2" "$3" ;;
    w3-populations) w3_populations ;;
    *) echo "usage: $0 make RASTRUM OUT.h5 | w3-populations" >&2; exit 2 ;;
  esac
fi
