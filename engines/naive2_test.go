package engines

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"testing"
)

// datasetValues reads x from testdata/reference/data/<name>.json (R's datasets).
func datasetValues(t *testing.T, name string) []float64 {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("testdata", "reference", "data", name+".json"))
	if err != nil {
		t.Fatal(err)
	}
	var fx struct {
		X []float64 `json:"x"`
	}
	if err := json.Unmarshal(b, &fx); err != nil {
		t.Fatal(err)
	}
	return fx.X
}

// TestNaive2AgainstR compares Naive2 with the benchmark computed by R
// 4.2.2's stats::acf and stats::decompose (naive2/make_naive2.R): same
// seasonal/not-seasonal decision, factors and forecasts to 1e-10 relative.
func TestNaive2AgainstR(t *testing.T) {
	files, err := filepath.Glob(filepath.Join("testdata", "reference", "naive2", "*.json"))
	if err != nil || len(files) != 9 {
		t.Fatalf("naive2 fixtures: %d files, %v; want 9", len(files), err)
	}
	seen := map[bool]int{}
	for _, p := range files {
		b, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		var fx struct {
			Name     string    `json:"name"`
			Season   int       `json:"season"`
			H        int       `json:"h"`
			Seasonal bool      `json:"seasonal"`
			Factors  []float64 `json:"factors"`
			Forecast []float64 `json:"forecast"`
		}
		if err := json.Unmarshal(b, &fx); err != nil {
			t.Fatal(err)
		}
		seen[fx.Seasonal]++
		y := datasetValues(t, fx.Name)
		keep := append([]float64(nil), y...)
		m, err := New("naive2", nil)
		if err != nil {
			t.Fatal(err)
		}
		f, err := m.Fit(y, fx.Season)
		if err != nil {
			t.Fatalf("%s: %v", fx.Name, err)
		}
		nf := f.(*naive2Fit)
		if (nf.factors != nil) != fx.Seasonal {
			t.Errorf("%s m=%d: seasonal = %v, R says %v", fx.Name, fx.Season, nf.factors != nil, fx.Seasonal)
			continue
		}
		want := "naive2(no season)"
		if fx.Seasonal {
			want = "naive2(seasonally adjusted)"
		}
		if got := f.(Described).Describe(); got != want {
			t.Errorf("%s: Describe() = %q, want %q", fx.Name, got, want)
		}
		for j, w := range fx.Factors {
			if d := math.Abs(nf.factors[j] - w); d > 1e-10*math.Abs(w) {
				t.Errorf("%s: factor %d = %v, R %v", fx.Name, j, nf.factors[j], w)
			}
		}
		got := f.Forecast(fx.H)
		for j, w := range fx.Forecast {
			if d := math.Abs(got[j] - w); d > 1e-10*math.Abs(w) {
				t.Errorf("%s: forecast %d = %v, R %v", fx.Name, j+1, got[j], w)
			}
		}
		for i := range y {
			if y[i] != keep[i] {
				t.Fatalf("%s: Fit modified y", fx.Name)
			}
		}
	}
	if seen[true] == 0 || seen[false] == 0 {
		t.Errorf("fixtures cover seasonal %d and not seasonal %d cases; want both", seen[true], seen[false])
	}
}

func TestNaive2ByHand(t *testing.T) {
	// 1,3 six times, m = 2 (hand-worked: r1 = −11/12, r2 = 10/12 above the
	// limit 0.7775; factors 0.5 and 1.5 from the constant 2×2 average): the
	// last value 3 adjusts to 2 and re-seasonalises to 1, 3, 1.
	y := []float64{1, 3, 1, 3, 1, 3, 1, 3, 1, 3, 1, 3}
	f, err := Naive2{}.Fit(y, 2)
	if err != nil {
		t.Fatal(err)
	}
	for i, w := range []float64{1, 3, 1} {
		if got := f.Forecast(3)[i]; math.Abs(got-w) > 1e-12 {
			t.Errorf("forecast %d = %v, want %v", i+1, got, w)
		}
	}
	// Fewer than three seasons: no test, plain naive (last observed value,
	// past a trailing NaN).
	f, err = Naive2{}.Fit([]float64{1, 3, 1, 3, math.NaN()}, 2)
	if err != nil {
		t.Fatal(err)
	}
	if got := f.Forecast(2); got[0] != 3 || got[1] != 3 {
		t.Errorf("short series forecast %v, want [3 3]", got)
	}
	// A value ≤ 0: not seasonally adjusted.
	z := append([]float64(nil), y...)
	z[0] = 0
	f, _ = Naive2{}.Fit(z, 2)
	if got := f.(Described).Describe(); got != "naive2(no season)" {
		t.Errorf("with a zero: Describe() = %q", got)
	}
	if _, err := (Naive2{}).Fit([]float64{math.NaN()}, 1); err == nil {
		t.Error("all missing: no error")
	}
	if _, err := New("naive2", Options{"x": 1}); err == nil {
		t.Error("naive2 with an option: no error")
	}
}
