package engines

import (
	"math"
	"math/rand/v2"
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

// seasonalityTestDirect is SeasonalityTest as first written: one sum per
// lag, every product checked for NaN. The fast paths must give the same
// bits, so that outputs do not move.
func seasonalityTestDirect(y []float64, m int) (float64, bool) {
	var s float64
	k := 0
	for _, v := range y {
		if v == v {
			s += v
			k++
		}
	}
	if k == 0 {
		return 0, false
	}
	mean := s / float64(k)
	var c0 float64
	for _, v := range y {
		if v == v {
			c0 += (v - mean) * (v - mean)
		}
	}
	if !(c0 > 0) {
		return 0, false
	}
	var sum2, rm float64
	for lag := 1; lag <= m; lag++ {
		var c float64
		for i := lag; i < len(y); i++ {
			if p := (y[i] - mean) * (y[i-lag] - mean); p == p {
				c += p
			}
		}
		r := c / c0
		if lag < m {
			sum2 += r * r
		} else {
			rm = r
		}
	}
	stat := math.Abs(rm) / math.Sqrt((1+2*sum2)/float64(k))
	return stat, stat > seasonalityZ90
}

// TestSeasonalityTestSameBits compares SeasonalityTest with the direct
// sums bit for bit on invented series: lengths 1 to 300 (past the stack
// buffer), seasons 1 to 60, with and without missing values and
// infinities.
func TestSeasonalityTestSameBits(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 11))
	for c := 0; c < 3000; c++ {
		n := 1 + r.IntN(300)
		m := 1 + r.IntN(60)
		y := make([]float64, n)
		for i := range y {
			y[i] = 100 + 30*math.Sin(2*math.Pi*float64(i)/float64(m)) + 10*r.NormFloat64()
		}
		switch c % 4 {
		case 1:
			y[r.IntN(n)] = math.NaN()
		case 2:
			y[r.IntN(n)] = math.Inf(1)
		case 3:
			for i := range y {
				y[i] = math.Round(y[i] / 40) // few distinct values
			}
		}
		gs, gb := SeasonalityTest(y, m)
		ws, wb := seasonalityTestDirect(y, m)
		if math.Float64bits(gs) != math.Float64bits(ws) || gb != wb {
			t.Fatalf("case %d (n %d, m %d): %v %v, direct sums %v %v", c, n, m, gs, gb, ws, wb)
		}
	}
}
