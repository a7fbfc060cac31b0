package engines

import (
	"math"
	"strings"
	"testing"
)

// Hand values (common practice: ŷ_{n+h} = y_{n−m+1+((h−1) mod m)}).
func TestSeasonalNaive(t *testing.T) {
	m := baselineRegistered(t, "seasonal_naive")
	nan := math.NaN()
	y := []float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10} // n = 10, m = 4: last season 7 8 9 10
	got, f := baselineForecast(t, m, y, 4, 6)
	decompClose(t, "seasonal_naive", got, []float64{7, 8, 9, 10, 7, 8}, 0)
	if w := f.(Warner).Warnings(); len(w) != 0 {
		t.Errorf("warnings %q", w)
	}

	// A gap in the last season takes the value one season (or more) earlier.
	y = []float64{1, 2, 3, 4, nan, 6, 7, 8, nan, 10}
	got, _ = baselineForecast(t, m, y, 4, 4)
	decompClose(t, "seasonal_naive, gap", got, []float64{7, 8, 1, 10}, 0)

	// A position never observed: NaN forecasts and a warning.
	y = []float64{nan, 2, 3, 4, nan, 6, 7, 8}
	got, f = baselineForecast(t, m, y, 4, 5)
	decompClose(t, "seasonal_naive, unobserved position", got, []float64{nan, 6, 7, 8, nan}, 0)
	if w := f.(Warner).Warnings(); len(w) != 1 || !strings.Contains(w[0], "1 of 4 season positions") {
		t.Errorf("warnings %q", w)
	}

	// Exactly one season; season 2.
	got, _ = baselineForecast(t, m, []float64{5, 6, 7}, 3, 4)
	decompClose(t, "seasonal_naive, n = m", got, []float64{5, 6, 7, 5}, 0)
	got, _ = baselineForecast(t, m, []float64{5, 6, 7}, 2, 3)
	decompClose(t, "seasonal_naive, m = 2", got, []float64{6, 7, 6}, 0)

	baselineFitErr(t, m, []float64{1, 2, 3}, 4, ErrTooShort)
	baselineFitErr(t, m, nil, 4, ErrTooShort)
	baselineFitErr(t, m, []float64{nan, nan, nan, nan}, 4, ErrAllMissing)
	baselineFitErr(t, m, []float64{1, 2, 3}, 1, nil)
	baselineFitErr(t, m, []float64{1, 2, 3}, 0, nil)
}

func BenchmarkSeasonalNaive(b *testing.B) {
	y, m := classicalBenchSeries(b, "weekly156")
	b.ReportAllocs()
	for b.Loop() {
		f, _ := SeasonalNaive{}.Fit(y, m)
		f.Forecast(13)
	}
}
