package engines

import (
	"math"
	"testing"
)

// demandClassSeries returns periods values of which exactly demands are
// non-zero, spread evenly, with sizes taken in turn from sizes and zeros
// elsewhere. Demand falls in period i (0-based) when
// ⌊(i+1)·demands/periods⌋ > ⌊i·demands/periods⌋.
func demandClassSeries(periods, demands int, sizes ...float64) []float64 {
	y := make([]float64, periods)
	k := 0
	for i := range y {
		if (i+1)*demands/periods > i*demands/periods {
			y[i] = sizes[k%len(sizes)]
			k++
		}
	}
	return y
}

// TestClassifyDemandByHand checks ADI and CV² on small series worked out
// by hand (common practice).
func TestClassifyDemandByHand(t *testing.T) {
	nan := math.NaN()
	// 10 periods, demands 3, 5, 2 (TestCrostonByHand's series):
	// ADI = 10/3; μ = 10/3, σ² = ((3−μ)² + (5−μ)² + (2−μ)²)/3
	// = (1/9 + 25/9 + 16/9)/3 = 42/27, CV² = (42/27)/(100/9) = 0.14.
	y := append([]float64(nil), intermittentInvented...)
	orig := append([]float64(nil), y...)
	c := ClassifyDemand(y)
	if c.Periods != 10 || c.Demands != 3 || math.Abs(c.ADI-10.0/3) > 1e-15 || math.Abs(c.CV2-0.14) > 1e-15 || c.Class != DemandIntermittent {
		t.Errorf("invented series: %+v; want ADI 10/3, CV² 0.14, intermittent", c)
	}
	for i := range y {
		if math.Float64bits(y[i]) != math.Float64bits(orig[i]) {
			t.Fatalf("y[%d] changed", i)
		}
	}

	// Missing values are left out; negative values are periods without
	// demand: 1, NaN, 9, −2, 0 → 4 periods, 2 demands (1 and 9):
	// ADI 2, μ = 5, σ² = 16, CV² = 0.64: lumpy.
	c = ClassifyDemand([]float64{1, nan, 9, -2, 0})
	if c.Periods != 4 || c.Demands != 2 || c.ADI != 2 || c.CV2 != 0.64 || c.Class != DemandLumpy {
		t.Errorf("with NaN and negative: %+v", c)
	}

	// Demand every period, sizes 4, 6: ADI 1, CV² = 1/25 = 0.04: smooth.
	c = ClassifyDemand([]float64{4, 6, 4, 6})
	if c.ADI != 1 || math.Abs(c.CV2-0.04) > 1e-16 || c.Class != DemandSmooth {
		t.Errorf("smooth: %+v", c)
	}
	// Sizes 1, 19: μ = 10, σ² = 81, CV² 0.81: erratic.
	c = ClassifyDemand([]float64{1, 19, 1, 19})
	if c.ADI != 1 || c.CV2 != 0.81 || c.Class != DemandErratic {
		t.Errorf("erratic: %+v", c)
	}
	// A single demand: CV² 0 (population variance).
	c = ClassifyDemand([]float64{0, 0, 5})
	if c.ADI != 3 || c.CV2 != 0 || c.Class != DemandIntermittent {
		t.Errorf("one demand: %+v", c)
	}
	// No demand, and no observation.
	c = ClassifyDemand([]float64{0, nan, 0})
	if c.Class != DemandNone || !math.IsInf(c.ADI, 1) || !math.IsNaN(c.CV2) || c.Periods != 2 || c.Demands != 0 {
		t.Errorf("all zero: %+v", c)
	}
	for _, y := range [][]float64{nil, {nan, nan}} {
		c = ClassifyDemand(y)
		if c.Class != DemandNone || !math.IsNaN(c.ADI) || !math.IsNaN(c.CV2) || c.Periods != 0 {
			t.Errorf("%v: %+v", y, c)
		}
	}
}

// TestClassifyDemandCutoffs pins the cut-offs ADI 1.32 and CV² 0.49 of
// Syntetos, Boylan and Croston (2005): just below, at, and just above
// each. Values at a cut-off belong to the ≥ side.
func TestClassifyDemandCutoffs(t *testing.T) {
	// Sizes 10 ∓ d have μ = 10, σ² = d², CV² = d²/100.
	low := []float64{10 - 6.99, 10 + 6.99}  // CV² 0.488601
	at := []float64{3, 17}                  // CV² 0.49 exactly
	high := []float64{10 - 7.01, 10 + 7.01} // CV² 0.491401
	for _, tc := range []struct {
		periods, demands int
		sizes            []float64
		adi, cv2         float64
		class            string
	}{
		// ADI 131/100 = 1.31, 132/100 = 66/50 = 1.32, 133/100 = 1.33; an even
		// number of demands, so that both sizes occur equally often.
		{131, 100, low, 1.31, 0.488601, DemandSmooth},
		{131, 100, at, 1.31, 0.49, DemandErratic},
		{131, 100, high, 1.31, 0.491401, DemandErratic},
		{132, 100, low, 1.32, 0.488601, DemandIntermittent},
		{66, 50, low, 1.32, 0.488601, DemandIntermittent},
		{132, 100, at, 1.32, 0.49, DemandLumpy},
		{133, 100, low, 1.33, 0.488601, DemandIntermittent},
		{133, 100, at, 1.33, 0.49, DemandLumpy},
		{133, 100, high, 1.33, 0.491401, DemandLumpy},
	} {
		y := demandClassSeries(tc.periods, tc.demands, tc.sizes...)
		c := ClassifyDemand(y)
		if c.Periods != tc.periods || c.Demands != tc.demands {
			t.Fatalf("%d/%d: counted %d/%d", tc.periods, tc.demands, c.Periods, c.Demands)
		}
		if math.Abs(c.ADI-tc.adi) > 1e-15 || math.Abs(c.CV2-tc.cv2) > 1e-12 || c.Class != tc.class {
			t.Errorf("%d periods, %d demands, sizes %v: ADI %.17g, CV² %.17g, %s; want %v, %v, %s",
				tc.periods, tc.demands, tc.sizes, c.ADI, c.CV2, c.Class, tc.adi, tc.cv2, tc.class)
		}
	}
	// The exact cut-off values.
	if c := ClassifyDemand(demandClassSeries(66, 50, at...)); c.ADI != DemandADICutoff || c.CV2 != DemandCV2Cutoff || c.Class != DemandLumpy {
		t.Errorf("at both cut-offs: %+v", c)
	}
}

func BenchmarkClassifyDemand(b *testing.B) {
	y := intermittentBenchSeries()
	b.ReportAllocs()
	for b.Loop() {
		ClassifyDemand(y)
	}
}
