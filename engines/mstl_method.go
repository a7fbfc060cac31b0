package engines

import (
	"fmt"
	"maps"
	"math"
	"slices"
	"strconv"
	"strings"
)

// MSTLMethod is the registered method "mstl": the series decomposed by
// MSTL over every season length of the calendar (Context.Seasons; with
// one season length this is STL with a seasonal window of 11), the
// seasonally adjusted series y − Σ_j S^{(j)} forecast by a damped trend
// (the state-space form ETS(A,Ad,N) of the holt method, weights, damping
// and initial states by maximum likelihood), and each seasonal component
// carried forward by repeating its last cycle (MSTLResult.SeasonalAhead):
//
//	ŷ_{n+h} = ℓ_n + (φ + … + φ^h)·b_n + Σ_j S^{(j)}_{n+h−k_j·m_j}.
//
// Missing values (closed periods) are filled first by SeasonalInterpolate
// over the same season lengths (a warning: MSTL needs a complete series).
// Season lengths with fewer than two full cycles in the history are left
// out (a warning); with none left the series is too short. Drivers are
// ignored: this method uses the context's season lengths only, and
// without a context (plain Fit) it decomposes by the one season length it
// is given.
//
// Forecast variances are those of the damped trend on the adjusted series
// (the seasonal components taken as known, as is usual for forecasts from
// a decomposition). No options.
//
// References:
//   - Bandara, K., Hyndman, R. J., Bergmeir, C. (2021). MSTL: A
//     Seasonal-Trend Decomposition Algorithm for Time Series with
//     Multiple Seasonal Patterns. arXiv:2107.13462.
//   - Gardner, E. S. Jr., McKenzie, E. (1985). Forecasting trends in time
//     series. Management Science 31(10), 1237–1246 (the damped trend).
//   - Hyndman, R. J., Athanasopoulos, G. (2021). Forecasting: Principles
//     and Practice, 3rd ed., §3.6 and §13.1 (forecasting with
//     decomposition; several seasonal periods).
type MSTLMethod struct{}

var (
	_ Method        = MSTLMethod{}
	_ ContextFitter = MSTLMethod{}
)

func init() {
	Register("mstl", func(o Options) (Method, error) {
		if len(o) > 0 {
			return nil, fmt.Errorf("mstl: takes no options, got %s", strings.Join(slices.Sorted(maps.Keys(o)), ", "))
		}
		return MSTLMethod{}, nil
	})
}

// Name returns "mstl".
func (MSTLMethod) Name() string { return "mstl" }

// Fit decomposes by the one season length given (see MSTLMethod).
func (m MSTLMethod) Fit(y []float64, season int) (Fitted, error) {
	return m.FitContext(y, season, Context{})
}

// MSTLFitted is a fitted mstl model.
type MSTLFitted struct {
	dec      *MSTLResult
	adjusted Fitted // the damped trend of the adjusted series
	warnings []string
	filled   int
}

// FitContext decomposes y by the context's season lengths (see
// MSTLMethod).
func (MSTLMethod) FitContext(y []float64, season int, c Context) (Fitted, error) {
	seasons := c.Seasons
	if len(seasons) == 0 {
		seasons = []int{season}
	}
	if seasons[0] < 2 {
		return nil, fmt.Errorf("mstl: season length %d; needs at least 2", seasons[0])
	}
	if arimaCountObserved(y) == 0 {
		return nil, ErrAllMissing
	}
	f := &MSTLFitted{}
	z := y
	missing := len(y) - arimaCountObserved(y)
	if missing > 0 {
		filled, how, err := SeasonalInterpolate(y, seasons)
		if err != nil {
			return nil, fmt.Errorf("mstl: %w", err)
		}
		z, f.filled = filled, missing
		f.warnings = append(f.warnings, fmt.Sprintf("mstl: %d missing values filled (%s) before the decomposition", missing, how))
	}
	dec, err := MSTL(z, seasons, MSTLOptions{})
	if err != nil {
		return nil, err
	}
	f.dec = dec
	f.warnings = append(f.warnings, dec.Warnings...)
	if f.adjusted, err = (Holt{Damped: true}).Fit(dec.Adjusted, 1); err != nil {
		return nil, fmt.Errorf("mstl: seasonally adjusted series: %w", err)
	}
	return f, nil
}

// Forecast implements Fitted.
func (f *MSTLFitted) Forecast(h int) []float64 {
	out := f.adjusted.Forecast(h)
	_, seas := f.dec.SeasonalAhead(h)
	for i := range out {
		out[i] += seas[i]
	}
	return out
}

// Describe names the season lengths kept and the adjusted series' model,
// for example "mstl(seasons 7, 365; adjusted: holt(error=additive,
// trend=damped, season=none))".
func (f *MSTLFitted) Describe() string {
	ss := make([]string, len(f.dec.Seasons))
	for i, m := range f.dec.Seasons {
		ss[i] = strconv.Itoa(m)
	}
	adj := "damped trend"
	if d, ok := f.adjusted.(Described); ok {
		adj = d.Describe()
	}
	s := "mstl(seasons " + strings.Join(ss, ", ") + "; adjusted: " + adj
	if f.filled > 0 {
		s += fmt.Sprintf("; %d missing values filled", f.filled)
	}
	return s + ")"
}

// Warnings lists the fill, the season lengths left out and the damped
// trend's warnings.
func (f *MSTLFitted) Warnings() []string {
	out := append([]string(nil), f.warnings...)
	if w, ok := f.adjusted.(Warner); ok {
		out = append(out, w.Warnings()...)
	}
	return out
}

// ResidualVariance and ForecastVariance are the damped trend's (see
// MSTLMethod).
func (f *MSTLFitted) ResidualVariance() float64 {
	if v, ok := f.adjusted.(ForecastVariancer); ok {
		return v.ResidualVariance()
	}
	return math.NaN()
}

// ForecastVariance is the damped trend's forecast variance.
func (f *MSTLFitted) ForecastVariance(h int) []float64 {
	if v, ok := f.adjusted.(ForecastVariancer); ok {
		return v.ForecastVariance(h)
	}
	return nil
}

// Params lists the damped trend's parameters.
func (f *MSTLFitted) Params() []Param {
	if p, ok := f.adjusted.(Parameterized); ok {
		return p.Params()
	}
	return nil
}

// Decomposition returns the MSTL decomposition.
func (f *MSTLFitted) Decomposition() *MSTLResult { return f.dec }
