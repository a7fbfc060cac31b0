// Package uncertainty turns forecast errors into prediction bounds and into
// quantiles of lead-time totals. It is pure numerics, like the rest of
// engines: it sees []float64 and counts, never Arrow, dates, keys or files.
//
// Three sources of uncertainty are covered:
//
//   - Pooled backtest errors (Histogram, Steps, Totals): the errors of a
//     method at each step ahead, divided by each series' scale, are counted
//     across series; their quantiles, smoothed across neighbouring steps,
//     become each series' bounds after multiplying back by its scale.
//   - Errors summed over a lead time (Totals): the same, but for the sum of
//     the errors over steps 1..L of one backtest window, so the quantiles of
//     a total respect how errors at neighbouring steps move together.
//   - Resampled demand histories for intermittent series (Resample): the
//     bootstrap of Willemain, Smart & Schwarz (2004).
//
// Bounds (Band) are made coherent: they contain the point forecast, nest
// across levels, and for series that cannot go negative they are read from
// the predictive distribution censored at zero (see Band).
package uncertainty

import (
	"math"
)

// Histogram counts values in bins of width HistWidth over
// [−HistRange, HistRange]; values beyond fall into the end bins. Counting
// is order-free, so a histogram filled from many goroutines' results in any
// order holds the same counts.
type Histogram struct {
	counts []int64
	n      int64
}

// Histogram resolution: scaled errors are counted to the nearest
// HistWidth, and scaled errors beyond ±HistRange are counted at the ends.
const (
	HistWidth = 0.01
	HistRange = 50.0
)

const histBins = int(2*HistRange/HistWidth) + 1

// NewHistogram returns an empty histogram.
func NewHistogram() *Histogram {
	return &Histogram{counts: make([]int64, histBins)}
}

// Add counts v. NaN is ignored; ±Inf count at the ends.
func (h *Histogram) Add(v float64) {
	if v != v {
		return
	}
	var i int
	switch {
	case v <= -HistRange:
		i = 0
	case v >= HistRange:
		i = histBins - 1
	default:
		i = int(math.Round((v + HistRange) / HistWidth))
	}
	h.counts[i]++
	h.n++
}

// Merge adds the counts of o to h.
func (h *Histogram) Merge(o *Histogram) {
	for i, c := range o.counts {
		h.counts[i] += c
	}
	h.n += o.n
}

// N is the number of values counted.
func (h *Histogram) N() int64 { return h.n }

// Quantile returns the p-quantile (0 < p < 1), interpolating linearly
// within the bin that holds it (each bin's count spread evenly over its
// width), or NaN when the histogram is empty.
func (h *Histogram) Quantile(p float64) float64 {
	if h.n == 0 {
		return math.NaN()
	}
	target := p * float64(h.n)
	var cum float64
	for i, c := range h.counts {
		if c == 0 {
			continue
		}
		next := cum + float64(c)
		if next >= target {
			frac := (target - cum) / float64(c)
			lo := float64(i)*HistWidth - HistRange - HistWidth/2
			return lo + frac*HistWidth
		}
		cum = next
	}
	return HistRange
}

// CDF returns the share of counted values at or below x (interpolating
// within x's bin), or NaN when the histogram is empty.
func (h *Histogram) CDF(x float64) float64 {
	if h.n == 0 {
		return math.NaN()
	}
	pos := (x + HistRange + HistWidth/2) / HistWidth
	if pos <= 0 {
		return 0
	}
	if pos >= float64(histBins) {
		return 1
	}
	k := int(pos)
	var cum float64
	for i := 0; i < k; i++ {
		cum += float64(h.counts[i])
	}
	cum += (pos - float64(k)) * float64(h.counts[k])
	return cum / float64(h.n)
}
