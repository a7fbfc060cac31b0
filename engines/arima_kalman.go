package engines

import (
	"errors"
	"math"
)

// This file holds the numerics under the arima method: the polynomial
// products of the multiplicative seasonal model, the transformation that
// keeps the AR and MA parts stationary and invertible, the stationary start
// covariance of the state, the Kalman filter that evaluates the exact
// Gaussian likelihood, and the conditional sum of squares used for start
// values. Everything works on w, the series after differencing.

// errArimaNonStationary reports a parameter point whose autocovariances do
// not exist (an AR polynomial with a root on or inside the unit circle, up to
// rounding). The optimisers treat it as a point to avoid.
var errArimaNonStationary = errors.New("arima: non-stationary parameters")

// arimaExpandAR returns a_1…a_{p+mP} with
//
//	(1 − φ_1B − … − φ_pB^p)(1 − Φ_1B^m − … − Φ_PB^{mP}) = 1 − Σ_k a_k B^k.
func arimaExpandAR(phi, sphi []float64, m int, out []float64) []float64 {
	n := len(phi) + m*len(sphi)
	out = arimaResize(out, n)
	copy(out, phi)
	for j, s := range sphi {
		k := (j + 1) * m
		out[k-1] += s
		for i, f := range phi {
			out[k+i] -= f * s
		}
	}
	return out
}

// arimaExpandMA returns b_1…b_{q+mQ} with
//
//	(1 + θ_1B + … + θ_qB^q)(1 + Θ_1B^m + … + Θ_QB^{mQ}) = 1 + Σ_k b_k B^k.
func arimaExpandMA(theta, stheta []float64, m int, out []float64) []float64 {
	n := len(theta) + m*len(stheta)
	out = arimaResize(out, n)
	copy(out, theta)
	for j, s := range stheta {
		k := (j + 1) * m
		out[k-1] += s
		for i, f := range theta {
			out[k+i] += f * s
		}
	}
	return out
}

// arimaResize returns s with length n and every element zero, reusing its
// storage when it is large enough.
func arimaResize(s []float64, n int) []float64 {
	if cap(s) < n {
		return make([]float64, n)
	}
	s = s[:n]
	for i := range s {
		s[i] = 0
	}
	return s
}

// arimaPACFToAR maps unbounded values to the coefficients of a stationary AR
// polynomial 1 − Σ φ_i B^i: each value becomes a partial autocorrelation
// tanh(raw_i) ∈ (−1, 1), and the Durbin–Levinson recursion turns the
// partial autocorrelations into coefficients (Jones 1980; Monahan 1984 for
// its use on MA polynomials). work needs len(raw) elements.
func arimaPACFToAR(raw, out, work []float64) {
	p := len(raw)
	for j := 0; j < p; j++ {
		out[j] = math.Tanh(raw[j])
		work[j] = out[j]
	}
	for j := 1; j < p; j++ {
		a := out[j]
		for k := 0; k < j; k++ {
			work[k] -= a * out[j-k-1]
		}
		copy(out[:j], work[:j])
	}
}

// armaSS is the ARMA(p', q') part of a model in the state-space form of
// Harvey (1989, §3.4) used by Gardner, Harvey and Phillips (1980): with
// r = max(p', q'+1), the state α_t has r elements and
//
//	w_t − μ = α_t[0],   α_{t+1} = T α_t + R ε_{t+1},
//
// where T has φ_1…φ_r (zero beyond p') in its first column and ones on its
// superdiagonal, and R = (1, θ_1, …, θ_{r−1}) (zero beyond q'). The
// innovation variance is 1 here; it is concentrated out of the likelihood.
type armaSS struct {
	r     int
	phi   []float64 // φ_1…φ_r, zero-padded
	theta []float64 // θ_0 = 1, θ_1…θ_{r−1}, zero-padded
	p0    []float64 // stationary covariance of α_1, r×r row-major

	// scratch
	psi, gamma, sys []float64
}

// set loads the expanded polynomials a (AR, 1 − Σ a_k B^k) and b (MA,
// 1 + Σ b_k B^k) and computes the stationary covariance of the state. It
// returns errArimaNonStationary when the autocovariances cannot be solved
// for.
func (s *armaSS) set(a, b []float64) error {
	pp, qq := len(a), len(b)
	r := max(pp, qq+1)
	s.r = r
	s.phi = arimaResize(s.phi, r)
	copy(s.phi, a)
	s.theta = arimaResize(s.theta, r)
	s.theta[0] = 1
	copy(s.theta[1:], b)

	s.setPsi(a)
	if err := s.setAutocovariances(a, b); err != nil {
		return err
	}
	return s.setStateCovariance()
}

// setPsi sets the ψ-weights of the ARMA part: ψ_0 = 1,
// ψ_j = θ_j + Σ_i φ_i ψ_{j−i}.
func (s *armaSS) setPsi(a []float64) {
	r, pp := s.r, len(a)
	s.psi = arimaResize(s.psi, r+1)
	for j := 0; j <= r; j++ {
		v := 0.0
		if j < r {
			v = s.theta[j]
		}
		for i := 1; i <= min(j, pp); i++ {
			v += a[i-1] * s.psi[j-i]
		}
		s.psi[j] = v
	}
}

// setAutocovariances sets γ(0…r) (unit innovation variance): for k = 0…p',
//
//	γ(k) − Σ_i φ_i γ(|k−i|) = Σ_{j=k}^{q'} θ_j ψ_{j−k},
//
// a (p'+1)-square linear system; beyond p' the same relation gives
// γ(k) directly (Brockwell & Davis 1991, §3.3, method 3).
func (s *armaSS) setAutocovariances(a, b []float64) error {
	r, pp, qq := s.r, len(a), len(b)
	s.gamma = arimaResize(s.gamma, r+1)
	rhs := func(k int) float64 {
		v := 0.0
		for j := k; j <= qq; j++ {
			th := 1.0
			if j > 0 {
				th = b[j-1]
			}
			v += th * s.psi[j-k]
		}
		return v
	}
	nsys := pp + 1
	s.sys = arimaResize(s.sys, nsys*(nsys+1))
	A := s.sys // nsys rows of nsys+1 (augmented)
	w := nsys + 1
	for k := 0; k <= pp; k++ {
		A[k*w+k] += 1
		for i := 1; i <= pp; i++ {
			l := k - i
			if l < 0 {
				l = -l
			}
			A[k*w+l] -= a[i-1]
		}
		A[k*w+nsys] = rhs(k)
	}
	if !arimaSolve(A, nsys) {
		return errArimaNonStationary
	}
	for k := 0; k <= pp && k <= r; k++ {
		s.gamma[k] = A[k*w+nsys]
	}
	for k := pp + 1; k <= r; k++ {
		v := rhs(k)
		for i := 1; i <= pp; i++ {
			v += a[i-1] * s.gamma[k-i]
		}
		s.gamma[k] = v
	}
	if !(s.gamma[0] > 0) || math.IsInf(s.gamma[0], 0) || s.gamma[0] > 1e12 {
		return errArimaNonStationary
	}
	return nil
}

// setStateCovariance sets the stationary covariance P of the state. The
// first row follows from
// α_t[j] = Σ_{k=j}^{r−1} (φ_{k+1} y_{t+j−k−1} + θ_k ε_{t+j−k}):
//
//	P_{0j} = Σ_{k=j}^{r−1} (φ_{k+1} γ(k−j+1) + θ_k ψ_{k−j});
//
// the rest from P = T P T' + R R' written element-wise,
//
//	P_ij = φ_{i+1}φ_{j+1}P_00 + φ_{i+1}P_{0,j+1} + φ_{j+1}P_{0,i+1}
//	       + P_{i+1,j+1} + θ_iθ_j,
//
// filled from the bottom-right corner (indices ≥ r are zero).
func (s *armaSS) setStateCovariance() error {
	r := s.r
	s.p0 = arimaResize(s.p0, r*r)
	P := s.p0
	for j := 0; j < r; j++ {
		v := 0.0
		for k := j; k < r; k++ {
			v += s.phi[k]*s.gamma[k-j+1] + s.theta[k]*s.psi[k-j]
		}
		P[j] = v
		P[j*r] = v
	}
	P[0] = s.gamma[0]
	at := func(i, j int) float64 {
		if i >= r || j >= r {
			return 0
		}
		return P[i*r+j]
	}
	for i := r - 1; i >= 1; i-- {
		for j := r - 1; j >= i; j-- {
			v := s.phi[i]*s.phi[j]*P[0] + s.phi[i]*at(0, j+1) + s.phi[j]*at(0, i+1) +
				at(i+1, j+1) + s.theta[i]*s.theta[j]
			P[i*r+j] = v
			P[j*r+i] = v
		}
	}
	for _, v := range P {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return errArimaNonStationary
		}
	}
	return nil
}

// arimaSolve solves the n×n system stored row-major with its right-hand
// side as column n (rows of n+1), by Gaussian elimination with partial
// pivoting; the solution replaces column n. It reports false when the
// matrix is singular to working precision.
func arimaSolve(A []float64, n int) bool {
	w := n + 1
	for c := 0; c < n; c++ {
		piv, best := c, math.Abs(A[c*w+c])
		for r := c + 1; r < n; r++ {
			if v := math.Abs(A[r*w+c]); v > best {
				piv, best = r, v
			}
		}
		if !(best > 1e-13) {
			return false
		}
		if piv != c {
			for k := c; k < w; k++ {
				A[c*w+k], A[piv*w+k] = A[piv*w+k], A[c*w+k]
			}
		}
		inv := 1 / A[c*w+c]
		for r := c + 1; r < n; r++ {
			f := A[r*w+c] * inv
			if f == 0 {
				continue
			}
			for k := c; k < w; k++ {
				A[r*w+k] -= f * A[c*w+k]
			}
		}
	}
	for c := n - 1; c >= 0; c-- {
		v := A[c*w+n]
		for k := c + 1; k < n; k++ {
			v -= A[c*w+k] * A[k*w+n]
		}
		A[c*w+n] = v / A[c*w+c]
	}
	return true
}

// arimaSums is what one pass of the filter gives.
type arimaSums struct {
	ssq    float64 // Σ v_t² / F_t
	sumLog float64 // Σ log F_t
	nobs   int     // observed values used
}

// arimaKalmanWork is the filter's scratch; after a pass a holds the predicted
// state α_{n+1|n} and P its covariance (full, r×r).
type arimaKalmanWork struct {
	a, pc, row []float64
	P          []float64
}

// filter runs the Kalman filter of s over the deviations x_t = w_t − μ
// (NaN = missing: the update is skipped and the prediction carried on),
// starting from α_1 ~ (0, P0). When pred is not nil, pred[t] receives the
// one-step prediction of x_t, and when fvar is not nil, fvar[t] its
// variance F_t (in units of σ²).
//
// Only the upper triangle of the covariance is kept during the pass (the
// update and the prediction read nothing else), which halves the work;
// it is mirrored at the end. Once the predicted covariance has converged
// to R R' (every element within 1e-12, which happens for any invertible
// model given enough data), the filter switches to the fast recursions of
// Gardner et al. (1980): F_t = 1 and the gain is R, with no covariance
// arithmetic, until a missing value makes it return to the full
// recursions. It reports false when a prediction variance is not positive.
func (s *armaSS) filter(x []float64, ws *arimaKalmanWork, pred, fvar []float64) (arimaSums, bool) {
	r := s.r
	ws.a = arimaResize(ws.a, r)
	ws.pc = arimaResize(ws.pc, r)
	ws.row = arimaResize(ws.row, r+1)
	ws.P = arimaResize(ws.P, r*r)
	a, pc, row, P := ws.a, ws.pc, ws.row, ws.P
	copy(P, s.p0)
	phi, theta := s.phi, s.theta
	var res arimaSums
	fast := false
	for t, xt := range x {
		if pred != nil {
			pred[t] = a[0]
		}
		if fvar != nil {
			fvar[t] = P[0]
		}
		observed := !math.IsNaN(xt)
		if fast && !observed {
			// Leave the fast recursions: the predicted covariance is R R'.
			for i := 0; i < r; i++ {
				for j := i; j < r; j++ {
					P[i*r+j] = theta[i] * theta[j]
				}
			}
			fast = false
		}
		if fast {
			if fvar != nil {
				fvar[t] = 1
			}
			v := xt - a[0]
			res.ssq += v * v
			res.nobs++
			// a ← T (a + R v)
			for i := 0; i < r; i++ {
				a[i] += theta[i] * v
			}
			a0 := a[0]
			for i := 0; i < r-1; i++ {
				a[i] = phi[i]*a0 + a[i+1]
			}
			a[r-1] = phi[r-1] * a0
			continue
		}
		if observed {
			F := P[0]
			if !(F > 0) || math.IsInf(F, 0) {
				return res, false
			}
			v := xt - a[0]
			res.ssq += v * v / F
			res.sumLog += math.Log(F)
			res.nobs++
			copy(pc, P[:r]) // P[0][i] = P[i][0]
			g := v / F
			for i := 0; i < r; i++ {
				a[i] += pc[i] * g
			}
			for i := 0; i < r; i++ {
				f := pc[i] / F
				if f == 0 {
					continue
				}
				pi := P[i*r : (i+1)*r]
				for j := i; j < r; j++ {
					pi[j] -= f * pc[j]
				}
			}
		}
		// Predict: a ← T a and, element-wise on the upper triangle,
		//   P_ij ← φ_iφ_j P_00 + φ_i P_{0,j+1} + φ_j P_{0,i+1} + P_{i+1,j+1} + θ_iθ_j
		// (indices ≥ r are zero), in place in ascending order: P_{i+1,j+1}
		// is read before it is overwritten, row 0 is saved first.
		a0 := a[0]
		for i := 0; i < r-1; i++ {
			a[i] = phi[i]*a0 + a[i+1]
		}
		a[r-1] = phi[r-1] * a0
		copy(row, P[:r])
		row[r] = 0
		p00 := row[0]
		conv := true
		for i := 0; i < r; i++ {
			fi, ti, ri := phi[i], theta[i], row[i+1]
			pi := P[i*r : (i+1)*r]
			var next []float64 // row i+1 shifted: next[j] = P[i+1][j+1]
			if i+1 < r {
				next = P[(i+1)*r+1 : (i+2)*r]
			}
			for j := i; j < r; j++ {
				tt := ti * theta[j]
				v := phi[j]*ri + tt
				if fi != 0 {
					v += fi * (phi[j]*p00 + row[j+1])
				}
				if j < len(next) {
					v += next[j]
				}
				pi[j] = v
				if conv && math.Abs(v-tt) > 1e-12 {
					conv = false
				}
			}
		}
		fast = conv
	}
	for i := 0; i < r; i++ {
		for j := i + 1; j < r; j++ {
			P[j*r+i] = P[i*r+j]
		}
	}
	return res, true
}

// filterChandrasekhar computes what filter computes for the sums (not the
// predictions or the final state) over a series without missing values, by
// the Chandrasekhar recursions (Morf, Sidhu & Kailath 1974; in the form of
// Herbst 2015): because α_1 starts from
// the stationary covariance, P_{t+1} − P_t = W_t M_t W_t' has rank one, and
// with the prediction-form gain K_t = T P_t Z'/F_t
//
//	F_{t+1} = F_t + M_t (Z W_t)²
//	K_{t+1} = (K_t F_t + M_t (Z W_t) T W_t) / F_{t+1}
//	M_{t+1} = M_t + M_t² (Z W_t)² / F_t
//	W_{t+1} = T W_t − K_{t+1} (Z W_t)
//
// from W_1 = K_1, M_1 = −F_1: O(r) work a step instead of O(r²). The
// values agree with filter's to rounding (the reference tests check the
// log-likelihood through both).
func (s *armaSS) filterChandrasekhar(x []float64, ws *arimaKalmanWork) (arimaSums, bool) {
	r := s.r
	ws.a = arimaResize(ws.a, r)
	ws.pc = arimaResize(ws.pc, r)
	ws.row = arimaResize(ws.row, r+1)
	a, K, W := ws.a, ws.pc, ws.row[:r]
	phi, p0 := s.phi, s.p0
	var res arimaSums
	F := p0[0]
	if !(F > 0) {
		return res, false
	}
	// K_1 = T P0 Z' / F_1: (T P0)_{i0} = φ_i P0_00 + P0_{i+1,0}.
	for i := 0; i < r; i++ {
		v := phi[i] * p0[0]
		if i+1 < r {
			v += p0[(i+1)*r]
		}
		K[i] = v / F
		W[i] = K[i]
	}
	M := -F
	for _, xt := range x {
		if !(F > 0) || math.IsInf(F, 0) {
			return res, false
		}
		v := xt - a[0]
		res.ssq += v * v / F
		res.sumLog += math.Log(F)
		res.nobs++
		// a ← T a + K v
		a0 := a[0]
		for i := 0; i < r-1; i++ {
			a[i] = phi[i]*a0 + a[i+1] + K[i]*v
		}
		a[r-1] = phi[r-1]*a0 + K[r-1]*v
		zw := W[0]
		mzw := M * zw
		Fn := F + mzw*zw
		if mzw == 0 {
			continue // converged: K, F and M stay as they are
		}
		// W ← T W (in place, ascending), K ← (K F + M zw T W) / Fn
		for i := 0; i < r-1; i++ {
			W[i] = phi[i]*zw + W[i+1]
		}
		W[r-1] = phi[r-1] * zw
		for i := 0; i < r; i++ {
			K[i] = (K[i]*F + mzw*W[i]) / Fn
			W[i] -= K[i] * zw
		}
		M += mzw * mzw / F
		F = Fn
	}
	return res, true
}

// cssResiduals computes the conditional residuals of the deviations x
// under AR coefficients a and MA coefficients b: for t ≥ len(a),
//
//	e_t = x_t − Σ_i a_i x_{t−i} − Σ_j b_j e_{t−j},
//
// with e_t = 0 before len(a) and wherever a needed x is missing. It
// returns Σ e_t² and the number of residuals that entered it. Zero
// coefficients (most of a seasonal product) are skipped.
func cssResiduals(x, a, b, e []float64) (float64, int) {
	var ai, bi [64]int
	aIdx, bIdx := ai[:0], bi[:0]
	for i, v := range a {
		if v != 0 {
			aIdx = append(aIdx, i)
		}
	}
	for j, v := range b {
		if v != 0 {
			bIdx = append(bIdx, j)
		}
	}
	pp := len(a)
	ssq, nu := 0.0, 0
	for t := range x {
		e[t] = 0
		if t < pp {
			continue
		}
		v := x[t]
		for _, i := range aIdx {
			v -= a[i] * x[t-i-1]
		}
		if math.IsNaN(v) {
			continue
		}
		for _, j := range bIdx {
			if t-j-1 < 0 {
				break
			}
			v -= b[j] * e[t-j-1]
		}
		e[t] = v
		ssq += v * v
		nu++
	}
	return ssq, nu
}
