package evaluate

import (
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/gonum/stat/distuv"

	"almanac/engines"
	"almanac/pipeline/forecast"
	"almanac/pipeline/runfolder"
	"almanac/spec"
)

// FinishPass1 turns the pooled error histograms into interval quantiles.
func (e *Evaluation) FinishPass1() {
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
func (e *Evaluation) intervals(f *forecast.Forecast, scale float64, levels []int, source string) {
	h := len(f.Values)
	if source == "model" && f.Variance != nil {
		f.IntervalSource = "model"
		for _, lvl := range levels {
			z := distuv.UnitNormal.Quantile(1 - (1-float64(lvl)/100)/2)
			lo, hi := make([]float64, h), make([]float64, h)
			for s := 0; s < h; s++ {
				sd := math.Sqrt(f.Variance[s])
				lo[s], hi[s] = f.Values[s]-z*sd, f.Values[s]+z*sd
			}
			f.Lower, f.Upper = append(f.Lower, lo), append(f.Upper, hi)
		}
		return
	}
	if source == "model" || e == nil || e.quantiles == nil {
		// Model-based intervals only where the method has a variance: an
		// empirical stand-in would pool errors across the run's series and
		// make a sharded run differ from a whole one.
		return
	}
	q := e.quantiles[f.Label]
	if q == nil || !(scale > 0) || math.IsInf(scale, 0) {
		return
	}
	f.IntervalSource = "empirical"
	for li := range levels {
		lo, hi := make([]float64, h), make([]float64, h)
		for s := 0; s < h; s++ {
			step := min(s, len(q)-1) // past the backtest horizon, the last step's spread
			lo[s] = f.Values[s] + q[step][li][0]*scale
			hi[s] = f.Values[s] + q[step][li][1]*scale
		}
		f.Lower, f.Upper = append(f.Lower, lo), append(f.Upper, hi)
	}
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

// Finish adds what the evaluation decided to series i's final forecasts:
// the combination entry, the chosen flag, and prediction intervals. e may
// be nil (no backtest): model-based intervals are still added.
func (e *Evaluation) Finish(s *spec.Spec, i int, r *forecast.Result) {
	levels := s.Intervals.Levels
	var choice seriesChoice
	if e != nil {
		choice = e.choices[i]
		r.Problems = append(choice.problems, r.Problems...)
		if e.combo != nil && len(choice.members) > 0 {
			var fcs [][]float64
			for _, m := range choice.members {
				for _, f := range r.Forecasts {
					if f.Label == m {
						fcs = append(fcs, f.Values)
					}
				}
			}
			if len(fcs) == len(choice.members) {
				r.Forecasts = append(r.Forecasts, forecast.Forecast{Label: e.combo.Label,
					Model:  fmt.Sprintf("combination(%s of %s)", e.combo.Kind, strings.Join(choice.members, ", ")),
					Values: combineForecasts(e.combo.Kind, fcs)})
			} else {
				r.Problems = append(r.Problems, runfolder.Problem{Key: r.Series.Key, Stage: "forecast", Severity: "error", Code: runfolder.CodeCombinationFailed, Method: e.combo.Label,
					Message: "a member of the combination failed on the full history; no combination forecast"})
			}
		}
	}
	if len(levels) == 0 && e == nil {
		return
	}
	scale := math.NaN()
	if len(levels) > 0 && r.Series.Skip == "" {
		sc, _ := engines.PointScores(nil, nil, r.Series.Values, s.Calendar.SeasonLength)
		scale = sc.MASEScale
	}
	for k := range r.Forecasts {
		f := &r.Forecasts[k]
		f.Chosen = e != nil && f.Label == choice.chosen
		if len(levels) > 0 && (e == nil || f.Chosen || s.Intervals.AllMethods) {
			e.intervals(f, scale, levels, s.Intervals.Source)
		}
	}
}
