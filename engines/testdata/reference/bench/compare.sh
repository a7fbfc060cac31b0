#!/usr/bin/env bash
# Times almanac's engines and R's stats functions on the same two series
# (bench/weekly156.json: m = 52, n = 156; bench/monthly60.json: m = 12,
# n = 60) in one run, and prints a Markdown table of the medians and the
# ratio R ÷ almanac. The table is also written to bench/compare-latest.md,
# the raw `go test` output to bench/compare-latest-go.txt, and R's timings
# to bench/r_timings.json (by time_r.R).
#
#   bash engines/testdata/reference/bench/compare.sh     (from anywhere)
#
# Needs go, Rscript (base R only), awk and /usr/bin/python3. Takes a few
# minutes: each Go benchmark runs -benchtime 2s, -count 3, on one core
# (GOMAXPROCS=1); each R call is timed as the median of 50-1000 calls after
# one warm-up call (see time_r.R). The machine has 2 shared cores and may
# be busy with other work: the load average is printed before and after
# each stage, and ratios can move by tens of percent from run to run.
set -euo pipefail

here=$(cd "$(dirname "$0")" && pwd)   # engines/testdata/reference/bench
ref=$(cd "$here/.." && pwd)           # engines/testdata/reference
root=$(cd "$ref/../../.." && pwd)     # the module root
# BENCHTIME and COUNT override -benchtime 2s and -count 3 (for a quick
# check of the script only; the recorded figures use the defaults).
benchtime=${BENCHTIME:-2s}
count=${COUNT:-3}
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT

# Rows of the table: kind (fit = fit + 13-step forecast, dec = the
# decomposition alone), method, series, Go benchmark, R key in
# r_timings.json ("-" when base R has no counterpart).
cat >"$tmp/rows.tsv" <<'EOF'
fit	Holt-Winters (additive, α β γ estimated)	weekly156	BenchmarkHoltWintersWeekly156	holtwinters_optim_additive
fit	Holt-Winters (additive, α β γ estimated)	monthly60	BenchmarkHoltWintersMonthly60H13	holtwinters_optim_additive
fit	Holt-Winters, R with predict(·, 13)	weekly156	BenchmarkHoltWintersWeekly156	holtwinters_optim_additive_predict13
fit	Holt-Winters, R with predict(·, 13)	monthly60	BenchmarkHoltWintersMonthly60H13	holtwinters_optim_additive_predict13
fit	SES	weekly156	BenchmarkSESWeekly156	holtwinters_ses
fit	SES	monthly60	BenchmarkSESMonthly60H13	holtwinters_ses
fit	Holt (linear trend)	weekly156	BenchmarkHoltWeekly156	holtwinters_holt
fit	Holt (linear trend)	monthly60	BenchmarkHoltMonthly60H13	holtwinters_holt
fit	STL periodic (+ SES forecast)	weekly156	BenchmarkSTLFitWeekly156	stl_periodic
fit	STL periodic (+ SES forecast)	monthly60	BenchmarkSTLFitMonthly60	stl_periodic
fit	STL periodic robust (+ SES forecast)	weekly156	BenchmarkSTLRobustFitWeekly156	stl_periodic_robust
fit	STL periodic robust (+ SES forecast)	monthly60	BenchmarkSTLRobustFitMonthly60	stl_periodic_robust
fit	Classical (+ forecast)	weekly156	BenchmarkClassicalWeekly156	decompose_additive
fit	Classical (+ forecast)	monthly60	BenchmarkClassicalMonthly60H13	decompose_additive
fit	Theta (auto)	weekly156	BenchmarkThetaWeekly156	-
fit	Theta (auto)	monthly60	BenchmarkThetaMonthly60	-
fit	Croston	weekly156	BenchmarkCrostonWeekly156	-
fit	Croston	monthly60	BenchmarkCrostonMonthly60	-
fit	Smoothing auto (AICc choice)	weekly156	BenchmarkAutoWeekly156	-
fit	Smoothing auto (AICc choice)	monthly60	BenchmarkAutoMonthly60H13	-
dec	Classical decomposition	weekly156	BenchmarkClassicalDecomposeWeekly156	decompose_additive
dec	Classical decomposition	monthly60	BenchmarkClassicalDecomposeMonthly60	decompose_additive
dec	STL periodic	weekly156	BenchmarkSTLWeekly156/decompose	stl_periodic
dec	STL periodic	monthly60	BenchmarkSTLMonthly60/decompose	stl_periodic
dec	STL periodic robust	weekly156	BenchmarkSTLWeekly156/decompose_robust	stl_periodic_robust
dec	STL periodic robust	monthly60	BenchmarkSTLMonthly60/decompose_robust	stl_periodic_robust
EOF

# Two -bench patterns, run one after the other: the top-level benchmarks,
# then the sub-benchmarks (BenchmarkSTL*/decompose*). One pattern cannot do
# both: with a second level, a top-level benchmark that has no
# sub-benchmarks runs but is not reported.
tops=$(cut -f4 "$tmp/rows.tsv" | grep -v / | sort -u | paste -sd'|' -)
subs_top=$(cut -f4 "$tmp/rows.tsv" | grep / | cut -d/ -f1 | sort -u | paste -sd'|' -)
subs=$(cut -f4 "$tmp/rows.tsv" | grep / | cut -d/ -f2 | sort -u | paste -sd'|' -)
patterns=("^(${tops})\$" "^(${subs_top})\$/^(${subs})\$")

loadavg() { cut -d' ' -f1-3 /proc/loadavg; }
cpu=$(awk -F': *' '/^model name/ {print $2; exit}' /proc/cpuinfo)
load_start=$(loadavg)

echo "== machine: nproc $(nproc), CPU ${cpu:-unknown}, load average ${load_start} (1, 5, 15 min)" >&2
echo "== building the engines test binary (not timed)" >&2
(cd "$root" && go test -c -o "$tmp/engines.test" ./engines/)

echo "== go test -bench (GOMAXPROCS=1, -benchtime $benchtime, -count $count): a few minutes" >&2
: >"$tmp/go.txt"
for pattern in "${patterns[@]}"; do
	echo "-- go test -run '^\$' -bench '$pattern' -benchtime $benchtime -count $count -cpu 1 ./engines/" >>"$tmp/go.txt"
	(cd "$root" && GOMAXPROCS=1 go test -run '^$' -bench "$pattern" -benchtime "$benchtime" -count "$count" -cpu 1 ./engines/) \
		| tee -a "$tmp/go.txt" >&2
done
load_after_go=$(loadavg)
cp "$tmp/go.txt" "$here/compare-latest-go.txt"

echo "== Rscript bench/time_r.R" >&2
(cd "$ref" && Rscript bench/time_r.R) >&2
load_after_r=$(loadavg)

# Median ns/op of each benchmark over its -count runs. The name loses the
# "-N" GOMAXPROCS suffix (absent with -cpu 1, stripped in case).
awk '
	$1 ~ /^Benchmark/ && $4 == "ns/op" {
		name = $1; sub(/-[0-9]+$/, "", name)
		if (!(name in n)) order[++k] = name
		v[name, ++n[name]] = $3 + 0
	}
	END {
		for (i = 1; i <= k; i++) {
			name = order[i]; c = n[name]
			for (a = 1; a <= c; a++) s[a] = v[name, a]
			for (a = 2; a <= c; a++) {      # insertion sort
				x = s[a]; b = a - 1
				while (b >= 1 && s[b] > x) { s[b + 1] = s[b]; b-- }
				s[b + 1] = x
			}
			med = (c % 2) ? s[(c + 1) / 2] : (s[c / 2] + s[c / 2 + 1]) / 2
			line = ""
			for (a = 1; a <= c; a++) line = line (a > 1 ? "," : "") s[a]
			printf "%s\t%.6g\t%d\t%s\n", name, med, c, line
		}
	}' "$tmp/go.txt" >"$tmp/go_medians.tsv"

export CMP_ROWS="$tmp/rows.tsv" CMP_GO="$tmp/go_medians.tsv" CMP_R="$here/r_timings.json"
export CMP_NPROC=$(nproc) CMP_CPU="$cpu" CMP_GOVERSION="$(go version)"
export CMP_LOAD_START="$load_start" CMP_LOAD_GO="$load_after_go" CMP_LOAD_R="$load_after_r"
export CMP_BENCHTIME="$benchtime" CMP_COUNT="$count"
export CMP_DATE="$(date -u '+%Y-%m-%d %H:%M UTC')"

/usr/bin/python3 - >"$tmp/table.md" <<'EOF'
import json, os

rows = [l.rstrip("\n").split("\t") for l in open(os.environ["CMP_ROWS"]) if l.strip()]
gomed = {}
for l in open(os.environ["CMP_GO"]):
    name, med, count, runs = l.rstrip("\n").split("\t")
    gomed[name] = (float(med), int(count), runs)
rj = json.load(open(os.environ["CMP_R"]))
rser = rj["series"]
label = {"weekly156": "weekly m=52 n=156", "monthly60": "monthly m=12 n=60"}

def r_call(series, key):
    if key == "-":
        return None
    c = rser[series][key]
    return c["call"], c["median_seconds"], c["reps"]

def fmt_us(ns):
    us = ns / 1e3
    return f"{us:.2f}" if us < 10 else f"{us:.1f}" if us < 1000 else f"{us:.0f}"

def fmt_ratio(r):
    return f"{r:.2f}×" if r < 10 else f"{r:.0f}×"

out = []
p = out.append
m = rj.get("machine", {})
p(f"# almanac engines vs R stats ({os.environ['CMP_DATE']})")
p("")
p(f"Machine: nproc {os.environ['CMP_NPROC']}, CPU {os.environ['CMP_CPU']}; "
  f"load average (1, 5, 15 min) {os.environ['CMP_LOAD_START']} at the start, "
  f"{os.environ['CMP_LOAD_GO']} after the Go benchmarks, "
  f"{os.environ['CMP_LOAD_R']} after R. Shared cores: other work may run beside this.")
p(f"{os.environ['CMP_GOVERSION']}, GOMAXPROCS=1, -benchtime {os.environ['CMP_BENCHTIME']}, "
  f"-count {os.environ['CMP_COUNT']}: the almanac figure is the median ns/op of the {os.environ['CMP_COUNT']} runs. {m.get('R_version', 'R')}: median elapsed time of one call "
  f"over the reps shown, after one warm-up call (bench/time_r.R, Sys.time).")
p("")

def table(kind, title, almanac_head):
    p(f"## {title}")
    p("")
    p(f"| method | series | almanac benchmark | almanac µs ({almanac_head}) | R equivalent | R ms | R ÷ almanac |")
    p("|---|---|---|---:|---|---:|---:|")
    for k, method, series, bench, key in rows:
        if k != kind:
            continue
        if bench not in gomed:
            p(f"| {method} | {label[series]} | {bench} | (did not run) | | | |")
            continue
        ns = gomed[bench][0]
        rc = r_call(series, key)
        if rc is None:
            p(f"| {method} | {label[series]} | {bench} | {fmt_us(ns)} | — (none in base R stats) | — | — |")
            continue
        call, sec, reps = rc
        call = call.replace("|", "\\|")
        p(f"| {method} | {label[series]} | {bench} | {fmt_us(ns)} | `{call}`, {reps} reps | "
          f"{sec * 1e3:.3f} | {fmt_ratio(sec / (ns * 1e-9))} |")
    p("")

table("fit", "Fit + 13-step forecast (R: the call shown; R's decompose() and stl() do not forecast)",
      "fit + 13-step forecast")
table("dec", "Decomposition only", "decomposition")

# The targets.
def ns_of(bench):
    return gomed.get(bench, (float("nan"),))[0]

checks = []
hw = [("weekly156", "BenchmarkHoltWintersWeekly156"), ("monthly60", "BenchmarkHoltWintersMonthly60H13")]
for series, bench in hw:
    ms = ns_of(bench) / 1e6
    checks.append((f"Holt-Winters fit + forecast ≤ 0.25 ms on one core, {label[series]}",
                   f"{ms:.4f} ms", ms <= 0.25))
for series, bench in hw:
    r = rser[series]["holtwinters_optim_additive"]["median_seconds"] / (ns_of(bench) * 1e-9)
    checks.append((f"Holt-Winters ≥ 50× faster than R HoltWinters(x), {label[series]}",
                   f"{r:.0f}×", r >= 50))
for series, bench in [("weekly156", "BenchmarkClassicalDecomposeWeekly156"),
                      ("monthly60", "BenchmarkClassicalDecomposeMonthly60")]:
    r = rser[series]["decompose_additive"]["median_seconds"] / (ns_of(bench) * 1e-9)
    checks.append((f"classical decomposition ≥ 1000× R decompose(x), {label[series]}",
                   f"{r:.0f}×", r >= 1000))
p("## Targets")
p("")
p("| target | measured | holds |")
p("|---|---:|---|")
for what, val, ok in checks:
    p(f"| {what} | {val} | {'yes' if ok else 'NO'} |")
p("")
p("Raw Go output: bench/compare-latest-go.txt; R timings: bench/r_timings.json.")
print("\n".join(out))
EOF

cp "$tmp/table.md" "$here/compare-latest.md"
cat "$tmp/table.md"
