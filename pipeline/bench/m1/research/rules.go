package main

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"almanac/engines"
	"almanac/pipeline/bench/m1/m1data"
)

// deseasonalized wraps a method: when the seasonality test (90%, at least
// three seasons) says seasonal, the series is divided by its classical
// multiplicative factors, the method forecasts the adjusted series, and
// the forecasts are multiplied back (the M4 practice for SES, Holt and
// damped Holt).
type deseasonalized struct{ inner engines.Method }

func (d deseasonalized) Name() string { return "ds_" + d.inner.Name() }

type reseasoned struct {
	f       engines.Fitted
	factors []float64
	n       int
}

func (r reseasoned) Forecast(h int) []float64 {
	fc := r.f.Forecast(h)
	for i := range fc {
		fc[i] *= r.factors[(r.n+i)%len(r.factors)]
	}
	return fc
}

func (d deseasonalized) Fit(y []float64, m int) (engines.Fitted, error) {
	if m < 2 || len(y) < 3*m {
		return d.inner.Fit(y, m)
	}
	if _, ok := engines.SeasonalityTest(y, m); !ok {
		return d.inner.Fit(y, m)
	}
	for _, v := range y {
		if !(v > 0) {
			return d.inner.Fit(y, m)
		}
	}
	f := m1data.SeasonalIndices(y, m)
	x := make([]float64, len(y))
	for i, v := range y {
		x[i] = v / f[i%m]
	}
	inner, err := d.inner.Fit(x, m)
	if err != nil {
		return nil, err
	}
	return reseasoned{inner, f, len(y)}, nil
}

type rule struct {
	name string
	fc   func(r *result) []float64
}

// evaluate scores every rule on every series and prints a table ordered
// by overall sMAPE.
func evaluate(res []*result, labels []string) {
	mb := members{idx: map[string]int{}}
	for i, l := range labels {
		mb.idx[l] = i
	}
	printRuleScores(res, mb, buildRules(mb, labels))
}

// members finds a run's methods by label.
type members struct {
	idx map[string]int
}

// buildRules lists the rules: each method alone, Naive2, the combinations
// of each candidate pool, and select-best over all methods.
func buildRules(mb members, labels []string) []rule {
	var rules []rule
	for _, l := range labels {
		l := l
		rules = append(rules, rule{l, func(r *result) []float64 { f, _ := mb.member(r, l); return f }})
	}
	rules = append(rules, rule{"Naive2", func(r *result) []float64 { return m1data.Naive2(r.s.Train, r.s.Period, len(r.s.Test)) }})
	for _, p := range candidatePools {
		ok := true
		for _, l := range p {
			ok = ok && mb.has(l)
		}
		if !ok {
			continue
		}
		name := strings.Join(p, "+")
		for _, kind := range []string{"mean", "median", "trimmed"} {
			if kind == "trimmed" && len(p) < 4 {
				continue
			}
			rules = append(rules, rule{kind + "(" + name + ")", mb.fixed(kind, p)})
		}
		rules = append(rules, rule{"top2 mean(" + name + ")", mb.topK("mean", p, 2)})
		rules = append(rules, rule{"inverse-MASE weighted(" + name + ")", mb.weighted(p)})
		for _, mg := range []float64{0.1, 0.25, 0.5} {
			rules = append(rules, rule{fmt.Sprintf("mean or single>%.0f%%(%s)", mg*100, name), mb.comboOrSingle("mean", p, p, mg)})
		}
	}
	var allPool []string
	allPool = append(allPool, labels...)
	rules = append(rules, rule{"select best or top3 (all candidates)", mb.selectBest(allPool)})
	return rules
}

// printRuleScores prints each rule's mean sMAPE and MASE by subset.
func printRuleScores(res []*result, mb members, rules []rule) {
	fmt.Println("| rule | sMAPE Y | sMAPE Q | sMAPE M | **sMAPE all** | MASE Y | MASE Q | MASE M | **MASE all** | missing |")
	fmt.Println("|---|---:|---:|---:|---:|---:|---:|---:|---:|---:|")
	type row struct {
		name    string
		sm, ma  map[string]float64
		n       map[string]int
		missing int
	}
	var rows []row
	for _, ru := range rules {
		rw := row{name: ru.name, sm: map[string]float64{}, ma: map[string]float64{}, n: map[string]int{}}
		for _, r := range res {
			f := ru.fc(r)
			if f == nil {
				f, _ = mb.member(r, "naive")
				rw.missing++
				if f == nil {
					continue
				}
			}
			s := r.s
			sm := m1data.SMAPE(s.Test, f)
			ma := m1data.MASE(s.Test, f, s.Train, s.Period)
			for _, k := range []string{s.Subset, "all"} {
				rw.sm[k] += sm
				rw.ma[k] += ma
				rw.n[k]++
			}
		}
		for k, c := range rw.n {
			rw.sm[k] /= float64(c)
			rw.ma[k] /= float64(c)
		}
		rows = append(rows, rw)
	}
	sort.SliceStable(rows, func(i, j int) bool { return rows[i].sm["all"] < rows[j].sm["all"] })
	for _, rw := range rows {
		fmt.Printf("| %s | %.2f | %.2f | %.2f | **%.2f** | %.3f | %.3f | %.3f | **%.3f** | %d |\n", rw.name,
			rw.sm["yearly"], rw.sm["quarterly"], rw.sm["monthly"], rw.sm["all"],
			rw.ma["yearly"], rw.ma["quarterly"], rw.ma["monthly"], rw.ma["all"], rw.missing)
	}
}

// candidatePools are the pools of methods the combination rules draw on;
// a pool whose methods are not all in the run is left out.
var candidatePools = [][]string{
	{"ses", "holt_damped", "theta"},
	{"smoothing_auto", "holt_damped", "theta"},
	{"smoothing_auto", "theta", "stl_auto"},
	{"smoothing_auto", "holt_damped", "theta", "stl_auto"},
	{"smoothing_auto", "holt_damped", "theta", "stl_auto", "ses"},
	{"ds_ses", "ds_holt", "ds_holt_damped"},
	{"ds_ses", "ds_holt_damped", "theta"},
	{"ds_ses", "ds_holt_damped", "theta", "smoothing_auto"},
	{"ds_ses", "ds_holt_damped", "theta", "smoothing_auto", "stl_auto"},
	{"smoothing_auto", "theta", "arima"},
	{"smoothing_auto", "theta", "arima", "ds_holt_damped"},
	{"ets", "theta", "arima"},
	{"ets", "theta", "arima", "ds_holt_damped"},
	{"ets", "theta", "arima", "ds_ses", "ds_holt_damped"},
	{"ets", "theta", "arima", "stl_auto"},
	{"ets", "theta", "ds_holt_damped"},
	{"smoothing_auto", "theta", "arima", "stl_auto"},
	{"smoothing_auto", "theta", "arima", "ds_holt_damped", "stl_auto"},
	{"smoothing_auto", "theta", "arima", "ds_ses"},
	{"smoothing_auto", "theta", "arima", "naive2"},
	{"ets", "theta", "arima", "naive2"},
	{"ets", "theta", "arima", "ds_holt_damped", "stl_auto"},
	{"smoothing_auto", "theta", "damped", "stl_auto"},
	{"smoothing_auto", "theta", "damped"},
	{"smoothing_auto", "theta", "ds_holt_damped"},
	{"smoothing_auto", "theta", "ds_holt_damped", "stl_auto"},
	{"smoothing_auto", "theta", "arima", "damped", "stl_auto"},
	{"smoothing_auto", "theta", "arima", "damped"},
}

// has reports whether a method of the run has label l.
func (mb members) has(l string) bool { _, ok := mb.idx[l]; return ok }

// member gives the final and per-fold forecasts of the method labelled l
// (nil when the run has none).
func (mb members) member(r *result, l string) ([]float64, [][]float64) {
	i, ok := mb.idx[l]
	if !ok {
		return nil, nil
	}
	return r.full[i], r.fold[i]
}

// poolOf gives the pool members that apply to r: seasonal-only ones need
// m ≥ 2.
func (mb members) poolOf(r *result, pool []string) []string {
	var out []string
	for _, l := range pool {
		if f, _ := mb.member(r, l); f != nil {
			out = append(out, l)
		}
	}
	return out
}

// fixed combines every applicable member of pool by kind.
func (mb members) fixed(kind string, pool []string) func(*result) []float64 {
	return func(r *result) []float64 {
		var fcs [][]float64
		for _, l := range mb.poolOf(r, pool) {
			f, _ := mb.member(r, l)
			fcs = append(fcs, f)
		}
		return combine(kind, fcs)
	}
}

// foldCombo combines the members ls by kind in each backtest fold.
func (mb members) foldCombo(r *result, kind string, ls []string) [][]float64 {
	out := make([][]float64, len(r.actual))
	for k := range r.actual {
		var fcs [][]float64
		for _, l := range ls {
			_, fo := mb.member(r, l)
			if fo == nil || fo[k] == nil {
				continue
			}
			fcs = append(fcs, fo[k])
		}
		out[k] = combine(kind, fcs)
	}
	return out
}

// ranked orders the applicable members of pool by fold MASE, best first.
func (mb members) ranked(r *result, pool []string) []string {
	ls := mb.poolOf(r, pool)
	sc := map[string]float64{}
	for _, l := range ls {
		_, fo := mb.member(r, l)
		sc[l] = foldMASE(r, fo)
		if math.IsNaN(sc[l]) {
			sc[l] = math.Inf(1)
		}
	}
	sort.SliceStable(ls, func(a, b int) bool { return sc[ls[a]] < sc[ls[b]] })
	return ls
}

// topK combines the k best-ranked members of pool by kind.
func (mb members) topK(kind string, pool []string, k int) func(*result) []float64 {
	return func(r *result) []float64 {
		if len(r.actual) == 0 {
			return mb.fixed(kind, pool)(r)
		}
		ls := mb.ranked(r, pool)
		if len(ls) > k {
			ls = ls[:k]
		}
		var fcs [][]float64
		for _, l := range ls {
			f, _ := mb.member(r, l)
			fcs = append(fcs, f)
		}
		return combine(kind, fcs)
	}
}

// comboOrSingle gives the fixed combination, unless the best single member
// beats it on the folds by more than margin (relative), on every fold
// when strict.
func (mb members) comboOrSingle(kind string, pool, singles []string, margin float64) func(*result) []float64 {
	return func(r *result) []float64 {
		combo := mb.fixed(kind, pool)(r)
		if len(r.actual) == 0 {
			return combo
		}
		cf := mb.foldCombo(r, kind, mb.poolOf(r, pool))
		cs := foldMASE(r, cf)
		best, bs := "", math.Inf(1)
		for _, l := range mb.poolOf(r, singles) {
			_, fo := mb.member(r, l)
			if s := foldMASE(r, fo); s < bs {
				best, bs = l, s
			}
		}
		if best != "" && bs < cs*(1-margin) {
			f, _ := mb.member(r, best)
			return f
		}
		return combo
	}
}

// weighted gives the pool's forecasts weighted by 1/fold MASE (equal
// weights without folds).
func (mb members) weighted(pool []string) func(*result) []float64 {
	return func(r *result) []float64 {
		ls := mb.poolOf(r, pool)
		var out []float64
		tot := 0.0
		for _, l := range ls {
			f, fo := mb.member(r, l)
			w := 1.0
			if len(r.actual) > 0 {
				s := foldMASE(r, fo)
				if !(s > 0) || math.IsInf(s, 0) {
					continue
				}
				w = 1 / s
			}
			if out == nil {
				out = make([]float64, len(f))
			}
			for j := range f {
				out[j] += w * f[j]
			}
			tot += w
		}
		if out == nil {
			return mb.fixed("mean", pool)(r)
		}
		for j := range out {
			out[j] /= tot
		}
		return out
	}
}

// selectBest picks the best by fold MASE among singles and the top-3 mean (today's
// pipeline rule).
func (mb members) selectBest(pool []string) func(*result) []float64 {
	return func(r *result) []float64 {
		ls := mb.poolOf(r, pool)
		if len(r.actual) == 0 {
			if f, _ := mb.member(r, "naive"); f != nil {
				return f
			}
			return mb.fixed("mean", pool)(r)
		}
		rk := mb.ranked(r, pool)
		top := rk
		if len(top) > 3 {
			top = top[:3]
		}
		cs := foldMASE(r, mb.foldCombo(r, "mean", top))
		bestL, bs := "", math.Inf(1)
		for _, l := range ls {
			_, fo := mb.member(r, l)
			if s := foldMASE(r, fo); s < bs {
				bestL, bs = l, s
			}
		}
		if cs <= bs {
			var fcs [][]float64
			for _, l := range top {
				f, _ := mb.member(r, l)
				fcs = append(fcs, f)
			}
			return combine("mean", fcs)
		}
		f, _ := mb.member(r, bestL)
		return f
	}
}
