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
	"fmt"
	"hash/fnv"
	"io"
	"math"
	"os"
	"sort"
	"strconv"
	"strings"

	"almanac/engines"
	"almanac/engines/uncertainty"
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
	n                 int
	cov80, cov95      float64
	is80, is95        float64
	rough             float64
	nr                int
	neg, outside, nst int
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

type totAcc struct {
	n    []int
	hits [][]float64
	pin  [][]float64
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

type variant struct {
	name string
	sm   uncertainty.Smoothing
	kind string // add | raw | log | boot | bootpub
}

var onlyIntermittent = flag.Bool("only-intermittent", false, "score only the series classed intermittent or lumpy")
var onlyOther = flag.Bool("only-other", false, "score only the series not classed intermittent or lumpy")
var stepDiv = flag.Int("steppct", 100, "")
var nFolds = flag.Int("folds", 3, "")
var poolChosen = flag.Bool("chosen", false, "")
var scaleKind = flag.String("scale", "naive", "naive | own | geo")

func scaleOf(ft *fitted, name string, naive float64) float64 {
	own := ft.own[name]
	switch *scaleKind {
	case "own":
		if own > 0 {
			return own
		}
	case "geo":
		if own > 0 && naive > 0 {
			return math.Sqrt(own * naive)
		}
	}
	return naive
}

func evaluate(sub string, fits []*fitted, methods []string, h int, leads []int) {
	pools := map[string]*uncertainty.Pool{}
	logp := map[string][]*uncertainty.Histogram{}
	for _, name := range methods {
		pools[name] = uncertainty.NewPool(h, leads)
		lh := make([]*uncertainty.Histogram, h)
		for i := range lh {
			lh[i] = uncertainty.NewHistogram()
		}
		logp[name] = lh
	}
	classPools := map[string]*uncertainty.Pool{}
	groupOf := func(ft *fitted) string {
		if ft.class == engines.DemandIntermittent || ft.class == engines.DemandLumpy {
			return "/intermittent"
		}
		return "/other"
	}
	for _, ft := range fits {
		for name, ws := range ft.windows {
			k := name + groupOf(ft)
			if classPools[k] == nil {
				classPools[k] = uncertainty.NewPool(h, leads)
			}
			for _, w := range ws {
				classPools[k].AddWindow(w.y, w.f, w.scale)
			}
		}
	}
	for _, ft := range fits {
		for name, ws := range ft.windows {
			if *poolChosen && name != ft.chosen {
				continue
			}
			for _, w := range ws {
				pools[name].AddWindow(w.y, w.f, scaleOf(ft, name, w.scale))
				for s := range w.y {
					if w.y[s] > 0 && w.f[s] > 0 {
						logp[name][s].Add(math.Log(w.y[s] / w.f[s]))
					} else if w.f[s] > 0 {
						logp[name][s].Add(-math.Inf(1))
					}
				}
			}
		}
	}
	probs := uncertainty.BandProbs(levels)
	variants := []variant{
		{"raw (old)", uncertainty.Smoothing{}, "raw"},
		{"add N0", uncertainty.Smoothing{}, "add"},
		{"add N1", uncertainty.Smoothing{Neighbours: 1}, "add"},
		{"add N2", uncertainty.Smoothing{Neighbours: 2}, "add"},
		{"add N0+mono", uncertainty.Smoothing{Monotone: true}, "add"},
		{"add N1+mono", uncertainty.Smoothing{Neighbours: 1, Monotone: true}, "add"},
		{"add N2+mono", uncertainty.Smoothing{Neighbours: 2, Monotone: true}, "add"},
		{"log N1+mono", uncertainty.Smoothing{Neighbours: 1, Monotone: true}, "log"},
		{"add N1+mono, pooled within demand class", uncertainty.Smoothing{Neighbours: 1, Monotone: true}, "addclass"},
		{"boot none (intermittent)", uncertainty.Smoothing{Neighbours: 1, Monotone: true}, "boot"},
		{"boot published (intermittent)", uncertainty.Smoothing{Neighbours: 1, Monotone: true}, "bootpub"},
	}
	fmt.Printf("\n## %s: %d series, h=%d\n\n", sub, len(fits), h)
	fmt.Printf("| variant | n | cov80 | cov95 | MSIS80 | MSIS95 | roughness | neg bounds | f outside |\n|---|---|---|---|---|---|---|---|---|\n")
	for _, v := range variants {
		a := &acc{}
		stepQ := map[string][][]float64{}
		for name, p := range pools {
			if v.kind == "log" {
				stepQ[name] = uncertainty.StepQuantiles(logp[name], probs, h, v.sm)
			} else {
				stepQ[name] = uncertainty.StepQuantiles(p.Steps, probs, h, v.sm)
			}
		}
		for _, ft := range fits {
			if ft.chosen == "" || !(ft.scale > 0) || (*onlyIntermittent && ft.class != engines.DemandIntermittent && ft.class != engines.DemandLumpy) || (*onlyOther && (ft.class == engines.DemandIntermittent || ft.class == engines.DemandLumpy)) {
				continue
			}
			f := ft.final[ft.chosen]
			nonNeg := uncertainty.NonNegative(ft.s.train)
			var lo, hi [][]float64
			sc := scaleOf(ft, ft.chosen, ft.scale)
			intermittent := ft.class == engines.DemandIntermittent || ft.class == engines.DemandLumpy
			switch {
			case (v.kind == "boot" || v.kind == "bootpub") && intermittent:
				j := uncertainty.JitterNone
				if v.kind == "bootpub" {
					j = uncertainty.JitterPublished
				}
				paths, err := uncertainty.Resample(ft.s.train, h, 1000, seedOf(ft.s.id), j)
				check(err)
				_, lo, hi = uncertainty.Bands(f, levels, paths, nonNeg)
			case v.kind == "raw":
				q := stepQ[ft.chosen]
				lo, hi = make([][]float64, 2), make([][]float64, 2)
				for k, l := range levels {
					c := float64(l) / 100
					for s := range f {
						lo[k] = append(lo[k], f[s]+sc*q[s][idx(probs, (1-c)/2)])
						hi[k] = append(hi[k], f[s]+sc*q[s][idx(probs, (1+c)/2)])
					}
				}
			case v.kind == "addclass":
				cp := classPools[ft.chosen+groupOf(ft)]
				q := uncertainty.StepQuantiles(cp.Steps, probs, h, v.sm)
				ad := &uncertainty.Additive{Forecast: f, Scale: sc, Probs: probs, Q: q}
				_, lo, hi = uncertainty.Bands(f, levels, ad, nonNeg)
			case v.kind == "log":
				q := stepQ[ft.chosen]
				lq := &logQ{f: f, probs: probs, q: q}
				_, lo, hi = uncertainty.Bands(f, levels, lq, nonNeg)
			default:
				ad := &uncertainty.Additive{Forecast: f, Scale: sc, Probs: probs, Q: stepQ[ft.chosen]}
				_, lo, hi = uncertainty.Bands(f, levels, ad, nonNeg)
			}
			for s, y := range ft.s.test {
				a.add(y, ft.scale, lo[0][s], hi[0][s], lo[1][s], hi[1][s])
				if nonNeg && (lo[0][s] < 0 || lo[1][s] < 0) {
					a.neg++
				}
				if lo[0][s] > f[s] || hi[0][s] < f[s] || lo[1][s] > lo[0][s] || hi[1][s] < hi[0][s] {
					a.outside++
				}
				if s >= 2 {
					w := func(t int) float64 { return (hi[0][t] - lo[0][t]) / ft.scale }
					a.rough += math.Abs(w(s) - 2*w(s-1) + w(s-2))
					a.nr++
				}
			}
		}
		fmt.Printf("| %s | %d | %.1f | %.1f | %.2f | %.2f | %.3f | %d | %d |\n", v.name, a.n, 100*a.cov80/float64(a.n), 100*a.cov95/float64(a.n),
			a.is80/float64(a.n), a.is95/float64(a.n), a.rough/float64(max(a.nr, 1)), a.neg, a.outside)
	}
	// Diagnostic: pools from every fold but the last, scored on the last fold.
	{
		pp := map[string]*uncertainty.Pool{}
		for _, name := range methods {
			pp[name] = uncertainty.NewPool(h, leads)
		}
		for _, ft := range fits {
			for name, ws := range ft.windows {
				for _, w := range ws[:len(ws)-1] {
					pp[name].AddWindow(w.y, w.f, w.scale)
				}
			}
		}
		a := &acc{}
		for _, ft := range fits {
			ws := ft.windows[ft.chosen]
			if len(ws) < 2 {
				continue
			}
			w := ws[len(ws)-1]
			q := uncertainty.StepQuantiles(pp[ft.chosen].Steps, probs, h, uncertainty.DefaultSmoothing)
			ad := &uncertainty.Additive{Forecast: w.f, Scale: w.scale, Probs: probs, Q: q}
			_, lo, hi := uncertainty.Bands(w.f, levels, ad, uncertainty.NonNegative(ft.s.train))
			for s, y := range w.y {
				a.add(y, w.scale, lo[0][s], hi[0][s], lo[1][s], hi[1][s])
			}
		}
		fmt.Printf("\nlast backtest fold, pools from the earlier folds: n=%d cov80=%.1f cov95=%.1f\n", a.n, 100*a.cov80/float64(a.n), 100*a.cov95/float64(a.n))
	}
	// Totals.
	fmt.Printf("\n| totals | L | n | hit50 | hit80 | hit95 | hit99 | pinball (scaled) |\n|---|---|---|---|---|---|---|---|\n")
	for _, kind := range []string{"pooled sums", "pooled sums within demand class", "per-step sum (wrong)", "boot none (intermittent)", "boot published (intermittent)"} {
		for k, L := range leads {
			n := 0
			hits := make([]float64, len(totLevels))
			pin := 0.0
			for _, ft := range fits {
				if ft.chosen == "" || !(ft.scale > 0) || len(ft.s.test) < L || (*onlyIntermittent && ft.class != engines.DemandIntermittent && ft.class != engines.DemandLumpy) || (*onlyOther && (ft.class == engines.DemandIntermittent || ft.class == engines.DemandLumpy)) {
					continue
				}
				f := ft.final[ft.chosen]
				nonNeg := uncertainty.NonNegative(ft.s.train)
				sc := scaleOf(ft, ft.chosen, ft.scale)
				tot, act := 0.0, 0.0
				for s := 0; s < L; s++ {
					tot += f[s]
					act += ft.s.test[s]
				}
				intermittent := ft.class == engines.DemandIntermittent || ft.class == engines.DemandLumpy
				var qs []float64
				switch {
				case strings.HasPrefix(kind, "boot") && intermittent:
					j := uncertainty.JitterNone
					if strings.Contains(kind, "published") {
						j = uncertainty.JitterPublished
					}
					paths, err := uncertainty.Resample(ft.s.train, h, 1000, seedOf(ft.s.id), j)
					check(err)
					qs = uncertainty.TotalQuantiles(totLevels, func(p float64) float64 { return paths.TotalQuantile(L, p) }, nonNeg)
				case kind == "per-step sum (wrong)":
					pr := uncertainty.BandProbs(totLevels)
					q := uncertainty.StepQuantiles(pools[ft.chosen].Steps, pr, h, uncertainty.DefaultSmoothing)
					qs = uncertainty.TotalQuantiles(totLevels, func(p float64) float64 {
						sum := tot
						for s := 0; s < L; s++ {
							sum += sc * q[s][idx(pr, p)]
						}
						return sum
					}, nonNeg)
				case kind == "pooled sums within demand class":
					p := classPools[ft.chosen+groupOf(ft)]
					qs = uncertainty.TotalQuantiles(totLevels, func(pr float64) float64 { return p.TotalQuantile(k, tot, sc, pr) }, nonNeg)
				default:
					p := pools[ft.chosen]
					qs = uncertainty.TotalQuantiles(totLevels, func(pr float64) float64 { return p.TotalQuantile(k, tot, sc, pr) }, nonNeg)
				}
				n++
				for i, lv := range totLevels {
					if act <= qs[i] {
						hits[i]++
					}
					tau := float64(lv) / 100
					d := act - qs[i]
					if d >= 0 {
						pin += tau * d / (ft.scale * float64(L))
					} else {
						pin += (tau - 1) * d / (ft.scale * float64(L))
					}
				}
			}
			fmt.Printf("| %s | %d | %d | %.1f | %.1f | %.1f | %.1f | %.3f |\n", kind, L, n, 100*hits[0]/float64(n), 100*hits[1]/float64(n), 100*hits[2]/float64(n), 100*hits[3]/float64(n), pin/float64(n*len(totLevels)))
		}
	}
	cls := map[string]int{}
	for _, ft := range fits {
		cls[ft.class+"/"+ft.chosen]++
	}
	keys := make([]string, 0)
	for k := range cls {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		fmt.Printf("%s=%d ", k, cls[k])
	}
	fmt.Println()
}

type logQ struct {
	f     []float64
	probs []float64
	q     [][]float64
}

func (l *logQ) Quantile(s int, p float64) float64 {
	if l.f[s] <= 0 {
		return l.f[s]
	}
	return l.f[s] * math.Exp(l.q[s][idx(l.probs, p)])
}

func idx(ps []float64, p float64) int {
	for i, x := range ps {
		if math.Abs(x-p) < 1e-9 {
			return i
		}
	}
	panic(fmt.Sprint("no prob ", p))
}

func seedOf(id string) uint64 {
	h := fnv.New64a()
	h.Write([]byte(id))
	return h.Sum64()
}
