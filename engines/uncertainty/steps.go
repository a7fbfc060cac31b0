package uncertainty

import (
	"fmt"
	"math"
)

// Smoothing says how the quantiles of pooled errors are smoothed across the
// steps ahead. The zero value smooths nothing.
type Smoothing struct {
	// Neighbours pools the histograms of the steps within ±Neighbours of
	// each step before taking its quantiles (fewer at the ends of the
	// horizon). It damps the noise of a step that few backtest windows
	// reach, and of a few extreme windows.
	Neighbours int
	// Monotone makes the spread grow with the step: the quantiles above
	// the median never fall from one step to the next and those below it
	// never rise (least-squares isotonic fit weighted by counts, the
	// pool-adjacent-violators algorithm: common practice; Barlow,
	// Bartholomew, Bremner & Brunk 1972, from memory).
	Monotone bool
}

// DefaultSmoothing is what almanac uses for pooled empirical bounds: each
// step pooled with its neighbours on either side, then made monotone. See
// pipeline/bench/calibration for the measurements behind the choice.
var DefaultSmoothing = Smoothing{Neighbours: 1, Monotone: true}

// StepQuantiles returns q[s][j], the probs[j]-quantile of the pooled
// errors at step s+1, for s < horizon. steps[s] holds the errors at step
// s+1; steps beyond len(steps), and steps whose (pooled) histogram is
// empty, take the quantiles of the nearest step before them that has data
// (the spread of the last backtest step carried forward), or NaN when no
// step has data. probs must lie in (0, 1).
func StepQuantiles(steps []*Histogram, probs []float64, horizon int, sm Smoothing) [][]float64 {
	for _, p := range probs {
		if !(p > 0 && p < 1) {
			panic(fmt.Sprintf("uncertainty: probability %g outside (0, 1)", p))
		}
	}
	n := len(steps)
	q := make([][]float64, horizon)
	w := make([]float64, horizon) // counts behind each step, for the isotonic fit
	pooled := NewHistogram()
	for s := 0; s < min(n, horizon); s++ {
		pooled.counts = pooled.counts[:0]
		pooled.counts = append(pooled.counts, steps[s].counts...)
		pooled.n = steps[s].n
		for d := 1; d <= sm.Neighbours; d++ {
			if s-d >= 0 {
				pooled.Merge(steps[s-d])
			}
			if s+d < n {
				pooled.Merge(steps[s+d])
			}
		}
		q[s] = make([]float64, len(probs))
		w[s] = float64(pooled.n)
		for j, p := range probs {
			q[s][j] = pooled.Quantile(p)
		}
	}
	if sm.Monotone {
		col := make([]float64, 0, horizon)
		wt := make([]float64, 0, horizon)
		idx := make([]int, 0, horizon)
		for j, p := range probs {
			col, wt, idx = col[:0], wt[:0], idx[:0]
			for s := 0; s < min(n, horizon); s++ {
				if !math.IsNaN(q[s][j]) {
					v := q[s][j]
					if p < 0.5 {
						v = -v
					}
					col, wt, idx = append(col, v), append(wt, w[s]), append(idx, s)
				}
			}
			isotonic(col, wt)
			for k, s := range idx {
				v := col[k]
				if p < 0.5 {
					v = -v
				}
				q[s][j] = v
			}
		}
	}
	// Carry the last step with data forward (and fill empty steps).
	var last []float64
	for s := 0; s < horizon; s++ {
		if q[s] == nil || math.IsNaN(q[s][0]) {
			if last == nil {
				q[s] = nanRow(len(probs))
			} else {
				q[s] = append([]float64(nil), last...)
			}
			continue
		}
		last = q[s]
	}
	// Leading steps with no data take the first step that has some.
	for s := horizon - 1; s > 0; s-- {
		if math.IsNaN(q[s-1][0]) && !math.IsNaN(q[s][0]) {
			q[s-1] = append([]float64(nil), q[s]...)
		}
	}
	return q
}

func nanRow(n int) []float64 {
	r := make([]float64, n)
	for i := range r {
		r[i] = math.NaN()
	}
	return r
}

// isotonic replaces y by its weighted least-squares non-decreasing fit
// (pool adjacent violators). Zero weights count as one.
func isotonic(y, w []float64) {
	type block struct {
		v, w float64
		n    int
	}
	bs := make([]block, 0, len(y))
	for i, v := range y {
		wi := w[i]
		if !(wi > 0) {
			wi = 1
		}
		bs = append(bs, block{v, wi, 1})
		for len(bs) > 1 && bs[len(bs)-2].v > bs[len(bs)-1].v {
			a, b := bs[len(bs)-2], bs[len(bs)-1]
			bs = bs[:len(bs)-2]
			bs = append(bs, block{(a.v*a.w + b.v*b.w) / (a.w + b.w), a.w + b.w, a.n + b.n})
		}
	}
	i := 0
	for _, b := range bs {
		for k := 0; k < b.n; k++ {
			y[i] = b.v
			i++
		}
	}
}
