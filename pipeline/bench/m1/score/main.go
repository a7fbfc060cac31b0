// Command score scores almanac run folders on the M1 data against the
// held-out TEST part and prints a Markdown table: sMAPE and MASE by subset
// and overall, beside the Naive2 benchmark (computed here from the train
// part, independently of almanac).
//
//	go run ./pipeline/bench/m1/score -data m1.csv.gz -run DIR ... [-run NAME=DIR ...]
//
// -run DIR scores every method label in DIR/forecasts.parquet; -run
// NAME=DIR scores only the rows marked chosen (the per-series choice of a
// run with a backtest), as the entry NAME. Folders of different subsets
// with the same labels add up into one row.
//
// Scores: per series, the mean over the horizon's steps of sMAPE (M
// competition: 200·|y−f|/(|y|+|f|)) and of |y−f| / scale, the scale being
// the in-sample mean absolute seasonal-naive error (lag 12 monthly, 4
// quarterly, 1 yearly); a subset's and the overall figure is the mean over
// its series. A forecast value that is missing (NULL) or not finite is
// scored as the naive forecast (last training value) and counted under
// "failed". "neg" counts series (all M1 series are strictly positive) with
// any forecast below zero.
package main

import (
	"flag"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"

	"almanac/pipeline/bench/m1/m1data"
	"almanac/pipeline/runfolder"
)

type runArg struct{ name, dir string }

type runList []runArg

func (r *runList) String() string { return fmt.Sprint(*r) }
func (r *runList) Set(v string) error {
	if name, dir, ok := strings.Cut(v, "="); ok {
		*r = append(*r, runArg{name, dir})
	} else {
		*r = append(*r, runArg{"", v})
	}
	return nil
}

func main() {
	data := flag.String("data", "", "path to m1.csv.gz")
	var runs runList
	flag.Var(&runs, "run", "run folder (every label) or NAME=DIR (chosen rows only); repeatable")
	flag.Parse()
	if *data == "" {
		fmt.Fprintln(os.Stderr, "usage: score -data m1.csv.gz -run DIR ...")
		os.Exit(2)
	}
	all, err := m1data.Read(*data)
	if err != nil {
		fmt.Fprintln(os.Stderr, "score:", err)
		os.Exit(1)
	}
	fc := map[string]map[string][]float64{} // entry → series → forecasts
	var order []string
	add := func(entry, id string, step int, v float64, h int) {
		m := fc[entry]
		if m == nil {
			m = map[string][]float64{}
			fc[entry] = m
			order = append(order, entry)
		}
		f := m[id]
		if f == nil {
			f = make([]float64, h)
			for i := range f {
				f[i] = math.NaN()
			}
			m[id] = f
		}
		if step >= 1 && step <= h {
			f[step-1] = v
		}
	}
	byID := map[string]*m1data.Series{}
	for _, s := range all {
		byID[s.ID] = s
	}
	for _, r := range runs {
		t, err := runfolder.ReadTable(filepath.Join(r.dir, "forecasts.parquet"))
		if err != nil {
			fmt.Fprintln(os.Stderr, "score:", err)
			os.Exit(1)
		}
		for i := 0; i < t.Rows; i++ {
			id, _ := t.Str("series", i)
			s := byID[id]
			if s == nil {
				fmt.Fprintf(os.Stderr, "score: %s: unknown series %q\n", r.dir, id)
				os.Exit(1)
			}
			entry, _ := t.Str("method", i)
			if r.name != "" {
				if !t.Bool("chosen", i) {
					continue
				}
				entry = r.name
			}
			step, _ := t.Int("step", i)
			v := math.NaN()
			if !t.IsNull("value", i) {
				v = t.Float("value", i)
			}
			add(entry, id, step, v, len(s.Test))
		}
	}
	n2 := map[string][]float64{}
	for _, s := range all {
		n2[s.ID] = m1data.Naive2(s.Train, s.Period, len(s.Test))
	}
	fc["Naive2 (benchmark)"] = n2
	order = append(order, "Naive2 (benchmark)")
	fmt.Print(Table(all, fc, order))
}

// entryScore holds one entry's means by subset and overall.
type entryScore struct {
	name               string
	smape, mase        map[string]float64 // subset or "all" → mean
	count              map[string]int
	failed, neg, total int
}

// Score computes one entry's scores; subsets where the entry has no
// forecast for some series are left out (and "all" then covers the others).
func Score(all []*m1data.Series, f map[string][]float64, name string) entryScore {
	es := entryScore{name: name, smape: map[string]float64{}, mase: map[string]float64{}, count: map[string]int{}}
	have := map[string]int{}
	size := map[string]int{}
	for _, s := range all {
		size[s.Subset]++
		if f[s.ID] != nil {
			have[s.Subset]++
		}
	}
	for _, s := range all {
		if have[s.Subset] != size[s.Subset] {
			continue
		}
		x := append([]float64(nil), f[s.ID]...)
		bad, neg := false, false
		for i, v := range x {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				x[i] = s.Train[len(s.Train)-1]
				bad = true
			}
			if x[i] < 0 {
				neg = true
			}
		}
		if bad {
			es.failed++
		}
		if neg {
			es.neg++
		}
		sm := m1data.SMAPE(s.Test, x)
		ma := m1data.MASE(s.Test, x, s.Train, s.Period)
		for _, k := range []string{s.Subset, "all"} {
			es.smape[k] += sm
			es.mase[k] += ma
			es.count[k]++
		}
		es.total++
	}
	for k, n := range es.count {
		es.smape[k] /= float64(n)
		es.mase[k] /= float64(n)
	}
	return es
}

// Table renders the scores of every entry as Markdown, best overall sMAPE
// first (entries that miss a subset after those that cover all).
func Table(all []*m1data.Series, fc map[string]map[string][]float64, order []string) string {
	var rows []entryScore
	for _, name := range order {
		rows = append(rows, Score(all, fc[name], name))
	}
	full := len(all)
	sort.SliceStable(rows, func(i, j int) bool {
		fi, fj := rows[i].total == full, rows[j].total == full
		if fi != fj {
			return fi
		}
		return rows[i].smape["all"] < rows[j].smape["all"]
	})
	var b strings.Builder
	b.WriteString("| entry | sMAPE yearly | sMAPE quarterly | sMAPE monthly | **sMAPE all** | MASE yearly | MASE quarterly | MASE monthly | **MASE all** | series | failed | neg |\n")
	b.WriteString("|---|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|\n")
	cell := func(m map[string]float64, c map[string]int, k string) string {
		if c[k] == 0 {
			return "—"
		}
		return fmt.Sprintf("%.2f", m[k])
	}
	cell3 := func(m map[string]float64, c map[string]int, k string) string {
		if c[k] == 0 {
			return "—"
		}
		return fmt.Sprintf("%.3f", m[k])
	}
	for _, r := range rows {
		fmt.Fprintf(&b, "| %s | %s | %s | %s | **%s** | %s | %s | %s | **%s** | %d | %d | %d |\n", r.name,
			cell(r.smape, r.count, "yearly"), cell(r.smape, r.count, "quarterly"), cell(r.smape, r.count, "monthly"), cell(r.smape, r.count, "all"),
			cell3(r.mase, r.count, "yearly"), cell3(r.mase, r.count, "quarterly"), cell3(r.mase, r.count, "monthly"), cell3(r.mase, r.count, "all"),
			r.total, r.failed, r.neg)
	}
	fmt.Fprintf(&b, "\n%d series (%s). \"all\" is the mean over every series the entry covers; an entry with fewer than %d series (a seasonal method, which yearly data cannot take) averages quarterly and monthly only.", full, counts(all), full)
	if len(rows) > 0 && rows[0].total == full {
		// The best entry over the quarterly and monthly series only, to set
		// beside the seasonal methods.
		top := rows[0]
		var sm, ma float64
		n := 0
		for _, sub := range []string{"quarterly", "monthly"} {
			c := top.count[sub]
			sm += top.smape[sub] * float64(c)
			ma += top.mase[sub] * float64(c)
			n += c
		}
		fmt.Fprintf(&b, " Over those %d series %s scores sMAPE %.2f, MASE %.3f.", n, top.name, sm/float64(n), ma/float64(n))
	}
	b.WriteString("\n")
	return b.String()
}

func counts(all []*m1data.Series) string {
	c := map[string]int{}
	for _, s := range all {
		c[s.Subset]++
	}
	var parts []string
	for _, sub := range m1data.Subsets {
		parts = append(parts, fmt.Sprintf("%d %s", c[sub], sub))
	}
	return strings.Join(parts, ", ")
}
