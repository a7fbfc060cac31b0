package engines

import (
	"math"
	"testing"
)

// TestSeasonalityTest compares the test statistic with the
// bartlett_statistic of the fixtures, which make_theta.py computes from
// statsmodels' acf (fft=True) as |r_m| / sqrt((1 + 2 Σ_{k<m} r_k²)/n). The
// only arithmetic is the autocorrelations (FFT there, direct sums here),
// so 1e-12 relative.
func TestSeasonalityTest(t *testing.T) {
	checked := 0
	for name, fx := range loadThetaFixtures(t) {
		if fx.Seasonality.Test == nil {
			continue
		}
		checked++
		stat, seasonal := SeasonalityTest(fx.X, fx.Options.Period)
		want := fx.Seasonality.Test.BartlettStatistic
		if d := math.Abs(stat-want) / want; !(d <= 1e-12) {
			t.Errorf("%s: statistic %.17g, want %.17g (rel diff %.3g)", name, stat, want, d)
		}
		if seasonal != fx.Seasonality.Test.BartlettSeasonal {
			t.Errorf("%s: seasonal = %v, want %v", name, seasonal, fx.Seasonality.Test.BartlettSeasonal)
		}
	}
	if checked != 10 {
		t.Errorf("checked %d fixtures with a test, want 10", checked)
	}
	// Common practice, by hand: y = 1, 3, 1, 3, 1, 3 (n = 6, ȳ = 2,
	// deviations ∓1, Σ dev² = 6). r_1 = 5·(−1)/6, r_2 = 4·(+1)/6.
	// Season 2: |r_2| / sqrt((1 + 2 r_1²)/6) = (2/3) / sqrt((1 + 50/36)/6)
	// = 1.0565…, below 1.6449: not seasonal at n = 6.
	y := []float64{1, 3, 1, 3, 1, 3}
	r1, r2 := -5.0/6, 4.0/6
	want := math.Abs(r2) / math.Sqrt((1+2*r1*r1)/6)
	if stat, seasonal := SeasonalityTest(y, 2); math.Abs(stat-want) > 1e-15 || seasonal {
		t.Errorf("alternating series: stat %v, seasonal %v; want %v, false", stat, seasonal, want)
	}
	// Twelve repetitions of 1, 3 make it seasonal: r_1 = −23/24, r_2 = 22/24.
	y = nil
	for range 12 {
		y = append(y, 1, 3)
	}
	r1, r2 = -23.0/24, 22.0/24
	want = r2 / math.Sqrt((1+2*r1*r1)/24)
	if stat, seasonal := SeasonalityTest(y, 2); math.Abs(stat-want) > 1e-14 || !seasonal {
		t.Errorf("24 alternating values: stat %v, seasonal %v; want %v, true", stat, seasonal, want)
	}
	// A missing value drops out of every product that touches it:
	// y = 1, NaN, 3, 1, 3 has ȳ = 2 and deviations −1, ·, 1, −1, 1
	// (Σ dev² = 4, n = 4 observed). Lag 1: products ·, ·, (1)(−1), (−1)(1)
	// → r_1 = −2/4; lag 2: (1)(−1), ·, (1)(1) → r_2 = 0; statistic 0.
	y = []float64{1, math.NaN(), 3, 1, 3}
	if stat, seasonal := SeasonalityTest(y, 2); stat != 0 || seasonal {
		t.Errorf("with a gap: stat %v, seasonal %v; want 0, false", stat, seasonal)
	}
	// With m = 1 the statistic is |r_1| / sqrt(1/n): here 0.5·2 = 1.
	if stat, _ := SeasonalityTest(y, 1); math.Abs(stat-1) > 1e-15 {
		t.Errorf("with a gap, lag 1: stat %v, want 1", stat)
	}
	// Constant values: no variation, not seasonal.
	if stat, seasonal := SeasonalityTest([]float64{5, 5, 5, 5, 5}, 2); stat != 0 || seasonal {
		t.Errorf("constant: stat %v, seasonal %v", stat, seasonal)
	}
}

// TestSeasonalityTestEmpty: no observed value, no season; m < 1 is a
// programmer's error.
func TestSeasonalityTestEmpty(t *testing.T) {
	if stat, seasonal := SeasonalityTest([]float64{math.NaN(), math.NaN()}, 2); stat != 0 || seasonal {
		t.Errorf("all missing: stat %v, seasonal %v", stat, seasonal)
	}
	defer func() {
		if recover() == nil {
			t.Error("season length 0 did not panic")
		}
	}()
	SeasonalityTest([]float64{1, 2, 3}, 0)
}
