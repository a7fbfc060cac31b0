package engines

import (
	"math"
	"testing"
)

// Hand values (common practice: ŷ = mean of the observed values).
func TestMean(t *testing.T) {
	m := baselineRegistered(t, "mean")
	nan := math.NaN()
	got, _ := baselineForecast(t, m, []float64{1, 2, nan, 6}, 1, 2)
	decompClose(t, "mean", got, []float64{3, 3}, 0)
	got, _ = baselineForecast(t, m, []float64{-2.5}, 1, 1)
	decompClose(t, "mean, one value", got, []float64{-2.5}, 0)
	// Values far from zero: (1e9+0.1, 1e9+0.2, 1e9+0.6) has mean 1e9+0.3.
	got, _ = baselineForecast(t, m, []float64{1e9 + 0.1, 1e9 + 0.2, 1e9 + 0.6}, 1, 1)
	decompClose(t, "mean, large offset", got, []float64{1e9 + 0.3}, 1e-6)

	baselineFitErr(t, m, nil, 1, ErrTooShort)
	baselineFitErr(t, m, []float64{nan}, 1, ErrAllMissing)
}

func BenchmarkMean(b *testing.B) {
	y, m := classicalBenchSeries(b, "weekly156")
	b.ReportAllocs()
	for b.Loop() {
		f, _ := Mean{}.Fit(y, m)
		f.Forecast(13)
	}
}
