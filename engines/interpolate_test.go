package engines

import (
	"math"
	"math/rand/v2"
	"testing"
)

// interpInvented is an invented daily series, 26 weeks: trend, a strong
// weekday pattern (±15), noise sd 2.
func interpInvented(rs uint64) (y, truth []float64) {
	rng := rand.New(rand.NewPCG(rs, 5))
	n := 182
	week := []float64{-12, -4, 0, 2, 5, 15, -6}
	y, truth = make([]float64, n), make([]float64, n)
	for t := range y {
		truth[t] = 80 + 0.1*float64(t) + week[t%7]
		y[t] = truth[t] + 2*rng.NormFloat64()
	}
	return y, truth
}

// TestSeasonalInterpolate: on 20 invented series with 24 values removed
// (single days, a run of 3, a run of 8, the first 2 and the last 2), the
// seasonal fill's RMSE against the noise-free truth is below 3 (noise sd
// 2) on every series and below a third of the linear fill's; observed
// values are untouched and nothing stays missing.
func TestSeasonalInterpolate(t *testing.T) {
	holes := []int{0, 1, 20, 33, 47, 60, 61, 62, 90, 91, 92, 93, 94, 95, 96, 97, 120, 140, 150, 166, 170, 175, 180, 181}
	var sumS, sumL float64
	for r := uint64(1); r <= 20; r++ {
		y, truth := interpInvented(r)
		for _, h := range holes {
			y[h] = math.NaN()
		}
		f, how, err := SeasonalInterpolate(y, []int{7})
		if err != nil {
			t.Fatal(err)
		}
		if how != FillSeasonal {
			t.Fatalf("filled %s", how)
		}
		lin := interpolateLinear(y)
		es, el := 0.0, 0.0
		for _, h := range holes {
			es += (f[h] - truth[h]) * (f[h] - truth[h])
			el += (lin[h] - truth[h]) * (lin[h] - truth[h])
		}
		es, el = math.Sqrt(es/float64(len(holes))), math.Sqrt(el/float64(len(holes)))
		sumS += es
		sumL += el
		if es > 3 || es > el/3 {
			t.Errorf("series %d: seasonal fill rmse %.3f, linear %.3f", r, es, el)
		}
		for i, v := range y {
			if math.IsNaN(f[i]) || (!math.IsNaN(v) && f[i] != v) {
				t.Fatalf("position %d: %v from %v", i, f[i], v)
			}
		}
	}
	t.Logf("mean rmse: seasonal fill %.3f, linear %.3f (noise sd 2)", sumS/20, sumL/20)
}

func TestSeasonalInterpolateFallbacks(t *testing.T) {
	y, _ := interpInvented(1)
	f, how, err := SeasonalInterpolate(y, []int{7})
	if err != nil || how != FillNone || f[5] != y[5] {
		t.Errorf("complete: %s %v", how, err)
	}
	short := []float64{1, math.NaN(), 3, 4, math.NaN(), math.NaN()}
	f, how, err = SeasonalInterpolate(short, []int{7})
	if err != nil || how != FillLinear || f[1] != 2 || f[4] != 4 || f[5] != 4 {
		t.Errorf("short: %v %s %v", f, how, err)
	}
	if _, _, err := SeasonalInterpolate([]float64{math.NaN(), math.NaN()}, []int{7}); err == nil {
		t.Error("all missing accepted")
	}
	// Two cycles: daily data with weekly and a 28-day cycle.
	y2 := make([]float64, 140)
	for i := range y2 {
		y2[i] = 50 + 10*math.Sin(2*math.Pi*float64(i)/7) + 6*math.Cos(2*math.Pi*float64(i)/28)
	}
	want := y2[70]
	y2[70] = math.NaN()
	f, how, err = SeasonalInterpolate(y2, []int{7, 28})
	if err != nil || how != FillSeasonal || math.Abs(f[70]-want) > 0.5 {
		t.Errorf("two cycles: %v (want %v) %s %v", f[70], want, how, err)
	}
}

func BenchmarkSeasonalInterpolate(b *testing.B) {
	y, _ := interpInvented(1)
	for _, h := range []int{3, 40, 41, 42, 100, 150} {
		y[h] = math.NaN()
	}
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		if _, _, err := SeasonalInterpolate(y, []int{7}); err != nil {
			b.Fatal(err)
		}
	}
}
