package engines

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// regInventedSeries is an invented weekly-cycle daily series with a
// promotion regressor (1 on promotion days) and a price regressor:
// y = 100 + 7-day pattern + 30·promo − 4·(price − 10) + AR(1) noise
// (φ = 0.6, σ = 3).
func regInventedSeries(n int, seed1 uint64) (y []float64, x [][]float64) {
	rng := rand.New(rand.NewPCG(seed1, 99))
	promo := make([]float64, n)
	price := make([]float64, n)
	y = make([]float64, n)
	week := []float64{-10, -4, 0, 2, 6, 12, -6}
	eta := 0.0
	for t := 0; t < n; t++ {
		if rng.Float64() < 0.1 {
			promo[t] = 1
		}
		price[t] = 10 + float64((t/30)%3) - 1
		eta = 0.6*eta + 3*rng.NormFloat64()
		y[t] = 100 + week[t%7] + 30*promo[t] - 4*(price[t]-10) + eta
	}
	return y, [][]float64{promo, price}
}

// TestRegressionARIMAAutoRecovers: with automatic orders on the invented
// series (3 years, daily, m = 7), the promotion effect is recovered
// within 3 units of the generating 30 and the price slope within 1.5 of
// −4 (about three standard errors of each), the errors are not
// differenced, and a 1-in-10 share of missing values changes little.
func TestRegressionARIMAAutoRecovers(t *testing.T) {
	y, x := regInventedSeries(3*364, 5)
	opt := AutoRegressionARIMAOptions()
	opt.Names = []string{"promo", "price"}
	for _, gaps := range []bool{false, true} {
		yy := append([]float64(nil), y...)
		if gaps {
			for t := 3; t < len(yy); t += 10 {
				yy[t] = math.NaN()
			}
		}
		f, err := FitRegressionARIMA(yy, x, 7, opt)
		if err != nil {
			t.Fatal(err)
		}
		b := f.Coefficients()
		t.Logf("gaps %v: %s, promo %.3f, price %.3f, warnings %v", gaps, f.Describe(), b[0], b[1], f.Warnings())
		if math.Abs(b[0]-30) > 3 || math.Abs(b[1]+4) > 1.5 {
			t.Errorf("gaps %v: b = %v, want about [30 -4]", gaps, b)
		}
		if f.Errors().o.d != 0 {
			t.Errorf("gaps %v: d = %d for stationary errors", gaps, f.Errors().o.d)
		}
		if p := f.Params(); p[0].Name != "promo" || p[1].Name != "price" {
			t.Errorf("params %v", p[:2])
		}
		// A promotion over the horizon lifts the forecast by about b_promo.
		h := 14
		promo := make([]float64, h)
		price := make([]float64, h)
		for i := range price {
			price[i] = 10
		}
		base, err := f.Forecast([][]float64{promo, price})
		if err != nil {
			t.Fatal(err)
		}
		promo[7] = 1
		lifted, _ := f.Forecast([][]float64{promo, price})
		if d := lifted[7] - base[7]; math.Abs(d-b[0]) > 1e-9 {
			t.Errorf("promotion lift %.6f, b %.6f", d, b[0])
		}
	}
}

// TestRegressionARIMAErrors: bad regressors name themselves.
func TestRegressionARIMAErrors(t *testing.T) {
	y, x := regInventedSeries(200, 1)
	one := make([]float64, len(y))
	for i := range one {
		one[i] = 1
	}
	opt := RegressionARIMAOptions{P: 1, D: 1, Q: 0, Names: []string{"promo", "level"}}
	if _, err := FitRegressionARIMA(y, [][]float64{x[0], one}, 1, opt); err == nil || !strings.Contains(err.Error(), "level is zero") {
		t.Errorf("constant regressor with d = 1: %v", err)
	}
	twice := make([]float64, len(y))
	for i := range twice {
		twice[i] = 2 * x[0][i]
	}
	opt = RegressionARIMAOptions{P: 1, Names: []string{"promo", "promo2"}}
	if _, err := FitRegressionARIMA(y, [][]float64{x[0], twice}, 1, opt); err == nil || !strings.Contains(err.Error(), "promo2 is a combination") {
		t.Errorf("collinear: %v", err)
	}
	bad := append([]float64(nil), x[1]...)
	bad[17] = math.NaN()
	opt = RegressionARIMAOptions{P: 1, Names: []string{"promo", "price"}}
	if _, err := FitRegressionARIMA(y, [][]float64{x[0], bad}, 1, opt); err == nil || !strings.Contains(err.Error(), "price has no finite value at position 17") {
		t.Errorf("NaN regressor: %v", err)
	}
	if _, err := FitRegressionARIMA(y, [][]float64{x[0][:10], x[1]}, 1, opt); err == nil || !strings.Contains(err.Error(), "promo has 10 values") {
		t.Errorf("short regressor: %v", err)
	}
	f, err := FitRegressionARIMA(y, x, 1, opt)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := f.Forecast([][]float64{{0, 1}}); err == nil {
		t.Error("one future regressor of two accepted")
	}
	if _, err := f.Forecast([][]float64{{0, 1}, {1}}); err == nil || !strings.Contains(err.Error(), "price has 1 values") {
		t.Errorf("ragged future: %v", err)
	}
	if _, err := FitRegressionARIMA(y, x, 1, RegressionARIMAOptions{P: 9}); err == nil {
		t.Error("p = 9 accepted")
	}
}

// TestRegressionARIMANoRegressorsIsARIMA: without regressors the fit is
// the arima method's at the same fixed orders (same log-likelihood to
// 1e-9 relative).
func TestRegressionARIMANoRegressorsIsARIMA(t *testing.T) {
	y, _ := regInventedSeries(300, 2)
	f, err := FitRegressionARIMA(y, nil, 7, RegressionARIMAOptions{P: 1, Q: 1, SeasonalP: 1, Constant: true})
	if err != nil {
		t.Fatal(err)
	}
	a, err := fitArimaOrders(y, arimaOrders{p: 1, q: 1, sp: 1, m: 7, constant: true})
	if err != nil {
		t.Fatal(err)
	}
	if e := arimaRelErr(f.LogLik(), a.LogLik()); e > 1e-9 {
		t.Errorf("loglik %.12g, arima %.12g", f.LogLik(), a.LogLik())
	}
	fc, err := f.ForecastNoRegressors(5)
	if err != nil {
		t.Fatal(err)
	}
	want := a.Forecast(5)
	for i := range fc {
		if arimaRelErr(fc[i], want[i]) > 1e-6 {
			t.Errorf("forecast %d: %.8g, arima %.8g", i, fc[i], want[i])
		}
	}
}

func BenchmarkRegressionARIMAFixed(b *testing.B) {
	y, x := regInventedSeries(3*364, 5)
	opt := RegressionARIMAOptions{P: 1, SeasonalP: 1, Constant: true}
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		if _, err := FitRegressionARIMA(y, x, 7, opt); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkRegressionARIMAAuto(b *testing.B) {
	y, x := regInventedSeries(3*364, 5)
	opt := AutoRegressionARIMAOptions()
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		if _, err := FitRegressionARIMA(y, x, 7, opt); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkRegressionARIMAAutoGaps(b *testing.B) {
	y, x := regInventedSeries(3*364, 5)
	for t := 3; t < len(y); t += 10 {
		y[t] = math.NaN()
	}
	opt := AutoRegressionARIMAOptions()
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		if _, err := FitRegressionARIMA(y, x, 7, opt); err != nil {
			b.Fatal(err)
		}
	}
}

// TestRegressionARIMAGapsDifferencedProfile: for a differenced model on a
// series with gaps (no R reference: R can fit it only through its kappa
// prior), the joint optimum is checked against the arima engine: at the
// fitted b, the ARIMA fit of y − Xb has the same log-likelihood (1e-8
// relative), and moving any b_j by ±2% of its value lowers the profile
// log-likelihood.
func TestRegressionARIMAGapsDifferencedProfile(t *testing.T) {
	y, x := regInventedSeries(400, 8)
	for i := range y {
		y[i] += 0.05 * float64(i) * float64(i%3) // a wandering level
	}
	for _, i := range []int{4, 50, 51, 130, 260, 399} {
		y[i] = math.NaN()
	}
	opt := RegressionARIMAOptions{P: 1, D: 1, Q: 1, Names: []string{"promo", "price"}}
	f, err := FitRegressionARIMA(y, x, 1, opt)
	if err != nil {
		t.Fatal(err)
	}
	if !f.Errors().levels {
		t.Fatal("the levels filter was not used")
	}
	profile := func(b []float64) float64 {
		u := make([]float64, len(y))
		for i := range y {
			u[i] = y[i] - b[0]*x[0][i] - b[1]*x[1][i]
		}
		a, err := fitArimaOrders(u, arimaOrders{p: 1, d: 1, q: 1, m: 1})
		if err != nil {
			t.Fatal(err)
		}
		return a.LogLik()
	}
	b := f.Coefficients()
	at := profile(b)
	if e := arimaRelErr(at, f.LogLik()); e > 1e-8 {
		t.Errorf("profile at b %.10g, joint fit %.10g (rel %.2g)", at, f.LogLik(), e)
	}
	for j := range b {
		for _, s := range []float64{-0.02, 0.02} {
			bb := append([]float64(nil), b...)
			bb[j] *= 1 + s
			if p := profile(bb); p >= at {
				t.Errorf("b%d moved by %+.0f%%: profile %.10g ≥ %.10g at the fit", j+1, 100*s, p, at)
			}
		}
	}
}

// TestRegressionARIMAAutoTrendRegressor: a linear-trend regressor on a
// series that needs differencing becomes the drift after differencing;
// the automatic fit then drops the constant (with a warning) instead of
// failing, and recovers the slope (0.5; within 0.25, the
// mean step of the walk having sd 0.07).
func TestRegressionARIMAAutoTrendRegressor(t *testing.T) {
	rng := rand.New(rand.NewPCG(4, 4))
	n := 200
	y := make([]float64, n)
	trend := make([]float64, n)
	walk := 0.0
	for i := range y {
		trend[i] = float64(i)
		walk += rng.NormFloat64()
		y[i] = 10 + 0.5*float64(i) + walk
	}
	f, err := FitRegressionARIMA(y, [][]float64{trend}, 1, AutoRegressionARIMAOptions())
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("%s, slope %.3f, warnings %v", f.Describe(), f.Coefficients()[0], f.Warnings())
	if f.Errors().o.d != 1 {
		t.Fatalf("d = %d for a random walk with drift", f.Errors().o.d)
	}
	if f.Errors().o.constant || len(f.Warnings()) == 0 {
		t.Errorf("constant %v, warnings %v", f.Errors().o.constant, f.Warnings())
	}
	if b := f.Coefficients()[0]; math.Abs(b-0.5) > 0.25 {
		t.Errorf("slope %.3f, want about 0.5", b)
	}
}
