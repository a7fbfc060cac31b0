package engines

import (
	"encoding/json"
	"os"
	"testing"
)

// Benchmarks of the arima method on the invented monthly series
// testdata/reference/bench/monthly120.json (n = 120, m = 12); R's
// stats::arima at the same orders is timed by
// testdata/reference/bench/arima_vs_r.sh.

func arimaBenchSeries(b *testing.B) ([]float64, int) {
	raw, err := os.ReadFile("testdata/reference/bench/monthly120.json")
	if err != nil {
		b.Fatal(err)
	}
	var fx struct {
		Frequency int       `json:"frequency"`
		X         []float64 `json:"x"`
	}
	if err := json.Unmarshal(raw, &fx); err != nil || len(fx.X) != 120 {
		b.Fatalf("monthly120: %v", err)
	}
	return fx.X, fx.Frequency
}

func benchArima(b *testing.B, o Options) {
	y, m := arimaBenchSeries(b)
	method, err := New("arima", o)
	if err != nil {
		b.Fatal(err)
	}
	f, err := method.Fit(y, m)
	if err != nil {
		b.Fatal(err)
	}
	b.Logf("form: %s", f.(Described).Describe())
	b.ReportAllocs()
	for b.Loop() {
		f, err := method.Fit(y, m)
		if err != nil {
			b.Fatal(err)
		}
		if len(f.Forecast(12)) != 12 {
			b.Fatal("short forecast")
		}
	}
}

// Automatic orders (tests, stepwise search, final ML fit) + 12 steps.
func BenchmarkArimaAutoMonthly120(b *testing.B) { benchArima(b, Options{}) }

// The airline model, fixed: one exact ML fit + 12 steps.
func BenchmarkArimaAirlineMonthly120(b *testing.B) {
	benchArima(b, Options{"p": 0, "d": 1, "q": 1, "seasonal_p": 0, "seasonal_d": 1, "seasonal_q": 1})
}

// A non-seasonal ARMA(2,1) with mean, fixed.
func BenchmarkArima201Monthly120(b *testing.B) {
	benchArima(b, Options{"p": 2, "d": 0, "q": 1, "seasonal_p": 0, "seasonal_d": 0, "seasonal_q": 0})
}

// One exact likelihood evaluation of arima(1,0,0)(0,1,1)12 with drift on
// the seasonally differenced series (state dimension 13, 108 values), by
// the Chandrasekhar recursions the optimiser uses.
func BenchmarkArimaLikelihoodMonthly120(b *testing.B) {
	y, _ := arimaBenchSeries(b)
	o := arimaOrders{p: 1, sd: 1, sq: 1, m: 12, constant: true}
	pr := newArimaProblem(o, arimaDifference(y, o.diffPoly()))
	x := []float64{0.37, 1.5, -0.02}
	if v := pr.exact(x); v >= arimaPenalty {
		b.Fatal("likelihood not evaluated")
	}
	for b.Loop() {
		pr.exact(x)
	}
}
