package engines

import "math"

// The level-only fit the smoothing core shares with theta and stl: simple
// exponential smoothing from ℓ_0 = x[0] (not estimated), its one smoothing
// constant found by a grid scan and Brent's one-dimensional search. The
// recursion is esLevelFilter (smoothing_core.go), the no-trend, no-season
// case of esFilter.

// esLevelFit returns the smoothing constant α ∈ [lo, hi] (0 ≤ lo < hi ≤ 1)
// that minimises the sum of squared one-step errors of esLevelFilter(x, α,
// x[0]), the final level at that α, and false if Brent's search stopped
// after maxIter iterations without converging. x[0] must not be NaN.
//
// It scans α = lo, 0.05, 0.10, …, 0.95, hi, then runs Brent's minimiser
// (esBrent) on the two grid steps around the best grid point, to about
// 1.5e-8·α, and finally compares the result with the bounds when the
// bracket touches them (Brent's method never evaluates the ends of its
// interval). The scan guards against a local minimum away from the global
// one.
func esLevelFit(x []float64, lo, hi float64, maxIter int) (alpha, level float64, converged bool) {
	const steps = 20 // grid spacing 1/steps
	grid := func(k int) float64 {
		switch k {
		case 0:
			return lo
		case steps:
			return hi
		}
		return float64(k) / steps
	}
	// All grid points in one pass: independent recursions side by side
	// run several times faster than one after another.
	var alphas, levels, sses [steps + 1]float64
	for k := range alphas {
		alphas[k], levels[k] = grid(k), x[0]
	}
	for _, v := range x[1:] {
		if v != v {
			continue
		}
		for k := range levels {
			e := v - levels[k]
			sses[k] += e * e
			levels[k] += alphas[k] * e
		}
	}
	best, bestSSE := 0, math.Inf(1)
	for k, sse := range sses {
		if sse < bestSSE {
			best, bestSSE = k, sse
		}
	}
	alpha, converged = grid(best), true
	if bestSSE > 0 && !math.IsInf(bestSSE, 0) {
		a, b := grid(max(best-1, 0)), grid(min(best+1, steps))
		m, fm, ok := esBrent(func(a float64) float64 { s, _ := esLevelFilter(x, a, x[0]); return s }, a, b, maxIter)
		if fm <= bestSSE {
			alpha, bestSSE = m, fm
		}
		for _, end := range [2]float64{a, b} {
			if end == lo || end == hi {
				if s, _ := esLevelFilter(x, end, x[0]); s <= bestSSE {
					alpha, bestSSE = end, s
				}
			}
		}
		converged = ok
	}
	_, level = esLevelFilter(x, alpha, x[0])
	return alpha, level, converged
}

// esBrent minimises f on the open interval (a, b) by Brent's method:
// golden-section steps combined with parabolic interpolation through the
// three best points, stopping when the minimiser is known to within
// tol = √ε·|x| + 1e-10 (ε the float64 machine epsilon). It returns the best
// point found, its value, and false if maxIter iterations passed first.
//
// Reference: R. P. Brent (1973), Algorithms for Minimization without
// Derivatives, Prentice-Hall, chapter 5.
func esBrent(f func(float64) float64, a, b float64, maxIter int) (x, fx float64, converged bool) {
	const (
		golden = 0.3819660112501051 // (3 − √5)/2
		sqeps  = 1.4901161193847656e-08
		abstol = 1e-10
	)
	x = a + golden*(b-a)
	w, v := x, x
	fx = f(x)
	fw, fv := fx, fx
	var d, e float64 // the step just taken and the one before it
	for range maxIter {
		mid := (a + b) / 2
		tol := sqeps*math.Abs(x) + abstol
		if math.Abs(x-mid) <= 2*tol-(b-a)/2 {
			return x, fx, true
		}
		useGolden := true
		if math.Abs(e) > tol {
			// Parabola through (v, fv), (w, fw), (x, fx): its vertex is
			// x + p/q.
			r := (x - w) * (fx - fv)
			q := (x - v) * (fx - fw)
			p := (x-v)*q - (x-w)*r
			q = 2 * (q - r)
			if q > 0 {
				p = -p
			} else {
				q = -q
			}
			// Accept it if it falls inside (a, b) and moves less than half
			// the step before last.
			if math.Abs(p) < math.Abs(q*e/2) && p > q*(a-x) && p < q*(b-x) {
				e, d = d, p/q
				u := x + d
				if u-a < 2*tol || b-u < 2*tol {
					d = math.Copysign(tol, mid-x)
				}
				useGolden = false
			}
		}
		if useGolden {
			if x < mid {
				e = b - x
			} else {
				e = a - x
			}
			d = golden * e
		}
		u := x + d
		if math.Abs(d) < tol {
			u = x + math.Copysign(tol, d)
		}
		fu := f(u)
		if fu <= fx {
			if u < x {
				b = x
			} else {
				a = x
			}
			v, fv, w, fw, x, fx = w, fw, x, fx, u, fu
			continue
		}
		if u < x {
			a = u
		} else {
			b = u
		}
		switch {
		case fu <= fw || w == x:
			v, fv, w, fw = w, fw, u, fu
		case fu <= fv || v == x || v == w:
			v, fv = u, fu
		}
	}
	return x, fx, false
}
