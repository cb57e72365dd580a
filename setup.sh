#!/usr/bin/env bash
# Sets up rastrum on Debian 12 and runs it. Nothing is assumed on the machine, not even python3:
#   ./setup.sh demo      install what the program needs, build only the program into build/, analyse
#                        the bundled demo recordings
#   ./setup.sh test      install what the program and its tests need, build everything into build/,
#                        run every test suite through ctest
#   ./setup.sh packages  only install what `test` needs (CI's sanitizer, fuzzer and valgrind steps)
# As root, missing Debian packages are installed with apt-get; otherwise the exact apt-get line is
# printed and the script stops.
set -euo pipefail
cd "$(dirname "$0")"

mode=${1:-}
case "$mode" in
  demo|test|packages) ;;
  *) echo "usage: ./setup.sh demo|test" >&2; exit 2 ;;
esac

# The program: a compiler, CMake and the libraries it links (HDF5, Eigen, Boost.Program_options,
# nlohmann-json, OpenSSL's libcrypto for SHA-256). The README lists the same packages.
program_packages=(cmake make g++ pkg-config libhdf5-dev libeigen3-dev libboost-program-options-dev
                  nlohmann-json3-dev libssl-dev)
# The tests: GoogleTest and Google Benchmark; the reference checks run general-purpose libraries
# (scipy, scikit-learn, h5py) on Debian's python3; the report page is opened in a headless browser
# (tests/browser/check_report_page.py).
test_packages=(libgtest-dev libbenchmark-dev python3 python3-numpy python3-scipy python3-sklearn
               python3-h5py chromium)

wanted=("${program_packages[@]}")
[ "$mode" != demo ] && wanted+=("${test_packages[@]}")

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

[ "$mode" = packages ] && exit 0

jobs=$(nproc 2>/dev/null || echo 2)
# Both modes share build/; each states the parts it needs, so a folder configured by the other is
# reconfigured (the program's objects are reused), never taken as it was.
if [ "$mode" = demo ]; then
  cmake -S . -B build -DCMAKE_BUILD_TYPE=Release -DRASTRUM_TESTS=OFF -DRASTRUM_BENCH=OFF >/dev/null
  cmake --build build -j"$jobs" --target rastrum
else
  cmake -S . -B build -DCMAKE_BUILD_TYPE=Release -DRASTRUM_TESTS=ON -DRASTRUM_BENCH=ON >/dev/null
  cmake --build build -j"$jobs"
fi

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
