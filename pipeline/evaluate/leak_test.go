package evaluate

import (
	"math"
	"os"
	"path/filepath"
	"testing"

	"almanac/engines"
	"almanac/pipeline/forecast"
	"almanac/pipeline/series"
	"almanac/spec"
)

const leakSpec = `version: 1
name: leak
sources: [data/sales.csv]
columns: {time: month, value: qty, keys: [store, item]}
calendar: {frequency: month}
methods: [naive]
horizon: 6
backtest: {folds: 3}
`

// peeker forecasts by reading past the end of its input: given the whole
// series it would score perfectly. The harness must not let it.
type peeker struct{}

func (peeker) Name() string { return "peeker" }
func (peeker) Fit(y []float64, season int) (engines.Fitted, error) {
	return peekFit{y}, nil
}

type peekFit struct{ y []float64 }

func (p peekFit) Forecast(h int) []float64 {
	full := p.y[:cap(p.y)]
	out := make([]float64, h)
	for i := range out {
		if len(p.y)+i < len(full) {
			out[i] = full[len(p.y)+i] // the future, if the slice lets us see it
		} else {
			out[i] = p.y[len(p.y)-1]
		}
	}
	return out
}

func TestBacktestCannotLeak(t *testing.T) {
	y := make([]float64, 60)
	for i := range y {
		y[i] = 10 + float64(i%12) + 0.3*float64(i) + math.Sin(float64(i))
	}
	// Shown first: handed an uncapped slice, the peeker is perfect.
	f := peekFit{y[:40]}.Forecast(6)
	for i, v := range f {
		if v != y[40+i] {
			t.Fatal("the peeker does not peek; the test would prove nothing")
		}
	}
	p := filepath.Join(t.TempDir(), "spec.yaml")
	if err := os.WriteFile(p, []byte(leakSpec), 0o644); err != nil {
		t.Fatal(err)
	}
	s, err := spec.Load(p)
	if err != nil {
		t.Fatal(err)
	}
	work := &forecast.Work{Spec: s, Methods: []forecast.Method{{Spec: s.Methods[0], Engine: peeker{}}}}
	r := New(s, 1).Backtest(work, &series.Series{Key: []string{"x", "y"}, Values: y})
	if len(r.entries) != 1 || len(r.entries[0].folds) != 3 {
		t.Fatalf("entries %+v", r.entries)
	}
	for _, fs := range r.entries[0].folds {
		if fs.scores.MAE == 0 {
			t.Errorf("fold %d: the peeker saw its test data (MAE 0)", fs.fold.Index)
		}
		if fs.scores.N != 6 {
			t.Errorf("fold %d scored %d points", fs.fold.Index, fs.scores.N)
		}
	}
}
