#!/usr/bin/env bash
# Times `rastrum stiminfo` (--threads 1 and 2) and the NumPy baseline on the reference workloads W2
# and W3 (notes/performance.md, "Reference workloads"), side by side, with the ratio.
#   tests/bench/baseline/time_stiminfo.sh [build/rastrum] [W2 units: "S1 S2"]
# The baseline is far too slow for the whole of W2 and W3 (hours), so it runs on subsets and its
# time for the whole workload is extrapolated linearly through two subset sizes:
# - W2: the first S1 and S2 units (default 1 and 2), each code;
# - W3: 1 and 2 of its pairs, and 1 and 2 of its triplets (each population with its members alone,
#   as the tool analyses them); the whole is c + 50 p + 20 q, with p and q the cost of one more
#   pair and one more triplet and c the fixed cost.
# The ratio t(S2)/t(S1) is printed too: near S2/S1 when the cost is linear. Figures are wall and CPU
# (user + system) seconds and peak resident memory from GNU time (Debian package `time`); on a
# shared machine CPU seconds are the steadier measure, so the ratios are given for both. Needs
# Debian's python3 with numpy, scipy and h5py. One process at a time; the baseline uses one core.
set -euo pipefail
here=$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)
rastrum=$(realpath "${1:-build/rastrum}")
read -r s1 s2 <<< "${2:-1 2}"
python=/usr/bin/python3
# shellcheck source=stiminfo_workloads.sh
source "$here/stiminfo_workloads.sh"
folder=$(mktemp -d)
trap 'rm -rf "$folder"' EXIT
w2_make "$rastrum" "$folder/w2.h5"
export OMP_NUM_THREADS=1 OPENBLAS_NUM_THREADS=1 MKL_NUM_THREADS=1

count=(--window-ms 0:500 --code count --null-shuffles 1000)
word=(--window-ms 0:500 --code word --bin-ms 10 --binary --null-shuffles 1000)
mapfile -t populations < <(w3_populations | tr ' ' '\n')

declare -A wall cpu
# measure KEY COMMAND...: runs it under GNU time and prints "KEY wall_s cpu_s peak_MiB".
measure() {
  local key=$1; shift
  /usr/bin/time -f "%e %U %S %M" -o "$folder/time" "$@" > /dev/null 2> "$folder/stderr" || {
    cat "$folder/stderr" >&2; return 1; }
  local w u s m
  read -r w u s m < "$folder/time"
  wall[$key]=$w
  cpu[$key]=$(echo "$u + $s" | bc -l)
  printf '%-24s %10.2f %10.2f %9.1f\n' "$key" "$w" "${cpu[$key]}" "$(echo "$m / 1024" | bc -l)"
}
tool() { measure "$1" "$rastrum" stiminfo "$folder/w2.h5" "${@:2}" --quiet --json "$folder/tool.json"; }
baseline() { measure "$1" "$python" "$here/stiminfo_baseline.py" "$folder/w2.h5" "${@:2}" --json "$folder/baseline.json"; }
units() { for i in $(seq 1 "$1"); do printf -- '--unit\nu%d\n' "$i"; done; }

printf '%-24s %10s %10s %9s\n' "run" "wall s" "CPU s" "peak MiB"
for t in 1 2; do
  tool "tool-count-t$t" "${count[@]}" --threads "$t"
  tool "tool-word-t$t" "${word[@]}" --threads "$t"
  tool "tool-w3-t$t" "${count[@]}" "${populations[@]}" --threads "$t"
done
# The tool on W3's subsets too, for the same extrapolation as the baseline's (a check of it).
tool "tool-pairs-1" "${count[@]}" "${populations[@]:0:2}" --threads 1
tool "tool-pairs-2" "${count[@]}" "${populations[@]:0:4}" --threads 1
tool "tool-triplets-1" "${count[@]}" "${populations[@]:100:2}" --threads 1
tool "tool-triplets-2" "${count[@]}" "${populations[@]:100:4}" --threads 1
for n in "$s1" "$s2"; do
  mapfile -t chosen < <(units "$n")
  baseline "base-count-$n" "${count[@]}" "${chosen[@]}"
  baseline "base-word-$n" "${word[@]}" "${chosen[@]}"
done
# Pairs are the first 2 x 50 entries of $populations (option, value), triplets the next 2 x 20.
baseline "base-pairs-1" "${count[@]}" "${populations[@]:0:2}"
baseline "base-pairs-2" "${count[@]}" "${populations[@]:0:4}"
baseline "base-triplets-1" "${count[@]}" "${populations[@]:100:2}"
baseline "base-triplets-2" "${count[@]}" "${populations[@]:100:4}"

# The whole workload from two subsets: t(N) = t1 + (t2 - t1) (N - n1) / (n2 - n1).
extrapolate() { echo "$1 + ($2 - $1) * ($5 - $3) / ($4 - $3)" | bc -l; }
w3_whole() {  # fixed cost + 50 pairs + 20 triplets, from the subsets of measure $1 (wall, cpu) and program $2 (base, tool)
  local -n m=$1
  local p1=${m[$2-pairs-1]} p2=${m[$2-pairs-2]} t1=${m[$2-triplets-1]} t2=${m[$2-triplets-2]}
  echo "$p1 - ($p2 - $p1) + 50 * ($p2 - $p1) + 20 * ($t2 - $t1)" | bc -l
}
echo
printf '%-9s %-5s %14s %18s %14s %15s %15s\n' workload time "baseline t2/t1" "baseline (whole)" "tool 1 thread" "tool 2 threads" "ratio 1 thread"
for kind in wall cpu; do
  declare -n m=$kind
  for w in count word; do
    whole=$(extrapolate "${m[base-$w-$s1]}" "${m[base-$w-$s2]}" "$s1" "$s2" 200)
    printf '%-9s %-5s %14.2f %18.0f %14.2f %15.2f %15.0f\n' "W2 $w" "$kind" "$(echo "${m[base-$w-$s2]} / ${m[base-$w-$s1]}" | bc -l)" \
      "$whole" "${m[tool-$w-t1]}" "${m[tool-$w-t2]}" "$(echo "$whole / ${m[tool-$w-t1]}" | bc -l)"
  done
  whole=$(w3_whole "$kind" base)
  printf '%-9s %-5s %14s %18.0f %14.2f %15.2f %15.0f\n' "W3" "$kind" \
    "$(printf '%.2f, %.2f' "$(echo "${m[base-pairs-2]} / ${m[base-pairs-1]}" | bc -l)" "$(echo "${m[base-triplets-2]} / ${m[base-triplets-1]}" | bc -l)")" \
    "$whole" "${m[tool-w3-t1]}" "${m[tool-w3-t2]}" "$(echo "$whole / ${m[tool-w3-t1]}" | bc -l)"
  printf '%-9s %-5s %14s %18s %14.2f %15s %15s\n' "" "" "" "tool from subsets" "$(w3_whole "$kind" tool)" "" ""
  unset -n m
done
