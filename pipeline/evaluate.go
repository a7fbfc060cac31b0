package pipeline

import (
	"encoding/json"
	"fmt"
	"math"
	"slices"
	"sort"

	"gonum.org/v1/gonum/stat/distuv"

	"almanac/engines"
	"almanac/spec"
)

// The evaluation stage: rolling-origin backtests of every method on every
// series, per-series selection (and an optional combination entry), and
// prediction intervals. It runs as a first pass over the series, before the
// final forecasts; what it learns per series (the choice, the combination's
// members) and across series (the distribution of scaled errors at each
// step ahead) is read by the second pass.

// evaluation is the state shared by both passes. Pass 1 fills it from the
// single goroutine that emits results, so it needs no locks; pass 2 only
// reads it.
type evaluation struct {
	bt      spec.Backtest
	metric  string
	combo   *spec.Combination
	labels  []string // method labels in spec order, then the combination's
	levels  []int
	source  string // empirical | model
	allMeth bool

	choices []seriesChoice // by series index
	// errs[label][step] pools the backtest errors of every series, scaled
	// by each series' in-sample seasonal naive MAE.
	errs map[string][]*errorHistogram
	// quantiles[label][step][level] = (lower, upper) scaled quantiles,
	// computed once pass 1 is done.
	quantiles map[string][][][2]float64

	// Leaderboard material: each series' mean MASE per entry, and wins.
	mase      map[string][]float64
	wins      map[string]int
	fallback  string
	fallbacks int
	route     map[string][]string
}

// seriesChoice is what pass 1 decided for one series.
type seriesChoice struct {
	chosen   string    // label, "" for a series with no usable history
	fallback bool      // chosen is the fallback: no entry could be scored
	members  []string  // the combination's methods for this series
	problems []problem // the backtest's problems rows, written with the series
}

func newEvaluation(s *spec.Spec, n int) *evaluation {
	if s.Backtest.Folds == 0 {
		return nil
	}
	e := &evaluation{bt: s.Backtest, metric: s.Selection.Metric, combo: s.Selection.Combine,
		levels: s.Intervals.Levels, source: s.Intervals.Source, allMeth: s.Intervals.AllMethods,
		choices: make([]seriesChoice, n), errs: map[string][]*errorHistogram{},
		mase: map[string][]float64{}, wins: map[string]int{}, fallback: s.Selection.Fallback, route: s.Selection.Route}
	for _, m := range s.Methods {
		e.labels = append(e.labels, m.Label)
	}
	if e.combo != nil {
		e.labels = append(e.labels, e.combo.Label)
	}
	for _, l := range e.labels {
		h := make([]*errorHistogram, e.bt.Horizon)
		for i := range h {
			h[i] = newErrorHistogram()
		}
		e.errs[l] = h
	}
	return e
}

// entryBacktest is one method (or the combination) on every fold of one series.
type entryBacktest struct {
	label  string
	folds  []foldScore
	score  float64 // mean of the selection metric over the folds; NaN if ineligible
	mase   float64 // mean MASE over the folds
	reason string  // why the entry is ineligible
}

type foldScore struct {
	fold   fold
	fc     []float64
	scores engines.Scores
	failed bool
}

// backtestResult is pass 1's output for one series.
type backtestResult struct {
	series   *Series
	entries  []entryBacktest
	chosen   int // index into entries; -1 none
	runnerUp int
	reason   string
	folds    int
	problems []problem
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

// backtest runs pass 1 on one series.
func (w *seriesWork) backtest(s *Series) *backtestResult {
	e := w.eval
	r := &backtestResult{series: s, chosen: -1, runnerUp: -1}
	if s.Skip != "" || allMissing(s.Values) {
		r.reason = "no usable history"
		return r
	}
	if d, ok := classifyDemand(s.Values); ok {
		r.demand = &d
	}
	y := s.Values
	m := w.spec.Calendar.SeasonLength
	folds, dropped := planFolds(len(y), e.bt)
	r.folds = len(folds)
	if dropped > 0 {
		msg := fmt.Sprintf("only %d of %d backtest folds fit a history of %d periods (min_train %d, horizon %d, step %d)",
			len(folds), e.bt.Folds, len(y), e.bt.MinTrain, e.bt.Horizon, e.bt.Step)
		r.problems = append(r.problems, problem{key: s.Key, stage: "backtest", severity: "warning", message: msg})
	}
	if len(folds) == 0 {
		r.reason = fmt.Sprintf("history too short for any backtest fold; fell back to %s", w.spec.Selection.Fallback)
		return r
	}
	for _, mr := range w.methods {
		method := mr.method
		if w.wrap != nil {
			method = w.wrap(method)
		}
		eb := entryBacktest{label: mr.spec.Label}
		for _, f := range folds {
			// The full slice expression caps the capacity: a method cannot
			// reach past the origin by reslicing its input.
			train := y[f.TrainStart:f.TrainEnd:f.TrainEnd]
			test := y[f.TrainEnd:f.TestEnd]
			res, err := safeForecast(method, train, m, e.bt.Horizon, false)
			if err != nil {
				eb.folds = append(eb.folds, foldScore{fold: f, failed: true})
				if eb.reason == "" {
					eb.reason = fmt.Sprintf("failed on fold %d: %s", f.Index, trimName(err.Error(), mr.spec.Method))
				}
				continue
			}
			sc, _ := engines.PointScores(test, res.fc[:len(test)], train, m)
			eb.folds = append(eb.folds, foldScore{fold: f, fc: res.fc, scores: sc})
		}
		r.entries = append(r.entries, eb)
	}
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
		r.reason = fmt.Sprintf("no method could be scored on the backtest; fell back to %s", w.spec.Selection.Fallback)
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
	return r
}

// scoreEntry averages the selection metric and MASE over the folds; an
// entry that failed on a fold, or whose metric is undefined on one, is
// ineligible.
func (e *evaluation) scoreEntry(eb *entryBacktest) {
	eb.score, eb.mase = math.NaN(), math.NaN()
	if len(eb.folds) == 0 || eb.reason != "" {
		return
	}
	var sum, msum float64
	mn := 0
	for _, f := range eb.folds {
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
	eb.score = sum / float64(len(eb.folds))
	if mn == len(eb.folds) {
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
func (e *evaluation) combination(entries []entryBacktest, y []float64, m int, folds []fold) entryBacktest {
	eb := entryBacktest{label: e.combo.Label}
	members := topMembers(entries, e.combo.Top)
	if members == nil {
		eb.reason = "fewer than two methods could be scored"
		eb.score, eb.mase = math.NaN(), math.NaN()
		return eb
	}
	for fi, f := range folds {
		fcs := make([][]float64, len(members))
		for j, mi := range members {
			fcs[j] = entries[mi].folds[fi].fc
		}
		fc := combineForecasts(e.combo.Kind, fcs)
		train := y[f.TrainStart:f.TrainEnd:f.TrainEnd]
		test := y[f.TrainEnd:f.TestEnd]
		sc, _ := engines.PointScores(test, fc[:len(test)], train, m)
		eb.folds = append(eb.folds, foldScore{fold: f, fc: fc, scores: sc})
	}
	e.scoreEntry(&eb)
	return eb
}

// combineForecasts is the step-by-step mean or median of several forecasts.
func combineForecasts(kind string, fcs [][]float64) []float64 {
	h := len(fcs[0])
	out := make([]float64, h)
	col := make([]float64, len(fcs))
	for s := 0; s < h; s++ {
		for j := range fcs {
			col[j] = fcs[j][s]
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

// record is pass 1's emit step for one series: it feeds the histograms, the
// leaderboard and the choices, in series order.
func (e *evaluation) record(i int, r *backtestResult) {
	c := seriesChoice{}
	if r.chosen >= 0 {
		c.chosen = r.entries[r.chosen].label
		e.wins[c.chosen]++
	} else if c.chosen = e.choiceFor(r); c.chosen != "" {
		c.fallback = true
		e.fallbacks++
	}
	if e.combo != nil && len(r.entries) > 0 {
		for _, mi := range topMembers(r.entries[:len(r.entries)-1], e.combo.Top) {
			c.members = append(c.members, r.entries[mi].label)
		}
	}
	e.choices[i] = c
	for _, eb := range r.entries {
		if !math.IsNaN(eb.mase) {
			e.mase[eb.label] = append(e.mase[eb.label], eb.mase)
		}
		if eb.reason != "" {
			continue
		}
		hist := e.errs[eb.label]
		for _, f := range eb.folds {
			scale := f.scores.MASEScale
			if !(scale > 0) || math.IsInf(scale, 0) {
				continue
			}
			y := r.series.Values[f.fold.TrainEnd:f.fold.TestEnd]
			for step := range y {
				if math.IsNaN(y[step]) || math.IsNaN(f.fc[step]) {
					continue
				}
				hist[step].add((y[step] - f.fc[step]) / scale)
			}
		}
	}
}

// finishPass1 turns the pooled error histograms into interval quantiles.
func (e *evaluation) finishPass1() {
	if len(e.levels) == 0 {
		return
	}
	e.quantiles = map[string][][][2]float64{}
	for label, hs := range e.errs {
		q := make([][][2]float64, len(hs))
		for step, h := range hs {
			q[step] = make([][2]float64, len(e.levels))
			for li, lvl := range e.levels {
				alpha := 1 - float64(lvl)/100
				q[step][li] = [2]float64{h.quantile(alpha / 2), h.quantile(1 - alpha/2)}
			}
		}
		e.quantiles[label] = q
	}
}

// intervals fills the interval bounds of one final forecast. Model-based
// bounds use the method's forecast variance with normal quantiles; empirical
// bounds add the pooled scaled error quantiles times this series' scale.
func (e *evaluation) intervals(f *methodForecast, scale float64, levels []int, source string) {
	h := len(f.values)
	if source == "model" && f.variance != nil {
		f.intervalSource = "model"
		for _, lvl := range levels {
			z := distuv.UnitNormal.Quantile(1 - (1-float64(lvl)/100)/2)
			lo, hi := make([]float64, h), make([]float64, h)
			for s := 0; s < h; s++ {
				sd := math.Sqrt(f.variance[s])
				lo[s], hi[s] = f.values[s]-z*sd, f.values[s]+z*sd
			}
			f.lower, f.upper = append(f.lower, lo), append(f.upper, hi)
		}
		return
	}
	if source == "model" || e == nil || e.quantiles == nil {
		// Model-based intervals only where the method has a variance: an
		// empirical stand-in would pool errors across the run's series and
		// make a sharded run differ from a whole one.
		return
	}
	q := e.quantiles[f.label]
	if q == nil || !(scale > 0) || math.IsInf(scale, 0) {
		return
	}
	f.intervalSource = "empirical"
	for li := range levels {
		lo, hi := make([]float64, h), make([]float64, h)
		for s := 0; s < h; s++ {
			step := min(s, len(q)-1) // past the backtest horizon, the last step's spread
			lo[s] = f.values[s] + q[step][li][0]*scale
			hi[s] = f.values[s] + q[step][li][1]*scale
		}
		f.lower, f.upper = append(f.lower, lo), append(f.upper, hi)
	}
}

// Leaderboard is the run's summary across series: per entry, the mean and
// median of each series' mean backtest MASE, and the share of series it won.
type Leaderboard struct {
	Metric   string           `json:"selection_metric"`
	Entries  []LeaderboardRow `json:"entries"`
	Chosen   map[string]int   `json:"series_per_chosen_method"`
	NoScore  int              `json:"series_on_fallback"`
	Fallback string           `json:"fallback"`
}

// LeaderboardRow is one method's line of the leaderboard.
type LeaderboardRow struct {
	Method     string    `json:"method"`
	Series     int       `json:"series_scored"`
	MeanMASE   jsonFloat `json:"mean_mase"`
	MedianMASE jsonFloat `json:"median_mase"`
	WinShare   float64   `json:"win_share"`
}

// jsonFloat is a float64 that encodes NaN as null (encoding/json refuses NaN).
type jsonFloat float64

func (f jsonFloat) MarshalJSON() ([]byte, error) {
	if math.IsNaN(float64(f)) || math.IsInf(float64(f), 0) {
		return []byte("null"), nil
	}
	return json.Marshal(float64(f))
}

func (f *jsonFloat) UnmarshalJSON(b []byte) error {
	if string(b) == "null" {
		*f = jsonFloat(math.NaN())
		return nil
	}
	var v float64
	if err := json.Unmarshal(b, &v); err != nil {
		return err
	}
	*f = jsonFloat(v)
	return nil
}

// choiceFor is the label a series without a scored entry falls back to, or
// "" when it has no usable history.
func (e *evaluation) choiceFor(r *backtestResult) string {
	if r.series.Skip != "" || allMissing(r.series.Values) {
		return ""
	}
	return e.fallback
}

func (e *evaluation) leaderboard(series int) *Leaderboard {
	lb := &Leaderboard{Metric: e.metric, Chosen: map[string]int{}}
	for _, l := range e.labels {
		v := append([]float64(nil), e.mase[l]...)
		row := LeaderboardRow{Method: l, Series: len(v), MeanMASE: jsonFloat(math.NaN()), MedianMASE: jsonFloat(math.NaN())}
		if len(v) > 0 {
			sort.Float64s(v)
			sum := 0.0
			for _, x := range v {
				sum += x
			}
			row.MeanMASE = jsonFloat(sum / float64(len(v)))
			if len(v)%2 == 1 {
				row.MedianMASE = jsonFloat(v[len(v)/2])
			} else {
				row.MedianMASE = jsonFloat((v[len(v)/2-1] + v[len(v)/2]) / 2)
			}
		}
		if series > 0 {
			row.WinShare = float64(e.wins[l]) / float64(series)
		}
		lb.Entries = append(lb.Entries, row)
		if e.wins[l] > 0 {
			lb.Chosen[l] = e.wins[l]
		}
	}
	lb.NoScore = e.fallbacks
	lb.Fallback = e.fallback
	return lb
}

// errorHistogram counts scaled errors in bins of width histWidth over
// [-histRange, histRange]; values beyond fall into the end bins. Counting is
// order-free, so the quantiles do not depend on the worker count.
type errorHistogram struct {
	counts []int32
	n      int64
}

const (
	histWidth = 0.01
	histRange = 50.0
)

func newErrorHistogram() *errorHistogram {
	return &errorHistogram{counts: make([]int32, int(2*histRange/histWidth)+1)}
}

func (h *errorHistogram) add(v float64) {
	i := int(math.Round((v + histRange) / histWidth))
	i = max(0, min(i, len(h.counts)-1))
	h.counts[i]++
	h.n++
}

// quantile returns the centre of the bin holding the p-quantile.
func (h *errorHistogram) quantile(p float64) float64 {
	if h.n == 0 {
		return math.NaN()
	}
	target := p * float64(h.n)
	var cum float64
	for i, c := range h.counts {
		cum += float64(c)
		if cum >= target && c > 0 {
			return float64(i)*histWidth - histRange
		}
	}
	return histRange
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

// writeBacktest hands one series' backtest to the accuracy and choices
// writers.
func (rt *runTables) writeBacktest(r *backtestResult) error {
	return rt.send(r)
}

// writeAccuracy writes one series' accuracy rows: every entry, every fold.
func (rt *runTables) writeAccuracy(r *backtestResult, cal calendar) error {
	s := r.series
	for _, eb := range r.entries {
		for _, f := range eb.folds {
			t := rt.accuracy
			t.key(s.Key)
			t.str(0, eb.label)
			t.int32(1, f.fold.Index)
			t.date(2, cal.startDays(s.Start+int64(f.fold.TrainEnd)))
			t.date(3, cal.startDays(s.Start+int64(f.fold.TrainStart)))
			t.int32(4, f.fold.TrainEnd-f.fold.TrainStart)
			t.int32(5, f.fold.TestEnd-f.fold.TrainEnd)
			sc := f.scores
			if f.failed {
				nan := math.NaN()
				sc = engines.Scores{MAE: nan, RMSE: nan, MAPE: nan, SMAPE: nan, MASE: nan, RMSSE: nan, WAPE: nan, Bias: nan}
			}
			t.float(6, sc.MAE)
			t.float(7, sc.RMSE)
			t.float(8, sc.MAPE)
			t.int32(9, sc.MAPEZeros)
			t.float(10, sc.SMAPE)
			t.float(11, sc.MASE)
			t.float(12, sc.RMSSE)
			t.float(13, sc.WAPE)
			t.float(14, sc.Bias)
			status := "ok"
			if f.failed {
				status = "failed"
			}
			t.str(15, status)
			if err := t.endRow(); err != nil {
				return err
			}
		}
	}
	return nil
}

// writeChoice writes one series' choices row.
func (rt *runTables) writeChoice(r *backtestResult, e *evaluation) error {
	t := rt.choices
	t.key(r.series.Key)
	score := func(i int) (string, float64) {
		if i < 0 {
			return "", math.NaN()
		}
		return r.entries[i].label, r.entries[i].score
	}
	c, cs := score(r.chosen)
	if r.chosen < 0 {
		c = e.choiceFor(r)
	}
	ru, rus := score(r.runnerUp)
	t.strOrNull(0, c)
	t.str(1, e.metric)
	t.float(2, cs)
	t.strOrNull(3, ru)
	t.float(4, rus)
	t.int32(5, r.folds)
	if r.demand != nil {
		t.str(6, r.demand.Class)
		t.float(7, r.demand.ADI)
		t.float(8, r.demand.CV2)
	} else {
		t.strOrNull(6, "")
		t.float(7, math.NaN())
		t.float(8, math.NaN())
	}
	t.str(9, r.reason)
	return t.endRow()
}
