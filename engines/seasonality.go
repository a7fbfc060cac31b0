package engines

import "math"

// seasonalityZ90 is the 95% quantile of the standard normal: the two-sided
// 90% critical value of SeasonalityTest.
const seasonalityZ90 = 1.6448536269514722

// SeasonalityTest is the lag-m autocorrelation test for a season of length
// m, at the 90% level. With the sample autocorrelations
//
//	r_k = Σ_t (y_t − ȳ)(y_{t+k} − ȳ) / Σ_t (y_t − ȳ)²
//
// it returns the statistic
//
//	stat = |r_m| / sqrt((1 + 2·Σ_{k=1}^{m−1} r_k²) / n)
//
// (n = number of observed values) and seasonal = stat > 1.6448536…, that
// is, whether r_m lies outside the two-sided 90% band built from
// Bartlett's variance of r_m under the hypothesis that the autocorrelations
// beyond lag m−1 are zero.
//
// Missing values (NaN) are left out: ȳ and the denominator use the observed
// values, and a product enters r_k only when both of its values are
// observed. SeasonalityTest returns 0, false when the observed values do
// not vary. It does not check length: callers decide how much data a test
// needs (Theta asks for two full seasons). With m = 1 the statistic is
// |r_1|·sqrt(n). m must be ≥ 1.
//
// This is the test of the Theta method as Assimakopoulos and Nikolopoulos
// (2000) apply it and as the M3 competition used it; every method with a
// seasonal: auto option calls this one function: theta and naive2 use it
// alone, holt_winters, classical and stl through AutoSeasonal.
//
// References:
//   - M. S. Bartlett (1946), On the theoretical specification and sampling
//     properties of autocorrelated time-series, Supplement to the Journal
//     of the Royal Statistical Society 8(1), 27–41 (the variance of r_k).
//   - V. Assimakopoulos and K. Nikolopoulos (2000), The theta model: a
//     decomposition approach to forecasting, International Journal of
//     Forecasting 16(4), 521–530.
func SeasonalityTest(y []float64, m int) (stat float64, seasonal bool) {
	if m < 1 {
		panic("engines: SeasonalityTest with season length < 1")
	}
	var s float64
	k := 0
	for _, v := range y {
		if v == v {
			s += v
			k++
		}
	}
	if k == 0 {
		return 0, false
	}
	mean := s / float64(k)
	var c0 float64
	for _, v := range y {
		if v == v {
			c0 += (v - mean) * (v - mean)
		}
	}
	if !(c0 > 0) {
		return 0, false
	}
	var sum2, rm float64
	for lag := 1; lag <= m; lag++ {
		var c float64
		for i := lag; i < len(y); i++ {
			// NaN products drop out: NaN == NaN is false.
			if p := (y[i] - mean) * (y[i-lag] - mean); p == p {
				c += p
			}
		}
		r := c / c0
		if lag < m {
			sum2 += r * r
		} else {
			rm = r
		}
	}
	stat = math.Abs(rm) / math.Sqrt((1+2*sum2)/float64(k))
	return stat, stat > seasonalityZ90
}
