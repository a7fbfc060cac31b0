// Command research compares automatic forecasting rules on the M1 data in
// process (calling engines directly, for fast iteration). Every choice a
// rule makes per series — ranks, weights, margins — comes from backtests
// on the TRAIN part only; the TEST part only scores each global rule.
//
//	go run ./pipeline/bench/m1/research -data m1.csv.gz [-folds 3] [-workers 2]
//
// For each series and each candidate method it fits the whole train part
// (forecasting the official horizon h) and each backtest fold (origins h,
// 2h, … periods before the end of the train part, each forecasting h
// steps, kept only when at least max(2m, 6) values precede the origin),
// and scores the folds by MASE (scale from the fold's own training data).
// Forecasts are floored at zero (M1 series are strictly positive), as the
// pipeline does for positive histories.
package main

import (
	"flag"
	"fmt"
	"math"
	"os"
	"sort"
	"strings"
	"sync"
	"sync/atomic"
	"time"

	"almanac/engines"
	"almanac/pipeline/bench/m1/m1data"
)

// candidate is a method the rules may use.
type candidate struct {
	label    string
	name     string
	opts     engines.Options
	seasonal bool // needs m ≥ 2
	// auto: seasonal method that falls back to fallback when the
	// seasonality test (90%, two full seasons) says no season.
	fallback string
	wrap     bool // deseasonalized (see rules.go)
	// name1, opts1: the method used instead when the season length is 1.
	name1 string
	opts1 engines.Options
}

var candidates = []candidate{
	{label: "naive", name: "naive"},
	{label: "seasonal_naive", name: "seasonal_naive", seasonal: true},
	{label: "drift", name: "drift"},
	{label: "ses", name: "ses"},
	{label: "holt", name: "holt"},
	{label: "holt_damped", name: "holt", opts: engines.Options{"damped": true}},
	{label: "smoothing_auto", name: "smoothing_auto"},
	{label: "theta", name: "theta"},
	{label: "stl", name: "stl", opts: stlOpts(), seasonal: true},
	{label: "stl_auto", name: "stl", opts: stlOpts(), seasonal: true, fallback: "ses"},
	{label: "holt_winters", name: "holt_winters", opts: engines.Options{"seasonal": "additive", "trend": true, "damped": false}, seasonal: true},
	{label: "hw_damped_mult", name: "holt_winters", opts: engines.Options{"seasonal": "multiplicative", "trend": true, "damped": true}, seasonal: true},
	{label: "classical", name: "classical", opts: engines.Options{"form": "multiplicative", "trend": "adjusted_line", "average": "mean"}, seasonal: true},
	{label: "naive2", name: "naive2"},
	{label: "ds_ses", name: "ses", wrap: true},
	{label: "ds_holt", name: "holt", wrap: true},
	{label: "ds_holt_damped", name: "holt", opts: engines.Options{"damped": true}, wrap: true},
	{label: "arima", name: "arima"},
	{label: "ets", name: "ets"},
	{label: "damped", name: "holt_winters", opts: engines.Options{"seasonal": "auto", "trend": true, "damped": true},
		name1: "holt", opts1: engines.Options{"damped": true}},
}

func stlOpts() engines.Options {
	return engines.Options{"seasonal_window": "periodic", "seasonal_degree": 0, "trend_degree": 1, "robust": false, "adjusted_method": "ses"}
}

// result holds one series' forecasts: full[c] on the whole train part,
// fold[c][k] on fold k, and the fold actuals.
type result struct {
	s        *m1data.Series
	full     [][]float64
	fold     [][][]float64
	actual   [][]float64
	scale    []float64 // MASE scale of each fold's training data
	seasonal bool      // seasonality test on the train part
}

func main() {
	data := flag.String("data", "", "path to m1.csv.gz")
	folds := flag.Int("folds", 3, "backtest folds")
	workers := flag.Int("workers", 2, "parallel series")
	only := flag.String("methods", "", "comma-separated candidate labels (default: all that are registered)")
	flag.Parse()
	all, err := m1data.Read(*data)
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		os.Exit(1)
	}
	var cands []candidate
	have := map[string]bool{}
	for _, n := range engines.Names() {
		have[n] = true
	}
	want := map[string]bool{}
	for _, l := range strings.Split(*only, ",") {
		if l != "" {
			want[l] = true
		}
	}
	for _, c := range candidates {
		if have[c.name] && (len(want) == 0 || want[c.label]) {
			cands = append(cands, c)
		}
	}
	methods := make([]engines.Method, len(cands))
	methods1 := make([]engines.Method, len(cands))
	for i, c := range cands {
		if c.name1 != "" {
			m, err := engines.New(c.name1, c.opts1)
			if err != nil {
				fmt.Fprintln(os.Stderr, c.label, err)
				os.Exit(1)
			}
			methods1[i] = m
		}
		m, err := engines.New(c.name, c.opts)
		if err != nil {
			fmt.Fprintln(os.Stderr, c.label, err)
			os.Exit(1)
		}
		if c.wrap {
			m = deseasonalized{m}
		}
		methods[i] = m
	}
	fallbacks := map[string]engines.Method{}
	for _, c := range cands {
		if c.fallback != "" {
			m, err := engines.New(c.fallback, nil)
			if err != nil {
				fmt.Fprintln(os.Stderr, err)
				os.Exit(1)
			}
			fallbacks[c.label] = m
		}
	}
	res := make([]*result, len(all))
	var wg sync.WaitGroup
	next := make(chan int)
	for w := 0; w < *workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				ms := methods
				if all[i].Period < 2 {
					ms = make([]engines.Method, len(methods))
					for j := range ms {
						ms[j] = methods[j]
						if methods1[j] != nil {
							ms[j] = methods1[j]
						}
					}
				}
				res[i] = fitSeries(all[i], cands, ms, fallbacks, *folds)
			}
		}()
	}
	for i := range all {
		next <- i
	}
	close(next)
	wg.Wait()
	labels := make([]string, len(cands))
	for i, c := range cands {
		labels[i] = c.label
	}
	evaluate(res, labels)
	fmt.Println()
	fmt.Println("| candidate | fit time, ms per series (whole train part + folds) |")
	fmt.Println("|---|---:|")
	for i, l := range labels {
		fmt.Printf("| %s | %.2f |\n", l, float64(cpu[i].Load())/1e6/float64(len(all)))
	}
}

func fit(m engines.Method, fb engines.Method, y []float64, season, h int) []float64 {
	if fb != nil {
		if len(y) < 2*season {
			m = fb
		} else if _, ok := engines.SeasonalityTest(y, season); !ok {
			m = fb
		}
	}
	f, err := safeFit(m, y, season)
	if err != nil {
		return nil
	}
	fc := f.Forecast(h)
	for i, v := range fc {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil
		}
		if v < 0 {
			fc[i] = 0
		}
	}
	return fc
}

func safeFit(m engines.Method, y []float64, season int) (f engines.Fitted, err error) {
	defer func() {
		if r := recover(); r != nil {
			err = fmt.Errorf("panic: %v", r)
		}
	}()
	return m.Fit(y, season)
}

// cpu[i] is the wall time spent fitting candidate i, in nanoseconds,
// summed over workers (a proxy for its CPU cost).
var cpu [64]atomic.Int64

func fitSeries(s *m1data.Series, cands []candidate, methods []engines.Method, fbs map[string]engines.Method, folds int) *result {
	h, m := len(s.Test), s.Period
	r := &result{s: s, full: make([][]float64, len(cands)), fold: make([][][]float64, len(cands))}
	r.seasonal = m > 1 && len(s.Train) >= 2*m
	if r.seasonal {
		_, r.seasonal = engines.SeasonalityTest(s.Train, m)
	}
	n := len(s.Train)
	minTrain := 2 * m
	if minTrain < 6 {
		minTrain = 6
	}
	var origins []int
	for k := 1; k <= folds; k++ {
		o := n - k*h
		if o < minTrain {
			break
		}
		origins = append(origins, o)
	}
	for _, o := range origins {
		r.actual = append(r.actual, s.Train[o:o+h])
		r.scale = append(r.scale, m1data.MASEScale(s.Train[:o], m))
	}
	for i, c := range cands {
		if c.seasonal && m < 2 {
			continue
		}
		fb := fbs[c.label]
		t0 := time.Now()
		r.full[i] = fit(methods[i], fb, s.Train, m, h)
		r.fold[i] = make([][]float64, len(origins))
		for k, o := range origins {
			r.fold[i][k] = fit(methods[i], fb, s.Train[:o:o], m, h)
		}
		cpu[i].Add(int64(time.Since(t0)))
	}
	return r
}

// foldMASE is the mean over folds of the MASE of forecasts fc[k]; NaN
// when a fold is missing or there are no folds.
func foldMASE(r *result, fc [][]float64) float64 {
	if len(r.actual) == 0 || fc == nil {
		return math.NaN()
	}
	s := 0.0
	for k, a := range r.actual {
		if fc[k] == nil {
			return math.NaN()
		}
		e := 0.0
		for j := range a {
			e += math.Abs(a[j] - fc[k][j])
		}
		sc := r.scale[k]
		if !(sc > 0) {
			sc = 1e-9
		}
		s += e / float64(len(a)) / sc
	}
	return s / float64(len(r.actual))
}

func combine(kind string, fcs [][]float64) []float64 {
	var use [][]float64
	for _, f := range fcs {
		if f != nil {
			use = append(use, f)
		}
	}
	if len(use) == 0 {
		return nil
	}
	h := len(use[0])
	out := make([]float64, h)
	col := make([]float64, len(use))
	for j := 0; j < h; j++ {
		for i, f := range use {
			col[i] = f[j]
		}
		out[j] = aggregate(kind, col)
	}
	return out
}

func aggregate(kind string, v []float64) float64 {
	switch kind {
	case "median":
		s := append([]float64(nil), v...)
		sort.Float64s(s)
		n := len(s)
		if n%2 == 1 {
			return s[n/2]
		}
		return (s[n/2-1] + s[n/2]) / 2
	case "trimmed":
		if len(v) < 3 {
			return aggregate("mean", v)
		}
		s := append([]float64(nil), v...)
		sort.Float64s(s)
		return aggregate("mean", s[1:len(s)-1])
	}
	t := 0.0
	for _, x := range v {
		t += x
	}
	return t / float64(len(v))
}
