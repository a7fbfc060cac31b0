package engines

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// regDaily is an invented daily series of n days: level 100, a weekly
// pattern, a yearly wave of amplitude 20, AR(1) noise (φ = 0.5, sd 3), and
// three drivers: a promotion (+30 on 5% of days), a holiday (−40, a few
// days a year) and a price index (−15 per unit, stepping once). Days in
// closed are missing. The generator is seeded for the test's
// reproducibility; the drivers run h days past the history.
func regDaily(n, h int, closed []int) (y []float64, x [][]float64, names []string) {
	rng := rand.New(rand.NewPCG(7, 11))
	week := []float64{-8, -4, 0, 2, 6, 12, -8}
	promo := make([]float64, n+h)
	hol := make([]float64, n+h)
	price := make([]float64, n+h)
	for t := range promo {
		if rng.Float64() < 0.05 {
			promo[t] = 1
		}
		if t%365 == 359 || t%365 == 0 || t%365 == 120 {
			hol[t] = 1
		}
		price[t] = 1
		if t >= n/2 {
			price[t] = 1.2
		}
	}
	y = make([]float64, n)
	e := 0.0
	for t := range y {
		e = 0.5*e + 3*rng.NormFloat64()
		y[t] = 100 + week[t%7] + 20*math.Sin(2*math.Pi*float64(t)/365) + 30*promo[t] - 40*hol[t] - 15*(price[t]-1)*10 + e
	}
	for _, t := range closed {
		y[t] = math.NaN()
	}
	return y, [][]float64{promo, hol, price}, []string{"promo", "holiday", "price"}
}

func TestRegressionARIMADailyRecoversDrivers(t *testing.T) {
	n, h := 1095, 14
	y, x, names := regDaily(n, h, []int{100, 101, 459, 460, 824, 825})
	y0 := append([]float64(nil), y...)
	c := Context{Seasons: []int{7, 365}, Drivers: x, DriverNames: names, H: h}
	fit, err := RegressionARIMA{}.FitContext(y, 7, c)
	if err != nil {
		t.Fatal(err)
	}
	for i := range y {
		if y[i] != y0[i] && !(math.IsNaN(y[i]) && math.IsNaN(y0[i])) {
			t.Fatal("Fit modified y")
		}
	}
	f := fit.(*RegressionARIMAFitted)
	got := map[string]float64{}
	for _, p := range f.Coefficients() {
		got[p.Name] = p.Value
	}
	// True effects: promo +30, holiday −40, price −150 per unit (the
	// generator's 15 × 10); a tolerance of a few noise sd / √days on.
	for name, want := range map[string]float64{"promo": 30, "holiday": -40, "price": -150} {
		if math.Abs(got[name]-want) > 0.1*math.Abs(want)+2 {
			t.Errorf("%s: %.2f, true %.0f", name, got[name], want)
		}
	}
	t.Logf("%s; coefficients %v", f.Describe(), f.Coefficients())
	for _, part := range []string{"fourier: 365 × ", ")7 ", "drivers: promo, holiday, price", "estimated with the missing periods filled"} {
		if !strings.Contains(f.Describe(), part) {
			t.Errorf("model %q lacks %q", f.Describe(), part)
		}
	}
	fc := f.Forecast(h)
	if len(fc) != h {
		t.Fatalf("%d forecasts", len(fc))
	}
	for i, v := range fc {
		if math.IsNaN(v) || v < 20 || v > 200 {
			t.Errorf("step %d: forecast %v", i+1, v)
		}
	}
	if v := f.ForecastVariance(h); len(v) != h || !(v[0] > 0) || v[h-1] < v[0] {
		t.Errorf("forecast variance %v", v)
	}
}

// A driver zero over the history is left out and noted; without drivers
// and with a short season the method is the automatic ARIMA of the
// regression engine.
func TestRegressionARIMALeavesOutAndPlain(t *testing.T) {
	n, h := 200, 7
	y, x, _ := regDaily(n, h, nil)
	zero := make([]float64, n+h)
	zero[n+2] = 1 // on only in the future
	c := Context{Drivers: [][]float64{x[0], zero}, DriverNames: []string{"promo", "launch"}, H: h}
	fit, err := RegressionARIMA{}.FitContext(y, 7, c)
	if err != nil {
		t.Fatal(err)
	}
	f := fit.(*RegressionARIMAFitted)
	if d := f.Describe(); !strings.Contains(d, "driver launch left out (zero over the history)") || !strings.Contains(d, "drivers: promo;") {
		t.Errorf("model %q", d)
	}
	if len(f.Warnings()) == 0 || !strings.Contains(f.Warnings()[0], "launch") {
		t.Errorf("warnings %v", f.Warnings())
	}
	plain, err := RegressionARIMA{}.Fit(y, 7)
	if err != nil {
		t.Fatal(err)
	}
	ref, err := FitRegressionARIMA(y, nil, 7, AutoRegressionARIMAOptions())
	if err != nil {
		t.Fatal(err)
	}
	pf, rf := plain.Forecast(h), must(ref.ForecastNoRegressors(h))
	for i := range pf {
		if pf[i] != rf[i] {
			t.Fatalf("plain fit forecast %v, the engine's %v", pf, rf)
		}
	}
	if d := plain.(*RegressionARIMAFitted).Describe(); strings.Contains(d, "drivers") || strings.Contains(d, "fourier") {
		t.Errorf("plain model %q", d)
	}
}

func must[T any](v T, err error) T {
	if err != nil {
		panic(err)
	}
	return v
}

// BenchmarkRegressionARIMADaily: one fit + 14-step forecast of a 3-year
// daily series (1095 values, seasons 7 and 365, 3 drivers), with six
// closed days (the two-step fit over gaps) and without.
func BenchmarkRegressionARIMADaily(b *testing.B) {
	for _, bc := range []struct {
		name   string
		closed []int
	}{{"closed6", []int{100, 101, 459, 460, 824, 825}}, {"complete", nil}} {
		b.Run(bc.name, func(b *testing.B) {
			n, h := 1095, 14
			y, x, names := regDaily(n, h, bc.closed)
			c := Context{Seasons: []int{7, 365}, Drivers: x, DriverNames: names, H: h}
			esLoop(b, func() {
				f, err := RegressionARIMA{}.FitContext(y, 7, c)
				if err != nil {
					b.Fatal(err)
				}
				f.Forecast(h)
			})
		})
	}
}

// Drivers that cannot be estimated are left out, each named with its
// reason: constant over the history, a copy of an earlier driver, and one
// on only on closed days (zero wherever the series is observed).
func TestRegressionARIMAScreensDrivers(t *testing.T) {
	n, h := 150, 7
	y, x, _ := regDaily(n, h, []int{20, 21})
	constant := make([]float64, n+h)
	onClosed := make([]float64, n+h)
	for i := range constant {
		constant[i] = 2
	}
	onClosed[20], onClosed[21], onClosed[n+1] = 1, 1, 1
	c := Context{Drivers: [][]float64{x[0], constant, x[0], onClosed}, DriverNames: []string{"promo", "flat", "promo_copy", "closed_only"}, H: h}
	fit, err := RegressionARIMA{}.FitContext(y, 7, c)
	if err != nil {
		t.Fatal(err)
	}
	d := fit.(*RegressionARIMAFitted).Describe()
	for _, want := range []string{"drivers: promo;", "driver flat left out (constant over the history)",
		"driver promo_copy left out (a combination of the drivers before it)", "driver closed_only left out (zero over the history)"} {
		if !strings.Contains(d, want) {
			t.Errorf("model %q lacks %q", d, want)
		}
	}
	if fc := fit.Forecast(h); len(fc) != h || math.IsNaN(fc[0]) {
		t.Errorf("forecast %v", fc)
	}
}
