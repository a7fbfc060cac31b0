package engines

import (
	"math"
)

// filterIntegrated evaluates the likelihood of y itself under the model
// with differencing polynomial c (c_0 = 1, L = len(c) − 1) and mean mu of
// the differenced series, conditional on the first L values: the state is
// the ARMA state α_t of w extended by the last L values of y,
//
//	y_t = μ + α_t[0] − Σ_{k=1}^{L} c_k y_{t−k},
//
// so a missing y_t costs one observation, not every difference it enters
// (as the filter over w does). Missing values among the first L start
// diffuse (below), from yStart (interpolated by the caller). It is used
// for series with
// gaps and d + D > 0; without gaps it gives filter's sums over w. O((r+L)²)
// work a step.
//
// When pred (fvar) is not nil, pred[t] (fvar[t]) receives the one-step
// prediction of y_t (its variance, in units of σ²) for t ≥ L. With
// start false the pass continues from the state left in ws by an earlier
// pass instead of starting afresh (yStart is then not used): forecasting
// is a continued pass over missing values.
func (s *armaSS) filterIntegrated(y, yStart, c []float64, mu float64, ws *arimaKalmanWork, pred, fvar []float64, start bool) (arimaSums, bool) {
	r, L := s.r, len(c)-1
	ns := r + L
	if start {
		ws.a = arimaResize(ws.a, ns)
		ws.P = arimaResize(ws.P, ns*ns)
	}
	ws.pc = arimaResize(ws.pc, ns)
	ws.row = arimaResize(ws.row, ns*ns) // M = A P
	a, pz, P, M := ws.a, ws.pc, ws.P, ws.row
	phi, theta := s.phi, s.theta
	// A missing value among the first L starts as a diffuse lag: variance
	// kappa, and an observation whose variance is still above diffuseF is
	// used to update the state but left out of the likelihood (R's
	// stats::arima does the same with kappa = 1e6 and 1e4). 1e7 (relative
	// to the scale of the state) balances the prior's bias, about 1/kappa,
	// against the rounding it brings into the filter (larger values make
	// the optimiser's numerical gradients too noisy to converge).
	scale := 1.0
	if len(s.p0) > 0 { // not kept by a fitted model: only forecasts continue
		scale += s.p0[0]
	}
	kappa, diffuseF := 1e7*scale, 1e4*scale
	if start {
		for i := 0; i < r; i++ {
			copy(P[i*ns:i*ns+r], s.p0[i*r:(i+1)*r])
		}
		for k := 1; k <= L; k++ {
			a[r+k-1] = yStart[L-k]
			if math.IsNaN(y[L-k]) {
				P[(r+k-1)*ns+r+k-1] = kappa
			}
		}
	}
	var cIdx []int // k with c_k ≠ 0, k ≥ 1
	for k := 1; k <= L; k++ {
		if c[k] != 0 {
			cIdx = append(cIdx, k)
		}
	}
	var res arimaSums
	for t := L; t < len(y); t++ {
		// PZ = P Z', Z = e_0 − Σ c_k e_{r+k−1}
		for i := 0; i < ns; i++ {
			v := P[i*ns]
			for _, k := range cIdx {
				v -= c[k] * P[i*ns+r+k-1]
			}
			pz[i] = v
		}
		F := pz[0]
		for _, k := range cIdx {
			F -= c[k] * pz[r+k-1]
		}
		yhat := mu + a[0]
		for _, k := range cIdx {
			yhat -= c[k] * a[r+k-1]
		}
		if pred != nil {
			pred[t] = yhat
		}
		if fvar != nil {
			fvar[t] = F
		}
		if yt := y[t]; !math.IsNaN(yt) {
			if !(F > 0) || math.IsInf(F, 0) {
				return res, false
			}
			v := yt - yhat
			if F < diffuseF {
				res.ssq += v * v / F
				res.sumLog += math.Log(F)
				res.nobs++
			}
			g := v / F
			for i := 0; i < ns; i++ {
				a[i] += pz[i] * g
			}
			for i := 0; i < ns; i++ {
				f := pz[i] / F
				if f == 0 {
					continue
				}
				pi := P[i*ns : (i+1)*ns]
				for j := 0; j < ns; j++ {
					pi[j] -= f * pz[j]
				}
			}
			yhat = yt
		}
		// Predict. State: α ← T α; the new lag 1 is y_t (its estimate
		// yhat − μ + μ), the other lags shift.
		a0 := a[0]
		for i := 0; i < r-1; i++ {
			a[i] = phi[i]*a0 + a[i+1]
		}
		a[r-1] = phi[r-1] * a0
		if L > 0 {
			copy(a[r+1:], a[r:ns-1])
			a[r] = yhat
		}
		// M = A P, row by row.
		for i := 0; i < r; i++ {
			mi := M[i*ns : (i+1)*ns]
			for j := 0; j < ns; j++ {
				v := phi[i] * P[j]
				if i+1 < r {
					v += P[(i+1)*ns+j]
				}
				mi[j] = v
			}
		}
		if L > 0 {
			mr := M[r*ns : (r+1)*ns]
			for j := 0; j < ns; j++ {
				v := P[j]
				for _, k := range cIdx {
					v -= c[k] * P[(r+k-1)*ns+j]
				}
				mr[j] = v
			}
			for k := 1; k < L; k++ {
				copy(M[(r+k)*ns:(r+k+1)*ns], P[(r+k-1)*ns:(r+k)*ns])
			}
		}
		// P = M A' + Q, column by column (row i of P from row i of M).
		for i := 0; i < ns; i++ {
			mi := M[i*ns : (i+1)*ns]
			pi := P[i*ns : (i+1)*ns]
			m0 := mi[0]
			for j := 0; j < r; j++ {
				v := phi[j] * m0
				if j+1 < r {
					v += mi[j+1]
				}
				pi[j] = v
			}
			if L > 0 {
				v := m0
				for _, k := range cIdx {
					v -= c[k] * mi[r+k-1]
				}
				pi[r] = v
				for k := 1; k < L; k++ {
					pi[r+k] = mi[r+k-1]
				}
			}
			if i < r {
				for j := 0; j < r; j++ {
					pi[j] += theta[i] * theta[j]
				}
			}
		}
	}
	return res, true
}

// forecastDeviations returns the 1…h step predictions of x after the end of
// a filtered series, from the predicted state a = α_{n+1|n}.
func (s *armaSS) forecastDeviations(a []float64, h int) []float64 {
	r := s.r
	st := append([]float64(nil), a...)
	out := make([]float64, h)
	for k := 0; k < h; k++ {
		out[k] = st[0]
		a0 := st[0]
		for i := 0; i < r-1; i++ {
			st[i] = s.phi[i]*a0 + st[i+1]
		}
		st[r-1] = s.phi[r-1] * a0
	}
	return out
}
