package engines

import (
	"errors"
	"fmt"
	"math"
)

// This file estimates the smoothing parameters and the initial states of
// a form by maximum likelihood (esStats.objective). The search alternates
// two steps until the likelihood stops improving:
//
//  1. the smoothing parameters, initial states fixed: the Nelder–Mead
//     simplex (esSimplex) on logistic-transformed parameters, which keeps
//     them inside the usual region;
//  2. the smoothing parameters and the initial states jointly:
//     Levenberg–Marquardt on the likelihood written as a sum of squares,
//     with the exact Jacobian of the initial states carried through the
//     recursions (forward mode; smoothing_refine.go).
//
// Step 2 makes the initial states free parameters at the cost of one pass
// per iteration, where a simplex over all of them (17 numbers for a monthly
// form, 55 for a weekly one) would need thousands of passes and converge
// poorly.

// Bounds enforced on the smoothing parameters while fitting. The open
// intervals 0 < α, beta, gamma < 1 are kept away from their ends by
// esEdge.
const (
	esEdge   = 1e-4
	esPhiMin = 0.8
	esPhiMax = 0.98
)

// Starting values of the fit, and the Nelder–Mead settings.
var esStartParams = esParams{alpha: 0.3, beta: 0.1, gamma: 0.1, phi: 0.9}

// esFlatStartParams restart a search that found no finite point, with the
// initial trend set to 0.
var esFlatStartParams = esParams{alpha: 0.5, beta: 0.01, gamma: 0.1, phi: 0.9}

const (
	esSimplexStep = 1.0  // initial simplex size, on the logit scale
	esFTolStart   = 1e-6 // the same for the first search, which the joint refinement follows
	esXTolStart   = 1e-2
	esFTol        = 1e-9  // spread of the simplex values, relative to |f|+1 (f is −2 log L + const)
	esXTol        = 1e-3  // spread of the vertices on the (0, 1) scale of the parameters
	esEvalsPerDim = 300   // evaluation budget per free parameter and simplex run
	esRounds      = 2     // at most this many alternations of the two steps
	esRoundTol    = 1e-3  // stop alternating when −2 log L improves by less (absolute)
	esLMIter      = 60    // Levenberg–Marquardt iterations per round
	esUSaturated  = 15    // |u| beyond which a smoothing parameter sits at its bound
	esWarmMargin  = 0.02  // a warm start keeps each weight this share of its range inside the bounds
	esUStep       = 2     // largest refinement step of a smoothing parameter on the logit scale
	esAdmissTol   = 1e-10 // a root of modulus above 1 − esAdmissTol is not admissible
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
// of the fit, so that an evaluation allocates nothing; one fitter can fit
// several forms of the same series in turn (smoothing_auto does). It is not
// safe for concurrent use.
type esFitter struct {
	y     []float64
	m     int
	start int // first index of y that is forecast and enters the likelihood
	scale float64

	form   esForm
	p      esParams
	l0, b0 float64
	s0     []float64 // initial seasonal terms, len m (seasonal forms)

	slots [esMaxDim]esSlot
	d     int
	admis bool // reject parameters that are not admissible (esAdmissible) in eval

	ring   []float64 // len m
	fitted []float64 // len(y)
	nm     esSimplex
	evals  int

	// Levenberg–Marquardt scratch, for d smoothing parameters and k free
	// initial states.
	k               int
	dl, db, zero, g []float64
	ds              []float64 // m·k: derivatives of the seasonal ring
	res, rtmp, jac  []float64 // residuals, nobs × (d+k) Jacobian
	nres            int
	ata, atb, sol   []float64
	chol            []float64
	theta, trial    []float64

	// Classical decompositions of the first seasons, by form, computed once.
	dec    [2]*Decomposition
	decErr [2]error
}

// esSolution is the outcome of fitting one form.
type esSolution struct {
	form   esForm
	p      esParams
	l0, b0 float64
	s0     []float64 // a copy; nil without a season
	stats  esStats
	obj    float64
	evals  int
	conv   bool // the last simplex run converged
	admiss bool // the parameters are admissible (always true without a season)
}

// finite reports whether the solution has a finite likelihood.
func (s *esSolution) finite() bool { return !math.IsInf(s.obj, 0) && s.obj == s.obj }

// reset prepares f for the series y with season length m (m ≥ 1), reusing
// its buffers.
func (f *esFitter) reset(y []float64, m int) {
	f.y, f.m, f.start = y, m, 0
	f.scale = esScale(y)
	f.dec, f.decErr = [2]*Decomposition{}, [2]error{}
	f.admis = false
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

// initStates sets the starting values of the initial states of form, at
// time 0 (just before y[0]); the fit then estimates them. Without a season:
// the least-squares line through the first (up to) ten observed values,
// t = index + 1, read at t = 0 (the level alone: the first observed value).
// With a season: a classical decomposition of the first two seasons gives
// the seasonal terms (normalised) and the line through its adjusted values
// the level and trend (without a trend, the mean of the first season).
func (f *esFitter) initStates(form esForm) error {
	f.form = form
	if form.season == esSeasonNone {
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
		f.keepPositive(form)
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
	f.keepPositive(form)
	return nil
}

// keepPositive replaces a starting level ≤ 0 (a steep line read back to
// t = 0) of a form with a multiplicative part by the first observed value,
// with a flat trend, so that the search starts where the recursion is
// defined.
func (f *esFitter) keepPositive(form esForm) {
	if !form.positive() || f.l0 > 0 {
		return
	}
	for _, v := range f.y {
		if v == v {
			f.l0, f.b0 = v, 0
			return
		}
	}
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

// run runs the recursions of f.form at p from f's initial states.
func (f *esFitter) run(p esParams) esStats {
	copy(f.ring, f.s0)
	st := esState{level: f.l0, slope: f.b0, season: f.ring}
	return esFilter(f.y, f.start, f.form, p, &st, f.fitted)
}

// eval is the simplex's objective: −2 log L (up to constants) at the
// smoothing parameters u, the initial states fixed; +Inf where the
// recursion fails (or, with f.admis, where u is not admissible).
func (f *esFitter) eval(u []float64) float64 {
	f.evals++
	p := f.params(u)
	if f.admis && !esAdmissible(f.form, f.m, p) {
		return math.Inf(1)
	}
	return f.run(p).objective(f.form, f.scale)
}

// simplex minimises over the smoothing parameters from f.p, with the
// initial simplex size step, and leaves the best point in f.p.
func (f *esFitter) simplex(step, ftol, xtol float64, restart bool) (obj float64, converged bool) {
	var u [esMaxDim]float64
	f.toU(u[:f.d])
	res := f.nm.minimize(f, u[:f.d], step, ftol, xtol, esEvalsPerDim*f.d, restart)
	f.p = f.params(u[:f.d])
	return res.F, res.Converged
}

// nFree is the number of free initial states of f.form.
func (f *esFitter) nFree() int { return f.form.nStates(f.m) }

// getTheta writes the free initial states into th: ℓ_0, b_0 (with a
// trend), s_{1−m}…s_{−1} (with a season; s_0 follows from the
// normalisation).
func (f *esFitter) getTheta(th []float64) {
	th[0] = f.l0
	i := 1
	if f.form.trend != esTrendNone {
		th[i] = f.b0
		i++
	}
	if f.form.season != esSeasonNone {
		copy(th[i:], f.s0[:f.m-1])
	}
}

// setTheta sets the initial states from the free ones in th, completing the
// seasonal terms so that they sum to 0 (additive) or m (multiplicative).
func (f *esFitter) setTheta(th []float64) {
	f.l0 = th[0]
	i := 1
	if f.form.trend != esTrendNone {
		f.b0 = th[i]
		i++
	} else {
		f.b0 = 0
	}
	if f.form.season != esSeasonNone {
		c := 0.0
		if f.form.season == esSeasonMultiplicative {
			c = float64(f.m)
		}
		for j := 0; j < f.m-1; j++ {
			f.s0[j] = th[i+j]
			c -= th[i+j]
		}
		f.s0[f.m-1] = c
	}
}

// optimise fits f.form from f's starting states (set by initStates, or
// directly by a test) and returns the solution: a first simplex search over
// the smoothing parameters from esStartParams, then joint refinements
// (refine), each checked by a short simplex search, until neither improves
// −2 log L by more than esRoundTol. If the result is not admissible, the
// search runs again refusing inadmissible points.
func (f *esFitter) optimise() esSolution {
	f.setSlots(f.form)
	f.evals = 0
	sol := f.search(esStartParams)
	if !sol.admiss && sol.finite() && esAdmissible(f.form, f.m, esStartParams) {
		f.admis = true
		sol = f.search(esStartParams)
		f.admis = false
	}
	return sol
}

// search runs the searches of optimise from the smoothing parameters p0.
func (f *esFitter) search(p0 esParams) esSolution {
	f.p = p0
	obj, conv := f.simplex(esSimplexStep, esFTolStart, esXTolStart, false)
	if math.IsInf(obj, 1) && f.form.trend != esTrendNone {
		// No finite point near the start (typically a multiplicative form
		// whose starting trend drives the level below zero): start again
		// from a flat trend and a slow one.
		f.b0 = 0
		f.p = esFlatStartParams
		obj, conv = f.simplex(esSimplexStep, esFTolStart, esXTolStart, false)
	}
	return f.rounds(obj, conv)
}

// rounds alternates refine and a short simplex search from the current
// point, whose objective is obj, and returns the solution.
func (f *esFitter) rounds(obj float64, conv bool) esSolution {
	for round := 0; round < esRounds && !math.IsInf(obj, 1); round++ {
		o := f.refine(obj)
		if round > 0 && !(obj-o > esRoundTol) {
			obj = o
			break
		}
		obj = o
		o, conv = f.simplex(esSimplexStep/4, esFTol, esXTol, false)
		if !(obj-o > esRoundTol) {
			obj = o
			break
		}
		obj = o
	}
	return f.solution(obj, conv)
}

// optimiseFrom fits f.form starting from the smoothing parameters and
// initial states of a related solution (warm start): the same form with
// the other error (same recursions), or the undamped form for a damped one
// (φ = 0.95). It skips the first simplex search; when the start has no
// finite likelihood it falls back to optimise.
func (f *esFitter) optimiseFrom(from *esSolution) esSolution {
	f.setSlots(f.form)
	f.evals = 0
	// Start inside the region: a weight the related fit left at a bound
	// would sit where the logistic map is flat and the refinement cannot
	// move it (esUSaturated), so each is pulled to within esWarmMargin of
	// its range; the damping of a newly damped trend starts at 0.95.
	f.p = from.p
	if f.form.trend == esTrendDamped && from.form.trend != esTrendDamped {
		f.p.phi = 0.95
	}
	for c := 0; c < f.d; c++ {
		sl := f.slots[c]
		lo, hi := sl.bounds()
		v := sl.get(&f.p)
		v = math.Min(math.Max(v, lo+esWarmMargin*(hi-lo)), hi-esWarmMargin*(hi-lo))
		sl.set(&f.p, v)
	}
	f.l0, f.b0 = from.l0, from.b0
	if f.form.season != esSeasonNone {
		copy(f.s0, from.s0)
	}
	obj := f.run(f.p).objective(f.form, f.scale)
	if math.IsInf(obj, 1) {
		if err := f.initStates(f.form); err != nil {
			return esSolution{form: f.form, obj: math.Inf(1)}
		}
		return f.optimise()
	}
	sol := f.rounds(obj, true)
	if !sol.admiss && sol.finite() && esAdmissible(f.form, f.m, esStartParams) {
		if err := f.initStates(f.form); err == nil {
			f.admis = true
			sol = f.search(esStartParams)
			f.admis = false
		}
	}
	return sol
}

// solution records the current point of f.
func (f *esFitter) solution(obj float64, conv bool) esSolution {
	sol := esSolution{form: f.form, p: f.p, l0: f.l0, b0: f.b0, evals: f.evals, conv: conv}
	if f.form.season != esSeasonNone {
		sol.s0 = append([]float64(nil), f.s0...)
	}
	sol.stats = f.run(f.p)
	sol.obj = sol.stats.objective(f.form, f.scale)
	sol.admiss = esAdmissible(f.form, f.m, f.p)
	return sol
}

// esMinObserved is the fewest observed values a form without a season
// needs: two for the level alone, three with a trend.
func esMinObserved(form esForm) int {
	if form.trend == esTrendNone {
		return 2
	}
	return 3
}

// esFitForm fits one form to y with season length m. It returns an error
// wrapping ErrTooShort when the series is too short for the form and one
// wrapping ErrNonPositiveState when a form with a multiplicative part finds
// no point where its states stay positive.
func esFitForm(name string, y []float64, m int, form esForm) (*esModel, error) {
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
	if m < 1 || form.season == esSeasonNone {
		m = 1
	}
	f := new(esFitter)
	f.reset(y, m)
	if err := f.initStates(form); err != nil {
		return nil, fmt.Errorf("%s: start-up values: %w", name, err)
	}
	sol := f.optimise()
	if !sol.finite() {
		if form.positive() {
			return nil, fmt.Errorf("%s: %s: no parameters keep the levels, seasonal factors and one-step forecasts > 0: %w", name, form.describe(), ErrNonPositiveState)
		}
		return nil, fmt.Errorf("%s: %s: the recursions overflow at every parameter value tried; the values are too large to smooth", name, form.describe())
	}
	return f.model(name, sol), nil
}
