#!/usr/bin/env bash
# Times almanac's arima method and R's stats::arima() on the same invented
# series (bench/monthly120.json: n = 120, m = 12) in one run, and prints a
# Markdown table (also written to bench/arima-latest.md): the automatic
# choice (tests + stepwise search + final ML fit + 12-step forecast) against
# one R arima() fit + predict at the form almanac chose, and two fixed forms
# (the airline model; ARMA(2,1) with mean) against R at the same forms.
#
#   bash engines/testdata/reference/bench/arima_vs_r.sh     (from anywhere)
#
# Go: GOMAXPROCS=1, -benchtime 2s, -count 3 (median); also CPU seconds per
# fit from /usr/bin/time over a fixed number of fits, which moves less than
# wall time when the shared machine is busy. R: bench/time_arima_r.R, mean
# of 100 calls after a warm-up, method "ML" (almanac's criterion) and R's
# default "CSS-ML". The load average is printed with the table.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
ref=$(cd "$here/.." && pwd)
root=$(cd "$ref/../../.." && pwd)
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
loadavg() { cut -d' ' -f1-3 /proc/loadavg; }
load0=$(loadavg)

(cd "$root" && go test -c -o "$tmp/engines.test" ./engines/)
(cd "$root/engines" && GOMAXPROCS=1 "$tmp/engines.test" -test.run '^$' -test.bench '^BenchmarkArima' \
	-test.benchtime "${BENCHTIME:-2s}" -test.count "${COUNT:-3}") >"$tmp/go.txt"
cat "$tmp/go.txt" >&2
cpu_per_fit() { # benchmark name → CPU ms per fit over 200 fits (+1 warm-up)
	(cd "$root/engines" && GOMAXPROCS=1 /usr/bin/time -f '%U %S' "$tmp/engines.test" -test.run '^$' \
		-test.bench "^$1\$" -test.benchtime 200x 2>&1 >/dev/null | tail -1) |
		awk '{printf "%.2f", ($1 + $2) * 1000 / 201}'
}
form=$(grep -m1 -o 'form: arima([0-9,]*)[^ ]*\( with [a-z]*\)\?' "$tmp/go.txt" | sed 's/^form: //')
[ -n "$form" ] || { echo "no form in the Go output" >&2; exit 1; }
# arima(p,d,q)(P,D,Q)m [with mean|with drift] → R arguments
read -r p d q P D Q m const < <(echo "$form" | awk '{
	s = $0; c = "none"
	if (s ~ /with mean/) c = "mean"; if (s ~ /with drift/) c = "drift"
	sub(/ with .*/, "", s); gsub(/arima\(/, "", s)
	n = split(s, a, /[(),]+/)
	if (n >= 7) print a[1], a[2], a[3], a[4], a[5], a[6], a[7], c
	else print a[1], a[2], a[3], 0, 0, 0, 12, c }')
load_go=$(loadavg)
(cd "$ref" && Rscript bench/time_arima_r.R "$p" "$d" "$q" "$P" "$D" "$Q" "$m" "$const") >"$tmp/r.txt"
cat "$tmp/r.txt" >&2
load_r=$(loadavg)

med() { # median ns/op of a benchmark, in ms
	awk -v b="$1" '$1 ~ "^"b"(-[0-9]+)?$" && $4 == "ns/op" {print $3}' "$tmp/go.txt" | sort -g |
		awk '{v[++n] = $1} END {printf "%.2f", (n % 2 ? v[(n + 1) / 2] : (v[n / 2] + v[n / 2 + 1]) / 2) / 1e6}'
}
rms() { awk -v k="$1" '$1 == k {print $2}' "$tmp/r.txt"; }    # R wall ms
rcpu() { awk -v k="$1" '$1 == k {print $3}' "$tmp/r.txt"; }   # R CPU ms
ga=$(med BenchmarkArimaAutoMonthly120); gl=$(med BenchmarkArimaAirlineMonthly120); g2=$(med BenchmarkArima201Monthly120)
ca=$(cpu_per_fit BenchmarkArimaAutoMonthly120); cl=$(cpu_per_fit BenchmarkArimaAirlineMonthly120); c2=$(cpu_per_fit BenchmarkArima201Monthly120)
lik=$(awk '$1 ~ /^BenchmarkArimaLikelihoodMonthly120/ && $4 == "ns/op" {v = $3} END {printf "%.1f", v / 1e3}' "$tmp/go.txt")
{
	echo "# arima: almanac against R stats::arima, $(date -u '+%Y-%m-%d %H:%M UTC')"
	echo
	echo "Series bench/monthly120.json (invented, n = 120, m = 12). Load average: start $load0, after Go $load_go, after R $load_r."
	echo "almanac: fit + 12-step forecast, GOMAXPROCS=1, median wall ms of ${COUNT:-3} runs and CPU ms per fit."
	echo "R: arima() + predict(n.ahead = 12), mean wall and CPU ms of 100 calls."
	echo
	echo "| form | almanac wall ms | almanac CPU ms | R ML wall ms | R ML CPU ms | R CSS-ML wall ms | R CSS-ML CPU ms |"
	echo "|---|---:|---:|---:|---:|---:|---:|"
	echo "| automatic choice → $form (R: this form only) | $ga | $ca | $(rms auto_ML) | $(rcpu auto_ML) | $(rms auto_CSS-ML) | $(rcpu auto_CSS-ML) |"
	echo "| arima(0,1,1)(0,1,1)12 fixed | $gl | $cl | $(rms airline_ML) | $(rcpu airline_ML) | $(rms airline_CSS-ML) | $(rcpu airline_CSS-ML) |"
	echo "| arima(2,0,1) with mean fixed | $g2 | $c2 | $(rms arma201_ML) | $(rcpu arma201_ML) | $(rms arma201_CSS-ML) | $(rcpu arma201_CSS-ML) |"
	echo
	echo "One exact likelihood evaluation (state dimension 13, 108 values, Chandrasekhar recursions): $lik µs."
} | tee "$here/arima-latest.md"
