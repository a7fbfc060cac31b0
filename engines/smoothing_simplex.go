package engines

import "math"

// esMaxDim is the largest number of parameters esSimplex minimises over:
// alpha, beta, gamma and phi.
const esMaxDim = 4

// esObjective is a function to minimise. eval must not retain u. It may
// return +Inf (a point to avoid); it must not return NaN.
type esObjective interface {
	eval(u []float64) float64
}

// esSimplex minimises a function of d ≤ esMaxDim unbounded variables by the
// Nelder–Mead simplex method, in the form of Lagarias et al. (1998), with
// the dimension-dependent coefficients of Gao and Han (2012):
//
//	reflection ρ = 1, expansion χ = 1 + 2/d, contraction γ = 3/4 − 1/(2d),
//	shrink σ = 1 − 1/d   (for d = 1: χ = 2, γ = σ = 1/2)
//
// A run stops when the function values of the simplex agree to within
// ftol·(|f_best| + 1) and every vertex lies within xtol of the best one
// on the logistic scale 1/(1+e^−u) of each coordinate (the scale of the
// bounded parameters the callers optimise, so that a parameter running off
// to its bound, u → ±∞, still converges), or after maxEval evaluations, or
// at once when no vertex of the first simplex has a finite value. With
// restart, after a converged run the method is restarted once from the
// best vertex with a fresh simplex of the initial size, a common guard
// against a simplex that collapsed early; the restart is kept only if it
// improves the value.
//
// It allocates nothing: the simplex lives in fixed arrays, so one value can
// be reused for any number of minimisations (not concurrently).
//
// gonum.org/v1/gonum/optimize.NelderMead implements the same algorithm
// and was measured first (BenchmarkSmoothingSearchSimplex and
// BenchmarkSmoothingSearchGonum: the same search of the smoothing
// parameters of ETS(A,A,A) on a monthly 120-point series, same start,
// simplex size and tolerance). Both reach the same −2·log L; gonum takes
// 217 evaluations and 0.52–0.75 ms of CPU per search, esSimplex 195
// evaluations and 0.13 ms, with no allocation. The difference is
// optimize.Minimize's driver, which runs the method in a goroutine and
// exchanges every evaluation over channels: about 2 µs per evaluation on
// top of an objective that costs about 0.6 µs. The fit runs several such
// searches per form and smoothing_auto fits 15 forms, so the package keeps
// this simplex. With the Levenberg–Marquardt refinement (smoothing_refine.go)
// and the one-dimensional Brent search of the level-only fit that theta and
// stl use (esLevelFit, smoothing_level.go), it makes up the optimisers of
// the one smoothing core.
//
// References:
//   - J. A. Nelder and R. Mead (1965), A simplex method for function
//     minimization, The Computer Journal 7(4), 308–313.
//   - J. C. Lagarias, J. A. Reeds, M. H. Wright and P. E. Wright (1998),
//     Convergence properties of the Nelder–Mead simplex method in low
//     dimensions, SIAM Journal on Optimization 9(1), 112–147.
//   - F. Gao and L. Han (2012), Implementing the Nelder–Mead simplex
//     algorithm with adaptive parameters, Computational Optimization and
//     Applications 51(1), 259–277.
type esSimplex struct {
	d     int
	v     [esMaxDim + 1][esMaxDim]float64 // vertices, sorted by f after order()
	f     [esMaxDim + 1]float64
	cen   [esMaxDim]float64
	tr    [esMaxDim]float64 // trial point
	tr2   [esMaxDim]float64 // second trial point
	evals int
}

// esSimplexResult is the outcome of esSimplex.minimize.
type esSimplexResult struct {
	F         float64 // best value found
	Evals     int     // function evaluations used
	Converged bool    // false: stopped at maxEval
}

// minimize minimises obj from x0 (len d), with initial simplex steps of
// size step along each axis, and writes the best point into x0.
func (s *esSimplex) minimize(obj esObjective, x0 []float64, step, ftol, xtol float64, maxEval int, restart bool) esSimplexResult {
	d := len(x0)
	if d < 1 || d > esMaxDim {
		panic("engines: esSimplex: dimension out of range")
	}
	s.d, s.evals = d, 0
	best := s.run(obj, x0, step, ftol, xtol, maxEval)
	converged := s.evals < maxEval && !math.IsInf(best, 1)
	if converged && restart {
		copy(x0, s.v[0][:d])
		before := best
		best = s.run(obj, x0, step, ftol, xtol, maxEval)
		converged = s.evals < maxEval
		if !(best < before) {
			best = before
			// x0 still holds the point of the first run.
			return esSimplexResult{F: best, Evals: s.evals, Converged: converged}
		}
	}
	copy(x0, s.v[0][:d])
	return esSimplexResult{F: best, Evals: s.evals, Converged: converged}
}

func (s *esSimplex) call(obj esObjective, u []float64) float64 {
	s.evals++
	f := obj.eval(u)
	if f != f {
		f = math.Inf(1)
	}
	return f
}

// run performs one Nelder–Mead run from x0 and returns the best value; the
// best vertex is s.v[0].
func (s *esSimplex) run(obj esObjective, x0 []float64, step, ftol, xtol float64, maxEval int) float64 {
	d := s.d
	fd := float64(d)
	chi, gam, sig := 1+2/fd, 0.75-1/(2*fd), 1-1/fd
	if d == 1 {
		chi, gam, sig = 2, 0.5, 0.5
	}
	for i := 0; i <= d; i++ {
		copy(s.v[i][:d], x0)
		if i > 0 {
			s.v[i][i-1] += step
		}
		s.f[i] = s.call(obj, s.v[i][:d])
	}
	s.order()
	if math.IsInf(s.f[0], 1) {
		// No vertex has a finite value: nothing to go by.
		return s.f[0]
	}
	for s.evals < maxEval {
		if s.done(ftol, xtol) {
			break
		}
		// Centroid of all vertices but the worst.
		for k := 0; k < d; k++ {
			var c float64
			for i := 0; i < d; i++ {
				c += s.v[i][k]
			}
			s.cen[k] = c / fd
		}
		w := &s.v[d]
		for k := 0; k < d; k++ {
			s.tr[k] = s.cen[k] + (s.cen[k] - w[k])
		}
		fr := s.call(obj, s.tr[:d])
		switch {
		case fr < s.f[0]:
			for k := 0; k < d; k++ {
				s.tr2[k] = s.cen[k] + chi*(s.cen[k]-w[k])
			}
			fe := s.call(obj, s.tr2[:d])
			if fe < fr {
				s.replaceWorst(s.tr2[:d], fe)
			} else {
				s.replaceWorst(s.tr[:d], fr)
			}
			continue
		case fr < s.f[d-1]:
			s.replaceWorst(s.tr[:d], fr)
			continue
		case fr < s.f[d]:
			// Outside contraction.
			for k := 0; k < d; k++ {
				s.tr2[k] = s.cen[k] + gam*(s.cen[k]-w[k])
			}
			if fc := s.call(obj, s.tr2[:d]); fc <= fr {
				s.replaceWorst(s.tr2[:d], fc)
				continue
			}
		default:
			// Inside contraction.
			for k := 0; k < d; k++ {
				s.tr2[k] = s.cen[k] - gam*(s.cen[k]-w[k])
			}
			if fc := s.call(obj, s.tr2[:d]); fc < s.f[d] {
				s.replaceWorst(s.tr2[:d], fc)
				continue
			}
		}
		// Shrink towards the best vertex.
		for i := 1; i <= d; i++ {
			for k := 0; k < d; k++ {
				s.v[i][k] = s.v[0][k] + sig*(s.v[i][k]-s.v[0][k])
			}
			s.f[i] = s.call(obj, s.v[i][:d])
		}
		s.order()
	}
	return s.f[0]
}

// done reports whether the simplex has converged.
func (s *esSimplex) done(ftol, xtol float64) bool {
	d := s.d
	if math.IsInf(s.f[0], 1) {
		return false
	}
	if s.f[d] == 0 && s.f[0] == 0 {
		// A perfect fit at every vertex (an SSE of zero, as for a constant
		// series): nothing left to improve.
		return true
	}
	if !(s.f[d]-s.f[0] <= ftol*(math.Abs(s.f[0])+1)) {
		return false
	}
	for k := 0; k < d; k++ {
		p0 := esSigmoid(s.v[0][k])
		for i := 1; i <= d; i++ {
			if !(math.Abs(esSigmoid(s.v[i][k])-p0) <= xtol) {
				return false
			}
		}
	}
	return true
}

// esSigmoid is the logistic function 1/(1+e^−u).
func esSigmoid(u float64) float64 { return 1 / (1 + math.Exp(-u)) }

// order sorts the vertices by value (insertion sort; at most 5 of them).
func (s *esSimplex) order() {
	for i := 1; i <= s.d; i++ {
		for j := i; j > 0 && s.f[j] < s.f[j-1]; j-- {
			s.f[j], s.f[j-1] = s.f[j-1], s.f[j]
			s.v[j], s.v[j-1] = s.v[j-1], s.v[j]
		}
	}
}

// replaceWorst puts (u, f) in place of the worst vertex, keeping the order.
func (s *esSimplex) replaceWorst(u []float64, f float64) {
	d := s.d
	copy(s.v[d][:d], u)
	s.f[d] = f
	for j := d; j > 0 && s.f[j] < s.f[j-1]; j-- {
		s.f[j], s.f[j-1] = s.f[j-1], s.f[j]
		s.v[j], s.v[j-1] = s.v[j-1], s.v[j]
	}
}
