package uncertainty

import (
	"math"
	"testing"
)

// A slow mover of three years of weeks: demand about one week in three.
func slowMover() []float64 {
	y := make([]float64, 156)
	for i := range y {
		if i%3 == 0 || i%7 == 0 {
			y[i] = float64(1 + i%4)
		}
	}
	return y
}

// BenchmarkResample is the per-series cost of resampled bounds and totals
// for an intermittent series: 1,000 paths of 13 weeks, two step quantiles
// per step and three lead-time totals.
func BenchmarkResample(b *testing.B) {
	y := slowMover()
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		p, err := Resample(y, 13, 1000, uint64(i), JitterNone)
		if err != nil {
			b.Fatal(err)
		}
		for s := 0; s < 13; s++ {
			_ = p.StepQuantile(s, 0.1)
			_ = p.StepQuantile(s, 0.9)
		}
		for _, l := range []int{4, 8, 13} {
			_ = p.TotalQuantile(l, 0.95)
		}
	}
}

// BenchmarkBands is the per-series cost of coherent empirical bounds at
// two levels over 13 steps, once the pooled quantiles are known.
func BenchmarkBands(b *testing.B) {
	levels := []int{80, 95}
	probs := BandProbs(levels)
	hs := make([]*Histogram, 13)
	for s := range hs {
		hs[s] = NewHistogram()
		for k := 0; k < 500; k++ {
			hs[s].Add(math.Sin(float64(k)) * float64(s+1))
		}
	}
	q := StepQuantiles(hs, probs, 13, DefaultSmoothing)
	f := make([]float64, 13)
	for s := range f {
		f[s] = 3
	}
	a := &Additive{Forecast: f, Scale: 1.5, Probs: probs, Q: q}
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		_, _, _ = Bands(f, levels, a, true)
	}
}
