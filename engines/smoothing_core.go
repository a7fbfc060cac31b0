package engines

import (
	"errors"
	"fmt"
	"math"
)

// This file holds what the exponential smoothing methods (ses, holt,
// holt_winters, smoothing_auto) share: the recursions, the start-up
// values, the SSE fit, AICc and the forecast variance. The doc comment of
// HoltWinters gives the formulas; SES and Holt are its special cases.

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

// esForm is one model form of the exponential smoothing family.
type esForm struct {
	trend  esTrend
	season esSeason
}

// describe names the form, as Describe reports it.
func (f esForm) describe() string {
	if f.season == esSeasonNone {
		switch f.trend {
		case esTrendNone:
			return "ses"
		case esTrendAdditive:
			return "holt"
		default:
			return "holt(damped)"
		}
	}
	s := "holt_winters(seasonal=" + FormAdditive
	if f.season == esSeasonMultiplicative {
		s = "holt_winters(seasonal=" + FormMultiplicative
	}
	switch f.trend {
	case esTrendNone:
		s += ", no trend"
	case esTrendDamped:
		s += ", damped"
	}
	return s + ")"
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

// esParams are the smoothing parameters: alpha (level), beta (trend, in
// Holt's form b_t = β(ℓ_t − ℓ_{t−1}) + (1−β)φb_{t−1}), gamma (season, in
// Winters' form, the update using the new level) and phi (damping; 1 when
// the trend is not damped). Unused ones are 0 (phi 1).
type esParams struct {
	alpha, beta, gamma, phi float64
}

// esState holds the states of the recursion between two observations.
// season is a ring of the last m seasonal terms; season[pos] is the one
// that applies to the next observation. It is nil without a season.
type esState struct {
	level, slope float64
	season       []float64
	pos          int
}

// esFilter runs the smoothing recursions of form over y[start:], starting
// from the states in st, which it updates to the states after the last
// value. It writes the one-step forecast of y[i] to fitted[i] for
// i ≥ start (fitted must have len(y) elements; it leaves fitted[:start]
// alone) and returns the sum of squared one-step errors over the observed
// y[i], i ≥ start, and their count. A missing y[i] (NaN) gets a forecast
// but no update: the states move on as if y[i] had equalled its forecast.
// The result is NaN or ±Inf if the recursion left the finite numbers.
//
// The recursions are those in the doc comment of HoltWinters. Started at
// R's start-up index with R's start values they reproduce R's
// stats::HoltWinters (testdata/reference/REFERENCE-METHODS.md) up to
// rounding, which the tests check to 1e-8.
func esFilter(y []float64, start int, form esForm, p esParams, st *esState, fitted []float64) (sse float64, nobs int) {
	n := len(y)
	if len(fitted) < n {
		panic("engines: esFilter: fitted buffer too short")
	}
	a, bt, g, phi := p.alpha, p.beta, p.gamma, p.phi
	if form.trend == esTrendNone {
		bt, phi = 0, 1
		st.slope = 0
	} else if form.trend == esTrendAdditive {
		phi = 1
	}
	// The loops carry base_t = ℓ_{t−1} + φb_{t−1} and pb_t = φb_{t−1}
	// instead of ℓ and b. In these terms every form updates as
	//
	//	base_{t+1} = base_t + pb_t·φ + (α + φαβ)·r_t
	//	pb_{t+1}   = pb_t·φ + φαβ·r_t
	//
	// with r_t = y_t − s_{t−m} − base_t (additive; e_t itself) or
	// y_t/s_{t−m} − base_t (multiplicative), and the season updated as
	// s_t = s_{t−m} + (1−α)γ·e_t (additive) or γ·y_t/ℓ_t + (1−γ)s_{t−m},
	// ℓ_t = base_t + α·r_t (multiplicative). This is the algebra of the
	// HoltWinters recursions rearranged: a chain of three dependent
	// operations per step instead of about eight, which is what bounds the
	// speed of the loop.
	ka, kb := a+phi*a*bt, phi*a*bt
	ge := (1 - a) * g
	pb := phi * st.slope
	base := st.level + pb
	switch form.season {
	case esSeasonNone:
		for i := start; i < n; i++ {
			fitted[i] = base
			v := y[i]
			if v != v {
				base, pb = base+phi*pb, phi*pb
				continue
			}
			e := v - base
			sse += e * e
			nobs++
			base, pb = base+phi*pb+ka*e, phi*pb+kb*e
		}
	case esSeasonAdditive:
		s, j := st.season, st.pos
		m := len(s)
		for i := start; i < n; i++ {
			sj := s[j]
			fitted[i] = base + sj
			if v := y[i]; v != v {
				base, pb = base+phi*pb, phi*pb
			} else {
				e := (v - sj) - base
				sse += e * e
				nobs++
				s[j] = sj + ge*e
				base, pb = base+phi*pb+ka*e, phi*pb+kb*e
			}
			if j++; j == m {
				j = 0
			}
		}
		st.pos = j
	case esSeasonMultiplicative:
		s, j := st.season, st.pos
		m := len(s)
		cg := 1 - g
		for i := start; i < n; i++ {
			sj := s[j]
			fc := base * sj
			fitted[i] = fc
			if v := y[i]; v != v {
				base, pb = base+phi*pb, phi*pb
			} else {
				e := v - fc
				sse += e * e
				nobs++
				r := v/sj - base
				s[j] = g*(v/(base+a*r)) + cg*sj
				base, pb = base+phi*pb+ka*r, phi*pb+kb*r
			}
			if j++; j == m {
				j = 0
			}
		}
		st.pos = j
	default:
		panic(fmt.Sprintf("engines: esFilter: unknown season kind %d", form.season))
	}
	l, b := base-pb, 0.0
	if form.trend != esTrendNone {
		b = pb / phi
	}
	st.level, st.slope = l, b
	return sse, nobs
}

// esForecast writes the h = 1…len(out) step forecasts from the states st
// (after the last observation) into out:
//
//	ŷ_{n+h} = (ℓ_n + (φ + φ² + … + φ^h)·b_n) (+ or ×) s_{n+h−m⌈h/m⌉}
//
// with φ = 1 (so the sum is h) for an undamped trend and b_n = 0 without
// one.
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

// esConcentrated returns, for a form without a season and fixed smoothing
// parameters, the SSE over y[start:] minimised over the initial level (and
// trend), with the minimising corrections dl, db to the given starting
// states l0, b0.
//
// Without a season the recursions are linear in the initial states: the
// one-step error is e_t(ℓ0 + δℓ, b0 + δb) = e_t(ℓ0, b0) − r_t·(δℓ, δb),
// where r_t = ∂ŷ_t/∂(ℓ0, b0) follows the recursion x_t = D x_{t−1}
// (D = F − g w′, or F at a missing value). One pass accumulates the
// normal equations and the minimum follows in closed form. When the 2×2
// system is singular to working precision only the level is corrected.
func esConcentrated(y []float64, start int, trend esTrend, p esParams, l0, b0 float64) (sse, dl, db float64) {
	a, phi := p.alpha, p.phi
	if trend != esTrendDamped {
		phi = 1
	}
	be := a * p.beta
	var see, se1, se2, s11, s12, s22 float64
	if trend == esTrendNone {
		l, r, ca := l0, 1.0, 1-a
		for i := start; i < len(y); i++ {
			v := y[i]
			if v != v {
				continue
			}
			e := v - l
			see += e * e
			se1 += e * r
			s11 += r * r
			l += a * e
			r *= ca
		}
		if s11 == 0 {
			return see, 0, 0
		}
		dl = se1 / s11
		return math.Max(see-se1*dl, 0), dl, 0
	}
	// As in esFilter, the loop carries base_t = ℓ_{t−1} + φb_{t−1} and
	// pb_t = φb_{t−1}, and their derivatives with respect to ℓ0 (xL) and
	// b0 (xB); r_t = ∂ŷ_t = ∂base_t.
	ka, kb := a+phi*be, phi*be
	pb := phi * b0
	base := l0 + pb
	baseL, pbL, baseB, pbB := 1.0, 0.0, phi, phi
	for i := start; i < len(y); i++ {
		v := y[i]
		if v != v {
			base, pb = base+phi*pb, phi*pb
			baseL, pbL = baseL+phi*pbL, phi*pbL
			baseB, pbB = baseB+phi*pbB, phi*pbB
			continue
		}
		r1, r2 := baseL, baseB
		e := v - base
		see += e * e
		se1 += e * r1
		se2 += e * r2
		s11 += r1 * r1
		s12 += r1 * r2
		s22 += r2 * r2
		base, pb = base+phi*pb+ka*e, phi*pb+kb*e
		baseL, pbL = (1-ka)*baseL+phi*pbL, phi*pbL-kb*baseL
		baseB, pbB = (1-ka)*baseB+phi*pbB, phi*pbB-kb*baseB
	}
	det := s11*s22 - s12*s12
	if det > 1e-10*s11*s22 && det > 0 {
		dl = (s22*se1 - s12*se2) / det
		db = (s11*se2 - s12*se1) / det
		return math.Max(see-dl*se1-db*se2, 0), dl, db
	}
	if s11 == 0 {
		return see, 0, 0
	}
	dl = se1 / s11
	return math.Max(see-se1*dl, 0), dl, 0
}

// Bounds enforced on the smoothing parameters while fitting. The open
// intervals 0 < α, β, γ < 1 are kept away from their ends by esEdge.
const (
	esEdge   = 1e-4
	esPhiMin = 0.8
	esPhiMax = 0.98
)

// Starting values of the fit, and the Nelder–Mead settings.
var esStartParams = esParams{alpha: 0.3, beta: 0.1, gamma: 0.1, phi: 0.9}

const (
	esSimplexStep = 1.0  // initial simplex size, on the logit scale
	esFTol        = 1e-6 // relative spread of the simplex values at convergence
	esXTol        = 1e-2 // spread of the vertices on the (0, 1) scale of the parameters
	esEvalsPerDim = 300  // evaluation budget per free parameter
)

// esLogistic maps u ∈ ℝ into (lo, hi).
func esLogistic(u, lo, hi float64) float64 {
	return lo + (hi-lo)/(1+math.Exp(-u))
}

// esLogit is the inverse of esLogistic.
func esLogit(p, lo, hi float64) float64 {
	return math.Log((p - lo) / (hi - p))
}

// esSlot is a smoothing parameter the optimiser varies.
type esSlot uint8

const (
	esSlotAlpha esSlot = iota
	esSlotBeta
	esSlotGamma
	esSlotPhi
)

func (s esSlot) bounds() (lo, hi float64) {
	if s == esSlotPhi {
		return esPhiMin, esPhiMax
	}
	return esEdge, 1 - esEdge
}

func (s esSlot) get(p *esParams) float64 {
	switch s {
	case esSlotAlpha:
		return p.alpha
	case esSlotBeta:
		return p.beta
	case esSlotGamma:
		return p.gamma
	}
	return p.phi
}

func (s esSlot) set(p *esParams, v float64) {
	switch s {
	case esSlotAlpha:
		p.alpha = v
	case esSlotBeta:
		p.beta = v
	case esSlotGamma:
		p.gamma = v
	default:
		p.phi = v
	}
}

// esFitter fits smoothing forms to one series. It owns the scratch buffers
// of the fit, so that evaluating the SSE allocates nothing; one fitter can
// fit several forms of the same series in turn (smoothing_auto does). It
// is not safe for concurrent use.
type esFitter struct {
	y     []float64
	m     int
	start int // first index of y that is forecast and enters the SSE

	form   esForm
	l0, b0 float64
	s0     []float64 // initial seasonal terms, len m (seasonal forms)
	conc   bool      // minimise over the initial level/trend too (no season)

	slots [esMaxDim]esSlot
	d     int

	ring   []float64 // len m
	fitted []float64 // len(y)
	nm     esSimplex

	// Classical decompositions of the first seasons, by form, computed once.
	dec    [2]*Decomposition
	decErr [2]error
}

// esSolution is the outcome of fitting one form.
type esSolution struct {
	form   esForm
	p      esParams
	l0, b0 float64
	sse    float64
	nobs   int
	res    esSimplexResult
	finite bool // the SSE at the solution is finite
}

// reset prepares f for the series y with season length m (m ≥ 1),
// reusing its buffers.
func (f *esFitter) reset(y []float64, m int) {
	f.y, f.m, f.start = y, m, 0
	f.dec, f.decErr = [2]*Decomposition{}, [2]error{}
	if cap(f.fitted) < len(y) {
		f.fitted = make([]float64, len(y))
	}
	f.fitted = f.fitted[:len(y)]
	if m > 1 {
		if cap(f.ring) < 2*m {
			f.ring = make([]float64, 2*m)
		}
		f.s0 = f.ring[m : 2*m : 2*m]
		f.ring = f.ring[:m:m]
	} else {
		f.s0, f.ring = nil, nil
	}
}

var (
	esClassicalAdditive       = esMustClassical(FormAdditive)
	esClassicalMultiplicative = esMustClassical(FormMultiplicative)
)

func esMustClassical(form string) *Classical {
	c, err := NewClassical(form, "", "mean")
	if err != nil {
		panic("engines: " + err.Error())
	}
	return c
}

// decomposition returns the classical decomposition (mean factors) of the
// first seasons of y: the first 2m values, or as many further whole seasons
// as missing values make necessary, up to the whole series.
func (f *esFitter) decomposition(mult bool) (*Decomposition, error) {
	k := 0
	c := esClassicalAdditive
	if mult {
		k, c = 1, esClassicalMultiplicative
	}
	if f.dec[k] != nil || f.decErr[k] != nil {
		return f.dec[k], f.decErr[k]
	}
	n, m := len(f.y), f.m
	for w := 2 * m; ; w += m {
		if w > n {
			w = n
		}
		d, err := c.Decompose(f.y[:w], m)
		if err == nil || !errors.Is(err, ErrTooShort) || w == n {
			f.dec[k], f.decErr[k] = d, err
			return d, err
		}
	}
}

// initStates sets the initial states of form, at time 0 (just before
// y[0]); see HoltWinters for the rules.
func (f *esFitter) initStates(form esForm) error {
	f.form = form
	f.conc = form.season == esSeasonNone
	if form.season == esSeasonNone {
		// The least-squares line through the first (up to) ten observed
		// values, t = index + 1, read at t = 0; the level alone: the first
		// observed value. The fit then minimises over both.
		var st, sv, stt, stv float64
		k := 0
		for i, v := range f.y {
			if v != v {
				continue
			}
			if k == 0 && form.trend == esTrendNone {
				f.l0, f.b0 = v, 0
				return nil
			}
			t := float64(i + 1)
			st += t
			sv += v
			stt += t * t
			stv += t * v
			if k++; k == 10 {
				break
			}
		}
		kf := float64(k)
		f.b0 = 0
		if den := kf*stt - st*st; k > 1 && den > 0 {
			f.b0 = (kf*stv - st*sv) / den
		}
		f.l0 = (sv - f.b0*st) / kf
		return nil
	}
	d, err := f.decomposition(form.season == esSeasonMultiplicative)
	if err != nil {
		return err
	}
	copy(f.s0, d.Factors)
	t0, base, slope := classicalLine(d.Adjusted)
	if form.trend == esTrendNone {
		var s float64
		k := 0
		for _, v := range d.Adjusted[:f.m] {
			if v == v {
				s += v
				k++
			}
		}
		f.l0, f.b0 = base, 0
		if k > 0 {
			f.l0 = s / float64(k)
		}
		return nil
	}
	f.l0, f.b0 = base-slope*t0, slope
	return nil
}

// setSlots lists the parameters of form that the fit varies.
func (f *esFitter) setSlots(form esForm) {
	f.d = 0
	add := func(s esSlot) { f.slots[f.d] = s; f.d++ }
	add(esSlotAlpha)
	if form.trend != esTrendNone {
		add(esSlotBeta)
	}
	if form.season != esSeasonNone {
		add(esSlotGamma)
	}
	if form.trend == esTrendDamped {
		add(esSlotPhi)
	}
}

// params maps the optimiser's point u to smoothing parameters.
func (f *esFitter) params(u []float64) esParams {
	p := esParams{phi: 1}
	for k := 0; k < f.d; k++ {
		s := f.slots[k]
		lo, hi := s.bounds()
		s.set(&p, esLogistic(u[k], lo, hi))
	}
	return p
}

// eval is the objective: the SSE at the parameters u (minimised over the
// initial level and trend for forms without a season), +Inf if not finite.
func (f *esFitter) eval(u []float64) float64 {
	p := f.params(u)
	var sse float64
	if f.conc {
		sse, _, _ = esConcentrated(f.y, f.start, f.form.trend, p, f.l0, f.b0)
	} else {
		copy(f.ring, f.s0)
		st := esState{level: f.l0, slope: f.b0, season: f.ring}
		sse, _ = esFilter(f.y, f.start, f.form, p, &st, f.fitted)
	}
	if math.IsNaN(sse) || math.IsInf(sse, 0) {
		return math.Inf(1)
	}
	return sse
}

// optimise minimises the SSE of f.form over its smoothing parameters from
// f's initial states (set beforehand by initStates, or directly by a test)
// and returns the solution, with the SSE recomputed by a plain pass of the
// recursions.
func (f *esFitter) optimise() esSolution {
	form := f.form
	f.setSlots(form)
	var u [esMaxDim]float64
	for k := 0; k < f.d; k++ {
		s := f.slots[k]
		lo, hi := s.bounds()
		u[k] = esLogit(s.get(&esStartParams), lo, hi)
	}
	res := f.nm.minimize(f, u[:f.d], esSimplexStep, esFTol, esXTol, esEvalsPerDim*f.d)
	sol := esSolution{form: form, p: f.params(u[:f.d]), l0: f.l0, b0: f.b0, res: res}
	if f.conc {
		_, dl, db := esConcentrated(f.y, f.start, form.trend, sol.p, f.l0, f.b0)
		sol.l0 += dl
		sol.b0 += db
	}
	copy(f.ring, f.s0)
	st := esState{level: sol.l0, slope: sol.b0, season: f.ring}
	sol.sse, sol.nobs = esFilter(f.y, f.start, form, sol.p, &st, f.fitted)
	sol.finite = !math.IsNaN(sol.sse) && !math.IsInf(sol.sse, 0) &&
		!math.IsNaN(st.level) && !math.IsInf(st.level, 0) &&
		!math.IsNaN(st.slope) && !math.IsInf(st.slope, 0)
	return sol
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

// esMinObserved is the fewest observed values a form without a season
// needs: two for the level alone, three with a trend.
func esMinObserved(form esForm) int {
	if form.trend == esTrendNone {
		return 2
	}
	return 3
}

// esModel is a fitted exponential smoothing model.
type esModel struct {
	name     string // the method's registered name, for messages
	form     esForm
	m        int
	p        esParams
	l0, b0   float64
	s0       []float64 // initial seasonal terms (seasonal forms)
	final    esState
	fitted   []float64
	sse      float64
	nobs, k  int
	aicc     float64
	describe string
	warnings []string
}

var (
	_ Fitted            = (*esModel)(nil)
	_ Described         = (*esModel)(nil)
	_ Warner            = (*esModel)(nil)
	_ InSampler         = (*esModel)(nil)
	_ Parameterized     = (*esModel)(nil)
	_ ForecastVariancer = (*esModel)(nil)
)

// esAICc is n·log(SSE/n) + 2k + 2k(k+1)/(n−k−1), +Inf when n ≤ k+1. SSE/n
// is floored at (1e-10·scale)², scale the largest |y| (and at 1e-300), so
// that exact and near-exact fits (a constant series) compare as equal
// instead of by rounding noise.
func esAICc(sse float64, n, k int, scale float64) float64 {
	if n-k-1 <= 0 {
		return math.Inf(1)
	}
	nf, kf := float64(n), float64(k)
	s2 := math.Max(sse/nf, math.Max(1e-20*scale*scale, 1e-300))
	return nf*math.Log(s2) + 2*kf + 2*kf*(kf+1)/(nf-kf-1)
}

// model builds the fitted model of sol, whose initial seasonal terms are
// f.s0 (f.initStates(sol.form) last). It runs the recursions once more
// into buffers the model owns.
func (f *esFitter) model(name string, sol esSolution, scale float64) *esModel {
	n, m := len(f.y), f.m
	mod := &esModel{name: name, form: sol.form, m: m, p: sol.p, l0: sol.l0, b0: sol.b0}
	var buf []float64
	if sol.form.season != esSeasonNone {
		buf = make([]float64, n+2*m)
		mod.s0 = buf[n : n+m : n+m]
		copy(mod.s0, f.s0)
		mod.final.season = buf[n+m : n+2*m : n+2*m]
		copy(mod.final.season, f.s0)
	} else {
		buf = make([]float64, n)
		mod.m = 1
	}
	mod.fitted = buf[:n:n]
	for i := 0; i < f.start; i++ {
		mod.fitted[i] = math.NaN()
	}
	mod.final.level, mod.final.slope = sol.l0, sol.b0
	mod.sse, mod.nobs = esFilter(f.y, f.start, sol.form, sol.p, &mod.final, mod.fitted)
	mod.k = sol.form.nSmoothing() + sol.form.nStates(m)
	mod.aicc = esAICc(mod.sse, mod.nobs, mod.k, scale)
	mod.describe = sol.form.describe()
	if !sol.res.Converged {
		mod.warnings = append(mod.warnings, fmt.Sprintf(
			"%s: the SSE minimisation stopped after %d evaluations without converging; used the best parameters found",
			name, sol.res.Evals))
	}
	return mod
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

// esFitForm fits one form to y the engine's way (start-up values at time
// 0, SSE over every observed value). A fit whose SSE is not finite at any
// parameter value falls back to SES, with a warning.
func esFitForm(name string, y []float64, m int, form esForm, warnings []string) (*esModel, error) {
	nobs, _, err := esCheck(name, y)
	if err != nil {
		return nil, err
	}
	if form.season != esSeasonNone {
		if m < 2 {
			return nil, fmt.Errorf("%s: season length %d; a seasonal form needs a season of at least 2", name, m)
		}
		if len(y) < 2*m {
			return nil, fmt.Errorf("%s: %d values; a seasonal form needs at least %d (2 seasons of %d): %w", name, len(y), 2*m, m, ErrTooShort)
		}
	} else if min := esMinObserved(form); nobs < min {
		return nil, fmt.Errorf("%s: %d observed values; needs at least %d: %w", name, nobs, min, ErrTooShort)
	}
	if m < 1 {
		m = 1
	}
	f := new(esFitter)
	f.reset(y, m)
	if err := f.initStates(form); err != nil {
		return nil, fmt.Errorf("%s: start-up values: %w", name, err)
	}
	sol := f.optimise()
	scale := esScale(y)
	if !sol.finite {
		if form == (esForm{}) {
			return nil, fmt.Errorf("%s: the sum of squared errors overflows; the values are too large to smooth", name)
		}
		if nobs < esMinObserved(esForm{}) {
			return nil, fmt.Errorf("%s: the recursions overflow at every parameter value tried, and there are too few values for ses: %w", name, ErrTooShort)
		}
		warnings = append(warnings, fmt.Sprintf("%s: the recursions of %s overflow at every parameter value tried; fell back to ses", name, form.describe()))
		from := form.describe()
		if err := f.initStates(esForm{}); err != nil {
			return nil, err
		}
		sol = f.optimise()
		if !sol.finite {
			return nil, fmt.Errorf("%s: the sum of squared errors overflows even for ses; the values are too large to smooth", name)
		}
		mod := f.model(name, sol, scale)
		mod.describe += " (fell back from " + from + ")"
		mod.warnings = append(warnings, mod.warnings...)
		return mod, nil
	}
	mod := f.model(name, sol, scale)
	mod.warnings = append(warnings, mod.warnings...)
	return mod, nil
}

// Forecast returns the forecasts for the h periods after the training data
// (see HoltWinters). It panics if h < 0.
func (mod *esModel) Forecast(h int) []float64 {
	if h < 0 {
		panic(fmt.Sprintf("engines: %s: negative horizon %d", mod.name, h))
	}
	out := make([]float64, h)
	st := mod.final
	esForecast(mod.form, mod.p.phi, &st, out)
	return out
}

// Describe names the fitted form, for example "holt(damped)" or
// "holt_winters(seasonal=multiplicative, damped)".
func (mod *esModel) Describe() string { return mod.describe }

// Warnings returns the caveats met while fitting, if any.
func (mod *esModel) Warnings() []string { return mod.warnings }

// InSample returns the one-step forecasts of the training values, one per
// value (also at missing values). The caller must not modify them.
func (mod *esModel) InSample() []float64 { return mod.fitted }

// Params lists alpha, beta (trend forms), gamma (seasonal forms), phi
// (damped forms), and the fitted initial level and trend (initial_level,
// initial_trend; the initial seasonal terms are not listed). beta is in
// Holt's form and gamma in Winters' form (see HoltWinters).
func (mod *esModel) Params() []Param {
	out := make([]Param, 0, 6)
	out = append(out, Param{"alpha", mod.p.alpha})
	if mod.form.trend != esTrendNone {
		out = append(out, Param{"beta", mod.p.beta})
	}
	if mod.form.season != esSeasonNone {
		out = append(out, Param{"gamma", mod.p.gamma})
	}
	if mod.form.trend == esTrendDamped {
		out = append(out, Param{"phi", mod.p.phi})
	}
	out = append(out, Param{"initial_level", mod.l0})
	if mod.form.trend != esTrendNone {
		out = append(out, Param{"initial_trend", mod.b0})
	}
	return out
}

// SSE returns the in-sample sum of squared one-step errors.
func (mod *esModel) SSE() float64 { return mod.sse }

// AICc returns the corrected Akaike information criterion of the fit (see
// HoltWinters).
func (mod *esModel) AICc() float64 { return mod.aicc }

// ResidualVariance returns SSE/(n−k), n the number of observed values and
// k the number of parameters (see HoltWinters); NaN when n ≤ k.
func (mod *esModel) ResidualVariance() float64 {
	if mod.nobs <= mod.k {
		return math.NaN()
	}
	return mod.sse / float64(mod.nobs-mod.k)
}

// ForecastVariance returns the variance of the 1…h step forecast errors of
// the additive-error form of the model (see HoltWinters); nil for a
// multiplicative seasonal form. It panics if h < 0.
func (mod *esModel) ForecastVariance(h int) []float64 {
	if h < 0 {
		panic(fmt.Sprintf("engines: %s: negative horizon %d", mod.name, h))
	}
	if mod.form.season == esSeasonMultiplicative {
		return nil
	}
	out := make([]float64, h)
	esForecastVariance(mod.form, mod.m, mod.p, mod.ResidualVariance(), out)
	return out
}

// esForecastVariance writes σ²·(1 + Σ_{j=1}^{h−1} c_j²), h = 1…len(out),
// into out, with
//
//	c_j = α + β_e(φ + φ² + … + φ^j) + γ_e·[j mod m = 0]
//
// in the error-correction parameters β_e = αβ and γ_e = (1−α)γ (the trend
// term only with a trend, φ = 1 undamped; the seasonal term only with an
// additive season).
func esForecastVariance(form esForm, m int, p esParams, sigma2 float64, out []float64) {
	be := p.alpha * p.beta
	ge := (1 - p.alpha) * p.gamma
	phi := p.phi
	if form.trend != esTrendDamped {
		phi = 1
	}
	var sum, cum float64
	pk := 1.0
	for i := range out {
		out[i] = sigma2 * (1 + sum)
		j := i + 1
		c := p.alpha
		if form.trend != esTrendNone {
			pk *= phi
			cum += pk
			c += be * cum
		}
		if form.season == esSeasonAdditive && j%m == 0 {
			c += ge
		}
		sum += c * c
	}
}
