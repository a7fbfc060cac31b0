package engines

import (
	"fmt"
	"math"
	"strconv"
)

// FourierTerms returns the regressors of a cycle of length period (which
// need not be whole: 365.25 days, 52.18 weeks) with K harmonics, for the
// periods t = start, start+1, …, start+n−1:
//
//	sin(2πkt/period), cos(2πkt/period),  k = 1…K,
//
// in that order (sin 1, cos 1, sin 2, cos 2, …). With 2K = period the last
// sine is zero at every whole t and is left out, so there are 2K − 1
// columns. These are the regressors of dynamic harmonic regression
// (Hyndman & Athanasopoulos, Forecasting: Principles and Practice, 3rd
// ed., §10.5): pass them to FitRegressionARIMA for a long cycle (yearly on
// daily data) that a seasonal ARIMA of that length could not hold, with
// start = 0 over the history and start = n over the horizon, so the two
// are continuous. K ≥ 1 and 2K ≤ period.
//
// Reference: common practice (Fourier series); Hyndman & Athanasopoulos
// (2021) ch. 10 for their use as regressors.
func FourierTerms(period float64, K, start, n int) ([][]float64, error) {
	if !(period >= 2) || math.IsInf(period, 0) {
		return nil, fmt.Errorf("fourier: period %v; want at least 2", period)
	}
	if K < 1 || float64(2*K) > period {
		return nil, fmt.Errorf("fourier: %d harmonics for period %v; want 1…%d", K, period, int(period/2))
	}
	if n < 0 {
		return nil, fmt.Errorf("fourier: negative length %d", n)
	}
	cols := 2 * K
	dropLast := float64(2*K) == period
	if dropLast {
		cols--
	}
	out := make([][]float64, cols)
	for j := range out {
		out[j] = make([]float64, n)
	}
	for i := 0; i < n; i++ {
		t := float64(start + i)
		for k := 1; k <= K; k++ {
			// Reduce kt modulo the period first so that large t keeps its
			// precision.
			a := 2 * math.Pi * math.Mod(float64(k)*t, period) / period
			if !(dropLast && k == K) {
				out[2*(k-1)][i] = math.Sin(a)
				out[2*(k-1)+1][i] = math.Cos(a)
			} else {
				out[2*(k-1)][i] = math.Cos(a)
			}
		}
	}
	return out, nil
}

// FourierNames names the columns of FourierTerms: "sin1_365.25",
// "cos1_365.25", …
func FourierNames(period float64, K int) []string {
	p := strconv.FormatFloat(period, 'g', -1, 64)
	var out []string
	for k := 1; k <= K; k++ {
		if !(float64(2*K) == period && k == K) {
			out = append(out, fmt.Sprintf("sin%d_%s", k, p))
		}
		out = append(out, fmt.Sprintf("cos%d_%s", k, p))
	}
	return out
}
