#!/usr/bin/env bash
# Remakes the bundled demo recordings with the project's own generator. The scenarios are invented.
# Usage: make-demo-recordings.sh [RASTRUM_BINARY [OUTPUT_FOLDER]]; defaults: build/rastrum, this folder.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
rastrum=${1:-$here/../build/rastrum}
out=${2:-$here}
# A 6-second frozen flicker replayed 200 times to four tectal units (the direct method).
"$rastrum" synth poisson --out "$out/flicker-tectum.h5" --seed 20261201 \
  --trials 200 --duration-s 6 --gap-s 1.5 --background-hz 4 \
  --rate-hz 8,18,30,12 --modulation 1.2,0.8,1.5,0 --correlation-ms 15
# One whisker deflected in four directions, 40 times each, in random order, under three barrel
# units: u1 prefers rostral, u2 ignores the direction, u3 prefers ventral (stimulus information).
"$rastrum" synth conditions --out "$out/whisker-barrel.h5" --seed 20261203 \
  --labels rostral,caudal,dorsal,ventral --trials-per-condition 40 --duration-s 0.3 --gap-s 0.7 \
  --background-hz 2 --means 6,2,3,1.5 --means 3,3,3,3 --means 1,2,3,7
