package uncertainty

import (
	"fmt"
	"math"
	"sort"
)

// A Quantiler is the quantile function of one step's predictive
// distribution: Quantile(step, p) is the value y at step+1 ahead that the
// actual stays at or below with probability p. It must be non-decreasing
// in p.
type Quantiler interface {
	Quantile(step int, p float64) float64
}

// Additive is the predictive distribution forecast + scale × error, with
// the error quantiles of StepQuantiles: Q[s][j] is the Probs[j]-quantile of
// the scaled error at step s+1.
type Additive struct {
	Forecast []float64
	Scale    float64
	Probs    []float64
	Q        [][]float64
}

// Quantile implements Quantiler; p must be one of a.Probs.
func (a *Additive) Quantile(step int, p float64) float64 {
	for j, pp := range a.Probs {
		if pp == p {
			return a.Forecast[step] + a.Scale*a.Q[step][j]
		}
	}
	panic(fmt.Sprintf("uncertainty: probability %g was not computed", p))
}

// BandProbs lists the probabilities Bands reads for the given levels
// (percent): for each level L, with α = 1 − L/100, the tails α/2 and
// 1 − α/2, α/4 (where the band starts to bend towards zero), and L/100
// itself (the upper bound of a band censored at zero). The list is sorted
// and free of duplicates.
func BandProbs(levels []int) []float64 {
	var ps []float64
	seen := map[float64]bool{}
	for _, l := range levels {
		c := float64(l) / 100
		for _, p := range []float64{(1 - c) / 4, (1 - c) / 2, (1 + c) / 2, c} {
			p = round12(p)
			if !seen[p] {
				seen[p] = true
				ps = append(ps, p)
			}
		}
	}
	sort.Float64s(ps)
	return ps
}

// round12 rounds away the float noise of 1 − 0.95 and the like, so that
// the same probability computed two ways compares equal.
func round12(p float64) float64 { return math.Round(p*1e12) / 1e12 }

// Bands returns lower[k][s] and upper[k][s], the bounds at levels[k]
// (percent, 1–99) for each step s of the forecast f, from the predictive
// distribution q (which must answer the probabilities of BandProbs).
//
// The bounds are coherent:
//
//   - The central band [Q(α/2), Q(1 − α/2)] is taken (α = 1 − c for the
//     level c), except that when nonNeg is set (the series cannot go below
//     zero) the predictive distribution is read as censored at zero, with
//     the mass p₀ = P(Y ≤ 0) at zero. Once p₀ ≥ α/2 the band is [0, Q(c)],
//     which covers c of the censored distribution (a central band would
//     cover 1 − α/2 of it). Between p₀ = α/4 and α/2 the band slides from
//     one to the other — [Q(a), Q(a + c)] with a = α − 2p₀, its lower end
//     zero once a ≤ p₀ — so that a forecast drifting towards zero moves its
//     bounds smoothly rather than in a jump; coverage there is between c
//     and c + α/3 (plus the error of interpolating p₀ and the quantiles
//     between the probabilities of BandProbs linearly in probability).
//   - Each band contains its forecast: a bound on the wrong side of the
//     forecast is moved onto it.
//   - Bands nest: a higher level's band contains every lower level's.
//   - With nonNeg, no bound is below zero, and a negative forecast is
//     raised to zero; the returned forecast carries that change.
//
// levels need not be sorted; the output follows their order.
func Bands(f []float64, levels []int, q Quantiler, nonNeg bool) (fc []float64, lower, upper [][]float64) {
	h := len(f)
	fc = append([]float64(nil), f...)
	if nonNeg {
		for s := range fc {
			if fc[s] < 0 {
				fc[s] = 0
			}
		}
	}
	order := make([]int, len(levels))
	for i := range order {
		order[i] = i
	}
	sort.SliceStable(order, func(a, b int) bool { return levels[order[a]] < levels[order[b]] })
	lower, upper = make([][]float64, len(levels)), make([][]float64, len(levels))
	for k, l := range levels {
		if l < 1 || l > 99 {
			panic(fmt.Sprintf("uncertainty: level %d outside 1–99", l))
		}
		lower[k], upper[k] = make([]float64, h), make([]float64, h)
	}
	for s := 0; s < h; s++ {
		prevLo, prevHi := fc[s], fc[s]
		for _, k := range order {
			lo, hi := band(q, s, float64(levels[k])/100, nonNeg)
			lo, hi = math.Min(lo, prevLo), math.Max(hi, prevHi)
			if nonNeg {
				lo = math.Max(lo, 0)
			}
			lower[k][s], upper[k][s] = lo, hi
			prevLo, prevHi = lo, hi
		}
	}
	return fc, lower, upper
}

// band is one level's band at step s before containment and nesting (see
// Bands).
func band(q Quantiler, s int, c float64, nonNeg bool) (lo, hi float64) {
	alpha := 1 - c
	qa2 := q.Quantile(s, round12(alpha/2))
	qhi := q.Quantile(s, round12(1-alpha/2))
	if !nonNeg || qa2 > 0 && q.Quantile(s, round12(alpha/4)) > 0 {
		return qa2, qhi // p₀ < α/4: the central band
	}
	qc := math.Max(q.Quantile(s, round12(c)), 0)
	if qa2 <= 0 {
		return 0, qc // p₀ ≥ α/2: censored
	}
	// α/4 ≤ p₀ < α/2: Q(α/4) ≤ 0 < Q(α/2).
	qa4 := q.Quantile(s, round12(alpha/4))
	p0 := alpha/4 + alpha/4*(0-qa4)/(qa2-qa4)
	a := alpha - 2*p0
	// Q(a + c), a + c between c and 1 − α/2.
	hi = qc + (qhi-qc)*a/(alpha/2)
	if a > p0 {
		lo = qa2 * (a - p0) / (alpha/2 - p0) // Q(a), between Q(p₀) = 0 and Q(α/2)
	}
	return lo, hi
}

// TotalQuantiles returns, for each level (percent, 1–99), the value a
// lead-time total stays at or below with that probability, read from the
// total's quantile function q. With nonNeg the quantiles are at least zero
// (the distribution censored at zero). The quantiles never fall as the
// level rises. levels need not be sorted; the output follows their order.
func TotalQuantiles(levels []int, q func(p float64) float64, nonNeg bool) []float64 {
	order := make([]int, len(levels))
	for i := range order {
		order[i] = i
	}
	sort.SliceStable(order, func(a, b int) bool { return levels[order[a]] < levels[order[b]] })
	out := make([]float64, len(levels))
	prev := math.Inf(-1)
	for _, k := range order {
		if levels[k] < 1 || levels[k] > 99 {
			panic(fmt.Sprintf("uncertainty: level %d outside 1–99", levels[k]))
		}
		v := q(round12(float64(levels[k]) / 100))
		if nonNeg {
			v = math.Max(v, 0)
		}
		v = math.Max(v, prev)
		out[k], prev = v, v
	}
	return out
}

// NonNegative reports whether every observed value of y is at least zero
// (NaN is ignored) and at least one is observed.
func NonNegative(y []float64) bool {
	seen := false
	for _, v := range y {
		if v < 0 {
			return false
		}
		if v == v {
			seen = true
		}
	}
	return seen
}
