package engines

import (
	"path/filepath"
	"syscall"
	"testing"
	"time"

	"gonum.org/v1/gonum/optimize"
)

// esCPUTime is the CPU time (user + system) the process has used so far.
func esCPUTime(b *testing.B) time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		b.Fatal(err)
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

// esLoop runs body b.N times and reports, beside the wall time, the CPU
// time per operation (cpu-ns/op): on a shared machine the wall time
// includes waiting for a core, the CPU time does not.
func esLoop(b *testing.B, body func()) {
	b.ReportAllocs()
	c0 := esCPUTime(b)
	n := 0
	for b.Loop() {
		body()
		n++
	}
	b.ReportMetric(float64(esCPUTime(b)-c0)/float64(n), "cpu-ns/op")
}

// esBenchSeries reads a benchmark series of testdata/reference/bench (the
// deterministic series of bench/time_r.R), or "monthly120": the first 120
// values of R's AirPassengers (data/AirPassengers.json, m = 12).
func esBenchSeries(b *testing.B, name string) ([]float64, int) {
	b.Helper()
	if name == "monthly120" {
		y, m := esDataset(b, "AirPassengers")
		return y[:120], m
	}
	var fx struct {
		Frequency int          `json:"frequency"`
		X         decompFloats `json:"x"`
	}
	esReadJSON(b, filepath.Join("testdata", "reference", "bench", name+".json"), &fx)
	if len(fx.X) == 0 {
		b.Fatalf("cannot read bench/%s.json", name)
	}
	return fx.X, fx.Frequency
}

// esBenchFit fits method to the series and forecasts h steps, b.N times.
func esBenchFit(b *testing.B, series string, method Method, h int) {
	y, m := esBenchSeries(b, series)
	esLoop(b, func() {
		f, err := method.Fit(y, m)
		if err != nil {
			b.Fatal(err)
		}
		if len(f.Forecast(h)) != h {
			b.Fatal("short forecast")
		}
	})
}

// BenchmarkSmoothingForm fits each of the 15 forms of smoothing_auto, one
// at a time, to the monthly 120-point series (fit only: parameters and
// initial states by maximum likelihood, admissibility check included).
func BenchmarkSmoothingForm(b *testing.B) {
	y, m := esBenchSeries(b, "monthly120")
	for _, form := range esAutoForms {
		b.Run(esShort(form), func(b *testing.B) {
			mm := m
			if form.season == esSeasonNone {
				mm = 1
			}
			esLoop(b, func() {
				if _, err := esFitForm("bench", y, mm, form); err != nil {
					b.Fatal(err)
				}
			})
		})
	}
}

// The methods, fit plus a 12-step forecast, on the monthly 120-point series.
func BenchmarkSmoothingAutoMonthly120(b *testing.B) {
	esBenchFit(b, "monthly120", SmoothingAuto{}, 12)
}
func BenchmarkHoltWintersMonthly120(b *testing.B) {
	esBenchFit(b, "monthly120", esMustHW(b, "", true, false), 12)
}
func BenchmarkSESMonthly120(b *testing.B)  { esBenchFit(b, "monthly120", SES{}, 12) }
func BenchmarkHoltMonthly120(b *testing.B) { esBenchFit(b, "monthly120", Holt{}, 12) }

// Holt-Winters with the additive season (ETS(A,A,A)) fit plus a 13-step
// forecast on the weekly series (m = 52): beside R's HoltWinters(x), also
// additive, in testdata/reference/bench/compare.sh.
func BenchmarkHoltWintersWeekly156(b *testing.B) {
	esBenchFit(b, "weekly156", esMustHW(b, FormAdditive, true, false), 13)
}

// The default, seasonal: auto (the seasonality test, then one or two
// seasonal forms or the non-seasonal one).
func BenchmarkHoltWintersWeekly156Auto(b *testing.B) {
	esBenchFit(b, "weekly156", esMustHW(b, "", true, false), 13)
}

func BenchmarkHoltWintersWeekly156Multiplicative(b *testing.B) {
	esBenchFit(b, "weekly156", esMustHW(b, FormMultiplicative, true, false), 13)
}

func BenchmarkHoltWintersWeekly156Damped(b *testing.B) {
	esBenchFit(b, "weekly156", esMustHW(b, FormAdditive, true, true), 13)
}

// Holt-Winters fit plus a 12-step forecast on the monthly series (m = 12).
func BenchmarkHoltWintersMonthly60(b *testing.B) {
	esBenchFit(b, "monthly60", esMustHW(b, FormAdditive, true, false), 12)
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

// esBenchEval times one likelihood evaluation of form on the weekly
// series: the inner loop of the simplex search.
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
	for b.Loop() {
		f.eval(u)
	}
}

func BenchmarkSmoothingEvalWeeklyAdditive(b *testing.B) {
	esBenchEval(b, esForm{trend: esTrendAdditive, season: esSeasonAdditive})
}

func BenchmarkSmoothingEvalWeeklyMultiplicative(b *testing.B) {
	esBenchEval(b, esForm{err: esErrorMultiplicative, trend: esTrendAdditive, season: esSeasonMultiplicative})
}

// The optimiser of the smoothing parameters, measured: the same search
// (ETS(A,A,A) on the monthly 120-point series, initial states fixed at
// their start values, from esStartParams on the logit scale, initial
// simplex size 1) by the package's simplex (esSimplex, used by the fit)
// and by gonum.org/v1/gonum/optimize.NelderMead through optimize.Minimize.
// Each reports the evaluations per search and the −2·log L reached
// (best-f), so that speed is compared at equal quality.
func esBenchSearchSetup(b *testing.B) (*esFitter, []float64) {
	y, m := esBenchSeries(b, "monthly120")
	f := new(esFitter)
	f.reset(y, m)
	form := esForm{trend: esTrendAdditive, season: esSeasonAdditive}
	if err := f.initStates(form); err != nil {
		b.Fatal(err)
	}
	f.setSlots(form)
	f.p = esStartParams
	u := make([]float64, f.d)
	f.toU(u)
	return f, u
}

func BenchmarkSmoothingSearchSimplex(b *testing.B) {
	f, u0 := esBenchSearchSetup(b)
	u := make([]float64, len(u0))
	var res esSimplexResult
	esLoop(b, func() {
		copy(u, u0)
		res = f.nm.minimize(f, u, esSimplexStep, esFTol, esXTol, esEvalsPerDim*f.d, false)
	})
	b.ReportMetric(float64(res.Evals), "evals/op")
	b.ReportMetric(res.F, "best-f")
}

func BenchmarkSmoothingSearchGonum(b *testing.B) {
	f, u0 := esBenchSearchSetup(b)
	p := optimize.Problem{Func: func(u []float64) float64 { return f.eval(u) }}
	var res *optimize.Result
	esLoop(b, func() {
		settings := &optimize.Settings{
			Converger:       &optimize.FunctionConverge{Relative: esFTol, Iterations: 3 * f.d},
			FuncEvaluations: esEvalsPerDim * f.d,
		}
		var err error
		res, err = optimize.Minimize(p, u0, settings, &optimize.NelderMead{SimplexSize: esSimplexStep})
		if err != nil && res == nil {
			b.Fatal(err)
		}
	})
	b.ReportMetric(float64(res.Stats.FuncEvaluations), "evals/op")
	b.ReportMetric(res.F, "best-f")
}
