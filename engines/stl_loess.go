package engines

// The loess smoothers, moving averages and robustness weights of STL (see
// STL in stl.go for the algorithm and its references).

import (
	"fmt"
	"math"
	"slices"
)

// stlRobustnessWeights sets rw from the residuals y − T − S; buf (len(y))
// is scratch.
func stlRobustnessWeights(y, trend, seasonal, rw, buf []float64) {
	for i, v := range y {
		r := math.Abs(v - trend[i] - seasonal[i])
		rw[i], buf[i] = r, r
	}
	slices.Sort(buf)
	n := len(buf)
	h := 3 * (buf[n/2] + buf[(n-1)/2]) // 6 × median
	for i, r := range rw {
		switch {
		case h == 0:
			if r == 0 {
				rw[i] = 1
			} else {
				rw[i] = 0
			}
		case r <= 0.001*h:
			rw[i] = 1
		case r <= 0.999*h:
			u := r / h
			u = 1 - u*u
			rw[i] = u * u
		default:
			rw[i] = 0
		}
	}
}

// stlMovingAverage writes the moving averages of length w of x into out,
// which has len(x) − w + 1 values.
func stlMovingAverage(x []float64, w int, out []float64) {
	k := len(x) - w + 1
	if len(out) != k {
		panic(fmt.Sprintf("engines: stl: moving average output %d, want %d", len(out), k))
	}
	var s float64
	for _, v := range x[:w] {
		s += v
	}
	fw := float64(w)
	out[0] = s / fw
	for i := 1; i < k; i++ {
		s += x[i+w-1] - x[i-1]
		out[i] = s / fw
	}
}

// stlSubseries smooths one cycle-subseries y (k values) with weights rw
// (nil: 1) into fit[1…k], and extrapolates fit[0] (one period before y's
// first value) and fit[k+1] (one after its last).
func stlSubseries(y, rw []float64, q, degree, jump int, fit []float64) {
	k := len(y)
	stlLoessSmooth(y, rw, q, degree, jump, fit[1:k+1])
	right := min(q, k)
	v, ok := stlLoessAt(y, rw, 0, 1, right, q, degree)
	if !ok {
		v = fit[1]
	}
	fit[0] = v
	left := max(1, k-q+1)
	v, ok = stlLoessAt(y, rw, float64(k+1), left, k, q, degree)
	if !ok {
		v = fit[k]
	}
	fit[k+1] = v
}

// stlLoessSmooth writes the loess smooth of y (window q, degree 0 or 1,
// weights rw or 1 when rw is nil) into out, computed every jump positions
// and at the last, and interpolated linearly in between.
func stlLoessSmooth(y, rw []float64, q, degree, jump int, out []float64) {
	n := len(y)
	if n < 2 {
		copy(out, y)
		return
	}
	half := (q + 1) / 2
	window := func(i int) (int, int) { // 1-based neighbourhood of i
		switch {
		case q >= n:
			return 1, n
		case i < half:
			return 1, q
		case i > n-half:
			return n - q + 1, n
		}
		return i - half + 1, i + half - 1
	}
	fitAt := func(i int) {
		left, right := window(i)
		v, ok := stlLoessAt(y, rw, float64(i), left, right, q, degree)
		if !ok {
			v = y[i-1]
		}
		out[i-1] = v
	}
	if jump < 1 {
		jump = 1
	}
	prev := 1
	fitAt(1)
	for i := 1 + jump; ; i += jump {
		if i > n {
			i = n
		}
		if i == prev {
			break
		}
		fitAt(i)
		if gap := i - prev; gap > 1 {
			a, b := out[prev-1], out[i-1]
			step := (b - a) / float64(gap)
			for j := prev + 1; j < i; j++ {
				out[j-1] = a + step*float64(j-prev)
			}
		}
		if i == n {
			break
		}
		prev = i
	}
}

// stlLoessAt returns the loess fit at x (1-based; may lie outside 1…len(y))
// from the values at positions left…right, with window q. ok is false when
// every weight is 0.
//
// With d_j = j − x and the weights v_j, the fit is the weighted mean of y
// for degree 0 and, for degree 1, the weighted least-squares line at d = 0:
// Σv_j y_j (1 − d̄(d_j − d̄)/c) / Σv_j, d̄ the weighted mean of d and c the
// weighted mean of (d − d̄)² (skipped when √c ≤ 0.001·(len(y) − 1): too
// little spread for a slope). One pass collects every sum.
func stlLoessAt(y, rw []float64, x float64, left, right, q, degree int) (v float64, ok bool) {
	n := len(y)
	lambda := math.Max(x-float64(left), float64(right)-x)
	if q > n {
		lambda += float64((q - n) / 2)
	}
	inv, h1, h9 := 1/lambda, 0.001*lambda, 0.999*lambda
	var s0, s1, s2, y0, y1 float64
	for j := left; j <= right; j++ {
		d := float64(j) - x
		r := math.Abs(d)
		var w float64
		switch {
		case r <= h1:
			w = 1
		case r <= h9:
			u := r * inv
			u = 1 - u*u*u
			w = u * u * u
		default:
			continue
		}
		if rw != nil {
			w *= rw[j-1]
		}
		yj := y[j-1]
		wd := w * d
		s0 += w
		s1 += wd
		s2 += wd * d
		y0 += w * yj
		y1 += wd * yj
	}
	if !(s0 > 0) {
		return 0, false
	}
	if degree == 1 {
		mean := s1 / s0
		c := s2/s0 - mean*mean
		if math.Sqrt(c) > 1e-3*float64(n-1) {
			// Σv y (1 − d̄(d − d̄)/c) = y0 − (d̄/c)(y1 − d̄·y0)
			return (y0 - mean/c*(y1-mean*y0)) / s0, true
		}
	}
	return y0 / s0, true
}
