package engines

import (
	"path/filepath"
	"testing"
)

// esBenchSeries reads a benchmark series of testdata/reference/bench (the
// deterministic series of bench/time_r.R).
func esBenchSeries(b *testing.B, name string) ([]float64, int) {
	b.Helper()
	var fx struct {
		Frequency int      `json:"frequency"`
		X         esFloats `json:"x"`
	}
	b.StopTimer()
	t := &testing.T{}
	esReadJSON(t, filepath.Join("testdata", "reference", "bench", name+".json"), &fx)
	if t.Failed() || len(fx.X) == 0 {
		b.Fatalf("cannot read bench/%s.json", name)
	}
	b.StartTimer()
	return fx.X, fx.Frequency
}

// esBenchFit fits method to the series and forecasts h steps, b.N times.
func esBenchFit(b *testing.B, series string, method Method, h int) {
	y, m := esBenchSeries(b, series)
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		f, err := method.Fit(y, m)
		if err != nil {
			b.Fatal(err)
		}
		if len(f.Forecast(h)) != h {
			b.Fatal("short forecast")
		}
	}
}

func esMustHW(b *testing.B, seasonal string, trend, damped bool) *HoltWinters {
	h, err := NewHoltWinters(seasonal, trend, damped)
	if err != nil {
		b.Fatal(err)
	}
	return h
}

// Holt-Winters (additive, optimised) fit plus a 13-step forecast on the
// weekly series (n = 156, m = 52). R 4.2.2 HoltWinters() takes a median
// 3.47 ms per fit on this series (bench/r_timings.json).
func BenchmarkHoltWintersWeekly156(b *testing.B) {
	esBenchFit(b, "weekly156", esMustHW(b, "", true, false), 13)
}

func BenchmarkHoltWintersWeekly156Multiplicative(b *testing.B) {
	esBenchFit(b, "weekly156", esMustHW(b, FormMultiplicative, true, false), 13)
}

func BenchmarkHoltWintersWeekly156Damped(b *testing.B) {
	esBenchFit(b, "weekly156", esMustHW(b, "", true, true), 13)
}

// Holt-Winters (additive, optimised) on the monthly series (n = 60,
// m = 12). R: median 2.78 ms per fit (bench/r_timings.json).
func BenchmarkHoltWintersMonthly60(b *testing.B) {
	esBenchFit(b, "monthly60", esMustHW(b, "", true, false), 12)
}

func BenchmarkHoltWintersMonthly60Multiplicative(b *testing.B) {
	esBenchFit(b, "monthly60", esMustHW(b, FormMultiplicative, true, false), 12)
}

func BenchmarkSESWeekly156(b *testing.B)    { esBenchFit(b, "weekly156", SES{}, 13) }
func BenchmarkSESMonthly60(b *testing.B)    { esBenchFit(b, "monthly60", SES{}, 12) }
func BenchmarkHoltWeekly156(b *testing.B)   { esBenchFit(b, "weekly156", Holt{}, 13) }
func BenchmarkHoltMonthly60(b *testing.B)   { esBenchFit(b, "monthly60", Holt{}, 12) }
func BenchmarkDampedWeekly156(b *testing.B) { esBenchFit(b, "weekly156", Holt{Damped: true}, 13) }
func BenchmarkDampedMonthly60(b *testing.B) { esBenchFit(b, "monthly60", Holt{Damped: true}, 12) }
func BenchmarkAutoWeekly156(b *testing.B)   { esBenchFit(b, "weekly156", SmoothingAuto{}, 13) }
func BenchmarkAutoMonthly60(b *testing.B)   { esBenchFit(b, "monthly60", SmoothingAuto{}, 12) }

// esBenchEval times one SSE evaluation of form on the weekly series: the
// inner loop of every fit.
func esBenchEval(b *testing.B, form esForm) {
	y, m := esBenchSeries(b, "weekly156")
	var f esFitter
	f.reset(y, m)
	if err := f.initStates(form); err != nil {
		b.Fatal(err)
	}
	f.setSlots(form)
	u := []float64{-1, -2, -2, 0}[:f.d]
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		f.eval(u)
	}
}

func BenchmarkSmoothingEvalWeeklyAdditive(b *testing.B) {
	esBenchEval(b, esForm{esTrendAdditive, esSeasonAdditive})
}

func BenchmarkSmoothingEvalWeeklyMultiplicative(b *testing.B) {
	esBenchEval(b, esForm{esTrendAdditive, esSeasonMultiplicative})
}

func BenchmarkSmoothingEvalWeeklyHoltConcentrated(b *testing.B) {
	esBenchEval(b, esForm{esTrendAdditive, esSeasonNone})
}
