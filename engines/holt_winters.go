package engines

import (
	"fmt"
	"maps"
	"slices"
)

// HoltWinters is exponential smoothing with a level, a trend and a season
// (Holt 1957, Winters 1960), optionally with a damped trend (Gardner and
// McKenzie 1985) or without a trend, as a state-space model (Hyndman et al.
// 2008):
//
//   - seasonal=additive: additive error and season, ETS(A,·,A);
//   - seasonal=multiplicative: multiplicative error and season, ETS(M,·,M).
//     The additive-error form with a multiplicative season is not offered:
//     its likelihood divides by seasonal states that nothing keeps away
//     from zero, and Hyndman et al. (2008; from memory, §2.5) leave it out as
//     numerically unstable; the multiplicative error keeps forecasts and
//     states of a positive series positive;
//   - seasonal=auto (the default): AutoSeasonal on the series (the lag-m
//     autocorrelation test at 90%, or the seasonal strength backed by an F
//     test); when it finds no season (or the season length is below 2, or
//     the series is shorter than two seasons), the non-seasonal form with
//     the same trend (additive error) is fitted and Describe adds "no
//     season found" (or "too short to test for a season"); when it finds
//     one, both seasonal forms are fitted (the multiplicative only for a
//     strictly positive series) and the one with the lower AICc is kept.
//
// The recursions, the likelihood and the fit are those of SmoothingAuto:
// the smoothing parameters and the initial states (ℓ_0, b_0 and m−1 free
// seasonal terms) maximise the likelihood inside the usual region, with
// the admissibility of the seasonal form checked.
//
// Describe names the fitted form, for example "holt_winters(error=
// multiplicative, trend=damped, season=multiplicative)". The fitted model
// implements Described, Warner, InSampler, Parameterized and
// ForecastVariancer (nil for the multiplicative season).
//
// Options (registered name "holt_winters"):
//
//	seasonal  auto (default), additive or multiplicative. The
//	          multiplicative form needs every observed value > 0; given a
//	          value ≤ 0 the additive form is used, with a warning and a note
//	          in Describe.
//	damped    bool, default false: damp the trend (0.8 ≤ φ ≤ 0.98).
//	trend     bool, default true: false drops the trend (b ≡ 0); damped
//	          then must be false.
//
// With seasonal additive or multiplicative the season length must be at
// least 2 and the series must hold at least two full seasons. A
// multiplicative fit whose states cannot stay positive returns an error
// wrapping ErrNonPositiveState.
//
// References:
//   - C. C. Holt (1957), Forecasting seasonals and trends by exponentially
//     weighted moving averages, ONR Memorandum 52, Carnegie Institute of
//     Technology; reprinted in International Journal of Forecasting 20(1)
//     (2004), 5–10.
//   - P. R. Winters (1960), Forecasting sales by exponentially weighted
//     moving averages, Management Science 6(3), 324–342.
//   - E. S. Gardner Jr. and E. McKenzie (1985), Forecasting trends in time
//     series, Management Science 31(10), 1237–1246.
//   - R. J. Hyndman, A. B. Koehler, J. K. Ord and R. D. Snyder (2008),
//     Forecasting with Exponential Smoothing: The State Space Approach,
//     Springer.
type HoltWinters struct {
	form esForm
	auto bool // seasonal: auto
}

var _ Method = (*HoltWinters)(nil)

// HoltWinters' seasonal option values.
const (
	hwSeasonalAuto = "auto"
)

func init() {
	Register("holt_winters", func(o Options) (Method, error) {
		for _, k := range slices.Sorted(maps.Keys(o)) {
			if k != "seasonal" && k != "damped" && k != "trend" {
				return nil, fmt.Errorf("holt_winters: unknown option %q (want seasonal, damped or trend)", k)
			}
		}
		seasonal := ""
		if v, ok := o["seasonal"]; ok {
			s, ok := v.(string)
			if !ok {
				return nil, fmt.Errorf("holt_winters: option seasonal must be a string, got %T", v)
			}
			seasonal = s
		}
		trend, damped := true, false
		for _, b := range []struct {
			key string
			dst *bool
		}{{"trend", &trend}, {"damped", &damped}} {
			v, ok := o[b.key]
			if !ok {
				continue
			}
			x, ok := v.(bool)
			if !ok {
				return nil, fmt.Errorf("holt_winters: option %s must be a bool, got %T", b.key, v)
			}
			*b.dst = x
		}
		return NewHoltWinters(seasonal, trend, damped)
	})
}

// NewHoltWinters returns the Holt-Winters method with the given seasonal
// option (auto, additive or multiplicative; "" means auto), with or
// without a trend, damped or not (see HoltWinters). A damped form needs the
// trend.
func NewHoltWinters(seasonal string, trend, damped bool) (*HoltWinters, error) {
	h := new(HoltWinters)
	switch seasonal {
	case "", hwSeasonalAuto:
		h.auto = true
		h.form.season = esSeasonAdditive
	case FormAdditive:
		h.form.season = esSeasonAdditive
	case FormMultiplicative:
		h.form = esForm{err: esErrorMultiplicative, season: esSeasonMultiplicative}
	default:
		return nil, fmt.Errorf("holt_winters: unknown seasonal %q (want %s, %s or %s)", seasonal, hwSeasonalAuto, FormAdditive, FormMultiplicative)
	}
	switch {
	case damped && !trend:
		return nil, fmt.Errorf("holt_winters: damped = true needs trend = true")
	case damped:
		h.form.trend = esTrendDamped
	case trend:
		h.form.trend = esTrendAdditive
	}
	return h, nil
}

// Name returns "holt_winters".
func (h *HoltWinters) Name() string { return "holt_winters" }

// NeedsComplete reports true: the pipeline fills gaps before fitting (see
// CompleteNeeder).
func (h *HoltWinters) NeedsComplete() bool { return true }

// Fit fits the form to y (see HoltWinters).
func (h *HoltWinters) Fit(y []float64, season int) (Fitted, error) {
	const name = "holt_winters"
	nobs, positive, err := esCheck(name, y)
	if err != nil {
		return nil, err
	}
	form := h.form
	if h.auto {
		note := ""
		switch {
		case season < 2:
			note = "no season length"
		case len(y) < 2*season || nobs < 2*season:
			note = "too short to test for a season"
		default:
			if !AutoSeasonal(y, season) {
				note = "no season found"
			}
		}
		if note != "" {
			mod, err := esFitForm(name, y, 1, esForm{trend: form.trend})
			if err != nil {
				return nil, err
			}
			mod.note = note
			return mod, nil
		}
		add, errAdd := esFitForm(name, y, season, esForm{trend: form.trend, season: esSeasonAdditive})
		if !positive {
			return add, errAdd
		}
		mult, errMult := esFitForm(name, y, season, esForm{err: esErrorMultiplicative, trend: form.trend, season: esSeasonMultiplicative})
		switch {
		case errAdd != nil && errMult != nil:
			return nil, errAdd
		case errMult != nil:
			return add, nil
		case errAdd != nil || mult.aicc < add.aicc:
			return mult, nil
		}
		return add, nil
	}
	var warnings []string
	note := ""
	if form.season == esSeasonMultiplicative && !positive {
		nonPositive := 0
		for _, v := range y {
			if v <= 0 {
				nonPositive++
			}
		}
		form = esForm{trend: form.trend, season: esSeasonAdditive}
		note = "fell back from multiplicative"
		warnings = []string{fmt.Sprintf("%s: multiplicative form needs strictly positive values; found %d values ≤ 0; used additive", name, nonPositive)}
	}
	mod, err := esFitForm(name, y, season, form)
	if err != nil {
		return nil, err
	}
	mod.note = note
	mod.warnings = append(warnings, mod.warnings...)
	return mod, nil
}
