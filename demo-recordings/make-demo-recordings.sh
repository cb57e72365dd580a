#!/usr/bin/env bash
# Remakes the bundled demo recording with the project's own generator (run from anywhere after
# building; pass the rastrum binary if it is not build/rastrum). The scenario is invented.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
rastrum=${1:-$here/../build/rastrum}
"$rastrum" synth poisson --out "$here/flicker-tectum.h5" --seed 20261201 \
  --trials 120 --duration-s 6 --gap-s 1.5 --background-hz 4 \
  --rate-hz 8,18,30,12 --modulation 1.2,0.8,1.5,0 --correlation-ms 15
