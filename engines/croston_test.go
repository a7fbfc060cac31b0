package engines

import (
	"math"
	"strings"
	"testing"
)

// intermittentInvented is a small invented intermittent series: demands of
// 3, 5 and 2 in periods 2, 5 and 7 of 10.
var intermittentInvented = []float64{0, 3, 0, 0, 5, 0, 2, 0, 0, 0}

// intermittentClose checks a flat forecast against want at tol relative.
func intermittentClose(t *testing.T, what string, got []float64, want, tol float64) {
	t.Helper()
	for i, g := range got {
		if !(math.Abs(g-want) <= tol*math.Abs(want)) {
			t.Errorf("%s[%d] = %.17g, want %.17g", what, i, g, want)
		}
	}
}

// intermittentCommon runs the checks that Croston, SBA and TSB share:
// errors, the all-zero warning, missing values, input not modified,
// options and the horizon.
func intermittentCommon(t *testing.T, name string) {
	t.Helper()
	m := intermittentRegistered(t, name)
	nan := math.NaN()
	baselineFitErr(t, m, nil, 1, ErrTooShort)
	baselineFitErr(t, m, []float64{nan, nan}, 1, ErrAllMissing)
	baselineFitErr(t, m, []float64{0, 2, -1, 4}, 1, nil)
	if _, err := m.Fit([]float64{0, 2, -1, 4}, 1); err == nil || err.Error() != name+": negative demand -1 at index 2; demands must be ≥ 0" {
		t.Errorf("negative value: error %v", err)
	}

	// All zero: forecast 0 with a warning; missing values are not counted.
	got, f := baselineForecast(t, m, []float64{0, nan, 0, 0}, 1, 3)
	intermittentClose(t, name+" all zero", got, 0, 0)
	if w := f.(Warner).Warnings(); len(w) != 1 || w[0] != name+": no non-zero demand in 3 observed periods; forecast 0" {
		t.Errorf("all zero: warnings %q", w)
	}
	if len(got) != 3 || got[0] != 0 {
		t.Errorf("all zero: forecast %v", got)
	}

	// Missing values are left out as if the periods did not exist.
	plain, f := baselineForecast(t, m, intermittentInvented, 1, 4)
	if w := f.(Warner).Warnings(); len(w) != 0 {
		t.Errorf("warnings %q", w)
	}
	gappy := []float64{nan, 0, 3, nan, 0, 0, 5, nan, nan, 0, 2, 0, 0, nan, 0}
	withGaps, _ := baselineForecast(t, m, gappy, 1, 4)
	decompClose(t, name+" with gaps", withGaps, plain, 0)

	// The season length is ignored.
	other, _ := baselineForecast(t, m, intermittentInvented, 4, 4)
	decompClose(t, name+" season 4", other, plain, 0)

	// Options.
	for _, tc := range []struct {
		o    Options
		want string
	}{
		{Options{"alpha": 0.0}, name + ": alpha 0 out of range; want a value in [0.01, 1]"},
		{Options{"alpha": 0.005}, name + ": alpha 0.005 out of range; want a value in [0.01, 1]"},
		{Options{"alpha": 1.5}, name + ": alpha 1.5 out of range; want a value in [0.01, 1]"},
		{Options{"alpha": math.NaN()}, name + ": alpha NaN out of range; want a value in [0.01, 1]"},
		{Options{"alpha": "0.2"}, name + ": option alpha must be a number, got string"},
		{Options{"gamma": 0.2}, name + `: unknown option "gamma"`},
	} {
		if _, err := New(name, tc.o); err == nil || !strings.HasPrefix(err.Error(), tc.want) {
			t.Errorf("New(%s, %v) error %v, want %q", name, tc.o, err, tc.want)
		}
	}
	for _, a := range []any{0.01, 1, 1.0, int64(1), 0.5} {
		if _, err := New(name, Options{"alpha": a}); err != nil {
			t.Errorf("New(%s, alpha=%v): %v", name, a, err)
		}
	}
	if got := f.Forecast(0); len(got) != 0 {
		t.Errorf("Forecast(0) = %v", got)
	}
	defer func() {
		if r := recover(); r == nil || !strings.HasPrefix(r.(string), "engines: "+name+": ") {
			t.Errorf("Forecast(-1) panic %v", r)
		}
	}()
	f.Forecast(-1)
}

// intermittentRegistered builds the named method from the registry
// with no options and checks its name.
func intermittentRegistered(t *testing.T, name string) Method {
	t.Helper()
	m, err := New(name, nil)
	if err != nil {
		t.Fatal(err)
	}
	if m.Name() != name {
		t.Errorf("New(%q).Name() = %q", name, m.Name())
	}
	return m
}

// TestCrostonByHand follows the recursion of Croston (1972) step by step
// on intermittentInvented (common practice: hand computation).
func TestCrostonByHand(t *testing.T) {
	// α = 0.2. Demands 3, 5, 2 in periods 2, 5, 7: intervals 2, 3, 2.
	//   initial     z = 3,                     p = 2
	//   period 5    z = 3 + 0.2·(5 − 3) = 3.4,  p = 2 + 0.2·(3 − 2) = 2.2
	//   period 7    z = 3.4 + 0.2·(2 − 3.4) = 3.12
	//               p = 2.2 + 0.2·(2 − 2.2) = 2.16
	//   forecast    3.12 / 2.16 = 13/9
	c, err := NewCroston(0.2)
	if err != nil {
		t.Fatal(err)
	}
	got, f := baselineForecast(t, c, intermittentInvented, 1, 5)
	intermittentClose(t, "croston α=0.2", got, 13.0/9, 1e-15)
	if d := f.(Described).Describe(); d != "croston(alpha=0.2)" {
		t.Errorf("Describe() = %q", d)
	}

	// Default α = 0.1: z = 3 → 3.2 → 3.08, p = 2 → 2.1 → 2.09.
	got, f = baselineForecast(t, intermittentRegistered(t, "croston"), intermittentInvented, 1, 2)
	intermittentClose(t, "croston default", got, 3.08/2.09, 1e-15)
	if d := f.(Described).Describe(); d != "croston(alpha=0.1)" {
		t.Errorf("Describe() = %q", d)
	}

	// α = 1: the last size over the last interval, 2/2.
	c, _ = NewCroston(1)
	got, _ = baselineForecast(t, c, intermittentInvented, 1, 1)
	intermittentClose(t, "croston α=1", got, 1, 1e-15)

	// One demand, in period 3: z = 4, p = 3. Demand in period 1: p = 1.
	got, _ = baselineForecast(t, c, []float64{0, 0, 4, 0}, 1, 1)
	intermittentClose(t, "croston one demand", got, 4.0/3, 1e-15)
	got, _ = baselineForecast(t, c, []float64{6, 0, 0, 0}, 1, 1)
	intermittentClose(t, "croston first period", got, 6, 1e-15)

	if _, err := NewCroston(2); err == nil {
		t.Error("NewCroston(2) succeeded")
	}
	if c, err := NewCroston(0); err != nil || c.alpha != 0.1 {
		t.Errorf("NewCroston(0) = %v, %v", c, err)
	}
}

func TestCrostonCommon(t *testing.T) { intermittentCommon(t, "croston") }

// intermittentBenchSeries is an invented intermittent series of 156
// weeks: a demand of 1…10 in about two weeks of seven.
func intermittentBenchSeries() []float64 {
	y := make([]float64, 156)
	for i := range y {
		if (i*13)%7 < 2 {
			y[i] = float64(1 + (i*37)%10)
		}
	}
	return y
}

// intermittentBench fits m and forecasts 13 steps: on bench/weekly156.json,
// bench/monthly60.json or the invented intermittent series.
func intermittentBench(b *testing.B, m Method, series string) {
	var y []float64
	season := 52
	if series == "intermittent" {
		y = intermittentBenchSeries()
	} else {
		y, season = classicalBenchSeries(b, series)
	}
	b.ReportAllocs()
	for b.Loop() {
		f, err := m.Fit(y, season)
		if err != nil {
			b.Fatal(err)
		}
		f.Forecast(13)
	}
}

func intermittentNew(b *testing.B, name string, o Options) Method {
	m, err := New(name, o)
	if err != nil {
		b.Fatal(err)
	}
	return m
}

func BenchmarkCrostonWeekly156(b *testing.B) {
	intermittentBench(b, intermittentNew(b, "croston", nil), "weekly156")
}
func BenchmarkCrostonMonthly60(b *testing.B) {
	intermittentBench(b, intermittentNew(b, "croston", nil), "monthly60")
}
func BenchmarkCrostonIntermittent(b *testing.B) {
	intermittentBench(b, intermittentNew(b, "croston", nil), "intermittent")
}
