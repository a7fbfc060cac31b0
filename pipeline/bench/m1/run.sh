#!/usr/bin/env bash
# Accuracy benchmark on the M1 competition data (1001 series; Makridakis et
# al. 1982, Journal of Forecasting 1(2), 111–153; the data as distributed
# openly by the International Institute of Forecasters).
#
#   pipeline/bench/m1/run.sh [M1_CSV_GZ] [WORK_DIR]
#
# Converts the TRAIN part into one input and three specs per subset, runs
# them through the real almanac binary, scores the forecasts against the
# TEST part (sMAPE, MASE, beside Naive2) and writes WORK_DIR/results.md.
# The default automatic spec (no methods) is timed with /usr/bin/time;
# series per CPU-second = 1001 / (user + sys) summed over the three
# subsets. Needs Go only; CI does not run it.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../../.." && pwd)
data=${1:-$root/../shared/data/m1/m1.csv.gz}
work=${2:-${TMPDIR:-/tmp}/almanac-m1}
workers=${WORKERS:-1}
mkdir -p "$work/runs"
data=$(cd "$(dirname "$data")" && pwd)/$(basename "$data")

cd "$root"
go build -o "$work/almanac" ./cmd/almanac
go run ./pipeline/bench/m1/convert -data "$data" -out "$work"

args=()
timing="$work/timing.txt"
: >"$timing"
for sub in yearly quarterly monthly; do
  for kind in methods today default; do
    spec="$work/$sub-$kind.yaml"
    if ! "$work/almanac" check "$spec" >/dev/null 2>&1; then
      echo "skip $sub-$kind: this almanac does not accept it" >&2
      continue
    fi
    /usr/bin/time -f "$sub $kind %U %S %e" -a -o "$timing" \
      "$work/almanac" run -q -w "$workers" -o "$work/runs/$sub-$kind" "$spec" >/dev/null
    case $kind in
      methods) args+=(-run "$work/runs/$sub-$kind") ;;
      today) args+=(-run "all methods, MASE choice + top-3 mean (3 folds)=$work/runs/$sub-$kind") ;;
      default) args+=(-run "default automatic spec=$work/runs/$sub-$kind") ;;
    esac
  done
done

{
  echo "# M1 accuracy (almanac $(git -C "$root" rev-parse --short HEAD))"
  echo
  go run ./pipeline/bench/m1/score -data "$data" "${args[@]}"
  echo
  echo "CPU time (user + sys, seconds; $workers worker(s)):"
  echo
  echo "| spec | yearly | quarterly | monthly | total | series per CPU-second |"
  echo "|---|---:|---:|---:|---:|---:|"
  for kind in methods today default; do
    awk -v k="$kind" '$2 == k { t[$1] = $3 + $4; s += $3 + $4; n++ }
      END { if (n == 3) printf "| %s | %.2f | %.2f | %.2f | %.2f | %.0f |\n", k, t["yearly"], t["quarterly"], t["monthly"], s, 1001 / s }' "$timing"
  done
} >"$work/results.md"
cat "$work/results.md"
