// Package evaluate is the Evaluation stage: rolling-origin backtests of
// every method on every series, per-series selection (and an optional
// combination entry), prediction intervals and the leaderboard.
package evaluate

import (
	"fmt"
	"math"
	"slices"
	"sort"

	"almanac/engines"
	"almanac/pipeline/forecast"
	"almanac/pipeline/runfolder"
	"almanac/pipeline/series"
	"almanac/spec"
)

// The Evaluation stage: rolling-origin backtests of every method on every
// series, per-series selection (and an optional combination entry), and
// prediction intervals. It runs as a first pass over the series, before the
// final forecasts; what it learns per series (the choice, the combination's
// members) and across series (the distribution of scaled errors at each
// step ahead) is read by the second pass.

// Evaluation is the state shared by both passes. Pass 1 fills it from the
// single goroutine that emits results, so it needs no locks; pass 2 only
// reads it.
type Evaluation struct {
	bt      spec.Backtest
	metric  string
	combo   *spec.Combination
	choose  string   // spec.ChooseBest or spec.ChooseCombination
	labels  []string // method labels in spec order, then the combination's
	levels  []int
	source  string // empirical | model
	allMeth bool

	choices []seriesChoice // by series index
	// iv pools the backtest errors of every series per entry, scaled by
	// each series' in-sample seasonal naive MAE, for bounds and totals
	// (intervals.go).
	iv intervalState

	// Leaderboard material: each series' mean MASE per entry, and wins.
	mase      map[string][]float64
	wins      map[string]int
	fallback  string
	fallbacks int
	route     map[string][]string
}

// seriesChoice is what pass 1 decided for one series.
type seriesChoice struct {
	chosen   string              // label, "" for a series with no usable history
	fallback bool                // chosen is the fallback: no entry could be scored
	members  []string            // the combination's methods for this series
	weights  []float64           // their weights (kind weighted), summing to 1; nil: equal
	problems []runfolder.Problem // the backtest's problems rows, written with the series
}

// New prepares the evaluation of n series; nil without a backtest.
func New(s *spec.Spec, n int) *Evaluation {
	if s.Backtest.Folds == 0 {
		return nil
	}
	e := &Evaluation{bt: s.Backtest, metric: s.Selection.Metric, combo: s.Selection.Combine, choose: s.Selection.Choose,
		levels: s.Intervals.Levels, source: s.Intervals.Source, allMeth: s.Intervals.AllMethods,
		choices: make([]seriesChoice, n),
		mase:    map[string][]float64{}, wins: map[string]int{}, fallback: s.Selection.Fallback, route: s.Selection.Route}
	for _, m := range s.Methods {
		e.labels = append(e.labels, m.Label)
	}
	if e.combo != nil {
		e.labels = append(e.labels, e.combo.Label)
	}
	e.initIntervals(s)
	return e
}

// entryBacktest is one method (or the combination) on every fold of one series.
type entryBacktest struct {
	label  string
	folds  []foldScore
	score  float64 // mean of the selection metric over the folds; NaN if ineligible
	mase   float64 // mean MASE over the folds
	reason string  // why the entry is ineligible
	fills  []fill  // folds whose training slice was filled (imputed.go)
}

type foldScore struct {
	fold   fold
	fc     []float64
	scores engines.Scores
	failed bool
	// noActuals: every actual of the test window is missing (closed
	// periods, gaps), so no entry can be scored on this fold.
	noActuals bool
}

// Backtest is pass 1's output for one series.
type Backtest struct {
	Series   *series.Series
	entries  []entryBacktest
	chosen   int // index into entries; -1 none
	runnerUp int
	reason   string
	folds    int
	Problems []runfolder.Problem
	demand   *engines.DemandClass
}

// metricOf picks the selection metric out of a fold's scores.
func metricOf(sc engines.Scores, metric string) float64 {
	switch metric {
	case "mase":
		return sc.MASE
	case "rmsse":
		return sc.RMSSE
	case "mae":
		return sc.MAE
	case "rmse":
		return sc.RMSE
	case "mape":
		return sc.MAPE
	case "smape":
		return sc.SMAPE
	case "wape":
		return sc.WAPE
	}
	panic("pipeline: unknown metric " + metric)
}

// Backtest runs pass 1 on one series with w's methods.
func (e *Evaluation) Backtest(w *forecast.Work, s *series.Series) *Backtest {
	r := &Backtest{Series: s, chosen: -1, runnerUp: -1}
	if s.Skip != "" || forecast.AllMissing(s.Values) {
		r.reason = "no usable history"
		return r
	}
	if d, ok := classifyDemand(s.Values); ok {
		r.demand = &d
	}
	y := s.Values
	m := w.Spec.Calendar.SeasonLength
	folds, dropped := planFolds(len(y), e.bt)
	r.folds = len(folds)
	if dropped > 0 {
		msg := fmt.Sprintf("only %d of %d backtest folds fit a history of %d periods (min_train %d, horizon %d, step %d)",
			len(folds), e.bt.Folds, len(y), e.bt.MinTrain, e.bt.Horizon, e.bt.Step)
		r.Problems = append(r.Problems, runfolder.Problem{Key: s.Key, Stage: "backtest", Severity: "warning", Code: runfolder.CodeBacktestShort, Message: msg})
	}
	if len(folds) == 0 {
		r.reason = fmt.Sprintf("history too short for any backtest fold; fell back to %s", w.Spec.Selection.Fallback)
		if e.combinationAlways() {
			r.reason = fmt.Sprintf("history too short for any backtest fold; the combination %s of every method with equal weights", e.combo.Label)
		}
		return r
	}
	for _, mr := range w.Methods {
		r.entries = append(r.entries, e.backtestMethod(w, mr, s, folds))
	}
	r.Problems = append(r.Problems, imputedProblems(s.Key, r.entries)...)
	for i := range r.entries {
		e.scoreEntry(&r.entries[i])
	}
	routed := ""
	if r.demand != nil {
		if allowed, ok := e.route[r.demand.Class]; ok {
			routed = r.demand.Class
			for i := range r.entries {
				if !slices.Contains(allowed, r.entries[i].label) && r.entries[i].reason == "" {
					r.entries[i].reason = "not routed to " + routed + " demand"
					r.entries[i].score = math.NaN()
				}
			}
		}
	}
	if e.combo != nil {
		cb := e.combination(r.entries, y, m, folds)
		if routed != "" && !slices.Contains(e.route[routed], cb.label) {
			cb.reason, cb.score = "not routed to "+routed+" demand", math.NaN()
		}
		r.entries = append(r.entries, cb)
	}
	// Choose: the lowest score; ties go to the earlier entry (spec order,
	// the combination last).
	order := make([]int, 0, len(r.entries))
	for i, eb := range r.entries {
		if !math.IsNaN(eb.score) {
			order = append(order, i)
		}
	}
	slices.SortStableFunc(order, func(a, b int) int {
		sa, sb := r.entries[a].score, r.entries[b].score
		switch {
		case sa < sb:
			return -1
		case sa > sb:
			return 1
		}
		return 0
	})
	if len(order) == 0 {
		r.reason = fmt.Sprintf("no method could be scored on the backtest; fell back to %s", w.Spec.Selection.Fallback)
		return r
	}
	r.chosen = order[0]
	r.reason = fmt.Sprintf("lowest mean %s over %d fold(s)", e.metric, len(folds))
	if routed != "" {
		r.reason += " among the methods routed to " + routed + " demand"
	}
	if len(order) > 1 {
		r.runnerUp = order[1]
	} else {
		r.reason = fmt.Sprintf("the only entry scored on %d fold(s)", len(folds))
	}
	if last := len(r.entries) - 1; e.combinationAlways() && !math.IsNaN(r.entries[last].score) {
		// choose: combination — the combination for every series where
		// it could be scored; the runner-up is the best other entry.
		r.chosen, r.runnerUp = last, -1
		for _, i := range order {
			if i != last {
				r.runnerUp = i
				break
			}
		}
		r.reason = fmt.Sprintf("the combination, for every series (choose: combination); mean %s over %d fold(s)", e.metric, len(folds))
	}
	return r
}

// combinationAlways reports whether the spec chooses its combination for
// every series (selection.choose: combination).
func (e *Evaluation) combinationAlways() bool {
	return e.choose == spec.ChooseCombination && e.combo != nil
}

// backtestMethod runs one method on every fold of y.
// Closed periods are missing values (NaN) in y, so a test window's closed
// periods are never scored: engines.PointScores skips NaN actuals.
func (e *Evaluation) backtestMethod(w *forecast.Work, mr forecast.Method, s *series.Series, folds []fold) entryBacktest {
	m := w.Spec.Calendar.SeasonLength
	seasons := w.Spec.Calendar.AllSeasons()
	y := s.Values
	method := mr.Engine
	eb := entryBacktest{label: mr.Spec.Label, folds: make([]foldScore, 0, len(folds))}
	for _, f := range folds {
		// SafeForecastSeries caps the training slice's capacity: a method
		// cannot reach past the origin by reslicing its input. Drivers
		// reach to the end of the fold's horizon (known in advance).
		train := y[f.TrainStart:f.TrainEnd:f.TrainEnd]
		test := y[f.TrainEnd:f.TestEnd]
		res, err := forecast.SafeForecastSeries(method, s, seasons, f.TrainStart, f.TrainEnd, e.bt.Horizon, false)
		if err != nil {
			eb.folds = append(eb.folds, foldScore{fold: f, failed: true})
			if eb.reason == "" {
				eb.reason = fmt.Sprintf("failed on fold %d: %s", f.Index, forecast.TrimName(err.Error(), mr.Spec.Method))
			}
			continue
		}
		if res.Imputed > 0 {
			eb.fills = append(eb.fills, fill{fold: f.Index, n: res.Imputed, of: len(train), how: res.Fill})
		}
		sc, _ := engines.PointScores(test, res.Values[:len(test)], train, m)
		eb.folds = append(eb.folds, foldScore{fold: f, fc: res.Values, scores: sc, noActuals: forecast.AllMissing(test)})
	}
	return eb
}

// scoreEntry averages the selection metric and MASE over the folds; an
// entry that failed on a fold, or whose metric is undefined on one, is
// ineligible.
func (e *Evaluation) scoreEntry(eb *entryBacktest) {
	eb.score, eb.mase = math.NaN(), math.NaN()
	if len(eb.folds) == 0 || eb.reason != "" {
		return
	}
	var sum, msum float64
	mn, scored := 0, 0
	for _, f := range eb.folds {
		if f.noActuals {
			// Every actual of the test window is missing (closed, or a
			// gap): nothing to score, for any entry; the fold is left
			// out of the means rather than making the entry ineligible.
			continue
		}
		scored++
		v := metricOf(f.scores, e.metric)
		if math.IsNaN(v) || math.IsInf(v, 0) {
			eb.reason = fmt.Sprintf("%s undefined on fold %d", e.metric, f.fold.Index)
			return
		}
		sum += v
		if !math.IsNaN(f.scores.MASE) && !math.IsInf(f.scores.MASE, 0) {
			msum += f.scores.MASE
			mn++
		}
	}
	if scored == 0 {
		eb.reason = "no observed value in any fold's test window"
		return
	}
	eb.score = sum / float64(scored)
	if mn == scored {
		eb.mase = msum / float64(mn)
	}
}

// topMembers ranks the eligible methods of a series and returns the labels
// of the best k (ties by spec order), or nil when fewer than two qualify.
func topMembers(entries []entryBacktest, k int) []int {
	var idx []int
	for i, eb := range entries {
		if !math.IsNaN(eb.score) {
			idx = append(idx, i)
		}
	}
	slices.SortStableFunc(idx, func(a, b int) int {
		switch sa, sb := entries[a].score, entries[b].score; {
		case sa < sb:
			return -1
		case sa > sb:
			return 1
		}
		return 0
	})
	if len(idx) < 2 {
		return nil
	}
	return idx[:min(k, len(idx))]
}

// combination backtests the mean or median of the series' top methods, on
// the same folds. The members are ranked by their own backtest scores on
// these folds (common practice for forecast combinations; the ranking sees
// the folds it is scored on, which flatters the combination slightly).
func (e *Evaluation) combination(entries []entryBacktest, y []float64, m int, folds []fold) entryBacktest {
	eb := entryBacktest{label: e.combo.Label}
	members := topMembers(entries, e.combo.Top)
	if members == nil {
		eb.reason = "fewer than two methods could be scored"
		eb.score, eb.mase = math.NaN(), math.NaN()
		return eb
	}
	weights := e.memberWeights(entries, members)
	for fi, f := range folds {
		fcs := make([][]float64, len(members))
		for j, mi := range members {
			fcs[j] = entries[mi].folds[fi].fc
		}
		fc := combineForecasts(e.combo.Kind, fcs, weights)
		train := y[f.TrainStart:f.TrainEnd:f.TrainEnd]
		test := y[f.TrainEnd:f.TestEnd]
		sc, _ := engines.PointScores(test, fc[:len(test)], train, m)
		eb.folds = append(eb.folds, foldScore{fold: f, fc: fc, scores: sc, noActuals: forecast.AllMissing(test)})
	}
	e.scoreEntry(&eb)
	return eb
}

// memberWeights returns the weights of a weighted combination of the given
// members: w_i ∝ 1 / (member i's mean backtest score on the selection
// metric), summing to 1. Members with a score of 0 share all the weight
// (the limit of the rule). Nil for the other kinds, and for a weighted
// combination without scores (equal weights).
func (e *Evaluation) memberWeights(entries []entryBacktest, members []int) []float64 {
	if e.combo.Kind != spec.CombineWeighted || len(members) == 0 {
		return nil
	}
	w := make([]float64, len(members))
	zeros := 0
	for _, mi := range members {
		sc := entries[mi].score
		if math.IsNaN(sc) || math.IsInf(sc, 0) || sc < 0 {
			return nil
		}
		if sc == 0 {
			zeros++
		}
	}
	total := 0.0
	for j, mi := range members {
		sc := entries[mi].score
		switch {
		case zeros > 0 && sc == 0:
			w[j] = 1
		case zeros == 0:
			w[j] = 1 / sc
		}
		total += w[j]
	}
	for j := range w {
		w[j] /= total
	}
	return w
}

// combineForecasts is the step-by-step mean, median or weighted mean (when
// weights is not nil; weights sum to 1) of several forecasts.
func combineForecasts(kind string, fcs [][]float64, weights []float64) []float64 {
	h := len(fcs[0])
	out := make([]float64, h)
	col := make([]float64, len(fcs))
	for s := 0; s < h; s++ {
		for j := range fcs {
			col[j] = fcs[j][s]
		}
		if weights != nil {
			sum := 0.0
			for j, v := range col {
				sum += weights[j] * v
			}
			out[s] = sum
			continue
		}
		if kind == "median" {
			sort.Float64s(col)
			k := len(col)
			if k%2 == 1 {
				out[s] = col[k/2]
			} else {
				out[s] = (col[k/2-1] + col[k/2]) / 2
			}
		} else {
			sum := 0.0
			for _, v := range col {
				sum += v
			}
			out[s] = sum / float64(len(col))
		}
	}
	return out
}

// Record is pass 1's emit step for one series: it feeds the error pools, the
// leaderboard and the choices, in series order.
func (e *Evaluation) Record(i int, r *Backtest) {
	c := seriesChoice{}
	if r.chosen >= 0 {
		c.chosen = r.entries[r.chosen].label
		e.wins[c.chosen]++
	} else if c.chosen = e.choiceFor(r); c.chosen != "" {
		if e.combinationAlways() && len(r.entries) == 0 {
			// No backtest fold: the combination of every method, with
			// equal weights.
			c.members = e.labels[:len(e.labels)-1]
			e.wins[c.chosen]++
		} else {
			c.fallback = true
			e.fallbacks++
		}
	}
	if e.combo != nil && len(r.entries) > 0 {
		members := topMembers(r.entries[:len(r.entries)-1], e.combo.Top)
		for _, mi := range members {
			c.members = append(c.members, r.entries[mi].label)
		}
		c.weights = e.memberWeights(r.entries, members)
	}
	e.choices[i] = c
	for _, eb := range r.entries {
		if !math.IsNaN(eb.mase) {
			e.mase[eb.label] = append(e.mase[eb.label], eb.mase)
		}
		if eb.reason != "" {
			continue
		}
		for _, f := range eb.folds {
			e.recordWindow(eb.label, r.demand, r.Series.Values[f.fold.TrainEnd:f.fold.TestEnd], f.fc, f.scores.MASEScale)
		}
	}
	e.choices[i].problems = r.Problems // written with the series in pass 2
}

// choiceFor is the label a series without a scored entry falls back to, or
// "" when it has no usable history. With choose: combination, a series too
// short for any fold gets the combination (of every method, equal weights).
func (e *Evaluation) choiceFor(r *Backtest) string {
	if r.Series.Skip != "" || forecast.AllMissing(r.Series.Values) {
		return ""
	}
	if e.combinationAlways() && len(r.entries) == 0 {
		return e.combo.Label
	}
	return e.fallback
}

// classifyDemand labels a series' demand pattern when it has any demand.
func classifyDemand(y []float64) (engines.DemandClass, bool) {
	for _, v := range y {
		if v < 0 {
			return engines.DemandClass{}, false
		}
	}
	d := engines.ClassifyDemand(y)
	return d, d.Class != engines.DemandNone
}
