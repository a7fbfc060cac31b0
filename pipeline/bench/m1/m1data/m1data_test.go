package m1data

import (
	"math"
	"testing"
)

// Every expected value below is worked out by hand from the definitions in
// the doc comments (M-competition sMAPE; MASE with the in-sample seasonal
// naive scale; the 90% autocorrelation test and classical multiplicative
// factors of Naive2, common practice in the M competitions).

func near(a, b float64) bool { return math.Abs(a-b) <= 1e-12*math.Max(1, math.Abs(b)) }

func TestSMAPEAndMASEByHand(t *testing.T) {
	// Steps: 200·1/3, 200·2/6, 0 (both zero counts 0) → mean (66.67+66.67+0)/3.
	if got, want := SMAPE([]float64{2, 4, 0}, []float64{1, 2, 0}), (200.0/3+200.0/3)/3; !near(got, want) {
		t.Errorf("SMAPE = %v, want %v", got, want)
	}
	// Lag-1 scale of 1,3,2: (2+1)/2 = 1.5; errors 1 and 3 → MAE 2 → 4/3.
	train := []float64{1, 3, 2}
	if got := MASEScale(train, 1); !near(got, 1.5) {
		t.Errorf("MASEScale lag 1 = %v, want 1.5", got)
	}
	if got, want := MASE([]float64{3, 5}, []float64{2, 2}, train, 1), 4.0/3; !near(got, want) {
		t.Errorf("MASE = %v, want %v", got, want)
	}
	// Lag-2 scale of 1,3,2,6: |2−1|, |6−3| → 2.
	if got := MASEScale([]float64{1, 3, 2, 6}, 2); !near(got, 2) {
		t.Errorf("MASEScale lag 2 = %v, want 2", got)
	}
}

func TestNaive2ByHand(t *testing.T) {
	// 1,3 repeated six times, m = 2. Deviations from the mean 2 are ∓1, so
	// r1 = −11/12, r2 = 10/12; the limit is 1.645·sqrt((1 + 2·(11/12)²)/12)
	// = 0.7775 < 0.8333: seasonal. The 2×2 centred average is 2 everywhere,
	// so the factors are 0.5 and 1.5; the last value 3 deseasonalises to 2
	// and the forecasts re-seasonalise it: 1, 3, 1.
	x := []float64{1, 3, 1, 3, 1, 3, 1, 3, 1, 3, 1, 3}
	if !Seasonal(x, 2) {
		t.Fatal("Seasonal = false, want true")
	}
	f := SeasonalIndices(x, 2)
	if !near(f[0], 0.5) || !near(f[1], 1.5) {
		t.Errorf("SeasonalIndices = %v, want [0.5 1.5]", f)
	}
	got := Naive2(x, 2, 3)
	for i, w := range []float64{1, 3, 1} {
		if !near(got[i], w) {
			t.Errorf("Naive2[%d] = %v, want %v", i, got[i], w)
		}
	}
	// Six values: r1 = −5/6, r2 = 4/6 and the limit is
	// 1.645·sqrt((1 + 2·25/36)/6) = 1.038 > 0.667: not seasonal, plain naive.
	short := x[:6]
	if Seasonal(short, 2) {
		t.Fatal("Seasonal(6 values) = true, want false")
	}
	for i, v := range Naive2(short, 2, 2) {
		if v != 3 {
			t.Errorf("Naive2(short)[%d] = %v, want 3", i, v)
		}
	}
	// m = 1: never seasonal; naive.
	if v := Naive2([]float64{5, 7, 4}, 1, 1); v[0] != 4 {
		t.Errorf("Naive2 m=1 = %v, want 4", v[0])
	}
}

func TestSeasonalIndicesOddPeriodByHand(t *testing.T) {
	// m = 3, x = 2,4,6 repeated: the 3-term average is 4, so the ratios
	// are 0.5, 1, 1.5 and they already average 1.
	x := []float64{2, 4, 6, 2, 4, 6, 2, 4, 6}
	f := SeasonalIndices(x, 3)
	for i, w := range []float64{0.5, 1, 1.5} {
		if !near(f[i], w) {
			t.Errorf("factor %d = %v, want %v", i, f[i], w)
		}
	}
}
