// Command calibration measures how well almanac's prediction bounds and
// lead-time total quantiles are calibrated, end to end through the built
// binary: it writes the training part of each data set as CSV, runs
// `almanac run` on it with a spec asking for 80% and 95% bounds and for
// quantiles of totals, reads forecasts.parquet and totals.parquet back, and
// scores them against the held-out part.
//
// Data sets:
//   - M1 (Makridakis et al. 1982; /work/shared/data/m1 or -m1): the
//     yearly, quarterly and monthly subsets, each series' official test
//     part held out (never seen by the run).
//   - Two invented panels written by `almanac panel` (weekly, 156 weeks,
//     the last 13 held out): one with every series intermittent, one with
//     a fifth of them intermittent, scored apart for its slow movers (the
//     series almanac classes intermittent or lumpy) and for the rest.
//
// Scores per subset: coverage of the per-step 80% and 95% bounds (share of
// held-out values inside), the mean scaled interval score (Gneiting &
// Raftery 2007, eq. 43 from memory, divided by the series' in-sample seasonal naive
// MAE, as in the M4 competition's MSIS), the share of held-out totals at or
// below each total quantile, and the mean scaled pinball loss of the total
// quantiles. Coherence is counted too: bounds on the wrong side of the
// forecast, negative bounds for non-negative series, levels not nested.
//
// This is a benchmark script, not a test: run it with
//
//	pipeline/bench/calibration/run.sh            # or
//	go run ./pipeline/bench/calibration -almanac BIN -work DIR
//
// It prints a Markdown table; the README's calibration table comes from it.
package main

import (
	"bufio"
	"cmp"
	"compress/gzip"
	"encoding/csv"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"time"

	"almanac/engines"
	"almanac/pipeline/runfolder"
)

type series struct {
	id          string
	train, test []float64
}

type subset struct {
	name      string
	frequency string
	season    int
	horizon   int
	methods   string
	route     string
	source    string // intervals.source; "" means empirical
	leads     []int
	series    []*series
	start     time.Time
	step      func(t time.Time, k int) time.Time
}

var totalLevels = []int{50, 80, 95, 99}

func main() {
	bin := flag.String("almanac", "", "the almanac binary (required)")
	work := flag.String("work", "", "working folder (default: a new temporary folder)")
	m1 := flag.String("m1", "/work/shared/data/m1/m1.csv.gz", "M1 data (m1.csv.gz)")
	panelSeries := flag.Int("panel-series", 1000, "series in the invented intermittent panel")
	flag.Parse()
	if *bin == "" {
		fmt.Fprintln(os.Stderr, "calibration: -almanac BIN is required")
		os.Exit(2)
	}
	if *work == "" {
		d, err := os.MkdirTemp("", "almanac-calibration-")
		check(err)
		*work = d
	}
	check(os.MkdirAll(*work, 0o755))
	subs := loadM1(*m1)
	// The same M1 subsets with model bounds: the state-space smoothing
	// methods' own forecast variances (normal quantiles).
	for _, s := range subs[:3] {
		m := *s
		m.name, m.source, m.methods = s.name+"-model", "model", "[ses, holt, smoothing_auto, arima]"
		subs = append(subs, &m)
	}
	subs = append(subs, panel(*bin, *work, "intermittent-panel", *panelSeries, 1, 11), panel(*bin, *work, "mixed-panel", *panelSeries, 0.2, 5))
	fmt.Println("| data | series | per-step 80% | per-step 95% | MSIS 80 | MSIS 95 | totals (L) | total ≤ q50 | ≤ q80 | ≤ q95 | ≤ q99 | pinball | wrong side | negative | not nested |")
	fmt.Println("|---|---|---|---|---|---|---|---|---|---|---|---|---|---|---|")
	for _, s := range subs {
		dir := filepath.Join(*work, s.name)
		check(os.MkdirAll(dir, 0o755))
		writeTrain(dir, s)
		writeSpec(dir, s)
		cmd := exec.Command(*bin, "run", filepath.Join(dir, "spec.yaml"), "--workers", "2", "-q")
		cmd.Stderr = os.Stderr
		if out, err := cmd.Output(); err != nil {
			fmt.Fprintf(os.Stderr, "%s: almanac run: %v\n%s", s.name, err, out)
			os.Exit(1)
		}
		run := filepath.Join(dir, "run")
		if s.name != "mixed-panel" {
			score(s, s.name, run, nil)
			continue
		}
		// The mixed panel twice: its slow movers, then the rest.
		class := demandClasses(run)
		slow := func(id string) bool { return class[id] == "intermittent" || class[id] == "lumpy" }
		score(s, "mixed: slow movers", run, slow)
		score(s, "mixed: the rest", run, func(id string) bool { return !slow(id) })
	}
}

func check(err error) {
	if err != nil {
		fmt.Fprintln(os.Stderr, "calibration:", err)
		os.Exit(1)
	}
}

func loadM1(path string) []*subset {
	fh, err := os.Open(path)
	check(err)
	defer fh.Close()
	gz, err := gzip.NewReader(fh)
	check(err)
	r := csv.NewReader(gz)
	hdr, err := r.Read()
	check(err)
	col := map[string]int{}
	for i, h := range hdr {
		col[h] = i
	}
	year := func(t time.Time, k int) time.Time { return t.AddDate(k, 0, 0) }
	quarter := func(t time.Time, k int) time.Time { return t.AddDate(0, 3*k, 0) }
	month := func(t time.Time, k int) time.Time { return t.AddDate(0, k, 0) }
	start := time.Date(1900, 1, 1, 0, 0, 0, 0, time.UTC) // the dates are placeholders: only the order matters
	subs := map[string]*subset{
		"yearly":    {name: "m1-yearly", frequency: "year", season: 1, horizon: 6, methods: "[naive, drift, ses, holt, theta]", leads: []int{2, 4, 6}, start: start, step: year},
		"quarterly": {name: "m1-quarterly", frequency: "quarter", season: 4, horizon: 8, methods: "[naive, seasonal_naive, ses, holt, theta]", leads: []int{2, 4, 8}, start: start, step: quarter},
		"monthly":   {name: "m1-monthly", frequency: "month", season: 12, horizon: 18, methods: "[naive, seasonal_naive, ses, holt, theta]", leads: []int{3, 6, 12, 18}, start: start, step: month},
	}
	byID := map[string]*series{}
	for {
		rec, err := r.Read()
		if err == io.EOF {
			break
		}
		check(err)
		id := rec[col["series"]]
		s := byID[id]
		if s == nil {
			s = &series{id: id}
			byID[id] = s
			sub := subs[rec[col["period_type"]]]
			sub.series = append(sub.series, s)
		}
		v, err := strconv.ParseFloat(rec[col["value"]], 64)
		check(err)
		if rec[col["part"]] == "train" {
			s.train = append(s.train, v)
		} else {
			s.test = append(s.test, v)
		}
	}
	return []*subset{subs["yearly"], subs["quarterly"], subs["monthly"]}
}

// panel writes an invented panel with almanac itself, the given share of
// its series intermittent, and holds out its last 13 weeks.
func panel(bin, work, name string, n int, share float64, stream int) *subset {
	path := filepath.Join(work, name+".csv")
	cmd := exec.Command(bin, "panel", path, "--series", strconv.Itoa(n), "--length", "156", "--frequency", "week",
		"--intermittent", strconv.FormatFloat(share, 'g', -1, 64), "--rng", strconv.Itoa(stream))
	cmd.Stderr = os.Stderr
	_, err := cmd.Output()
	check(err)
	fh, err := os.Open(path)
	check(err)
	defer fh.Close()
	r := csv.NewReader(bufio.NewReader(fh))
	_, err = r.Read()
	check(err)
	sub := &subset{name: name, frequency: "week", season: 52, horizon: 13,
		methods: "[naive, seasonal_naive, mean, ses, sba]",
		route:   "  route:\n    intermittent: [sba, seasonal_naive, mean]\n    lumpy: [sba, seasonal_naive, mean]\n",
		leads:   []int{4, 8, 13}, step: func(t time.Time, k int) time.Time { return t.AddDate(0, 0, 7*k) }}
	byID := map[string]*series{}
	for {
		rec, err := r.Read()
		if err == io.EOF {
			break
		}
		check(err)
		if sub.start.IsZero() {
			sub.start, err = time.Parse(time.DateOnly, rec[0])
			check(err)
		}
		id := rec[1] + "-" + rec[2]
		s := byID[id]
		if s == nil {
			s = &series{id: id}
			byID[id] = s
			sub.series = append(sub.series, s)
		}
		v, err := strconv.ParseFloat(rec[3], 64)
		check(err)
		s.train = append(s.train, v)
	}
	for _, s := range sub.series {
		k := len(s.train) - sub.horizon
		s.test = append([]float64(nil), s.train[k:]...)
		s.train = s.train[:k]
	}
	return sub
}

func writeTrain(dir string, s *subset) {
	fh, err := os.Create(filepath.Join(dir, "train.csv"))
	check(err)
	w := bufio.NewWriter(fh)
	fmt.Fprintln(w, "series,period,value")
	for _, se := range s.series {
		for i, v := range se.train {
			fmt.Fprintf(w, "%s,%s,%s\n", se.id, s.step(s.start, i).Format(time.DateOnly), strconv.FormatFloat(v, 'g', -1, 64))
		}
	}
	check(w.Flush())
	check(fh.Close())
}

func writeSpec(dir string, s *subset) {
	leads := make([]string, len(s.leads))
	for i, l := range s.leads {
		leads[i] = strconv.Itoa(l)
	}
	minTrain := max(2*s.season, 6)
	spec := fmt.Sprintf(`# Written by pipeline/bench/calibration: the training part only.
version: 1
name: %s
sources: [{path: train.csv}]
columns: {time: period, value: value, keys: [series]}
calendar: {frequency: %s, season_length: %d}
shaping: {gaps: missing, end: series}
methods: %s
horizon: %d
output: run
backtest: {folds: 3, min_train: %d}
selection:
  metric: mase
%sintervals: {levels: [80, 95], source: %s}
totals: {lead_times: [%s], levels: [50, 80, 95, 99]}
`, s.name, s.frequency, s.season, s.methods, s.horizon, minTrain, s.route, cmp.Or(s.source, "empirical"), strings.Join(leads, ", "))
	check(os.WriteFile(filepath.Join(dir, "spec.yaml"), []byte(spec), 0o644))
}

type stepRow struct {
	value                  float64
	lo80, hi80, lo95, hi95 float64
}

// demandClasses reads each series' demand class from choices.parquet.
func demandClasses(run string) map[string]string {
	ch, err := runfolder.ReadTable(filepath.Join(run, "choices.parquet"))
	check(err)
	out := map[string]string{}
	for i := 0; i < ch.Rows; i++ {
		id, _ := ch.Str("series", i)
		out[id], _ = ch.Str("demand_class", i)
	}
	return out
}

// score prints the subset's rows of the table, for the series keep
// accepts (all when nil).
func score(s *subset, name, run string, keep func(id string) bool) {
	steps := readSteps(run)
	totals := readTotals(run)
	var n, in80, in95 int
	var is80, is95 float64
	var wrong, negative, nested int
	type tacc struct {
		n    int
		hits []int
		pin  float64
	}
	tots := map[int]*tacc{}
	for _, l := range s.leads {
		tots[l] = &tacc{hits: make([]int, len(totalLevels))}
	}
	scored := 0
	for _, se := range s.series {
		if keep != nil && !keep(se.id) {
			continue
		}
		scored++
		rows := steps[se.id]
		sc, _ := engines.PointScores(nil, nil, se.train, s.season)
		scale := sc.MASEScale
		if len(rows) != len(se.test) || !(scale > 0) {
			continue // no forecast or no scale: not scored
		}
		nonNeg := true
		for _, v := range se.train {
			nonNeg = nonNeg && v >= 0
		}
		for k, y := range se.test {
			r := rows[k]
			if math.IsNaN(r.lo80) {
				continue
			}
			n++
			if y >= r.lo80 && y <= r.hi80 {
				in80++
			}
			if y >= r.lo95 && y <= r.hi95 {
				in95++
			}
			is80 += intervalScore(y, r.lo80, r.hi80, 0.2) / scale
			is95 += intervalScore(y, r.lo95, r.hi95, 0.05) / scale
			if r.lo80 > r.value || r.hi80 < r.value || r.lo95 > r.value || r.hi95 < r.value {
				wrong++
			}
			if nonNeg && (r.lo80 < 0 || r.lo95 < 0) {
				negative++
			}
			if r.lo95 > r.lo80 || r.hi95 < r.hi80 {
				nested++
			}
		}
		for _, l := range s.leads {
			tr, ok := totals[se.id][l]
			if !ok || len(se.test) < l {
				continue
			}
			act := 0.0
			for _, v := range se.test[:l] {
				act += v
			}
			a := tots[l]
			a.n++
			for j, lv := range totalLevels {
				if act <= tr.q[j] {
					a.hits[j]++
				}
				a.pin += pinball(act, tr.q[j], float64(lv)/100) / (scale * float64(l))
			}
		}
	}
	pct := func(a, b int) string { return fmt.Sprintf("%.1f", 100*float64(a)/float64(max(b, 1))) }
	leads := append([]int(nil), s.leads...)
	sort.Ints(leads)
	for i, l := range leads {
		a := tots[l]
		first := "| | | | | | | "
		if i == 0 {
			first = fmt.Sprintf("| %s | %d | %s | %s | %.2f | %.2f | ", name, scored, pct(in80, n), pct(in95, n), is80/float64(max(n, 1)), is95/float64(max(n, 1)))
		}
		tail := " | | |"
		if i == 0 {
			tail = fmt.Sprintf(" %d | %d | %d |", wrong, negative, nested)
		}
		fmt.Printf("%s%d | %s | %s | %s | %s | %.3f |%s\n", first, l, pct(a.hits[0], a.n), pct(a.hits[1], a.n), pct(a.hits[2], a.n), pct(a.hits[3], a.n),
			a.pin/float64(max(a.n*len(totalLevels), 1)), tail)
	}
}

// intervalScore is the interval score of Gneiting & Raftery (2007; eq. 43
// from memory)
// for the central (1 − alpha) interval [l, u] and the outcome y.
func intervalScore(y, l, u, alpha float64) float64 {
	s := u - l
	if y < l {
		s += 2 / alpha * (l - y)
	}
	if y > u {
		s += 2 / alpha * (y - u)
	}
	return s
}

// pinball is the quantile (pinball) loss of the tau-quantile q for y.
func pinball(y, q, tau float64) float64 {
	if y >= q {
		return tau * (y - q)
	}
	return (1 - tau) * (q - y)
}

// readSteps reads the chosen forecast steps of a run, by series.
func readSteps(run string) map[string][]stepRow {
	fc, err := runfolder.ReadTable(filepath.Join(run, "forecasts.parquet"))
	check(err)
	steps := map[string][]stepRow{}
	for i := 0; i < fc.Rows; i++ {
		if !fc.Bool("chosen", i) {
			continue
		}
		id, _ := fc.Str("series", i)
		steps[id] = append(steps[id], stepRow{fc.Float("value", i), fc.Float("lower_80", i), fc.Float("upper_80", i), fc.Float("lower_95", i), fc.Float("upper_95", i)})
	}
	return steps
}

// totRow is a forecast total over one lead time and its quantiles.
type totRow struct {
	total float64
	q     []float64
}

// readTotals reads the totals of a run, by series and lead time.
func readTotals(run string) map[string]map[int]totRow {
	tt, err := runfolder.ReadTable(filepath.Join(run, "totals.parquet"))
	check(err)
	totals := map[string]map[int]totRow{}
	for i := 0; i < tt.Rows; i++ {
		id, _ := tt.Str("series", i)
		l, _ := tt.Int("lead_time", i)
		row := totRow{total: tt.Float("total", i)}
		for _, lv := range totalLevels {
			row.q = append(row.q, tt.Float(fmt.Sprintf("quantile_%d", lv), i))
		}
		if totals[id] == nil {
			totals[id] = map[int]totRow{}
		}
		totals[id][l] = row
	}
	return totals
}
