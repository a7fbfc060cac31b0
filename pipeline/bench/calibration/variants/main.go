// Command variants measures the candidate ways of making bounds and total
// quantiles that almanac chose between (issue 13), in process: it backtests
// a few methods on every series (3 folds, expanding window), chooses per
// series by mean MASE like the pipeline, pools the backtest errors per
// method, and scores each candidate on the held-out part: coverage of the
// 80% and 95% bounds, the mean scaled interval score (Gneiting & Raftery
// 2007), roughness (mean |second difference| of the scaled 80% width over
// the steps), and for totals the share of actual totals at or below each
// quantile and the scaled pinball loss.
//
//	go run ./pipeline/bench/calibration/variants -data m1
//	almanac panel /tmp/ipanel.csv --series 600 --length 156 --frequency week --intermittent 1 --rng 11
//	go run ./pipeline/bench/calibration/variants -data panel -panel /tmp/ipanel.csv
//
// The end-to-end figures (through the binary) come from the calibration
// command one folder up.
package main

import (
	"bufio"
	"compress/gzip"
	"encoding/csv"
	"flag"
	"io"
	"math"
	"os"
	"strconv"

	"almanac/engines"
)

type series struct {
	id, subset  string
	m           int
	train, test []float64
}

type window struct {
	y, f  []float64
	scale float64
}

type fitted struct {
	own     map[string]float64
	s       *series
	scale   float64
	windows map[string][]window
	final   map[string][]float64
	chosen  string
	class   string
}

func loadM1(path string) []*series {
	fh, err := os.Open(path)
	check(err)
	gz, err := gzip.NewReader(fh)
	check(err)
	r := csv.NewReader(gz)
	hdr, err := r.Read()
	check(err)
	col := map[string]int{}
	for i, h := range hdr {
		col[h] = i
	}
	by := map[string]*series{}
	var order []string
	for {
		rec, err := r.Read()
		if err == io.EOF {
			break
		}
		check(err)
		id := rec[col["series"]]
		s := by[id]
		if s == nil {
			f, _ := strconv.Atoi(rec[col["frequency"]])
			s = &series{id: id, subset: rec[col["period_type"]], m: f}
			by[id] = s
			order = append(order, id)
		}
		v, err := strconv.ParseFloat(rec[col["value"]], 64)
		check(err)
		if rec[col["part"]] == "train" {
			s.train = append(s.train, v)
		} else {
			s.test = append(s.test, v)
		}
	}
	out := make([]*series, 0, len(order))
	for _, id := range order {
		out = append(out, by[id])
	}
	return out
}

func loadPanel(path string, hold, m int) []*series {
	fh, err := os.Open(path)
	check(err)
	r := csv.NewReader(bufio.NewReader(fh))
	_, err = r.Read()
	check(err)
	by := map[string]*series{}
	var order []string
	for {
		rec, err := r.Read()
		if err == io.EOF {
			break
		}
		check(err)
		id := rec[1] + "/" + rec[2]
		s := by[id]
		if s == nil {
			s = &series{id: id, subset: "panel", m: m}
			by[id] = s
			order = append(order, id)
		}
		v, _ := strconv.ParseFloat(rec[3], 64)
		s.train = append(s.train, v)
	}
	var out []*series
	for _, id := range order {
		s := by[id]
		n := len(s.train)
		s.test = append([]float64(nil), s.train[n-hold:]...)
		s.train = s.train[:n-hold]
		out = append(out, s)
	}
	return out
}

func check(err error) {
	if err != nil {
		panic(err)
	}
}

func mustMethod(name string) engines.Method {
	opts := engines.Options{}
	m, err := engines.New(name, opts)
	check(err)
	return m
}

func forecast(name string, y []float64, m, h int) ([]float64, error) {
	defer func() { recover() }()
	meth := mustMethod(name)
	f, err := meth.Fit(y[:len(y):len(y)], m)
	if err != nil {
		return nil, err
	}
	return f.Forecast(h), nil
}

func fit(s *series, methods []string, folds, h, minTrain int, route map[string][]string) *fitted {
	sc, _ := engines.PointScores(nil, nil, s.train, s.m)
	ft := &fitted{s: s, scale: sc.MASEScale, windows: map[string][]window{}, final: map[string][]float64{}}
	d := engines.ClassifyDemand(s.train)
	ft.class = d.Class
	n := len(s.train)
	best, bestScore := "", math.Inf(1)
	allowed := methods
	if r, ok := route[d.Class]; ok {
		allowed = r
	}
	for _, name := range methods {
		var sum float64
		k := 0
		okAll := true
		for i := 1; i <= folds; i++ {
			origin := n - h - (folds-i)*max(1, h**stepDiv/100)
			if origin < minTrain {
				continue
			}
			tr := s.train[:origin]
			te := s.train[origin:min(origin+h, n)]
			f, err := forecast(name, tr, s.m, h)
			if err != nil || len(f) != h {
				okAll = false
				break
			}
			fsc, _ := engines.PointScores(te, f[:len(te)], tr, s.m)
			ft.windows[name] = append(ft.windows[name], window{y: te, f: f, scale: fsc.MASEScale})
			if math.IsNaN(fsc.MASE) || math.IsInf(fsc.MASE, 0) {
				okAll = false
				break
			}
			sum += fsc.MASE
			k++
		}
		if !okAll {
			delete(ft.windows, name)
		}
		f, err := forecast(name, s.train, s.m, len(s.test))
		if err == nil && len(f) == len(s.test) {
			ft.final[name] = f
		}
		isAllowed := false
		for _, a := range allowed {
			isAllowed = isAllowed || a == name
		}
		if okAll && k > 0 && isAllowed && ft.final[name] != nil && sum/float64(k) < bestScore {
			best, bestScore = name, sum/float64(k)
		}
	}
	if best == "" {
		for _, name := range allowed {
			if ft.final[name] != nil {
				best = name
				break
			}
		}
	}
	ft.chosen = best
	ft.own = map[string]float64{}
	for name, ws := range ft.windows {
		sum, n := 0.0, 0
		for _, w := range ws {
			for i := range w.y {
				sum += math.Abs(w.y[i] - w.f[i])
				n++
			}
		}
		ft.own[name] = sum / float64(n)
	}
	return ft
}

type acc struct {
	n            int
	cov80, cov95 float64
	is80, is95   float64
	rough        float64
	nr           int
	neg, outside int
}

func (a *acc) add(y, scale float64, lo80, hi80, lo95, hi95 float64) {
	a.n++
	if y >= lo80 && y <= hi80 {
		a.cov80++
	}
	if y >= lo95 && y <= hi95 {
		a.cov95++
	}
	a.is80 += iscore(y, lo80, hi80, 0.2) / scale
	a.is95 += iscore(y, lo95, hi95, 0.05) / scale
}

func iscore(y, l, u, alpha float64) float64 {
	s := u - l
	if y < l {
		s += 2 / alpha * (l - y)
	}
	if y > u {
		s += 2 / alpha * (y - u)
	}
	return s
}

var levels = []int{80, 95}
var totLevels = []int{50, 80, 95, 99}

func main() {
	data := flag.String("data", "m1", "m1 | panel")
	panelPath := flag.String("panel", "/tmp/ipanel.csv", "invented panel CSV written by almanac panel")
	m1Path := flag.String("m1", "/work/shared/data/m1/m1.csv.gz", "M1 data")
	flag.Parse()
	var all []*series
	type subcfg struct {
		methods []string
		h       int
		leads   []int
		route   map[string][]string
	}
	cfg := map[string]subcfg{}
	if *data == "m1" {
		all = loadM1(*m1Path)
		cfg["yearly"] = subcfg{[]string{"naive", "drift", "ses", "holt", "theta"}, 6, []int{2, 4, 6}, nil}
		cfg["quarterly"] = subcfg{[]string{"naive", "seasonal_naive", "ses", "holt", "theta"}, 8, []int{2, 4, 8}, nil}
		cfg["monthly"] = subcfg{[]string{"naive", "seasonal_naive", "ses", "holt", "theta"}, 18, []int{3, 6, 12, 18}, nil}
	} else {
		all = loadPanel(*panelPath, 13, 52)
		cfg["panel"] = subcfg{[]string{"naive", "seasonal_naive", "mean", "ses", "sba"}, 13, []int{4, 8, 13},
			map[string][]string{"intermittent": {"sba", "seasonal_naive", "mean"}, "lumpy": {"sba", "seasonal_naive", "mean"}}}
	}
	subsets := []string{}
	bySub := map[string][]*series{}
	for _, s := range all {
		if bySub[s.subset] == nil {
			subsets = append(subsets, s.subset)
		}
		bySub[s.subset] = append(bySub[s.subset], s)
	}
	for _, sub := range subsets {
		c := cfg[sub]
		ss := bySub[sub]
		m := ss[0].m
		minTrain := max(2*m, 6)
		var fits []*fitted
		for _, s := range ss {
			fits = append(fits, fit(s, c.methods, *nFolds, c.h, minTrain, c.route))
		}
		evaluate(sub, fits, c.methods, c.h, c.leads)
	}
}

var onlyIntermittent = flag.Bool("only-intermittent", false, "score only the series classed intermittent or lumpy")
var onlyOther = flag.Bool("only-other", false, "score only the series not classed intermittent or lumpy")
var stepDiv = flag.Int("steppct", 100, "")
var nFolds = flag.Int("folds", 3, "")
var poolChosen = flag.Bool("chosen", false, "")
var scaleKind = flag.String("scale", "naive", "naive | own | geo")
