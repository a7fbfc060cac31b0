#!/usr/bin/env bash
# Whole-run benchmarks: generate synthetic weekly panels with `almanac panel`
# and time `almanac run` on them with /usr/bin/time -v (wall time and peak
# RSS), at 1 and 2 workers. Prints a Markdown table. Usage:
#
#   pipeline/bench/run.sh [SERIES ...]     (default: 20000 100000)
#
# Needs /usr/bin/time (Debian: time). Panels go to $BENCH_DIR (default a
# temporary folder); 1,000,000 series take about 1.3 GB of Parquet and a few
# GB of temporary spill space.
set -euo pipefail
cd "$(dirname "$0")/../.."
sizes=("$@")
[ ${#sizes[@]} -gt 0 ] || sizes=(20000 100000)
dir=${BENCH_DIR:-$(mktemp -d)}
bin="$dir/almanac"
go build -o "$bin" ./cmd/almanac
echo "machine: $(nproc) cores, $(awk -F: '/model name/{print $2; exit}' /proc/cpuinfo | sed 's/^ //'), $(free -g | awk '/Mem:/{print $2}') GiB; load $(cut -d' ' -f1-3 /proc/loadavg)"
echo
echo "| series | periods | methods | folds | workers | wall s | peak RSS MiB | series/s |"
echo "|---:|---:|---|---:|---:|---:|---:|---:|"
for n in "${sizes[@]}"; do
  panel="$dir/panel-$n.parquet"
  [ -f "$panel" ] || "$bin" panel "$panel" --series "$n" --length 156 --intermittent 0.1 >/dev/null
  cat > "$dir/spec-$n.yaml" <<YAML
version: 1
name: bench-$n
sources: [$panel]
columns: {time: period, value: units, keys: [region, item]}
calendar: {frequency: week}
methods: [naive, seasonal_naive, drift, {method: classical}, sba, theta]
horizon: 13
backtest: {folds: 3}
intervals: {levels: [80, 95]}
output: $dir/run-$n
YAML
  for w in 1 2; do
    if [ "$w" = 1 ] && [ "$n" -gt 200000 ]; then continue; fi
    out=$( { /usr/bin/time -v "$bin" run "$dir/spec-$n.yaml" --workers "$w" -q >/dev/null; } 2>&1 )
    wall=$(echo "$out" | awk -F': ' '/Elapsed/{print $2}' | awk -F: '{ if (NF==3) print $1*3600+$2*60+$3; else print $1*60+$2 }')
    rss=$(echo "$out" | awk -F': ' '/Maximum resident/{printf "%.0f", $2/1024}')
    rate=$(awk -v n="$n" -v s="$wall" 'BEGIN{printf "%.0f", n/s}')
    echo "| $n | 156 | 6 | 3 | $w | $wall | $rss | $rate |"
  done
done
