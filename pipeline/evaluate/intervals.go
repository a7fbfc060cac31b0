package evaluate

import (
	"fmt"
	"hash/fnv"
	"math"
	"strings"

	"gonum.org/v1/gonum/stat/distuv"

	"almanac/engines"
	"almanac/engines/uncertainty"
	"almanac/pipeline/forecast"
	"almanac/pipeline/runfolder"
	"almanac/spec"
)

// How bounds and total quantiles are made (issue 13; the measurements
// behind each choice are in pipeline/bench/calibration/README.md):
//
//   - empirical: the backtest errors of the entry at each step ahead, each
//     divided by its series' in-sample seasonal naive MAE, pooled across
//     the run's series of the same demand group (intermittent or lumpy
//     series apart from the rest, whose errors are shaped differently);
//     each step pooled with its neighbours on either side
//     and the spread made to grow with the step (uncertainty.
//     DefaultSmoothing). Bounds are the forecast plus these quantiles times
//     the series' scale.
//   - model: the method's forecast variance with normal quantiles.
//   - resampled demand: for series classed intermittent or lumpy, the
//     bootstrap of Willemain, Smart & Schwarz (2004) from the series' own
//     history, resampleReps paths on a stream seeded from the series key.
//
// Every set of bounds is coherent (uncertainty.Bands): it contains the
// forecast, nests across levels, and for a series whose history never goes
// below zero it is read from the distribution censored at zero (unless
// intervals.allow_negative), which interval_source says.
//
// Totals over lead times come from the pooled errors of totals over 1..L
// of each backtest window (uncertainty.Pool, again per entry and demand
// group), for every series; resampled paths serve an intermittent series
// when its pool holds fewer than minTotalWindows windows that long or the
// series has no usable scale. For a series that cannot go below zero the quantiles of a longer
// lead time are never below those of a shorter one.

// resampleReps is the number of simulated paths per intermittent series.
const resampleReps = 1000

// minTotalWindows is the fewest backtest windows a pool needs before an
// intermittent series' totals are read from it rather than from its
// resampled paths (a run with a handful of slow movers has too few).
const minTotalWindows = 30

// Interval and total sources, as written to interval_source and
// total_source.
const (
	SourceEmpirical = "empirical"
	SourceModel     = "model"
	SourceResampled = "resampled demand"
	SourceTotals    = "backtest totals"
	censoredSuffix  = ", censored at 0"
)

// intervalState is what pass 1 pools for bounds and totals.
type intervalState struct {
	horizon int                           // the forecast horizon
	probs   []float64                     // the probabilities the bands read
	leads   []int                         // totals' lead times
	pools   map[poolKey]*uncertainty.Pool // by entry label and demand group
	stepQ   map[poolKey][][]float64       // the same, after pass 1
}

// poolKey names one pool: an entry and a demand group.
type poolKey struct {
	label        string
	intermittent bool // series classed intermittent or lumpy
}

// intermittentGroup reports whether a series with demand class d (nil: no
// class, for example a series with negative values) pools with the
// intermittent and lumpy series.
func intermittentGroup(d *engines.DemandClass) bool {
	return d != nil && (d.Class == engines.DemandIntermittent || d.Class == engines.DemandLumpy)
}

func (e *Evaluation) initIntervals(s *spec.Spec) {
	e.iv = intervalState{horizon: s.Horizon, probs: uncertainty.BandProbs(s.Intervals.Levels), leads: s.Totals.LeadTimes, pools: map[poolKey]*uncertainty.Pool{}}
	for _, l := range e.labels {
		for _, g := range []bool{false, true} {
			e.iv.pools[poolKey{l, g}] = uncertainty.NewPool(e.bt.Horizon, s.Totals.LeadTimes)
		}
	}
}

// recordWindow pools one backtest window of an entry.
func (e *Evaluation) recordWindow(label string, d *engines.DemandClass, y, fc []float64, scale float64) {
	e.iv.pools[poolKey{label, intermittentGroup(d)}].AddWindow(y, fc, scale)
}

// FinishPass1 turns the pooled errors into smoothed step quantiles.
func (e *Evaluation) FinishPass1() {
	if len(e.levels) == 0 {
		return
	}
	e.iv.stepQ = map[poolKey][][]float64{}
	for k, p := range e.iv.pools {
		e.iv.stepQ[k] = uncertainty.StepQuantiles(p.Steps, e.iv.probs, e.iv.horizon, uncertainty.DefaultSmoothing)
	}
}

// seriesSeed derives a series' random stream from its key, so resampled
// bounds depend on neither the worker count, the shard nor the run.
func seriesSeed(key []string) uint64 {
	h := fnv.New64a()
	h.Write([]byte("almanac resampled demand"))
	for _, k := range key {
		h.Write([]byte{0})
		h.Write([]byte(k))
	}
	return h.Sum64()
}

// normalQ is the predictive distribution forecast + z·sd.
type normalQ struct{ f, variance []float64 }

func (n normalQ) Quantile(s int, p float64) float64 {
	return n.f[s] + distuv.UnitNormal.Quantile(p)*math.Sqrt(n.variance[s])
}

// seriesUncertainty is what one series' bounds and totals are made from.
type seriesUncertainty struct {
	history      []float64
	key          []string
	scale        float64
	nonNeg       bool
	intermittent bool               // classed intermittent or lumpy
	paths        *uncertainty.Paths // resampled futures; nil unless intermittent
}

func newSeriesUncertainty(s *spec.Spec, r *forecast.Result) *seriesUncertainty {
	su := &seriesUncertainty{history: r.Series.Values, key: r.Series.Key}
	sc, _ := engines.PointScores(nil, nil, su.history, s.Calendar.SeasonLength)
	su.scale = sc.MASEScale
	su.nonNeg = !s.Intervals.AllowNegative && uncertainty.NonNegative(su.history)
	if d, ok := classifyDemand(su.history); ok && intermittentGroup(&d) {
		su.intermittent = true
		if p, err := uncertainty.Resample(su.history, s.Horizon, resampleReps, seriesSeed(su.key), uncertainty.JitterNone); err == nil {
			su.paths = p
		}
	}
	return su
}

func (su *seriesUncertainty) scaleOK() bool { return su.scale > 0 && !math.IsInf(su.scale, 0) }

// intervals fills the bounds of one final forecast (and raises its values
// to zero where the series cannot go below zero).
func (e *Evaluation) intervals(f *forecast.Forecast, su *seriesUncertainty, levels []int, source string) {
	var q uncertainty.Quantiler
	switch {
	case su.paths != nil:
		q, f.IntervalSource = su.paths, SourceResampled
	case source == "model" && f.Variance != nil:
		q, f.IntervalSource = normalQ{f.Values, f.Variance}, SourceModel
	case source == "model" || e == nil || e.iv.stepQ == nil:
		// Model-based bounds only where the method has a variance: an
		// empirical stand-in would pool errors across the run's series and
		// make a sharded run differ from a whole one.
		return
	default:
		sq := e.iv.stepQ[poolKey{f.Label, su.intermittent}]
		if sq == nil || !su.scaleOK() || math.IsNaN(sq[0][0]) {
			return
		}
		q, f.IntervalSource = &uncertainty.Additive{Forecast: f.Values, Scale: su.scale, Probs: e.iv.probs, Q: sq}, SourceEmpirical
	}
	f.Values, f.Lower, f.Upper = uncertainty.Bands(f.Values, levels, q, su.nonNeg)
	if su.nonNeg && f.IntervalSource != SourceResampled {
		f.IntervalSource += censoredSuffix
	}
}

// totals computes the totals rows of the chosen forecast f.
func (e *Evaluation) totals(f *forecast.Forecast, su *seriesUncertainty, levels []int) []forecast.Total {
	fc := f.Values
	if su.nonNeg {
		fc = append([]float64(nil), fc...)
		for i := range fc {
			fc[i] = max(fc[i], 0)
		}
	}
	pool := e.iv.pools[poolKey{f.Label, su.intermittent}]
	var out []forecast.Total
	for k, l := range e.iv.leads {
		t := forecast.Total{Label: f.Label, Lead: l, Total: math.NaN()}
		if l <= len(fc) {
			sum := 0.0
			for _, v := range fc[:l] {
				sum += v
			}
			t.Total = sum
		}
		switch {
		case math.IsNaN(t.Total):
		case pool != nil && su.scaleOK() && (pool.Totals[k].N() >= minTotalWindows || (pool.Totals[k].N() > 0 && su.paths == nil)):
			total := t.Total
			t.Quantiles = uncertainty.TotalQuantiles(levels, func(p float64) float64 { return pool.TotalQuantile(k, total, su.scale, p) }, su.nonNeg)
			t.Source = SourceTotals
			if su.nonNeg {
				t.Source += censoredSuffix
			}
		case su.paths != nil && l <= su.paths.H:
			t.Quantiles = uncertainty.TotalQuantiles(levels, func(p float64) float64 { return su.paths.TotalQuantile(l, p) }, su.nonNeg)
			t.Source = SourceResampled
		}
		out = append(out, t)
	}
	if su.nonNeg {
		monotoneInLead(out)
	}
	return out
}

// monotoneInLead raises each quantile of a total to the same quantile of
// every shorter lead time's total: demand that cannot go below zero only
// adds up.
func monotoneInLead(ts []forecast.Total) {
	for i := range ts {
		for j := range ts {
			if ts[j].Lead < ts[i].Lead && ts[i].Quantiles != nil && ts[j].Quantiles != nil {
				for k := range ts[i].Quantiles {
					ts[i].Quantiles[k] = max(ts[i].Quantiles[k], ts[j].Quantiles[k])
				}
			}
		}
	}
}

// raiseToZero raises every negative forecast value to zero: with bounds
// or totals asked for, a series whose history never goes below zero gets
// no negative forecast from any method (before the combination is made,
// so that it stays the mean of what its members show).
func raiseToZero(fs []forecast.Forecast) {
	for k := range fs {
		var raised []float64
		for j, v := range fs[k].Values {
			if v < 0 {
				if raised == nil {
					raised = append([]float64(nil), fs[k].Values...)
				}
				raised[j] = 0
			}
		}
		if raised != nil {
			fs[k].Values = raised
		}
	}
}

// Finish adds what the evaluation decided to series i's final forecasts:
// the combination entry, the chosen flag, prediction intervals and the
// totals of the chosen entry. e may be nil (no backtest): model-based
// intervals (and resampled ones for intermittent series) are still added.
func (e *Evaluation) Finish(s *spec.Spec, i int, r *forecast.Result) {
	levels := s.Intervals.Levels
	wantTotals := e != nil && len(e.iv.leads) > 0
	if (len(levels) > 0 || wantTotals) && !s.Intervals.AllowNegative && uncertainty.NonNegative(r.Series.Values) {
		raiseToZero(r.Forecasts)
	}
	var choice seriesChoice
	if e != nil {
		choice = e.choices[i]
		r.Problems = append(choice.problems, r.Problems...)
		if e.combo != nil && len(choice.members) > 0 {
			e.combine(r, &choice)
		}
	}
	if (len(levels) == 0 && !wantTotals) || r.Series.Skip != "" || forecast.AllMissing(r.Series.Values) {
		for k := range r.Forecasts {
			r.Forecasts[k].Chosen = e != nil && r.Forecasts[k].Label == choice.chosen
		}
		return
	}
	su := newSeriesUncertainty(s, r)
	for k := range r.Forecasts {
		f := &r.Forecasts[k]
		f.Chosen = e != nil && f.Label == choice.chosen
		if len(levels) > 0 && (e == nil || f.Chosen || s.Intervals.AllMethods) {
			e.intervals(f, su, levels, s.Intervals.Source)
		}
		if wantTotals && f.Chosen {
			r.Totals = e.totals(f, su, s.Totals.Levels)
		}
	}
}

// combine adds the combination entry to series r's final forecasts, from
// its members' forecasts on the full history. Under choose: best a member
// that failed there leaves the series without a combination (an error
// row); under choose: combination the members that did forecast are
// combined (weights renormalised, a warning row), and only when none did
// does the series fall back.
func (e *Evaluation) combine(r *forecast.Result, choice *seriesChoice) {
	var fcs [][]float64
	var names []string
	var weights []float64
	for j, m := range choice.members {
		for _, f := range r.Forecasts {
			if f.Label == m {
				fcs = append(fcs, f.Values)
				names = append(names, m)
				if choice.weights != nil {
					weights = append(weights, choice.weights[j])
				}
			}
		}
	}
	problem := func(severity, msg string) {
		r.Problems = append(r.Problems, runfolder.Problem{Key: r.Series.Key, Stage: "forecast", Severity: severity, Code: runfolder.CodeCombinationFailed, Method: e.combo.Label, Message: msg})
	}
	if len(fcs) < len(choice.members) {
		if !e.combinationAlways() {
			problem("error", "a member of the combination failed on the full history; no combination forecast")
			return
		}
		if len(fcs) == 0 {
			problem("error", fmt.Sprintf("every member of the combination failed on the full history; fell back to %s", e.fallback))
			choice.chosen = e.fallback
			return
		}
		problem("warning", fmt.Sprintf("%d of %d members of the combination failed on the full history; combined the others", len(choice.members)-len(fcs), len(choice.members)))
	}
	kind := e.combo.Kind
	if weights != nil {
		total := 0.0
		for _, w := range weights {
			total += w
		}
		for j := range weights {
			weights[j] /= total
		}
	}
	var model string
	switch {
	case weights != nil:
		parts := make([]string, len(names))
		for j, n := range names {
			parts[j] = fmt.Sprintf("%s %.3f", n, weights[j])
		}
		model = fmt.Sprintf("combination(weighted by 1/%s: %s)", e.metric, strings.Join(parts, ", "))
	case kind == spec.CombineWeighted:
		kind = spec.CombineMeanKind
		model = fmt.Sprintf("combination(mean of %s; no backtest scores: equal weights)", strings.Join(names, ", "))
	default:
		model = fmt.Sprintf("combination(%s of %s)", kind, strings.Join(names, ", "))
	}
	r.Forecasts = append(r.Forecasts, forecast.Forecast{Label: e.combo.Label, Model: model, Values: combineForecasts(kind, fcs, weights)})
}
