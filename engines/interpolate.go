package engines

import (
	"fmt"
	"math"
)

// How SeasonalInterpolate filled a series.
const (
	FillNone     = "none"     // nothing was missing
	FillSeasonal = "seasonal" // seasonal + trend interpolation
	FillLinear   = "linear"   // linear interpolation (no usable season)
)

// SeasonalInterpolate fills the missing values (NaN) of y for methods that
// need a complete series (STL, classical decomposition, Holt-Winters), and
// returns the filled copy and how it filled it. Observed values are never
// changed. For the pipeline: fill only a training slice — never values of
// a test window — and record the fill.
//
// With at least one season length m ≥ 2 for which y has two full seasons
// (2m ≤ n) and at least two observed values per season position on
// average (observed ≥ 2·max m kept), the fill is seasonal:
//
//  1. z = y with every gap filled linearly between its neighbours (a gap
//     at an end takes the nearest observed value);
//  2. z is decomposed by MSTL with the usable season lengths, with STL's
//     robustness passes, so that the rough values of step 1 get small
//     weights and do not shape the seasonal;
//  3. the seasonally adjusted series a = y − Σ S (observed values only) is
//     interpolated linearly over each gap (flat beyond the ends), and the
//     missing y_t become a_t + Σ S_t.
//
// The trend thus runs straight across a gap, and the seasonal pattern of
// the neighbouring seasons is laid on it. Otherwise (no usable season, or
// too few observed values) the fill is linear, as in step 1.
//
// Reference: common practice (interpolation of the seasonally adjusted
// series, then reseasonalising); the decomposition is MSTL (Bandara,
// Hyndman & Bergmeir 2021) over STL (Cleveland et al. 1990).
func SeasonalInterpolate(y []float64, seasons []int) ([]float64, string, error) {
	n := len(y)
	nobs := 0
	for _, v := range y {
		if math.IsInf(v, 0) {
			return nil, "", fmt.Errorf("interpolate: series holds an infinite value")
		}
		if !math.IsNaN(v) {
			nobs++
		}
	}
	if nobs == 0 {
		return nil, "", fmt.Errorf("interpolate: %w", ErrAllMissing)
	}
	out := append([]float64(nil), y...)
	if nobs == n {
		return out, FillNone, nil
	}
	var usable []int
	big := 0
	for _, m := range seasons {
		if m >= 2 && 2*m <= n {
			usable = append(usable, m)
			big = max(big, m)
		}
	}
	lin := interpolateLinear(y)
	if len(usable) == 0 || nobs < 2*big {
		return lin, FillLinear, nil
	}
	d, err := MSTL(lin, usable, MSTLOptions{Robust: true})
	if err != nil {
		return lin, FillLinear, nil
	}
	seas := make([]float64, n)
	for _, s := range d.Seasonal {
		for t, v := range s {
			seas[t] += v
		}
	}
	adj := make([]float64, n)
	for t, v := range y {
		adj[t] = v - seas[t] // NaN where missing
	}
	adj = interpolateLinear(adj)
	for t, v := range y {
		if math.IsNaN(v) {
			out[t] = adj[t] + seas[t]
		}
	}
	return out, FillSeasonal, nil
}

// interpolateLinear returns y with each run of NaN filled linearly between
// the observed values around it, or with the nearest observed value at an
// end. y must hold at least one observed value.
func interpolateLinear(y []float64) []float64 {
	out := append([]float64(nil), y...)
	n := len(y)
	prev := -1
	for t := 0; t <= n; t++ {
		if t < n && math.IsNaN(y[t]) {
			continue
		}
		// y[prev] and y[t] observed (prev = −1 or t = n: an end), the
		// values between missing.
		for s := prev + 1; s < t; s++ {
			switch {
			case prev >= 0 && t < n:
				out[s] = y[prev] + (y[t]-y[prev])*float64(s-prev)/float64(t-prev)
			case prev >= 0:
				out[s] = y[prev]
			default:
				out[s] = y[t]
			}
		}
		prev = t
	}
	return out
}
