#!/usr/bin/env bash
# Remakes the bundled demo recording with the project's own generator. The scenario is invented.
# Usage: make-demo-recordings.sh [RASTRUM_BINARY [OUTPUT_FOLDER]]; defaults: build/rastrum, this folder.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
rastrum=${1:-$here/../build/rastrum}
out=${2:-$here}
"$rastrum" synth poisson --out "$out/flicker-tectum.h5" --seed 20261201 \
  --trials 200 --duration-s 6 --gap-s 1.5 --background-hz 4 \
  --rate-hz 8,18,30,12 --modulation 1.2,0.8,1.5,0 --correlation-ms 15
