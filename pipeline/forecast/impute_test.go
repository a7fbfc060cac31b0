package forecast

import (
	"math"
	"strings"
	"testing"

	"almanac/engines"
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
