package engines

import (
	"math"
	"testing"
)

// Hand values (common practice: ŷ_{n+h} = y_n + h·(y_n − y_1)/(n − 1)).
func TestDrift(t *testing.T) {
	m := baselineRegistered(t, "drift")
	nan := math.NaN()
	// Slope (10 − 2)/3 = 8/3.
	got, _ := baselineForecast(t, m, []float64{2, 4, 7, 10}, 1, 3)
	decompClose(t, "drift", got, []float64{10 + 8.0/3, 10 + 16.0/3, 18}, 1e-12)
	// NaN at both ends: the line runs through y_2 = 2 and y_5 = 10, and
	// the first forecast (t = 7) is two periods past y_5.
	got, _ = baselineForecast(t, m, []float64{nan, 2, 4, 7, 10, nan}, 1, 2)
	decompClose(t, "drift, end gaps", got, []float64{10 + 16.0/3, 18}, 1e-12)
	// Falling series, two values.
	got, _ = baselineForecast(t, m, []float64{5, 3}, 7, 2)
	decompClose(t, "drift, two values", got, []float64{1, -1}, 0)

	baselineFitErr(t, m, []float64{nan, 4, nan}, 1, ErrTooShort)
	baselineFitErr(t, m, nil, 1, ErrTooShort)
	baselineFitErr(t, m, []float64{nan, nan}, 1, ErrAllMissing)
}

func BenchmarkDrift(b *testing.B) {
	y, m := classicalBenchSeries(b, "weekly156")
	b.ReportAllocs()
	for b.Loop() {
		f, _ := Drift{}.Fit(y, m)
		f.Forecast(13)
	}
}
