package engines

import (
	"fmt"
	"math"
)

// SmoothingAuto fits every admissible form of the exponential smoothing
// family to a series and keeps the one with the lowest AICc.
//
// The candidate forms, tried in this order (on equal AICc the earlier one
// is kept), are trend none, additive or damped crossed with season none,
// additive or multiplicative:
//
//	ses, holt, holt(damped),
//	holt_winters(seasonal=additive, no trend), holt_winters(seasonal=multiplicative, no trend),
//	holt_winters(seasonal=additive), holt_winters(seasonal=multiplicative),
//	holt_winters(seasonal=additive, damped), holt_winters(seasonal=multiplicative, damped)
//
// Each is fitted as its own method fits it (SES, Holt, HoltWinters: the
// same recursions, start-up values, SSE criterion and parameter bounds) and
// scored by
//
//	AICc = n·log(SSE/n) + 2k + 2k(k+1)/(n−k−1)
//
// with n the number of observed values (the same for every form) and k the
// smoothing parameters plus the initial states (1 level, 1 trend, m−1
// seasonal terms). A form is admissible when:
//
//   - seasonal forms: the season length m is at least 2, the series holds at
//     least two full seasons, and the classical decomposition of the
//     start-up window succeeds;
//   - multiplicative season: every observed value is > 0;
//   - every form: n > k+1, so that AICc is finite, and its SSE is finite.
//
// If no form has a finite AICc (a very short series) the model is SES, with
// a warning. Describe names the chosen form, as the method of that name
// would, for example "holt_winters(seasonal=multiplicative, damped)"; the
// fitted model implements the same optional interfaces as HoltWinters
// (ForecastVariance is nil when the chosen season is multiplicative).
//
// It takes no options. It needs two observed values.
//
// References:
//   - R. J. Hyndman, A. B. Koehler, R. D. Snyder and S. Grose (2002), A
//     state space framework for automatic forecasting using exponential
//     smoothing methods, International Journal of Forecasting 18(3),
//     439–454.
//   - C. M. Hurvich and C.-L. Tsai (1989), Regression and time series model
//     selection in small samples, Biometrika 76(2), 297–307.
type SmoothingAuto struct{}

var _ Method = SmoothingAuto{}

func init() {
	Register("smoothing_auto", func(o Options) (Method, error) {
		if err := baselineNoOptions("smoothing_auto", o); err != nil {
			return nil, err
		}
		return SmoothingAuto{}, nil
	})
}

// Name returns "smoothing_auto".
func (SmoothingAuto) Name() string { return "smoothing_auto" }

// esAutoForms are the candidate forms of SmoothingAuto, in order.
var esAutoForms = [...]esForm{
	{esTrendNone, esSeasonNone},
	{esTrendAdditive, esSeasonNone},
	{esTrendDamped, esSeasonNone},
	{esTrendNone, esSeasonAdditive},
	{esTrendNone, esSeasonMultiplicative},
	{esTrendAdditive, esSeasonAdditive},
	{esTrendAdditive, esSeasonMultiplicative},
	{esTrendDamped, esSeasonAdditive},
	{esTrendDamped, esSeasonMultiplicative},
}

// Fit fits the admissible forms to y and keeps the best by AICc (see
// SmoothingAuto).
func (SmoothingAuto) Fit(y []float64, season int) (Fitted, error) {
	const name = "smoothing_auto"
	nobs, positive, err := esCheck(name, y)
	if err != nil {
		return nil, err
	}
	if min := esMinObserved(esForm{}); nobs < min {
		return nil, fmt.Errorf("%s: %d observed values; needs at least %d: %w", name, nobs, min, ErrTooShort)
	}
	m := season
	if m < 1 {
		m = 1
	}
	seasonal := m >= 2 && len(y) >= 2*m
	f := new(esFitter)
	f.reset(y, m)
	scale := esScale(y)

	var best, first esSolution
	bestAICc := 0.0
	haveBest, haveFirst := false, false
	for _, form := range esAutoForms {
		k := form.nSmoothing() + form.nStates(m)
		switch {
		case form.season != esSeasonNone && !seasonal,
			form.season == esSeasonMultiplicative && !positive,
			form.season == esSeasonNone && nobs < esMinObserved(form):
			continue
		}
		if haveFirst && nobs <= k+1 {
			continue // AICc would be +Inf; SES (first) is already fitted
		}
		if f.initStates(form) != nil {
			continue
		}
		sol := f.optimise()
		if !sol.finite {
			continue
		}
		if !haveFirst {
			first, haveFirst = sol, true
		}
		a := esAICc(sol.sse, sol.nobs, k, scale)
		if !math.IsInf(a, 1) && (!haveBest || a < bestAICc) {
			best, bestAICc, haveBest = sol, a, true
		}
	}
	var warnings []string
	if !haveBest {
		if !haveFirst {
			// ses is always admissible here, so it overflowed.
			return nil, fmt.Errorf("%s: the sum of squared errors overflows even for ses; the values are too large to smooth", name)
		}
		best = first
		warnings = []string{fmt.Sprintf("%s: %d observed values are too few to compare forms by AICc; used %s", name, nobs, first.form.describe())}
	}
	if err := f.initStates(best.form); err != nil {
		// initStates succeeded for this form above, from cached results.
		panic("engines: smoothing_auto: " + err.Error())
	}
	mod := f.model(name, best, scale)
	mod.warnings = append(warnings, mod.warnings...)
	return mod, nil
}
