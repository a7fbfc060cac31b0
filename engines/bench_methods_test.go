package engines

import "testing"

// Benchmarks that fill the gaps in the per-method sets, so that every
// method set beside an R function in testdata/reference/bench/compare.sh
// has a fit + 13-step forecast benchmark on both bench series
// (bench/weekly156.json, m = 52; bench/monthly60.json, m = 12), and a
// decomposition-only one where R's function is a decomposition.
//
// The monthly benchmarks of the other files forecast 12 steps
// (BenchmarkHoltWintersMonthly60, BenchmarkSESMonthly60, …) and
// BenchmarkSTL*/forecast_* forecasts m steps; the ones here forecast 13,
// like the weekly ones.

// benchMethod13 fits method to a bench series and forecasts 13 steps.
func benchMethod13(b *testing.B, series string, method Method) {
	y, m := classicalBenchSeries(b, series)
	esLoop(b, func() {
		f, err := method.Fit(y, m)
		if err != nil {
			b.Fatal(err)
		}
		if len(f.Forecast(13)) != 13 {
			b.Fatal("short forecast")
		}
	})
}

func benchMustSTL(b *testing.B, o Options) *STL {
	s, err := NewSTL(o)
	if err != nil {
		b.Fatal(err)
	}
	return s
}

// Classical decomposition (additive, the defaults) alone on the monthly
// series: the figure beside R's decompose(x).
func BenchmarkClassicalDecomposeMonthly60(b *testing.B) {
	y, m := classicalBenchSeries(b, "monthly60")
	c := mustClassical(b, "", "", "")
	b.ReportAllocs()
	for b.Loop() {
		if _, err := c.Decompose(y, m); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkClassicalMonthly60H13(b *testing.B) {
	benchMethod13(b, "monthly60", mustClassical(b, "", "", ""))
}

// Holt-Winters, additive season (ETS(A,A,A)), weights and initial states
// estimated: beside R's HoltWinters(x), which is additive and estimates
// α, β, γ only.
func BenchmarkHoltWintersMonthly60H13(b *testing.B) {
	benchMethod13(b, "monthly60", esMustHW(b, FormAdditive, true, false))
}

// SES beside HoltWinters(x, beta = FALSE, gamma = FALSE); Holt beside
// HoltWinters(x, gamma = FALSE).
func BenchmarkSESMonthly60H13(b *testing.B)  { benchMethod13(b, "monthly60", SES{}) }
func BenchmarkHoltMonthly60H13(b *testing.B) { benchMethod13(b, "monthly60", Holt{}) }

func BenchmarkAutoMonthly60H13(b *testing.B) { benchMethod13(b, "monthly60", SmoothingAuto{}) }

// STL, periodic seasonal window (the default), fit (decomposition, then
// SES on the seasonally adjusted series) and 13-step forecast: beside
// stl(x, s.window = "periodic") and stl(x, "periodic", robust = TRUE).
func BenchmarkSTLFitWeekly156(b *testing.B) {
	benchMethod13(b, "weekly156", benchMustSTL(b, Options{}))
}

func BenchmarkSTLFitMonthly60(b *testing.B) {
	benchMethod13(b, "monthly60", benchMustSTL(b, Options{}))
}

func BenchmarkSTLRobustFitWeekly156(b *testing.B) {
	benchMethod13(b, "weekly156", benchMustSTL(b, Options{"robust": true}))
}

func BenchmarkSTLRobustFitMonthly60(b *testing.B) {
	benchMethod13(b, "monthly60", benchMustSTL(b, Options{"robust": true}))
}
