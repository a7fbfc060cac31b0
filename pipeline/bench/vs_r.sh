#!/usr/bin/env bash
# Throughput of a whole almanac run beside R's stats package doing the same
# seven methods on the same 1,000 weekly series (156 weeks, season 52,
# horizon 13, no backtest). Usage, from anywhere:
#
#   pipeline/bench/vs_r.sh
#
# Builds almanac, writes a panel CSV with `almanac panel`, times
# `almanac run` at 1 and 2 workers (each twice, the faster kept) and
# `Rscript pipeline/bench/vs_r.R` (twice, the faster kept) with
# /usr/bin/time, then compares the forecasts of a few series (almanac's via
# `almanac explain --all-forecasts`). Prints a Markdown report and writes it
# to pipeline/bench/vs_r-latest.md. Needs go, Rscript (base R + stats) and
# /usr/bin/time (Debian: time). Set VS_R_KEEP=1 to keep the work folder.
#
# The machine may be shared: the load averages before and after each timed
# part are printed and kept in the report, so read the numbers with them.
set -euo pipefail
cd "$(dirname "$0")/../.."
root=$PWD
for tool in go Rscript /usr/bin/time; do
  command -v "$tool" >/dev/null || { echo "vs_r.sh: $tool not found" >&2; exit 2; }
done

TMP=$(mktemp -d "${TMPDIR:-/tmp}/almanac-vs-r.XXXXXX")
if [ "${VS_R_KEEP:-0}" = 1 ]; then
  echo "work folder: $TMP (kept)" >&2
else
  trap 'rm -rf "$TMP"' EXIT
fi
series=1000
length=156
season=52
horizon=13
report=$root/pipeline/bench/vs_r-latest.md
load() { cut -d' ' -f1-3 /proc/loadavg; }
load_start=$(load)

echo "building almanac ..." >&2
go build -o "$TMP/almanac" ./cmd/almanac
"$TMP/almanac" panel "$TMP/panel1k.csv" --series "$series" --length "$length" --intermittent 0 >/dev/null

cat > "$TMP/spec.yaml" <<YAML
version: 1
name: vs-r-$series
sources: [$TMP/panel1k.csv]
columns: {time: period, value: units, keys: [region, item]}
calendar: {frequency: week, season_length: $season}
methods:
  - seasonal_naive
  - naive
  - drift
  - mean
  - {method: classical, form: additive, trend: adjusted_line}
  - {method: holt_winters, seasonal: additive}
  - ses
horizon: $horizon
output: $TMP/run
YAML

# timed LABEL OUT CMD...: runs CMD under /usr/bin/time with its stdout in
# OUT; sets WALL (s, /usr/bin/time's %e: 10 ms steps) and PEAK (KB); logs
# the load before and after and, for a finer look, bash's microsecond clock
# around the same call (which adds /usr/bin/time's own start, ~1 ms).
loadlog=()
timed() {
  local label=$1 out=$2
  shift 2
  local before after t0 t1 fine
  before=$(load)
  t0=$EPOCHREALTIME
  /usr/bin/time -f "%e %M" -o "$TMP/time.txt" "$@" >"$out"
  t1=$EPOCHREALTIME
  after=$(load)
  read -r WALL PEAK < <(tail -n 1 "$TMP/time.txt")
  fine=$(awk -v a="$t0" -v b="$t1" 'BEGIN{printf "%.3f", b - a}')
  local line
  line=$(printf '| %s | %s | %s | %.0f | %s | %s |' "$label" "$WALL" "$fine" "$(echo "$PEAK" | awk '{print $1/1024}')" "$before" "$after")
  loadlog+=("$line")
  echo "timed: $label: wall ${WALL} s ($fine s), peak $((PEAK / 1024)) MiB; load before $before, after $after" >&2
}
# faster A_WALL A_PEAK B_WALL B_PEAK: prints the pair with the smaller wall.
faster() { awk -v a="$1" -v ap="$2" -v b="$3" -v bp="$4" 'BEGIN{ if (a+0 <= b+0) print a, ap; else print b, bp }'; }

# An untimed run first: it warms the file cache for both tools alike, checks
# that every method forecast every series, and is the run the agreement
# check reads.
"$TMP/almanac" run "$TMP/spec.yaml" --workers 2 -q --out "$TMP/run-check" >"$TMP/run-check.txt"
summary=$(head -n 1 "$TMP/run-check.txt")
problems=$(grep '^problems:' "$TMP/run-check.txt" || true)
if grep -E 'forecast [0-9]+ of [0-9]+ series' "$TMP/run-check.txt" | awk '$3 != $5 {bad=1} END{exit !bad}'; then
  echo "vs_r.sh: almanac did not forecast every series:" >&2
  cat "$TMP/run-check.txt" >&2
fi

declare -A best_wall best_peak
for w in 1 2; do
  timed "almanac run, $w worker(s), try 1" "$TMP/a-$w-1.txt" "$TMP/almanac" run "$TMP/spec.yaml" --workers "$w" -q --out "$TMP/run-$w-1"
  w1=$WALL p1=$PEAK
  timed "almanac run, $w worker(s), try 2" "$TMP/a-$w-2.txt" "$TMP/almanac" run "$TMP/spec.yaml" --workers "$w" -q --out "$TMP/run-$w-2"
  read -r best_wall[$w] best_peak[$w] < <(faster "$w1" "$p1" "$WALL" "$PEAK")
done

timed "Rscript vs_r.R, try 1" "$TMP/r-1.txt" Rscript pipeline/bench/vs_r.R "$TMP/panel1k.csv"
r1=$WALL rp1=$PEAK
timed "Rscript vs_r.R, try 2" "$TMP/r-2.txt" Rscript pipeline/bench/vs_r.R "$TMP/panel1k.csv"
read -r r_wall r_peak < <(faster "$r1" "$rp1" "$WALL" "$PEAK")
if awk -v a="$r1" -v b="$WALL" 'BEGIN{exit !(a+0 <= b+0)}'; then r_out=$TMP/r-1.txt; else r_out=$TMP/r-2.txt; fi
# jget FILE PART FIELD: a number from vs_r.R's JSON lines.
jget() { grep "\"part\":\"$2\"" "$1" | sed -E "s/.*\"$3\":([0-9.]+).*/\\1/" | head -n 1; }
r_read=$(jget "$r_out" read seconds)
r_split=$(jget "$r_out" split seconds)
r_loop=$(jget "$r_out" loop seconds)
r_counts=$(grep '"series":' "$r_out")
r_series=$(echo "$r_counts" | sed -E 's/.*"series":([0-9]+).*/\1/')
r_fail=$(echo "$r_counts" | sed -E 's/.*"failures":([0-9]+).*/\1/')
r_warn=$(echo "$r_counts" | sed -E 's/.*"warnings":([0-9]+).*/\1/')
[ "$r_series" = "$series" ] || { echo "vs_r.sh: R found $r_series series, want $series" >&2; exit 1; }

# Untimed: R's time by method (a second pass inside R) and the forecasts of
# five series for the agreement check.
keys=$(awk -F, 'NR > 1 {print $2 "/" $3}' "$TMP/panel1k.csv" | sort -u | awk -v n="$series" 'NR == 1 || NR == int(n/4) || NR == int(n/2) || NR == int(3*n/4) || NR == n')
echo "$keys" > "$TMP/check-keys.txt"
Rscript pipeline/bench/vs_r.R "$TMP/panel1k.csv" --by-method --check "$TMP/check-keys.txt" "$TMP/r-check.csv" >"$TMP/r-by-method.txt"
: > "$TMP/a-check.csv"
for k in $keys; do
  "$TMP/almanac" explain "$TMP/run-check" "${k%%/*}" "${k#*/}" --all-forecasts |
    awk -v key="$k" '
      /^forecast · / { method = $3; next }
      method != "" && /^ +[0-9]+ +[0-9][0-9][0-9][0-9]-/ { print key "," method "," $1 "," $3; next }
      /^$/ { method = "" }' >> "$TMP/a-check.csv"
done
# One row per method: series and values compared, how many are equal once
# R's value is rounded to two decimals as explain rounds almanac's, and the
# mean and max |R - almanac| (almanac's value as printed).
agree=$(awk -F, '
  NR == FNR { if (FNR > 1) r[$1 "," $2 "," $3] = $4; next }
  {
    id = $1 "," $2 "," $3
    if (!($2 in order)) { order[$2] = ++nm; name[nm] = $2 }
    if (!(id in r) || r[id] == "NA" || $4 == "·") { missing[$2]++; next }
    d = r[id] - $4; if (d < 0) d = -d
    if (d > max[$2]) max[$2] = d
    sum[$2] += d
    if (sprintf("%.2f", r[id]) == sprintf("%.2f", $4)) same[$2]++
    n[$2]++; seen[$2 "," $1] = 1
  }
  END {
    for (i = 1; i <= nm; i++) {
      m = name[i]; s = 0
      for (k in seen) if (index(k, m ",") == 1) s++
      printf "| %s | %d | %d | %d | %.4f | %.4f | %s |\n", m, s, n[m], same[m], sum[m] / n[m], max[m], (same[m] == n[m] && !missing[m]) ? "yes" : "no" (missing[m] ? " (" missing[m] " values missing on one side)" : "")
    }
  }' "$TMP/r-check.csv" "$TMP/a-check.csv")

load_end=$(load)
cpu=$(awk -F: '/model name/ {sub(/^ /, "", $2); print $2; exit}' /proc/cpuinfo)
mem=$(free -g | awk '/Mem:/ {print $2}')
rver=$(Rscript -e 'cat(R.version.string)')
gover=$(go env GOVERSION)
ratio() { awk -v r="$1" -v a="$2" 'BEGIN{printf "%.1f", r / a}'; }
row() {  # row TOOL WORKERS WALL PEAK_KB
  awk -v t="$1" -v w="$2" -v s="$3" -v p="$4" -v n="$series" 'BEGIN{
    printf "| %s | %s | %.2f | %.0f | %.2f | %s |\n", t, w, s, n / s, 1000 * s / n, (p == "" ? "" : sprintf("%.0f", p / 1024)) }'
}
by_method=$(grep '"part":"method"' "$TMP/r-by-method.txt" | sed -E 's/.*"method":"([^"]+)","seconds":([0-9.]+),"failures":([0-9]+),"warnings":([0-9]+).*/\1 \2 \3 \4/' |
  awk -v n="$series" '{printf "| %s | %.3f | %.3f | %d | %d |\n", $1, $2, 1000 * $2 / n, $3, $4}')

{
  echo "# almanac beside R stats: $series weekly series, seven methods"
  echo
  echo "machine: $(nproc) cores, $cpu, $mem GiB; load averages (1, 5, 15 min) at start $load_start, at end $load_end"
  echo
  echo "panel: \`almanac panel --series $series --length $length --intermittent 0\` (CSV, default stream 1), season $season, horizon $horizon, no backtest;"
  echo "methods: seasonal_naive, naive, drift, mean, classical (additive, adjusted_line), holt_winters (additive), ses."
  echo "almanac built with $gover; $rver, base + stats, one Rscript process."
  echo "Each wall time is the faster of two runs, measured by /usr/bin/time (%e, 10 ms steps) around the whole"
  echo "process; the last table also has each run on a microsecond clock."
  echo
  echo "| tool | workers | wall s for $series series | series/s | ms per series | peak RSS MiB |"
  echo "|---|---:|---:|---:|---:|---:|"
  row "almanac run" 1 "${best_wall[1]}" "${best_peak[1]}"
  row "almanac run" 2 "${best_wall[2]}" "${best_peak[2]}"
  row "R stats, whole Rscript process" 1 "$r_wall" "$r_peak"
  row "R stats, forecast loop alone" 1 "$r_loop" ""
  echo
  echo "almanac ÷ R throughput (R's whole process): **$(ratio "$r_wall" "${best_wall[1]}")×** at 1 worker, **$(ratio "$r_wall" "${best_wall[2]}")×** at 2 workers."
  echo "Against R's forecast loop alone (no R start-up, read.csv or split): $(ratio "$r_loop" "${best_wall[1]}")× and $(ratio "$r_loop" "${best_wall[2]}")×."
  echo
  echo "What the times hold. almanac: the whole process: start, read and shape the CSV, fit the seven methods, the"
  echo "components and seasonal_factors tables of the spec's default decomposition (classical, multiplicative), writing"
  echo "forecasts, components, seasonal_factors and problems as Parquet and the manifest. R: the whole Rscript process:"
  echo "R's start-up, read.csv ($r_read s), ordering and split by series ($r_split s) and the loop ($r_loop s); it writes nothing."
  echo "almanac's run: $summary; $problems."
  echo "R's loop: $r_fail error(s) (no forecast) and $r_warn warning(s), by method below (HoltWinters's optim can stop"
  echo "with \"optimization failure\" or warn of line-search trouble)."
  echo
  echo "## R's time by method (a second, untimed pass over every series, each method alone)"
  echo
  echo "| method | s for $series series | ms per series | errors | warnings |"
  echo "|---|---:|---:|---:|---:|"
  echo "$by_method"
  echo
  echo "## Agreement on $(echo "$keys" | wc -l) series ($(echo $keys | tr ' ' ','))"
  echo
  echo "almanac's values from \`almanac explain RUN REGION ITEM --all-forecasts\`, which prints two decimals; a value"
  echo "agrees when R's, rounded to two decimals, is the same number. seasonal_naive, naive, drift, mean and classical are the same"
  echo "definitions and should agree. holt_winters and ses are not expected to: stats::HoltWinters fixes the initial"
  echo "level, trend and season from the first seasons (start.periods = 2) and its SES starts from the first value, then"
  echo "fits only the weights by L-BFGS-B; almanac fits the initial states with the weights by least squares."
  echo
  echo "| method | series | values | equal to 2 decimals | mean abs diff | max abs diff | agree |"
  echo "|---|---:|---:|---:|---:|---:|---|"
  echo "$agree"
  echo
  echo "## Timed runs and load"
  echo
  echo "| run | wall s (/usr/bin/time) | wall s (bash clock) | peak RSS MiB | load before | load after |"
  echo "|---|---:|---:|---:|---|---|"
  printf '%s\n' "${loadlog[@]}"
} > "$report"
cat "$report"
