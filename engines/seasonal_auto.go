package engines

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// Seasonal modes of the seasonal methods that take a `seasonal` option of
// auto or always (classical, stl).
const (
	// SeasonalAuto fits the seasonal form only where AutoSeasonal says
	// the series is seasonal, and the non-seasonal form otherwise.
	SeasonalAuto = "auto"
	// SeasonalAlways fits the seasonal form without testing.
	SeasonalAlways = "always"
)

// autoStrengthLevel is the level of the F test that backs a seasonal
// strength above arimaStrengthLimit in AutoSeasonal.
const autoStrengthLevel = 0.05

// AutoSeasonal is the decision of `seasonal: auto` in holt_winters,
// classical and stl: y (season length m ≥ 2) is seasonal when
//
//  1. SeasonalityTest (the lag-m autocorrelation test at 90%) finds a
//     season, or
//
//  2. the seasonal strength of the classical additive decomposition,
//     F_s = max(0, 1 − Var(R)/Var(S + R)) (Wang, Smith & Hyndman 2006),
//     exceeds 0.64 (the limit the arima method uses for its seasonal
//     difference) AND the one-way analysis of variance of the detrended
//     values S + R by season position is significant at 5%:
//
//     F = (F_s / (1 − F_s)) · (N − k) / (k − 1)  >  F_{0.95}(k − 1, N − k)
//
//     with N the detrended values used and k the season positions among
//     them (the stable-seasonality F test of X-11; Lothian & Morry 1978).
//     1 − F_s is the within-position share of the detrended variation, so
//     this F is the same decomposition read with its degrees of freedom.
//
// Why both parts. The autocorrelation test needs r_m to stand out against
// Bartlett's band built from all lags below m; with a long season (m = 52)
// and three years of weekly data the band is wide and a sharp yearly peak
// often goes unseen (about half the series of examples/garden-supply).
// The strength sees such a peak, but on its own it is biased upwards with
// few seasons: each position's mean absorbs noise, and with two values per
// position pure noise scores about 0.5, with one value 1. Measured on
// invented white noise (400 series each, m = 52): strength > 0.64 alone
// called 98% of 117-week and 64% of 130-week series seasonal; with the
// F test 6% and 5%. The F test alone would accept weak seasons that the
// limit 0.64 refuses with long histories. Theta and naive2 keep the pure
// autocorrelation test (as the M3 competition applied it).
//
// References:
//   - X. Wang, K. Smith and R. Hyndman (2006), Characteristic-based
//     clustering for time series data, Data Mining and Knowledge
//     Discovery 13(3), 335–364 (the seasonal strength).
//   - J. Lothian and M. Morry (1978), A test for the presence of
//     identifiable seasonality when using the X-11 program, Statistics
//     Canada, Seasonal Adjustment and Time Series Staff research paper
//     (from memory; the F test of stable seasonality).
func AutoSeasonal(y []float64, m int) bool {
	if _, s := SeasonalityTest(y, m); s {
		return true
	}
	fs, f, d1, d2, ok := seasonalStrengthF(y, m)
	return ok && fs > arimaStrengthLimit &&
		f > distuv.F{D1: d1, D2: d2}.Quantile(1-autoStrengthLevel)
}

// seasonalStrengthF returns the seasonal strength fs of y at season length
// m and the F statistic of the same decomposition with its degrees of
// freedom d1 = k − 1 and d2 = N − k (see AutoSeasonal). ok is false when
// either cannot be computed (m < 2, a constant series, a single season
// position, or no more detrended values than positions).
func seasonalStrengthF(y []float64, m int) (fs, f, d1, d2 float64, ok bool) {
	if m < 2 {
		return 0, 0, 0, 0, false
	}
	fs, used, k, ok := seasonalStrength(y, m)
	d1, d2 = float64(k-1), float64(used-k)
	if !ok || d1 < 1 || d2 < 1 {
		return 0, 0, 0, 0, false
	}
	f = math.Inf(1)
	if fs < 1 {
		f = fs / (1 - fs) * d2 / d1
	}
	return fs, f, d1, d2, true
}

// seasonalMode reads the `seasonal` option of method (auto or always;
// absent means auto) and reports whether it is always.
func seasonalMode(method string, o Options) (always bool, err error) {
	v, ok := o["seasonal"]
	if !ok {
		return false, nil
	}
	s, isStr := v.(string)
	switch {
	case !isStr:
		return false, fmt.Errorf("%s: option seasonal must be a string, got %T", method, v)
	case s == SeasonalAuto:
		return false, nil
	case s == SeasonalAlways:
		return true, nil
	}
	return false, fmt.Errorf("%s: seasonal %q: want auto or always", method, s)
}

// noSeason reports whether a seasonal method in auto mode should fit its
// non-seasonal form on y: AutoSeasonal finds no season.
func noSeason(y []float64, m int) bool {
	return !AutoSeasonal(y, m)
}

// dropSeason turns the decomposition d of y into its non-seasonal form:
// factors and seasonal component 1 (multiplicative) or 0 (additive), the
// adjusted series y itself, the remainder y ÷ trend (or y − trend). The
// trend is kept.
func dropSeason(d *Decomposition, y []float64) {
	mult := d.Form == FormMultiplicative
	one := 0.0
	if mult {
		one = 1
	}
	for j := range d.Factors {
		d.Factors[j] = one
	}
	for i, v := range y {
		d.Adjusted[i] = v
		if v != v {
			d.Seasonal[i] = v
			d.Remainder[i] = v
			continue
		}
		d.Seasonal[i] = one
		if mult {
			d.Remainder[i] = v / d.Trend[i]
		} else {
			d.Remainder[i] = v - d.Trend[i]
		}
	}
}
