package engines

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// esOptional reads a number that R may write as false (parameter not used).
type esOptional struct {
	V  float64
	OK bool
}

func (o *esOptional) UnmarshalJSON(b []byte) error {
	s := strings.TrimSpace(string(b))
	if s == "false" || s == "null" {
		*o = esOptional{}
		return nil
	}
	o.OK = true
	return json.Unmarshal(b, &o.V)
}

func esReadJSON(t testing.TB, path string, v any) {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, v); err != nil {
		t.Fatalf("%s: %v", path, err)
	}
}

func esGlob(t *testing.T, pattern string, want int) []string {
	t.Helper()
	paths, err := filepath.Glob(filepath.Join("testdata", "reference", pattern))
	if err != nil {
		t.Fatal(err)
	}
	if len(paths) < want {
		t.Fatalf("%s: found %d fixtures, want at least %d (see testdata/reference/REFERENCE-METHODS.md)", pattern, len(paths), want)
	}
	return paths
}

// esClose compares got with want to the tolerance tol relative to
// max(1, |want|) and returns the largest such relative difference.
func esClose(t *testing.T, what string, got, want []float64, tol float64) float64 {
	t.Helper()
	if len(got) != len(want) {
		t.Errorf("%s: len %d, want %d", what, len(got), len(want))
		return math.Inf(1)
	}
	worst, bad := 0.0, 0
	for i := range got {
		d := math.Abs(got[i]-want[i]) / math.Max(1, math.Abs(want[i]))
		if math.IsNaN(got[i]) != math.IsNaN(want[i]) {
			d = math.Inf(1)
		} else if math.IsNaN(want[i]) {
			d = 0
		}
		worst = math.Max(worst, d)
		if !(d <= tol) {
			if bad++; bad <= 5 {
				t.Errorf("%s[%d] = %.17g, want %.17g (rel diff %.3g > %.0e)", what, i, got[i], want[i], d, tol)
			}
		}
	}
	return worst
}

// esDataset reads testdata/reference/data/<name>.json (R's datasets, as
// written by data/dump_data.R).
func esDataset(t testing.TB, name string) ([]float64, int) {
	t.Helper()
	var fx struct {
		Frequency int          `json:"frequency"`
		X         decompFloats `json:"x"`
	}
	esReadJSON(t, filepath.Join("testdata", "reference", "data", name+".json"), &fx)
	if len(fx.X) == 0 {
		t.Fatalf("data/%s.json: empty", name)
	}
	return fx.X, fx.Frequency
}

func esNew(t *testing.T, name string, o Options) Method {
	t.Helper()
	m, err := New(name, o)
	if err != nil {
		t.Fatalf("New(%q, %v): %v", name, o, err)
	}
	return m
}

func esMustHW(b testing.TB, seasonal string, trend, damped bool) *HoltWinters {
	h, err := NewHoltWinters(seasonal, trend, damped)
	if err != nil {
		b.Fatal(err)
	}
	return h
}
