package engines

import (
	"math"

	"gonum.org/v1/gonum/floats"
)

// The joint refinement of a fit (step 2 in smoothing_fit.go):
// Levenberg–Marquardt over the smoothing parameters, on the optimiser's
// logit scale, and the free initial states, on the likelihood written as a
// sum of squares. The Jacobian is exact for the initial states (the
// recursions differentiated term by term, forward mode) and by forward
// differences for the at most four smoothing parameters.

// grow returns b resized to n elements, zeroed.
func esGrow(b []float64, n int) []float64 {
	if cap(b) < n {
		b = make([]float64, n)
	}
	b = b[:n]
	clear(b)
	return b
}

// residuals writes the least-squares residuals of the likelihood at the
// last run of the recursions (f.fitted) into r, one per observed value, and
// returns their count: r_t = e_t for the additive error, r_t = G·e_t/μ_t
// for the multiplicative error with G the geometric mean of the |μ_t|, so
// that n·log Σ r_t² is the objective in both cases.
func (f *esFitter) residuals(st esStats, r []float64) int {
	g := 1.0
	mult := f.form.err == esErrorMultiplicative
	if mult {
		g = math.Exp(st.logmu / float64(st.nobs))
	}
	k := 0
	for i := f.start; i < len(f.y); i++ {
		v := f.y[i]
		if v != v {
			continue
		}
		e := v - f.fitted[i]
		if mult {
			e = g * e / f.fitted[i]
		}
		r[k] = e
		k++
	}
	return k
}

// jacobian fills f.res with the residuals at (f.p, initial states) and
// f.jac (column by column, len(y) apart: d+k columns of nobs values) with
// their derivatives: by finite
// differences with respect to the d smoothing parameters on the optimiser's
// scale u, and exactly (the recursions of esFilter differentiated term by
// term, forward mode) with respect to the k free initial states. It
// returns false when the recursion fails at the current point.
func (f *esFitter) jacobian(u []float64) bool {
	d := f.d
	P := d + f.k
	n := len(f.y)
	f.res = esGrow(f.res, n)
	f.rtmp = esGrow(f.rtmp, n)
	f.jac = esGrow(f.jac, n*P)
	st := f.run(f.p)
	if !st.ok {
		return false
	}
	nobs := f.residuals(st, f.res)
	// Smoothing parameters: forward differences in u.
	var uu [esMaxDim]float64
	copy(uu[:d], u)
	for c := 0; c < d; c++ {
		if math.Abs(u[c]) > esUSaturated {
			// At its bound: the logistic map is flat to rounding, and
			// the simplex, not the refinement, moves it.
			for t := 0; t < nobs; t++ {
				f.jac[c*n+t] = 0
			}
			continue
		}
		h := 1e-6 * math.Max(1, math.Abs(u[c]))
		uu[c] = u[c] + h
		sp := f.run(f.params(uu[:d]))
		uu[c] = u[c]
		f.evals++
		if !sp.ok || sp.nobs != nobs {
			for t := 0; t < nobs; t++ {
				f.jac[c*n+t] = 0
			}
			continue
		}
		f.residuals(sp, f.rtmp)
		for t := 0; t < nobs; t++ {
			f.jac[c*n+t] = (f.rtmp[t] - f.res[t]) / h
		}
	}
	f.nres = nobs
	f.stateColumns(st)
	return true
}

// seedDerivatives sets the derivatives of the initial states with respect
// to the free ones: ∂ℓ_0 = e_0, ∂b_0 = e_1 (with a trend), and for the
// seasonal terms ∂s_j = e_{off+j}, j < m−1, and ∂s_{m−1} = −Σ_j e_{off+j}
// (the normalisation).
func (f *esFitter) seedDerivatives() {
	k, m := f.k, f.m
	for _, b := range []*[]float64{&f.dl, &f.db, &f.zero, &f.g} {
		*b = esGrow(*b, k)
	}
	f.dl[0] = 1
	off := 1
	if f.form.trend != esTrendNone {
		f.db[1] = 1
		off = 2
	}
	if f.form.season != esSeasonNone {
		f.ds = esGrow(f.ds, m*k)
		for j := 0; j < m-1; j++ {
			f.ds[j*k+off+j] = 1
			f.ds[(m-1)*k+off+j] = -1
		}
	}
}

// stateColumns writes the columns of the free initial states into f.jac
// (after the d smoothing-parameter columns): the recursions of esFilter
// run again at f.p, carrying the derivatives of ℓ, b and the seasonal ring
// with respect to the free initial states. st are the sums of the run at
// f.p (for the geometric-mean factor of the multiplicative error).
func (f *esFitter) stateColumns(st esStats) {
	form, m, k, d := f.form, f.m, f.k, f.d
	n := len(f.y)
	f.seedDerivatives()
	a, be, ge, phi := f.p.ec(form)
	dl, db, g := f.dl, f.db, f.g
	seasonal := form.season != esSeasonNone
	copy(f.ring, f.s0)
	l, b := f.l0, f.b0
	if form.trend == esTrendNone {
		b = 0
	}
	multErr := form.err == esErrorMultiplicative
	row := 0
	j := 0
	for i := f.start; i < n; i++ {
		sj, dsj := 0.0, f.zero // without a season: zeros that nothing writes
		if seasonal {
			sj, dsj = f.ring[j], f.ds[j*k:(j+1)*k]
		}
		base := l + phi*b
		mu := base
		switch form.season {
		case esSeasonAdditive:
			mu = base + sj
		case esSeasonMultiplicative:
			mu = base * sj
		}
		yv := f.y[i]
		if yv != yv {
			// Missing: the states move on without an update.
			l, b = base, phi*b
			for x := range k {
				dl[x] += phi * db[x]
				db[x] *= phi
			}
		} else {
			e := yv - mu
			jr := f.jac[d*n+row:] // column x of the states at jr[x*n]
			row++
			// ∂ε_t = −∂μ_t (additive error) or −y·∂μ_t/μ² (multiplicative;
			// the G factor is applied below).
			c, cg := -1.0, 0.0
			if multErr {
				c, cg = -yv/(mu*mu), 1/mu
			}
			switch form.season {
			case esSeasonMultiplicative:
				q, r := e/sj, e/base
				l, b = base+a*q, phi*b+be*q
				f.ring[j] = sj + ge*r
				isj, ibase := 1/sj, 1/base
				for x := range k {
					dbx := dl[x] + phi*db[x]
					dsx := dsj[x]
					dmx := sj*dbx + base*dsx
					jr[x*n] = c * dmx
					g[x] += cg * dmx
					dqx := (-dmx - q*dsx) * isj
					dsj[x] = dsx + ge*(-dmx-r*dbx)*ibase
					dl[x] = dbx + a*dqx
					db[x] = phi*db[x] + be*dqx
				}
			default:
				l, b = base+a*e, phi*b+be*e
				if seasonal {
					f.ring[j] = sj + ge*e
				}
				for x := range k {
					dbx := dl[x] + phi*db[x]
					dmx := dbx + dsj[x]
					jr[x*n] = c * dmx
					g[x] += cg * dmx
					if seasonal {
						dsj[x] -= ge * dmx
					}
					dl[x] = dbx - a*dmx
					db[x] = phi*db[x] - be*dmx
				}
			}
		}
		if seasonal {
			if j++; j == m {
				j = 0
			}
		}
	}
	if multErr {
		f.geometricColumns(st)
	}
}

// geometricColumns applies the geometric-mean factor of the multiplicative
// error to the state columns of f.jac: r_t = G·ε_t with
// log G = Σ log μ_u / n, so ∂r_t = G·∂ε_t + r_t·∂log G.
func (f *esFitter) geometricColumns(st esStats) {
	k, d, g := f.k, f.d, f.g
	n, nobs := len(f.y), f.nres
	G := math.Exp(st.logmu / float64(nobs))
	for x := range k {
		g[x] /= float64(nobs)
	}
	for x := range k {
		col := f.jac[(d+x)*n : (d+x)*n+nobs]
		for t := range col {
			col[t] = G*col[t] + f.res[t]*g[x]
		}
	}
}

// normal forms the normal equations J′J (f.ata) and J′r (f.atb) from f.jac
// and f.res; false when they are not finite.
func (f *esFitter) normal() bool {
	P := f.d + f.k
	f.ata = esGrow(f.ata, P*P)
	f.atb = esGrow(f.atb, P)
	// J′J (upper triangle) and J′r as dot products of the columns of J
	// (stored column by column, len(y) apart), by gonum's vectorised
	// floats.Dot.
	n, nr := len(f.y), f.nres
	res := f.res[:nr]
	for x := 0; x < P; x++ {
		cx := f.jac[x*n : x*n+nr]
		f.atb[x] = floats.Dot(cx, res)
		for z := x; z < P; z++ {
			f.ata[x*P+z] = floats.Dot(cx, f.jac[z*n:z*n+nr])
		}
	}
	for x := 0; x < P; x++ {
		for z := x + 1; z < P; z++ {
			f.ata[z*P+x] = f.ata[x*P+z]
		}
	}
	for _, v := range f.ata {
		if v != v || math.IsInf(v, 0) {
			return false
		}
	}
	return true
}

// solveDamped solves (ata + λ·(diag(ata) + ε))·δ = −atb by Cholesky into
// f.sol; false when the matrix is not positive definite.
func (f *esFitter) solveDamped(lambda float64) bool {
	P := f.d + f.k
	f.chol = esGrow(f.chol, P*P)
	f.sol = esGrow(f.sol, P)
	c := f.chol
	var dmax float64
	for x := range P {
		dmax = math.Max(dmax, f.ata[x*P+x])
	}
	for x := range P {
		for z := 0; z <= x; z++ {
			s := f.ata[x*P+z]
			if z == x {
				s += lambda * (f.ata[x*P+x] + 1e-12*dmax)
			}
			if z > 0 {
				s -= floats.Dot(c[x*P:x*P+z], c[z*P:z*P+z])
			}
			if z == x {
				if !(s > 0) {
					return false
				}
				c[x*P+x] = math.Sqrt(s)
			} else {
				c[x*P+z] = s / c[z*P+z]
			}
		}
	}
	for x := range P {
		s := -f.atb[x]
		if x > 0 {
			s -= floats.Dot(c[x*P:x*P+x], f.sol[:x])
		}
		f.sol[x] = s / c[x*P+x]
	}
	for x := P - 1; x >= 0; x-- {
		s := f.sol[x]
		for w := x + 1; w < P; w++ {
			s -= c[w*P+x] * f.sol[w]
		}
		f.sol[x] = s / c[x*P+x]
	}
	return true
}

// refine minimises the objective jointly over the smoothing parameters
// (on the optimiser's scale) and the free initial states by
// Levenberg–Marquardt, from the current point whose objective is obj, and
// returns the new objective. f.p and the initial states hold the result.
func (f *esFitter) refine(obj float64) float64 {
	f.k = f.nFree()
	d, k := f.d, f.k
	f.theta = esGrow(f.theta, k)
	f.trial = esGrow(f.trial, k)
	f.getTheta(f.theta)
	var u, ut [esMaxDim]float64
	f.toU(u[:d])
	// Marquardt's damping, updated by the gain ratio ρ of actual to
	// predicted reduction of S = Σ r_t² (Nielsen 1999).
	lambda, nu := 1e-3, 2.0
	var nf float64
	for it := 0; it < esLMIter; it++ {
		if !f.jacobian(u[:d]) || !f.normal() {
			break
		}
		nf = float64(f.nres)
		accepted := false
		for try := 0; try < 8 && !accepted; try++ {
			if !f.solveDamped(lambda) {
				lambda *= nu
				nu *= 2
				continue
			}
			// Clip the step of each smoothing parameter to ±esUStep on the
			// logit scale (a parameter heading for its bound gets there
			// over several steps; the states keep their full step).
			clipped := false
			for c := 0; c < d; c++ {
				if a := math.Abs(f.sol[c]); a > esUStep {
					f.sol[c] *= esUStep / a
					clipped = true
				}
			}
			for c := 0; c < d; c++ {
				ut[c] = u[c] + f.sol[c]
			}
			for x := range k {
				f.trial[x] = f.theta[x] + f.sol[d+x]
			}
			f.setTheta(f.trial)
			p := f.params(ut[:d])
			f.evals++
			o := f.run(p).objective(f.form, f.scale)
			if o < obj {
				// S_old − S_new relative to S_old, and the predicted
				// reduction −δ′J′r + λ·δ′Dδ relative to S_old.
				actual := -math.Expm1(-(obj - o) / nf)
				var pred float64
				P := d + k
				for x := 0; x < P; x++ {
					pred += f.sol[x] * (lambda*f.sol[x]*f.ata[x*P+x] - f.atb[x])
				}
				var sOld float64
				for t := 0; t < f.nres; t++ {
					sOld += f.res[t] * f.res[t]
				}
				rho := 1.0
				if pred > 0 && sOld > 0 {
					rho = actual / (pred / sOld)
				}
				gain := obj - o
				obj = o
				copy(f.theta, f.trial)
				u = ut
				f.p = p
				accepted = true
				lambda *= math.Max(1.0/3, 1-math.Pow(2*rho-1, 3))
				nu = 2
				if gain < esRoundTol && !clipped {
					it = esLMIter
				}
			} else {
				lambda *= nu
				nu *= 2
			}
		}
		f.setTheta(f.theta)
		if !accepted {
			break
		}
	}
	return obj
}

// toU writes f.p on the optimiser's scale into u (len f.d).
func (f *esFitter) toU(u []float64) {
	for c := 0; c < f.d; c++ {
		s := f.slots[c]
		lo, hi := s.bounds()
		v := math.Min(math.Max(s.get(&f.p), lo+1e-12*(hi-lo)), hi-1e-12*(hi-lo))
		u[c] = esLogit(v, lo, hi)
	}
}
