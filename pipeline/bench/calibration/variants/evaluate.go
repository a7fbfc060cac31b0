package main

import (
	"fmt"
	"hash/fnv"
	"math"
	"sort"
	"strings"

	"almanac/engines"
	"almanac/engines/uncertainty"
)

type variant struct {
	name string
	sm   uncertainty.Smoothing
	kind string // add | raw | log | boot | bootpub
}

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

// evaluate scores each interval variant, the last-fold diagnostic and the
// totals of one M1 subset, and prints them as Markdown tables.
func evaluate(sub string, fits []*fitted, methods []string, h int, leads []int) {
	ep := buildPools(fits, methods, h, leads)
	probs := uncertainty.BandProbs(levels)
	scoreVariants(sub, fits, h, probs, ep)
	lastFold(fits, methods, h, leads, probs)
	scoreTotals(fits, h, leads, ep)
	printChosen(fits)
}

// evalPools are the backtest error pools evaluate scores from.
type evalPools struct {
	pools      map[string]*uncertainty.Pool        // per method
	logp       map[string][]*uncertainty.Histogram // per method and step, log(actual/forecast)
	classPools map[string]*uncertainty.Pool        // per method + groupOf
}

// groupOf names the demand-class group of a series.
func groupOf(ft *fitted) string {
	if ft.class == engines.DemandIntermittent || ft.class == engines.DemandLumpy {
		return "/intermittent"
	}
	return "/other"
}

// unscored reports whether a series is left out of the scores.
func unscored(ft *fitted) bool {
	return ft.chosen == "" || !(ft.scale > 0) || (*onlyIntermittent && ft.class != engines.DemandIntermittent && ft.class != engines.DemandLumpy) || (*onlyOther && (ft.class == engines.DemandIntermittent || ft.class == engines.DemandLumpy))
}

// buildPools pools every method's backtest windows.
func buildPools(fits []*fitted, methods []string, h int, leads []int) *evalPools {
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
	return &evalPools{pools: pools, logp: logp, classPools: classPools}
}

// scoreVariants prints coverage, MSIS and roughness for each interval variant.
func scoreVariants(sub string, fits []*fitted, h int, probs []float64, ep *evalPools) {
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
		for name, p := range ep.pools {
			if v.kind == "log" {
				stepQ[name] = uncertainty.StepQuantiles(ep.logp[name], probs, h, v.sm)
			} else {
				stepQ[name] = uncertainty.StepQuantiles(p.Steps, probs, h, v.sm)
			}
		}
		for _, ft := range fits {
			if unscored(ft) {
				continue
			}
			f := ft.final[ft.chosen]
			nonNeg := uncertainty.NonNegative(ft.s.train)
			lo, hi := bands(v, ft, f, h, probs, stepQ, ep.classPools)
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
}

// bands gives the 80% and 95% bounds variant v puts around the forecast f
// of the chosen method of ft.
func bands(v variant, ft *fitted, f []float64, h int, probs []float64, stepQ map[string][][]float64, classPools map[string]*uncertainty.Pool) (lo, hi [][]float64) {
	nonNeg := uncertainty.NonNegative(ft.s.train)
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
	return lo, hi
}

// lastFold is a diagnostic: pools from every fold but the last, scored on
// the last fold.
func lastFold(fits []*fitted, methods []string, h int, leads []int, probs []float64) {
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

// scoreTotals prints hit rates and pinball loss of the quantiles of totals.
func scoreTotals(fits []*fitted, h int, leads []int, ep *evalPools) {
	fmt.Printf("\n| totals | L | n | hit50 | hit80 | hit95 | hit99 | pinball (scaled) |\n|---|---|---|---|---|---|---|---|\n")
	for _, kind := range []string{"pooled sums", "pooled sums within demand class", "per-step sum (wrong)", "boot none (intermittent)", "boot published (intermittent)"} {
		for k, L := range leads {
			n := 0
			hits := make([]float64, len(totLevels))
			pin := 0.0
			for _, ft := range fits {
				if unscored(ft) || len(ft.s.test) < L {
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
					q := uncertainty.StepQuantiles(ep.pools[ft.chosen].Steps, pr, h, uncertainty.DefaultSmoothing)
					qs = uncertainty.TotalQuantiles(totLevels, func(p float64) float64 {
						sum := tot
						for s := 0; s < L; s++ {
							sum += sc * q[s][idx(pr, p)]
						}
						return sum
					}, nonNeg)
				case kind == "pooled sums within demand class":
					p := ep.classPools[ft.chosen+groupOf(ft)]
					qs = uncertainty.TotalQuantiles(totLevels, func(pr float64) float64 { return p.TotalQuantile(k, tot, sc, pr) }, nonNeg)
				default:
					p := ep.pools[ft.chosen]
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
}

// printChosen prints how many series of each demand class chose each method.
func printChosen(fits []*fitted) {
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
