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
	// The deviations, once: with every one finite (no NaN, no infinity)
	// no product can be NaN, and the sums below skip the check. Same
	// operations in the same order either way, so the same bits.
	var buf [256]float64
	d := buf[:0]
	if len(y) > len(buf) {
		d = make([]float64, 0, len(y))
	}
	finite := true
	var c0 float64
	for _, v := range y {
		e := v - mean
		d = append(d, e)
		if e-e != 0 {
			finite = false
		}
		if v == v {
			c0 += (v - mean) * (v - mean)
		}
	}
	if !(c0 > 0) {
		return 0, false
	}
	var sum2, rm float64
	add := func(lag int, c float64) {
		r := c / c0
		if lag < m {
			sum2 += r * r
		} else {
			rm = r
		}
	}
	n := len(d)
	lag := 1
	if finite {
		// Four lags per pass over the deviations: four independent sums,
		// each still taken in ascending time order.
		for ; lag+3 <= m && lag+3 < n; lag += 4 {
			var s0, s1, s2, s3 float64
			s0 += d[lag] * d[0]
			s0 += d[lag+1] * d[1]
			s1 += d[lag+1] * d[0]
			s0 += d[lag+2] * d[2]
			s1 += d[lag+2] * d[1]
			s2 += d[lag+2] * d[0]
			for i := lag + 3; i < n; i++ {
				v := d[i]
				s0 += v * d[i-lag]
				s1 += v * d[i-lag-1]
				s2 += v * d[i-lag-2]
				s3 += v * d[i-lag-3]
			}
			add(lag, s0)
			add(lag+1, s1)
			add(lag+2, s2)
			add(lag+3, s3)
		}
	}
	for ; lag <= m; lag++ {
		var c float64
		for i := lag; i < n; i++ {
			// NaN products drop out: NaN == NaN is false.
			if p := d[i] * d[i-lag]; p == p {
				c += p
			}
		}
		add(lag, c)
	}
	stat = math.Abs(rm) / math.Sqrt((1+2*sum2)/float64(k))
	return stat, stat > seasonalityZ90
}
