package forecast

import (
	"math"
	"strings"
	"testing"

	"almanac/engines"
	"almanac/pipeline/runfolder"
	"almanac/pipeline/series"
	"almanac/spec"
)

// pureSeasonal is an invented monthly series: a straight trend plus a
// fixed pattern of season 12, no noise, so that every missing value has
// one right answer.
func pureSeasonal(n int) []float64 {
	pattern := []float64{-30, -22, -9, 0, 8, 15, 26, 31, 12, 0, -11, -20}
	y := make([]float64, n)
	for t := range y {
		y[t] = 200 + 0.8*float64(t) + pattern[t%12]
	}
	return y
}

// withHoles returns a copy of y with the given positions missing.
func withHoles(y []float64, holes []int) []float64 {
	out := append([]float64(nil), y...)
	for _, h := range holes {
		out[h] = math.NaN()
	}
	return out
}

var pureHoles = []int{5, 17, 18, 19, 40, 41, 62, 70}

func mustMethod(t *testing.T, name string, o engines.Options) engines.Method {
	t.Helper()
	m, err := engines.New(name, o)
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// Impute fills only for a method that needs a complete series, never
// changes y or an observed value, and on a pure trend + seasonal pattern
// puts back the values that were removed.
func TestImputePureSeasonal(t *testing.T) {
	full := pureSeasonal(84)
	y := withHoles(full, pureHoles)
	naive := mustMethod(t, "naive", nil)
	got, n, how, err := Impute(naive, y, []int{12})
	if err != nil || n != 0 || how != "" || &got[0] != &y[0] {
		t.Fatalf("naive: filled %d (%s), err %v; want y itself", n, how, err)
	}
	stl := mustMethod(t, "stl", nil)
	got, n, how, err = Impute(stl, y, []int{12})
	if err != nil {
		t.Fatal(err)
	}
	if n != len(pureHoles) || how != engines.FillSeasonal {
		t.Fatalf("filled %d by %q, want %d by %q", n, how, len(pureHoles), engines.FillSeasonal)
	}
	for _, h := range pureHoles {
		if !math.IsNaN(y[h]) {
			t.Fatalf("y[%d] was modified", h)
		}
	}
	worst := 0.0
	for i, v := range got {
		if !math.IsNaN(y[i]) && v != y[i] {
			t.Fatalf("observed y[%d] = %v changed to %v", i, y[i], v)
		}
		worst = max(worst, math.Abs(v-full[i]))
	}
	// Trend and pattern are exact, so is the fill (to rounding: 5.7e-14
	// when written; the pattern's range is 61).
	if worst > 1e-9 {
		t.Errorf("largest error of the fill %.4g, want ≤ 1e-9", worst)
	}
	t.Logf("largest error of the fill on a pure pattern: %.3g", worst)
}

// STL alone refuses a series with holes; through SafeForecast it forecasts
// the filled series, so its forecast is that of the complete series, and
// the fill is reported.
func TestSafeForecastFillsForSTL(t *testing.T) {
	full := pureSeasonal(84)
	y := withHoles(full, pureHoles)
	for _, name := range []string{"stl", "holt_winters", "classical"} {
		m := mustMethod(t, name, nil)
		if name == "stl" {
			if _, err := m.Fit(y, 12); err == nil || !strings.Contains(err.Error(), "complete series") {
				t.Fatalf("stl on holes without a fill: %v; the test would prove nothing", err)
			}
		}
		got, err := SafeForecast(m, y[:84:84], 12, 12, false)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		want, err := SafeForecast(m, full, 12, 12, false)
		if err != nil {
			t.Fatal(err)
		}
		if got.Imputed != len(pureHoles) || got.Fill != engines.FillSeasonal {
			t.Errorf("%s: imputed %d by %q", name, got.Imputed, got.Fill)
		}
		if want.Imputed != 0 {
			t.Errorf("%s: complete series reported %d filled", name, want.Imputed)
		}
		for k := range got.Values {
			if d := math.Abs(got.Values[k] - want.Values[k]); d > 1e-6 || math.IsNaN(d) {
				t.Errorf("%s step %d: %.8f with holes, %.8f complete", name, k+1, got.Values[k], want.Values[k])
			}
		}
	}
}

// The decomposition stage with one season length: where the spec's
// decomposer fails on the holes (stl always; classical here, where the
// holes leave season position 5 without a detrended value) it decomposes
// the filled history; the fill is a decompose warning; remainder and
// adjusted stay missing at the holes, and on a pure pattern the factors
// are the pattern's. Classical decomposes around a single hole unfilled.
func TestDecomposeFillsHoles(t *testing.T) {
	y := withHoles(pureSeasonal(84), pureHoles)
	pattern := []float64{-30, -22, -9, 0, 8, 15, 26, 31, 12, 0, -11, -20}
	sp := &spec.Spec{Horizon: 6}
	sp.Calendar.SeasonLength = 12
	classical := mustMethod(t, "classical", engines.Options{"form": "additive"}).(engines.Decomposer)
	if _, err := classical.Decompose(y, 12); err == nil {
		t.Fatal("classical decomposes these holes unfilled; the test would not reach the fill")
	}
	one := withHoles(pureSeasonal(84), []int{30})
	r := (&Work{Spec: sp, Decomposer: classical}).Run(&series.Series{Key: []string{"k"}, Values: one})
	// 72 periods have a centred average on 84 values; the hole takes 13
	// (periods 24…36, two of them at position 0).
	if r.Decomp == nil || len(r.Problems) != 0 || r.Decomp.Counts[0] != 4 || r.Decomp.Counts[1] != 5 || !math.IsNaN(r.Decomp.Trend[30]) {
		t.Errorf("classical around one hole: problems %+v, counts %v", r.Problems, r.Decomp.Counts)
	}
	for _, name := range []string{"stl", "classical"} {
		o := engines.Options{"form": "additive"}
		if name == "stl" {
			o = nil
		}
		w := &Work{Spec: sp, Decomposer: mustMethod(t, name, o).(engines.Decomposer)}
		r := w.Run(&series.Series{Key: []string{"k"}, Values: y})
		if r.Decomp == nil || r.Cycles != nil {
			t.Fatalf("%s: no decomposition: %+v", name, r.Problems)
		}
		if len(r.Problems) != 1 || r.Problems[0].Code != runfolder.CodeImputed || r.Problems[0].Stage != "decompose" ||
			r.Problems[0].Message != "8 of 84 values missing; filled by seasonal interpolation before decomposing (the method needs a complete series)" {
			t.Errorf("%s: problems %+v", name, r.Problems)
		}
		for _, h := range pureHoles {
			if !math.IsNaN(r.Decomp.Remainder[h]) || !math.IsNaN(r.Decomp.Adjusted[h]) || math.IsNaN(r.Decomp.Seasonal[h]) {
				t.Errorf("%s: period %d: remainder %v, adjusted %v, seasonal %v", name, h, r.Decomp.Remainder[h], r.Decomp.Adjusted[h], r.Decomp.Seasonal[h])
			}
		}
		// The fill is exact here, so the factors are those of the
		// complete series: for classical the pattern itself; stl's
		// differ from it by up to 0.53 (its loess lets some of the trend
		// into the seasonal), on the complete series as on the filled.
		whole, err := w.Decomposer.Decompose(pureSeasonal(84), 12)
		if err != nil {
			t.Fatal(err)
		}
		for j, f := range r.Decomp.Factors {
			if math.Abs(f-whole.Factors[j]) > 1e-9 || (name == "classical" && math.Abs(f-pattern[j]) > 1e-9) {
				t.Errorf("%s: factor %d = %v; complete series %v, pattern %v", name, j, f, whole.Factors[j], pattern[j])
			}
		}
	}
}

// With several season lengths the fill of a method's training data uses
// them all, in the final forecast (SafeForecastSeries) as in the
// decomposition: stl fitted on the 7-period cycle forecasts exactly the
// series that SeasonalInterpolate fills with both cycles, not the one it
// fills with the 7-period cycle alone.
func TestFillUsesEverySeason(t *testing.T) {
	n := 140
	full := make([]float64, n)
	for i := range full {
		full[i] = 100 + 0.2*float64(i) + 8*math.Sin(2*math.Pi*float64(i)/7) + 15*math.Cos(2*math.Pi*float64(i)/28)
	}
	y := withHoles(full, []int{30, 31, 60, 97, 98, 99})
	m := mustMethod(t, "stl", nil)
	s := &series.Series{Values: y}
	got, err := SafeForecastSeries(m, s, []int{7, 28}, 0, n, 14, false)
	if err != nil {
		t.Fatal(err)
	}
	both, _, err := engines.SeasonalInterpolate(y, []int{7, 28})
	if err != nil {
		t.Fatal(err)
	}
	one, _, err := engines.SeasonalInterpolate(y, []int{7})
	if err != nil {
		t.Fatal(err)
	}
	want, err := SafeForecast(m, both, 7, 14, false)
	if err != nil {
		t.Fatal(err)
	}
	other, err := SafeForecast(m, one, 7, 14, false)
	if err != nil {
		t.Fatal(err)
	}
	if got.Imputed != 6 {
		t.Errorf("imputed %d, want 6", got.Imputed)
	}
	differ := false
	for k := range got.Values {
		if got.Values[k] != want.Values[k] {
			t.Errorf("step %d: %.10g, want %.10g (the fill with both cycles)", k+1, got.Values[k], want.Values[k])
		}
		if other.Values[k] != want.Values[k] {
			differ = true
		}
	}
	if !differ {
		t.Error("the fills with one and with both cycles give the same forecast; the test proves nothing")
	}
}
