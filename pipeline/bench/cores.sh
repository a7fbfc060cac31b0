#!/usr/bin/env bash
# How a whole run scales with cores: the same run at 1 worker
# (GOMAXPROCS=1) and 2 workers (GOMAXPROCS=2), alternated REPEATS times in
# one script run so that both see the same machine load. Prints one row per
# run (wall and CPU seconds, load average before it) and the best and median
# speed-up of 2 workers over 1. Usage:
#
#   pipeline/bench/cores.sh [SERIES] [REPEATS]     (default: 20000 5)
#
# The run: SERIES synthetic weekly series × 156 periods (`almanac panel`,
# 10% intermittent), six methods, three backtest folds, 80% and 95%
# intervals, as in run.sh. Needs /usr/bin/time (Debian: time). Timings on a
# shared machine are noisy: read the load column, and compare CPU seconds
# (user+sys). With the kernel's autogroup scheduling
# (/proc/sys/kernel/sched_autogroup_enabled = 1) each session gets a fair
# share of the CPUs whatever its thread count, so while any other session
# is busy a 2-worker run gets about one core and cannot show its speed-up
# (its CPU seconds are then about its wall seconds). To measure anyway,
# raise the benchmark session's share for the few minutes it runs (root):
#
#   setsid bash -c 'echo -10 > /proc/$$/autogroup; exec pipeline/bench/cores.sh'
set -euo pipefail
cd "$(dirname "$0")/../.."
n=${1:-20000}
reps=${2:-5}
dir=${BENCH_DIR:-$(mktemp -d)}
bin="$dir/almanac"
go build -o "$bin" ./cmd/almanac
panel="$dir/panel-$n.parquet"
[ -f "$panel" ] || "$bin" panel "$panel" --series "$n" --length 156 --intermittent 0.1 >/dev/null
cat > "$dir/spec-$n.yaml" <<YAML
version: 1
name: cores-$n
sources: [$panel]
columns: {time: period, value: units, keys: [region, item]}
calendar: {frequency: week}
methods: [naive, seasonal_naive, drift, {method: classical}, sba, theta]
horizon: 13
backtest: {folds: 3}
intervals: {levels: [80, 95]}
output: $dir/run-$n
YAML
echo "machine: $(nproc) cores, $(awk -F: '/model name/{print $2; exit}' /proc/cpuinfo | sed 's/^ //'); $n series, $reps repeats"
echo
echo "| repeat | workers | load (1 min) | wall s | user+sys s |"
echo "|---:|---:|---:|---:|---:|"
walls1=() walls2=()
for r in $(seq 1 "$reps"); do
  for w in 1 2; do
    load=$(cut -d' ' -f1 /proc/loadavg)
    t=$( { GOMAXPROCS=$w /usr/bin/time -f "%e %U %S" "$bin" run "$dir/spec-$n.yaml" --workers "$w" -q >/dev/null; } 2>&1 | tail -1)
    read -r wall user sys <<<"$t"
    cpu=$(awk -v u="$user" -v s="$sys" 'BEGIN{printf "%.2f", u+s}')
    echo "| $r | $w | $load | $wall | $cpu |"
    if [ "$w" = 1 ]; then walls1+=("$wall"); else walls2+=("$wall"); fi
  done
done
median() { printf '%s\n' "$@" | sort -g | awk '{a[NR]=$1} END{print (NR%2) ? a[(NR+1)/2] : (a[NR/2]+a[NR/2+1])/2}'; }
best() { printf '%s\n' "$@" | sort -g | head -1; }
m1=$(median "${walls1[@]}") m2=$(median "${walls2[@]}")
b1=$(best "${walls1[@]}") b2=$(best "${walls2[@]}")
echo
awk -v a="$m1" -v b="$m2" -v c="$b1" -v d="$b2" 'BEGIN{printf "median wall: 1 worker %.2f s, 2 workers %.2f s: %.2f×\nbest wall:   1 worker %.2f s, 2 workers %.2f s: %.2f×\n", a, b, a/b, c, d, c/d}'
