#!/bin/sh
# Calibration of almanac's bounds and lead-time total quantiles, end to end:
# builds the binary, runs it on M1 (test part held out) and on an invented
# intermittent panel, and prints the Markdown table of README.md.
#   pipeline/bench/calibration/run.sh [M1_CSV_GZ]
set -eu
root=$(cd "$(dirname "$0")/../../.." && pwd)
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
cd "$root"
go build -o "$work/almanac" ./cmd/almanac
go run ./pipeline/bench/calibration -almanac "$work/almanac" -work "$work/runs" -m1 "${1:-/work/shared/data/m1/m1.csv.gz}" 2>/dev/null
