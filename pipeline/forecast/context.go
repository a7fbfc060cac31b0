package forecast

import (
	"fmt"

	"almanac/engines"
	"almanac/pipeline/series"
)

// Known events reach the methods here: the calendar's further season
// lengths and the series' drivers become an engines.Context, handed to
// methods that implement engines.ContextFitter; closed steps of the horizon
// are forecast as 0.

// Context builds the engines.Context of series s for a fit on the training
// stretch Values[a:b] that forecasts h steps: every season length of the
// calendar when there is more than one (seasons as spec.Calendar.AllSeasons
// gives them), and each driver over [a, b+h) — the training stretch and the
// steps forecast. A driver column shorter than b+h (which the events stage
// never makes) is an error. Driver slices share s's memory, their capacity
// capped so that a method cannot reach past them.
func Context(s *series.Series, seasons []int, a, b, h int) (engines.Context, error) {
	var c engines.Context
	if len(seasons) > 1 {
		c.Seasons = seasons
	}
	if len(s.Drivers) == 0 {
		return c, nil
	}
	c.H = h
	c.Drivers = make([][]float64, len(s.Drivers))
	c.DriverNames = make([]string, len(s.Drivers))
	for j, d := range s.Drivers {
		if len(d.Values) < b+h || a < 0 || a > b {
			return engines.Context{}, fmt.Errorf("internal error: driver %s has %d values; a fit on periods %d…%d forecasting %d steps needs %d", d.Name, len(d.Values), a, b-1, h, b+h)
		}
		c.Drivers[j] = d.Values[a : b+h : b+h]
		c.DriverNames[j] = d.Name
	}
	return c, nil
}

// contextMethod fits a ContextFitter through FitContext with a fixed
// context, so that SafeForecast (and everything it does with the fitted
// model) serves both paths unchanged.
type contextMethod struct {
	engines.Method
	cf engines.ContextFitter
	c  engines.Context
}

func (m contextMethod) Fit(y []float64, season int) (engines.Fitted, error) {
	return m.cf.FitContext(y, season, m.c)
}

// WithContext returns the method to fit in place of m under the context c:
// m itself when c is empty or m cannot use a context (it is fitted by Fit
// and ignores c), else m fitted through FitContext.
func WithContext(m engines.Method, c engines.Context) engines.Method {
	cf, ok := m.(engines.ContextFitter)
	if !ok || c.Empty() {
		return m
	}
	return contextMethod{Method: m, cf: cf, c: c}
}

// SafeForecastSeries fits m on the stretch Values[a:b] of s (its capacity
// capped at b) with the context of that stretch and forecasts h steps
// (SafeForecast). seasons is spec.Calendar.AllSeasons().
func SafeForecastSeries(m engines.Method, s *series.Series, seasons []int, a, b, h int, wantVariance bool) (Output, error) {
	c, err := Context(s, seasons, a, b, h)
	if err != nil {
		return Output{}, err
	}
	return safeForecast(WithContext(m, c), s.Values[a:b:b], seasons, h, wantVariance)
}

// CloseSteps sets to 0 the forecasts of the steps closed (closed[k] for
// step k+1) and their variance, and says so in the model description. It
// returns how many steps it closed.
func CloseSteps(res *Output, closed []bool) int {
	n := 0
	for k, c := range closed {
		if !c || k >= len(res.Values) {
			continue
		}
		res.Values[k] = 0
		if k < len(res.Variance) {
			res.Variance[k] = 0
		}
		n++
	}
	if n > 0 {
		res.Model += fmt.Sprintf("; closed: %d of %d steps forecast as 0", n, len(res.Values))
	}
	return n
}

// CloseBounds sets to 0 the values and interval bounds of every final
// forecast of r at the closed steps of its series' horizon, after the
// evaluation has made its bounds: a period the series cannot sell has no
// demand and no uncertainty.
func CloseBounds(r *Result) {
	closed := r.Series.FutureClosed
	if len(closed) == 0 {
		return
	}
	for i := range r.Forecasts {
		f := &r.Forecasts[i]
		for k, c := range closed {
			if !c {
				continue
			}
			if k < len(f.Values) {
				f.Values[k] = 0
			}
			for _, b := range [][][]float64{f.Lower, f.Upper} {
				for _, lv := range b {
					if k < len(lv) {
						lv[k] = 0
					}
				}
			}
		}
	}
}
