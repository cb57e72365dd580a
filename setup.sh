#!/usr/bin/env bash
# Sets up rastrum on Debian 12 and runs it:
#   ./setup.sh demo   install what is missing, build into build/, analyse the bundled demo recording
#   ./setup.sh test   install what is missing, build into build/, run every test suite through ctest
# As root, missing Debian packages are installed with apt-get; otherwise the exact apt-get line is
# printed and the script stops.
set -euo pipefail
cd "$(dirname "$0")"

mode=${1:-}
case "$mode" in
  demo|test) ;;
  *) echo "usage: ./setup.sh demo|test" >&2; exit 2 ;;
esac

build_packages=(cmake make g++ pkg-config libhdf5-dev libeigen3-dev libboost-program-options-dev
                nlohmann-json3-dev libssl-dev libgtest-dev libbenchmark-dev)
# The reference checks run general-purpose libraries (scipy, scikit-learn, h5py) on Debian's python3.
# The report page is opened in a headless browser (tests/browser/check_report_page.py).
test_packages=(python3 python3-numpy python3-scipy python3-sklearn python3-h5py chromium)

wanted=("${build_packages[@]}")
[ "$mode" = test ] && wanted+=("${test_packages[@]}")

missing=()
for p in "${wanted[@]}"; do
  dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed" || missing+=("$p")
done
if [ ${#missing[@]} -gt 0 ]; then
  if [ "$(id -u)" -eq 0 ]; then
    echo "installing: ${missing[*]}" >&2
    apt-get update -qq
    DEBIAN_FRONTEND=noninteractive apt-get install -y -qq --no-install-recommends "${missing[@]}" >/dev/null
  else
    echo "rastrum needs these Debian packages. Install them, then run this again:" >&2
    echo "  sudo apt-get install -y ${missing[*]}" >&2
    exit 1
  fi
fi

jobs=$(nproc 2>/dev/null || echo 2)
cmake -S . -B build -DCMAKE_BUILD_TYPE=Release >/dev/null
cmake --build build -j"$jobs"

if [ "$mode" = demo ]; then
  mkdir -p out/demo
  recording=demo-recordings/flicker-tectum.h5
  ./build/rastrum survey "$recording" --json out/demo/survey.json
  echo
  ./build/rastrum direct "$recording" --bin-ms 2,4 --letters 1-8 --null-rotations 19 \
    --json out/demo/direct.json --csv out/demo/direct.csv --curves-csv out/demo/direct-curves.csv \
    --h5 out/demo/direct.h5
  echo
  ./build/rastrum stiminfo demo-recordings/whisker-barrel.h5 --window-ms 0:300 --code count \
    --slide-ms 100:50 --population u1,u3 --json out/demo/stiminfo.json --csv out/demo/stiminfo.csv
  echo
  ./build/rastrum figures out/demo/direct.json out/demo/stiminfo.json \
    --recording "$recording" --out out/demo/report
  echo "Report: out/demo/report/index.html (open it in a browser; it needs no network)"
else
  ctest --test-dir build --output-on-failure -j"$jobs"
fi
