package engines

import "math"

// esAdmissible reports whether the smoothing parameters p make the form
// forecastable (Hyndman et al. 2008, ch. 10): every eigenvalue of the
// discount matrix D = F − g·w′ of the linear form with the same trend and
// season lies inside the unit circle, apart from the unit eigenvalue that
// the m seasonal states carry by construction (the direction "level up,
// every seasonal term down by the same amount", which the normalisation
// removes). For the forms without a season the usual region (esParams,
// φ ≤ 0.98) lies inside the admissible one (ibid., §10.2), so only seasonal
// forms are checked; a multiplicative season is checked through the
// additive form, common practice for these nonlinear models.
//
// With the states (ℓ, b, s_{t−1}, …, s_{t−m}), det(zI − F) =
// (z−1)(z−φ)(z^m − 1) and w′(zI − F)⁻¹g = (α(z−φ) + φβz)/((z−1)(z−φ)) +
// γ/(z^m − 1), so det(zI − D)/(z − 1) is
//
//	P(z) = (z−φ)(z^m − 1) + (α(z−φ) + φβz)·(1 + z + … + z^{m−1}) + γ(z−φ)
//
// (no trend: φ = β = 0, which only adds a root at 0). The parameters are
// admissible when P's m+1 roots lie inside the unit circle, which the
// Schur–Cohn recursion decides in O(m²) operations; a test checks it
// against the eigenvalues of D.
func esAdmissible(form esForm, m int, p esParams) bool {
	if form.season == esSeasonNone || m < 2 {
		return true
	}
	a, be, ge, phi := p.ec(form)
	if form.trend == esTrendNone {
		phi, be = 0, 0
	}
	// Coefficients of P in ascending powers.
	c := make([]float64, m+2)
	c[0] = phi - a*phi - ge*phi
	for j := 1; j < m; j++ {
		c[j] = a + phi*be - a*phi
	}
	c[1] += ge - 1
	c[m] = a + phi*be - phi
	c[m+1] = 1
	return esSchurStable(c)
}

// esSchurStable reports whether every root of the real polynomial
// Σ c_k z^k (c[len−1] ≠ 0) lies strictly inside the unit circle, by the
// Schur–Cohn recursion: p is stable iff |c_0| < |c_n| and
// (c_n·p(z) − c_0·z^n·p(1/z))/z is stable. It overwrites c. A margin of
// esAdmissTol keeps roots on the circle (to rounding) out.
func esSchurStable(c []float64) bool {
	next := make([]float64, len(c))
	for n := len(c) - 1; n > 0; n-- {
		a0, an := c[0], c[n]
		if !(math.Abs(a0) < math.Abs(an)*(1-esAdmissTol)) {
			return false
		}
		for k := 0; k < n; k++ {
			next[k] = an*c[k+1] - a0*c[n-k-1]
		}
		// Rescale to keep the numbers near 1.
		s := math.Abs(next[n-1])
		if !(s > 0) || math.IsInf(s, 0) {
			return false
		}
		for k := 0; k < n; k++ {
			c[k] = next[k] / s
		}
	}
	return true
}
