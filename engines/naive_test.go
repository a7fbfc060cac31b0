package engines

import (
	"errors"
	"math"
	"testing"
)

// baselineForecast fits m on y and returns the h-step forecast, failing the
// test on error. It also checks that y was not modified.
func baselineForecast(t *testing.T, m Method, y []float64, season, h int) ([]float64, Fitted) {
	t.Helper()
	orig := append([]float64(nil), y...)
	f, err := m.Fit(y, season)
	if err != nil {
		t.Fatalf("%s: %v", m.Name(), err)
	}
	got := f.Forecast(h)
	for i := range y {
		if math.Float64bits(y[i]) != math.Float64bits(orig[i]) {
			t.Fatalf("%s modified y[%d]: %v → %v", m.Name(), i, orig[i], y[i])
		}
	}
	return got, f
}

// baselineFitErr checks that fitting y fails with an error wrapping want.
func baselineFitErr(t *testing.T, m Method, y []float64, season int, want error) {
	t.Helper()
	f, err := m.Fit(y, season)
	if err == nil || f != nil {
		t.Errorf("%s.Fit(%v, %d) = %v, %v; want an error", m.Name(), y, season, f, err)
		return
	}
	if want != nil && !errors.Is(err, want) {
		t.Errorf("%s.Fit(%v, %d): error %q does not wrap %q", m.Name(), y, season, err, want)
	}
}

func baselineRegistered(t *testing.T, name string) Method {
	t.Helper()
	m, err := New(name, nil)
	if err != nil {
		t.Fatal(err)
	}
	if m.Name() != name {
		t.Errorf("New(%q).Name() = %q", name, m.Name())
	}
	if _, err := New(name, Options{"damped": true}); err == nil || err.Error() != name+`: takes no options, got ["damped"]` {
		t.Errorf("New(%q, damped) error %v", name, err)
	}
	return m
}

// Hand values (common practice: ŷ = last observed value).
func TestNaive(t *testing.T) {
	m := baselineRegistered(t, "naive")
	nan := math.NaN()
	got, _ := baselineForecast(t, m, []float64{4, 9, 2, 7}, 1, 3)
	decompClose(t, "naive", got, []float64{7, 7, 7}, 0)
	got, _ = baselineForecast(t, m, []float64{4, 9, nan, nan}, 0, 2)
	decompClose(t, "naive, trailing NaN", got, []float64{9, 9}, 0)
	got, _ = baselineForecast(t, m, []float64{-3}, 12, 1)
	decompClose(t, "naive, one value", got, []float64{-3}, 0)
	if got, _ := baselineForecast(t, m, []float64{1, 2}, 1, 0); len(got) != 0 {
		t.Errorf("Forecast(0) = %v", got)
	}
	baselineFitErr(t, m, nil, 1, ErrTooShort)
	baselineFitErr(t, m, []float64{nan, nan}, 1, ErrAllMissing)
}

func BenchmarkNaive(b *testing.B) {
	y, m := classicalBenchSeries(b, "weekly156")
	b.ReportAllocs()
	for b.Loop() {
		f, _ := Naive{}.Fit(y, m)
		f.Forecast(13)
	}
}
