package engines

import (
	"errors"
	"fmt"
	"math"
)

// This file holds the one exponential smoothing core that ses, holt,
// holt_winters and smoothing_auto share (theta and stl use its level-only
// recursion, esLevelFilter): the forms, the state-space recursions, the
// likelihood, AICc and the forecast variance. smoothing_fit.go estimates
// the parameters and initial states. The doc comment of SmoothingAuto
// gives the formulas.

// ErrNonPositiveState means a form with a multiplicative part (error or
// season) found no parameters and initial states for which every level,
// seasonal factor and one-step forecast of the series stays > 0. The
// pipeline turns it into a problems row and the series falls back.
var ErrNonPositiveState = errors.New("smoothing state not positive")

// esError is the error part of a smoothing form.
type esError uint8

const (
	esErrorAdditive esError = iota
	esErrorMultiplicative
)

// esTrend is the trend part of a smoothing form.
type esTrend uint8

const (
	esTrendNone esTrend = iota
	esTrendAdditive
	esTrendDamped
)

// esSeason is the seasonal part of a smoothing form.
type esSeason uint8

const (
	esSeasonNone esSeason = iota
	esSeasonAdditive
	esSeasonMultiplicative
)

// esForm is one model form of the exponential smoothing family. The zero
// value is additive error, no trend, no season (simple exponential
// smoothing).
type esForm struct {
	err    esError
	trend  esTrend
	season esSeason
}

// describe names the form in almanac's words, for example
// "error=multiplicative, trend=damped, season=multiplicative".
func (f esForm) describe() string {
	e := "additive"
	if f.err == esErrorMultiplicative {
		e = "multiplicative"
	}
	t := "none"
	switch f.trend {
	case esTrendAdditive:
		t = "additive"
	case esTrendDamped:
		t = "damped"
	}
	s := "none"
	switch f.season {
	case esSeasonAdditive:
		s = "additive"
	case esSeasonMultiplicative:
		s = "multiplicative"
	}
	return "error=" + e + ", trend=" + t + ", season=" + s
}

// positive reports whether the form has a multiplicative part, so that its
// levels, seasonal factors and one-step forecasts must stay > 0.
func (f esForm) positive() bool {
	return f.err == esErrorMultiplicative || f.season == esSeasonMultiplicative
}

// nSmoothing counts the smoothing parameters of the form: alpha, beta,
// gamma and phi as they apply.
func (f esForm) nSmoothing() int {
	k := 1
	if f.trend != esTrendNone {
		k++
	}
	if f.trend == esTrendDamped {
		k++
	}
	if f.season != esSeasonNone {
		k++
	}
	return k
}

// nStates counts the free initial states: the level, the trend, and m−1
// seasonal terms (the m initial seasonal terms are normalised to sum 0 or
// average 1, which leaves m−1 free).
func (f esForm) nStates(m int) int {
	k := 1
	if f.trend != esTrendNone {
		k++
	}
	if f.season != esSeasonNone {
		k += m - 1
	}
	return k
}

// nParams is the parameter count of AICc: smoothing parameters, free
// initial states and the error variance.
func (f esForm) nParams(m int) int { return f.nSmoothing() + f.nStates(m) + 1 }

// esParams are the smoothing parameters, stored on the unit scale the fit
// works on: alpha (level), beta and gamma as shares of their usual ranges,
// so that the error-correction parameters of Hyndman et al. (2008) are
//
//	α,  β_e = α·beta  (0 < β_e < α),  γ_e = (1−α)·gamma  (0 < γ_e < 1−α)
//
// and phi (damping; 1 when the trend is not damped). beta is Holt's trend
// weight and, for the additive season, gamma is Winters' seasonal weight
// (the update that uses the new level): the classical Holt-Winters
// parameters of R's stats::HoltWinters. Unused ones are 0 (phi 1).
type esParams struct {
	alpha, beta, gamma, phi float64
}

// ec returns the error-correction parameters α, β_e, γ_e and φ of form
// (β_e = 0 without a trend, γ_e = 0 without a season, φ = 1 unless damped).
func (p esParams) ec(form esForm) (a, be, ge, phi float64) {
	a, phi = p.alpha, 1
	if form.trend != esTrendNone {
		be = p.alpha * p.beta
	}
	if form.trend == esTrendDamped {
		phi = p.phi
	}
	if form.season != esSeasonNone {
		ge = (1 - p.alpha) * p.gamma
	}
	return a, be, ge, phi
}

// esState holds the states of the recursion between two observations.
// season is a ring of the last m seasonal terms; season[pos] is the one
// that applies to the next observation. It is nil without a season.
type esState struct {
	level, slope float64
	season       []float64
	pos          int
}

// esStats sums what the likelihood needs over the observed one-step
// errors e_t = y_t − μ_t: the sum of e_t², the sum of (e_t/μ_t)² and the
// sum of log|μ_t| (the last two only when the form's error is
// multiplicative), and their count. ok is false when the recursion left the
// finite numbers or, for a form with a multiplicative part, a level,
// seasonal factor or one-step forecast was ≤ 0.
type esStats struct {
	sse, sre, logmu float64
	nobs            int
	ok              bool
}

// objective is the criterion the fit minimises, −2·log-likelihood up to
// constants, with the variance concentrated out:
//
//	additive error:        n·log(Σ e_t²)
//	multiplicative error:  n·log(Σ (e_t/μ_t)²) + 2·Σ log|μ_t|
//
// +Inf when !ok or the sum is not positive and finite. A zero sum of
// squares (an exact fit) is floored at (1e-10·scale)² per value so that
// exact fits compare as equal.
func (s esStats) objective(form esForm, scale float64) float64 {
	if !s.ok || s.nobs == 0 {
		return math.Inf(1)
	}
	nf := float64(s.nobs)
	q := s.sse
	if form.err == esErrorMultiplicative {
		q = s.sre
		scale = 1
	}
	q = math.Max(q, nf*math.Max(1e-20*scale*scale, 1e-300))
	if math.IsInf(q, 0) || q != q {
		return math.Inf(1)
	}
	v := nf * math.Log(q)
	if form.err == esErrorMultiplicative {
		v += 2 * s.logmu
	}
	if v != v {
		return math.Inf(1)
	}
	return v
}

// logLik is the Gaussian log-likelihood of the fit with the variance at
// its maximum (σ² = Σe²/n, or Σ(e/μ)²/n for the multiplicative error):
//
//	log L = −n/2·(log(2π·σ²) + 1) − Σ log|μ_t|   (the last sum only for the
//	                                              multiplicative error)
//
// the quantity statsmodels' ETSModel reports as llf.
func (s esStats) logLik(form esForm) float64 {
	nf := float64(s.nobs)
	q := s.sse
	if form.err == esErrorMultiplicative {
		q = s.sre
	}
	ll := -nf / 2 * (math.Log(2*math.Pi*q/nf) + 1)
	if form.err == esErrorMultiplicative {
		ll -= s.logmu
	}
	return ll
}

// esFilter runs the recursions of form over y[start:], starting from the
// states in st, which it updates to the states after the last value. It
// writes the one-step forecast μ_t of y[t] to fitted[t] for t ≥ start
// (fitted must have len(y) elements; fitted[:start] is left alone) and
// returns the sums of esStats over the observed y[t], t ≥ start. A missing
// y[t] (NaN) gets a forecast but no update: the states move on as if y[t]
// had equalled its forecast.
//
// With the error-correction parameters α, β_e, γ_e, φ (esParams.ec),
// base_t = ℓ_{t−1} + φ·b_{t−1} and e_t = y_t − μ_t the recursions are
// (Hyndman et al. 2008, Table 2.3, written in e_t; the error form only
// changes the likelihood, not these):
//
//	additive season:        μ_t = base_t + s_{t−m}
//	                        ℓ_t = base_t + α·e_t
//	                        b_t = φ·b_{t−1} + β_e·e_t
//	                        s_t = s_{t−m} + γ_e·e_t
//	multiplicative season:  μ_t = base_t · s_{t−m}
//	                        ℓ_t = base_t + α·e_t/s_{t−m}
//	                        b_t = φ·b_{t−1} + β_e·e_t/s_{t−m}
//	                        s_t = s_{t−m} + γ_e·e_t/base_t
//
// (no season: s ≡ 0; no trend: b ≡ 0, φ = 1). With the additive season
// these are R's stats::HoltWinters recursions in Holt's and Winters'
// parameters (esParams), which the tests check to 1e-8.
func esFilter(y []float64, start int, form esForm, p esParams, st *esState, fitted []float64) esStats {
	n := len(y)
	if len(fitted) < n {
		panic("engines: esFilter: fitted buffer too short")
	}
	a, be, ge, phi := p.ec(form)
	if form.trend == esTrendNone {
		st.slope = 0
	}
	multErr := form.err == esErrorMultiplicative
	pos := form.positive()
	// The loops carry base_t = ℓ_{t−1} + φb_{t−1} and pb_t = φb_{t−1}. With
	// q_t = e_t (additive season) or e_t/s_{t−m} (multiplicative):
	//
	//	base_{t+1} = base_t + φ·pb_t + (α + φβ_e)·q_t,  pb_{t+1} = φ·pb_t + φβ_e·q_t
	//
	// a short chain of dependent operations per step.
	ka, kb := a+phi*be, phi*be
	pb := phi * st.slope
	base := st.level + pb
	var (
		prod float64 // Π|μ_t| = prod·2^lexp, for Σ log|μ_t|
		lexp int
		out  esStats
		ok   bool
	)
	switch form.season {
	case esSeasonNone:
		base, pb, prod, lexp, out, ok = esLoopNone(y, start, fitted, base, pb, phi, ka, kb, multErr, pos)
	case esSeasonAdditive:
		base, pb, prod, lexp, out, ok = esLoopAdditive(y, start, fitted, base, pb, phi, ka, kb, ge, st, multErr, pos)
	case esSeasonMultiplicative:
		base, pb, prod, lexp, out, ok = esLoopMultiplicative(y, start, fitted, base, pb, phi, ka, kb, ge, st, multErr, pos)
	default:
		panic(fmt.Sprintf("engines: esFilter: unknown season kind %d", form.season))
	}
	if !ok {
		return out
	}
	l, b := base-pb, 0.0
	if form.trend != esTrendNone {
		b = pb / phi
	}
	st.level, st.slope = l, b
	if multErr {
		out.logmu = math.Log(prod) + float64(lexp)*math.Ln2
	}
	out.ok = !math.IsNaN(out.sse) && !math.IsInf(out.sse, 0) && !math.IsNaN(l) && !math.IsInf(l, 0) &&
		!math.IsNaN(b) && !math.IsInf(b, 0) && (!pos || l > 0)
	return out
}

// esLoopNone is esFilter's loop without a season. It returns base and pb
// after the last step, prod and lexp (Π|μ_t| = prod·2^lexp over the
// observed steps, with a multiplicative error), the sums, and false when
// a state left the positive range and the run stopped early.
func esLoopNone(y []float64, start int, fitted []float64, base, pb, phi, ka, kb float64, multErr, pos bool) (float64, float64, float64, int, esStats, bool) {
	n := len(y)
	prod, lexp := 1.0, 0 // Π|μ_t| = prod·2^lexp, for Σ log|μ_t|
	var out esStats
	for i := start; i < n; i++ {
		fitted[i] = base
		v := y[i]
		if pos && !(base > 0) {
			return base, pb, prod, lexp, out, false
		}
		if v != v {
			base, pb = base+phi*pb, phi*pb
			continue
		}
		e := v - base
		out.sse += e * e
		out.nobs++
		if multErr {
			r := e / base
			out.sre += r * r
			prod *= base
			if prod > 0x1p200 || prod < 0x1p-200 {
				f, x := math.Frexp(prod)
				prod, lexp = f, lexp+x
			}
		}
		base, pb = base+phi*pb+ka*e, phi*pb+kb*e
	}
	return base, pb, prod, lexp, out, true
}

// esLoopAdditive is esFilter's loop with an additive season, from and
// back into st.season and st.pos (st.pos is left alone on an early stop).
func esLoopAdditive(y []float64, start int, fitted []float64, base, pb, phi, ka, kb float64, ge float64, st *esState, multErr, pos bool) (float64, float64, float64, int, esStats, bool) {
	n := len(y)
	prod, lexp := 1.0, 0 // Π|μ_t| = prod·2^lexp, for Σ log|μ_t|
	var out esStats
	s, j := st.season, st.pos
	m := len(s)
	for i := start; i < n; i++ {
		sj := s[j]
		mu := base + sj
		fitted[i] = mu
		if pos && !(mu > 0 && base > 0) {
			return base, pb, prod, lexp, out, false
		}
		if v := y[i]; v != v {
			base, pb = base+phi*pb, phi*pb
		} else {
			e := v - mu
			out.sse += e * e
			out.nobs++
			if multErr {
				r := e / mu
				out.sre += r * r
				prod *= mu
				if prod > 0x1p200 || prod < 0x1p-200 {
					f, x := math.Frexp(prod)
					prod, lexp = f, lexp+x
				}
			}
			s[j] = sj + ge*e
			base, pb = base+phi*pb+ka*e, phi*pb+kb*e
		}
		if j++; j == m {
			j = 0
		}
	}
	st.pos = j
	return base, pb, prod, lexp, out, true
}

// esLoopMultiplicative is esFilter's loop with a multiplicative season,
// as esLoopAdditive.
func esLoopMultiplicative(y []float64, start int, fitted []float64, base, pb, phi, ka, kb float64, ge float64, st *esState, multErr, pos bool) (float64, float64, float64, int, esStats, bool) {
	n := len(y)
	prod, lexp := 1.0, 0 // Π|μ_t| = prod·2^lexp, for Σ log|μ_t|
	var out esStats
	s, j := st.season, st.pos
	m := len(s)
	for i := start; i < n; i++ {
		sj := s[j]
		mu := base * sj
		fitted[i] = mu
		if !(base > 0 && sj > 0) {
			return base, pb, prod, lexp, out, false
		}
		if v := y[i]; v != v {
			base, pb = base+phi*pb, phi*pb
		} else {
			e := v - mu
			out.sse += e * e
			out.nobs++
			if multErr {
				r := e / mu
				out.sre += r * r
				prod *= mu
				if prod > 0x1p200 || prod < 0x1p-200 {
					f, x := math.Frexp(prod)
					prod, lexp = f, lexp+x
				}
			}
			q := e / sj
			s[j] = sj + ge*e/base
			base, pb = base+phi*pb+ka*q, phi*pb+kb*q
		}
		if j++; j == m {
			j = 0
		}
	}
	st.pos = j
	return base, pb, prod, lexp, out, true
}

// esLevelFilter is the level-only recursion (simple exponential smoothing)
// from ℓ_0 = l0 with constant alpha: ℓ_t = ℓ_{t−1} + α(x_t − ℓ_{t−1}). It
// returns the sum of squared one-step errors and the final level; NaN
// values leave the level unchanged and add nothing. It is esFilter's
// no-trend, no-season loop without the bookkeeping, for the methods that
// smooth a level many times per fit (theta, stl).
func esLevelFilter(x []float64, alpha, l0 float64) (sse, level float64) {
	level = l0
	for _, v := range x {
		if v != v {
			continue
		}
		e := v - level
		sse += e * e
		level += alpha * e
	}
	return sse, level
}

// esForecast writes the h = 1…len(out) step forecasts from the states st
// (after the last observation) into out:
//
//	ŷ_{n+h} = (ℓ_n + (φ + φ² + … + φ^h)·b_n) (+ or ×) s_{n+h−m⌈h/m⌉}
//
// with φ = 1 (so the sum is h) for an undamped trend and b_n = 0 without
// one. These are the conditional means of the additive-error forms and of
// the multiplicative forms for h ≤ m (beyond, the point forecast of the
// multiplicative forms, as in Hyndman et al. 2008, §6.1).
func esForecast(form esForm, phi float64, st *esState, out []float64) {
	if form.trend != esTrendDamped {
		phi = 1
	}
	b := st.slope
	if form.trend == esTrendNone {
		b = 0
	}
	var cum float64
	pk := 1.0
	j, m := st.pos, len(st.season)
	for i := range out {
		pk *= phi
		cum += pk
		fc := st.level + cum*b
		switch form.season {
		case esSeasonAdditive:
			fc += st.season[j]
		case esSeasonMultiplicative:
			fc *= st.season[j]
		}
		out[i] = fc
		if m > 0 {
			if j++; j == m {
				j = 0
			}
		}
	}
}

// esForecastVariance writes σ²·(1 + Σ_{j=1}^{h−1} c_j²), h = 1…len(out),
// into out: the forecast variance of the linear forms (Hyndman et al.
// 2008, Table 6.1, class 1), with
//
//	c_j = α + β_e(φ + φ² + … + φ^j) + γ_e·[j mod m = 0]
//
// (the trend term only with a trend, φ = 1 undamped; the seasonal term
// only with a season).
func esForecastVariance(form esForm, m int, p esParams, sigma2 float64, out []float64) {
	c := esPsi(form, m, p, len(out))
	var sum float64
	for i := range out {
		out[i] = sigma2 * (1 + sum)
		sum += c[i] * c[i]
	}
}

// esPsi returns c_1…c_h of esForecastVariance.
func esPsi(form esForm, m int, p esParams, h int) []float64 {
	a, be, ge, phi := p.ec(form)
	out := make([]float64, h)
	var cum float64
	pk := 1.0
	for i := range out {
		j := i + 1
		c := a
		if form.trend != esTrendNone {
			pk *= phi
			cum += pk
			c += be * cum
		}
		if form.season != esSeasonNone && j%m == 0 {
			c += ge
		}
		out[i] = c
	}
	return out
}

// esForecastVarianceMultErr writes the forecast variance of the
// multiplicative-error forms without a multiplicative season (Hyndman et
// al. 2008, §6.3, class 2) into out:
//
//	v_h = (1 + σ²)·θ_h − μ_h²,  θ_1 = μ_1²,  θ_h = μ_h² + σ²·Σ_{j=1}^{h−1} c_j²·θ_{h−j}
//
// with μ_h the point forecasts (mu), c_j as in esForecastVariance and σ²
// the variance of the relative errors e_t/μ_t.
func esForecastVarianceMultErr(form esForm, m int, p esParams, sigma2 float64, mu, out []float64) {
	h := len(out)
	c := esPsi(form, m, p, h)
	theta := make([]float64, h)
	for i := 0; i < h; i++ {
		t := mu[i] * mu[i]
		var s float64
		for j := 1; j <= i; j++ {
			s += c[j-1] * c[j-1] * theta[i-j]
		}
		theta[i] = t + sigma2*s
		out[i] = (1+sigma2)*theta[i] - mu[i]*mu[i]
	}
}

// esAICc is −2·log L + 2k + 2k(k+1)/(n−k−1) (logLik), +Inf when
// n ≤ k+1.
func esAICc(ll float64, n, k int) float64 {
	if n-k-1 <= 0 {
		return math.Inf(1)
	}
	nf, kf := float64(n), float64(k)
	return -2*ll + 2*kf + 2*kf*(kf+1)/(nf-kf-1)
}

// esCheck scans y: it returns the number of observed values and whether
// every one is > 0, or an error for an empty series, an infinite value or
// a series with no observed value.
func esCheck(name string, y []float64) (nobs int, positive bool, err error) {
	if len(y) == 0 {
		return 0, false, fmt.Errorf("%s: empty series: %w", name, ErrTooShort)
	}
	positive = true
	for i, v := range y {
		if v != v {
			continue
		}
		if math.IsInf(v, 0) {
			return 0, false, fmt.Errorf("%s: value %d of the series is %v", name, i+1, v)
		}
		nobs++
		if v <= 0 {
			positive = false
		}
	}
	if nobs == 0 {
		return 0, false, fmt.Errorf("%s: %w", name, ErrAllMissing)
	}
	return nobs, positive, nil
}

// esScale is the largest |y| over the observed values.
func esScale(y []float64) float64 {
	var s float64
	for _, v := range y {
		if a := math.Abs(v); a > s {
			s = a
		}
	}
	return s
}
