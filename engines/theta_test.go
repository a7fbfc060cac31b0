package engines

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// thetaFixture is one file of testdata/reference/theta, written by
// theta/make_theta.py from statsmodels 0.13.5 ThetaModel (see
// REFERENCE-METHODS.md, section Theta).
type thetaFixture struct {
	Source  string       `json:"source"`
	N       int          `json:"n"`
	X       decompFloats `json:"x"`
	Options struct {
		Period        int    `json:"period"`
		Deseasonalize bool   `json:"deseasonalize"`
		UseTest       *bool  `json:"use_test"`
		Method        string `json:"method"`
	} `json:"options"`
	Seasonality struct {
		SeasonalUsed bool    `json:"seasonal_used"`
		MethodUsed   *string `json:"method_used"`
		Test         *struct {
			BartlettStatistic float64 `json:"bartlett_statistic"`
			BartlettSeasonal  bool    `json:"bartlett_seasonal"`
		} `json:"test"`
	} `json:"seasonality"`
	SeasonalIndices decompFloats `json:"seasonal_indices"`
	AdjustedSeries  decompFloats `json:"adjusted_series"`
	B0              float64      `json:"b0"`
	Alpha           float64      `json:"alpha"`
	SES             struct {
		SSEAtAlpha           float64 `json:"sse_at_alpha"`
		OneStep              float64 `json:"one_step"`
		AlphaTightBoundedMin float64 `json:"alpha_tight_bounded_min"`
		SSEAtTightAlpha      float64 `json:"sse_at_tight_alpha"`
	} `json:"ses"`
	Forecast struct {
		H      int          `json:"h"`
		Values decompFloats `json:"values"`
		Plain  decompFloats `json:"values_without_seasonal_step"`
	} `json:"forecast"`

	deseasonalize string // the Theta option that matches Options
}

// thetaUnmatched names the fixtures whose statsmodels options have no
// Theta counterpart: both used additive deseasonalising (method="additive",
// and method="multiplicative", which statsmodels 0.13.5 maps to additive;
// see REFERENCE-METHODS.md), and Theta only deseasonalises
// multiplicatively.
var thetaUnmatched = map[string]bool{
	"AirPassengers_deseason_additive":       true,
	"AirPassengers_deseason_multiplicative": true,
}

// loadThetaFixtures reads every theta fixture whose options Theta can
// reproduce and sets the matching deseasonalize option:
//
//	deseasonalize=False                                     → never
//	deseasonalize=True, use_test=False, method="auto"       → always
//	deseasonalize=True, use_test=True,  method="auto"       → auto
func loadThetaFixtures(t *testing.T) map[string]*thetaFixture {
	t.Helper()
	paths, err := filepath.Glob(filepath.Join("testdata", "reference", "theta", "*.json"))
	if err != nil {
		t.Fatal(err)
	}
	if len(paths) != 14 {
		t.Fatalf("theta: found %d fixtures, want 14 (regenerate: see testdata/reference/REFERENCE-METHODS.md)", len(paths))
	}
	out := make(map[string]*thetaFixture)
	for _, p := range paths {
		name := strings.TrimSuffix(filepath.Base(p), ".json")
		if thetaUnmatched[name] {
			continue
		}
		b, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		fx := new(thetaFixture)
		if err := json.Unmarshal(b, fx); err != nil {
			t.Fatalf("%s: %v", p, err)
		}
		o := fx.Options
		switch {
		case !o.Deseasonalize:
			fx.deseasonalize = "never"
		case o.Method == "auto" && o.UseTest != nil && !*o.UseTest:
			fx.deseasonalize = "always"
		case o.Method == "auto" && o.UseTest != nil && *o.UseTest:
			fx.deseasonalize = "auto"
		default:
			t.Fatalf("%s: options %+v have no Theta counterpart; list the file in thetaUnmatched", p, o)
		}
		if fx.Source == "" || len(fx.X) != fx.N || len(fx.Forecast.Values) != fx.Forecast.H {
			t.Fatalf("%s: incomplete fixture", p)
		}
		out[name] = fx
	}
	if len(out) != 12 {
		t.Fatalf("theta: %d usable fixtures, want 12", len(out))
	}
	return out
}

// thetaExpected returns the forecast Theta should give for fx: statsmodels'
// values, or, where statsmodels 0.13.5 adds a seasonal component of ones
// after a negative test, the plain forecast it records beside them
// (REFERENCE-METHODS.md, "Caveat: … no seasonality found").
func thetaExpected(fx *thetaFixture) []float64 {
	if fx.Forecast.Plain != nil {
		return fx.Forecast.Plain
	}
	return fx.Forecast.Values
}

// thetaRelClose is decompClose with the tolerance relative to max(1, |want|).
func thetaRelClose(t *testing.T, what string, got, want []float64, tol float64) float64 {
	t.Helper()
	if len(got) != len(want) {
		t.Errorf("%s: len %d, want %d", what, len(got), len(want))
		return math.Inf(1)
	}
	worst := 0.0
	for i := range got {
		d := math.Abs(got[i]-want[i]) / math.Max(1, math.Abs(want[i]))
		worst = math.Max(worst, d)
		if !(d <= tol) {
			t.Errorf("%s[%d] = %.17g, want %.17g (rel diff %.3g > %.0e)", what, i, got[i], want[i], d, tol)
		}
	}
	return worst
}

func thetaParts(f Fitted) *thetaFit {
	switch v := f.(type) {
	case *thetaFit:
		return v
	case *thetaSeasonalFit:
		return v.thetaFit
	}
	panic("not a theta fit")
}

func mustTheta(t testing.TB, deseasonalize string) *Theta {
	t.Helper()
	th, err := NewTheta(deseasonalize)
	if err != nil {
		t.Fatal(err)
	}
	return th
}

// TestThetaMatchesStatsmodelsFixedAlpha compares every step with statsmodels
// 0.13.5 ThetaModel (fixtures in testdata/reference/theta; options mapped
// as in loadThetaFixtures) on AirPassengers, UKgas, JohnsonJohnson,
// USAccDeaths, nottem, Nile, LakeHuron and WWWusage, with the smoothing
// constant fixed at statsmodels' estimate. With alpha given everything else
// is closed-form, so the tolerance is 1e-12 relative: float64 round-off in
// the moving averages, the regression and the smoothing recursion, on
// series of up to 240 values (the largest difference seen is 2.5e-15; the
// tolerance leaves room for other rounding, e.g. fused multiply-adds).
func TestThetaMatchesStatsmodelsFixedAlpha(t *testing.T) {
	const tol = 1e-12
	worst := 0.0
	for name, fx := range loadThetaFixtures(t) {
		t.Run(name, func(t *testing.T) {
			src := fx.Source + ": "
			f, err := mustTheta(t, fx.deseasonalize).fit(fx.X, fx.Options.Period, fx.Alpha)
			if err != nil {
				t.Fatalf("%s%v", src, err)
			}
			p := thetaParts(f)
			if len(p.warnings) != 0 {
				t.Errorf("warnings %q, want none", p.warnings)
			}
			sf, seasonal := f.(*thetaSeasonalFit)
			if seasonal != fx.Seasonality.SeasonalUsed {
				t.Fatalf("%sdeseasonalised = %v, statsmodels %v", src, seasonal, fx.Seasonality.SeasonalUsed)
			}
			wantDescribe := "theta(deseasonalized=none)"
			if seasonal {
				if got := *fx.Seasonality.MethodUsed; got != "mul" {
					t.Fatalf("fixture used %q decomposition", got)
				}
				wantDescribe = "theta(deseasonalized=multiplicative)"
				w := thetaRelClose(t, src+"seasonal_indices", sf.Components().Factors, fx.SeasonalIndices, tol)
				w = math.Max(w, thetaRelClose(t, src+"adjusted_series", sf.Components().Adjusted, fx.AdjustedSeries, tol))
				worst = math.Max(worst, w)
			}
			if got := f.(Described).Describe(); got != wantDescribe {
				t.Errorf("Describe() = %q, want %q", got, wantDescribe)
			}
			w := thetaRelClose(t, src+"b0", []float64{p.b0}, []float64{fx.B0}, tol)
			w = math.Max(w, thetaRelClose(t, src+"ses.one_step", []float64{p.level}, []float64{fx.SES.OneStep}, tol))
			w = math.Max(w, thetaRelClose(t, src+"forecast", f.Forecast(fx.Forecast.H), thetaExpected(fx), tol))
			worst = math.Max(worst, w)
		})
	}
	t.Logf("largest relative difference from statsmodels ThetaModel at its alpha: %.3g", worst)
}

// TestThetaAlphaMatchesTightOptimum checks the smoothing-constant search
// against the fixtures' ses.alpha_tight_bounded_min, a scipy
// minimize_scalar(method="bounded", xatol=1e-10) of the same sum of squared
// errors on [0, 1] (make_theta.py). Both are derivative-free searches whose
// precision is limited to about √ε·α ≈ 1.5e-8·α by the flatness of the
// minimum, so alpha must agree to 1e-7; the sum of squares, which is flat
// there, must be no larger than scipy's by more than 1e-12 relative, and
// no larger than statsmodels' own (statsmodels' alpha is 1e-6…1.4e-4 off the
// minimum). The forecast is then compared with statsmodels' at 2e-5
// relative, the effect of that alpha gap (largest: AirPassengers
// nodeseason, alpha 0.99988 against 1, 1.2e-5).
func TestThetaAlphaMatchesTightOptimum(t *testing.T) {
	for name, fx := range loadThetaFixtures(t) {
		t.Run(name, func(t *testing.T) {
			src := fx.Source + ": "
			f, err := mustTheta(t, fx.deseasonalize).Fit(fx.X, fx.Options.Period)
			if err != nil {
				t.Fatalf("%s%v", src, err)
			}
			p := thetaParts(f)
			if len(p.warnings) != 0 {
				t.Errorf("warnings %q, want none", p.warnings)
			}
			if d := math.Abs(p.alpha - fx.SES.AlphaTightBoundedMin); !(d <= 1e-7) {
				t.Errorf("%salpha = %.12g, tight optimum %.12g (diff %.3g > 1e-7)", src, p.alpha, fx.SES.AlphaTightBoundedMin, d)
			}
			x := fx.X
			if sf, ok := f.(*thetaSeasonalFit); ok {
				x = sf.Components().Adjusted
			}
			sse, _ := esLevelFilter(x, p.alpha, x[0])
			if !(sse <= fx.SES.SSEAtTightAlpha*(1+1e-12)) || !(sse <= fx.SES.SSEAtAlpha) {
				t.Errorf("%sSSE %.17g at alpha %.12g; scipy %.17g, statsmodels %.17g", src, sse, p.alpha, fx.SES.SSEAtTightAlpha, fx.SES.SSEAtAlpha)
			}
			thetaRelClose(t, src+"forecast (own alpha)", f.Forecast(fx.Forecast.H), thetaExpected(fx), 2e-5)
		})
	}
}

// TestThetaByHand checks the forecast formula on series simple enough to
// work out (common practice).
func TestThetaByHand(t *testing.T) {
	// A straight line y_t = 2t + 1, t = 1…10. Every one-step error of SES
	// from ℓ_0 = y_1 is at least 2·(the lag), smallest at α = 1 where each
	// error is exactly 2: SSE = 9·4. So α = 1, ℓ_n = y_10 = 21, b0 = 2 and
	// ŷ_{10+h} = 21 + (2/2)·(h − 1 + 1 − 0) = 21 + h.
	y := make([]float64, 10)
	for i := range y {
		y[i] = 2*float64(i+1) + 1
	}
	got, f := baselineForecast(t, mustTheta(t, ""), y, 1, 3)
	decompClose(t, "line", got, []float64{22, 23, 24}, 1e-12)
	if p := thetaParts(f); p.alpha != 1 || p.b0 != 2 {
		t.Errorf("line: alpha %v, b0 %v; want 1, 2", p.alpha, p.b0)
	}

	// Fixed α = 0.5 on y = 4, 8, 6, 10 (no season):
	// ℓ: 4 → 4 (y_1) → 6 → 6 → 8; b0 = slope of (1,4), (2,8), (3,6), (4,10):
	// t̄ = 2.5, ȳ = 7, Σ(t−t̄)(y−ȳ) = (−1.5)(−3) + (−.5)(1) + (.5)(−1) + (1.5)(3)
	// = 8, Σ(t−t̄)² = 5, b0 = 1.6. The bracket h − 1 + 1/α − (1−α)^4/α
	// = h − 1 + 2 − 0.125 = h + 0.875; ŷ = 8 + 0.8·(h + 0.875).
	y = []float64{4, 8, 6, 10}
	f, err := mustTheta(t, "never").fit(y, 1, 0.5)
	if err != nil {
		t.Fatal(err)
	}
	decompClose(t, "alpha 0.5", f.Forecast(2), []float64{8 + 0.8*1.875, 8 + 0.8*2.875}, 1e-12)

	// The same with a leading missing value: t = 1 is the first observed
	// value, so nothing changes; with an inner missing value the level is
	// carried through it and n counts it: y = 4, 8, NaN, 6, 10 gives
	// ℓ: 4, 6, 6, 6, 8; b0 through (1,4), (2,8), (4,6), (5,10): t̄ = 3,
	// ȳ = 7, Σ = (−2)(−3) + (−1)(1) + (1)(−1) + (2)(3) = 10, Σ(t−t̄)² = 10,
	// b0 = 1; bracket h − 1 + 2 − 0.5^5·2 = h + 0.9375.
	f, err = mustTheta(t, "never").fit([]float64{math.NaN(), 4, 8, 6, 10}, 1, 0.5)
	if err != nil {
		t.Fatal(err)
	}
	decompClose(t, "leading NaN", f.Forecast(2), []float64{8 + 0.8*1.875, 8 + 0.8*2.875}, 1e-12)
	f, err = mustTheta(t, "never").fit([]float64{4, 8, math.NaN(), 6, 10}, 1, 0.5)
	if err != nil {
		t.Fatal(err)
	}
	decompClose(t, "inner NaN", f.Forecast(2), []float64{8 + 0.5*1.9375, 8 + 0.5*2.9375}, 1e-12)
}

// TestThetaSESRecursion pins esLevelFilter, the level-only recursion Theta smooths with, by hand (common practice): x = 10,
// 12, 11, α = 0.25: errors 0, 2, 0.5 (ℓ = 10, 10, 10.5, 10.625), SSE 4.25.
func TestThetaSESRecursion(t *testing.T) {
	sse, level := esLevelFilter([]float64{10, 12, 11}, 0.25, 10)
	if sse != 4.25 || level != 10.625 {
		t.Errorf("sse %v, level %v; want 4.25, 10.625", sse, level)
	}
	sse, level = esLevelFilter([]float64{10, math.NaN(), 12, 11}, 0.25, 10)
	if sse != 4.25 || level != 10.625 {
		t.Errorf("with NaN: sse %v, level %v; want 4.25, 10.625", sse, level)
	}
}

// TestThetaBrent checks the minimiser on functions with known minima
// (common practice): an interior minimum, minima near each end, and a
// non-smooth one.
func TestThetaBrent(t *testing.T) {
	for _, tc := range []struct {
		name string
		f    func(float64) float64
		a, b float64
		want float64
	}{
		{"quadratic", func(x float64) float64 { return (x - 0.3) * (x - 0.3) }, 0, 1, 0.3},
		{"quartic", func(x float64) float64 { return math.Pow(x-0.7, 4) + 1 }, 0.5, 1, 0.7},
		{"abs", func(x float64) float64 { return math.Abs(x - 0.123) }, 0, 1, 0.123},
		{"cosine", math.Cos, 2, 4, math.Pi},
		{"at upper end", func(x float64) float64 { return -x }, 0, 1, 1},
		{"at lower end", func(x float64) float64 { return x }, 0.2, 0.4, 0.2},
	} {
		x, fx, ok := esBrent(tc.f, tc.a, tc.b, 100)
		tol := 1e-7
		if tc.name == "quartic" {
			tol = 2e-4 // flat: f − f* ~ 1e-16 already at |x − x*| ~ 1e-4
		}
		if !ok || math.Abs(x-tc.want) > tol || fx != tc.f(x) {
			t.Errorf("%s: x %v (f %v, converged %v), want %v ± %g", tc.name, x, fx, ok, tc.want, tol)
		}
	}
	if _, _, ok := esBrent(math.Cos, 2, 4, 2); ok {
		t.Error("2 iterations reported convergence")
	}
}

// TestThetaSearchStopsEarly forces the search to stop after one iteration:
// the fit must still succeed, with the best alpha seen and a warning.
func TestThetaSearchStopsEarly(t *testing.T) {
	defer func(n int) { thetaSearchIterations = n }(thetaSearchIterations)
	thetaSearchIterations = 1
	fx := loadThetaFixtures(t)["Nile_nodeseason"]
	f, err := mustTheta(t, "never").Fit(fx.X, 1)
	if err != nil {
		t.Fatal(err)
	}
	w := f.(Warner).Warnings()
	if len(w) != 1 || !strings.Contains(w[0], "theta: smoothing-constant search stopped after 1 iterations without converging") {
		t.Errorf("warnings %q", w)
	}
	p := thetaParts(f)
	// Best point seen: the grid point 0.25 or the first Brent trial near it.
	if math.Abs(p.alpha-0.25) > 0.05 {
		t.Errorf("alpha %v, want near the grid's 0.25", p.alpha)
	}
	for _, v := range f.Forecast(3) {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			t.Errorf("forecast %v", v)
		}
	}
}

// TestThetaDeseasonalizeOptions checks which option deseasonalises when,
// and the warnings for the cases that cannot.
func TestThetaDeseasonalizeOptions(t *testing.T) {
	all := loadThetaFixtures(t)
	air := all["AirPassengers_deseason_test"].X
	lake := all["LakeHuron_period12_test"].X // the test says not seasonal

	fit := func(des string, y []float64, m int) Fitted {
		t.Helper()
		got, f := baselineForecast(t, mustTheta(t, des), y, m, 5)
		for _, v := range got {
			if math.IsNaN(v) {
				t.Fatalf("%s: forecast %v", des, got)
			}
		}
		return f
	}
	warns := func(f Fitted) []string { return f.(Warner).Warnings() }
	isSeasonal := func(f Fitted) bool { _, ok := f.(*thetaSeasonalFit); return ok }

	if f := fit("auto", air, 12); !isSeasonal(f) || len(warns(f)) != 0 {
		t.Errorf("auto, AirPassengers: seasonal %v, warnings %q", isSeasonal(f), warns(f))
	}
	if f := fit("never", air, 12); isSeasonal(f) || len(warns(f)) != 0 {
		t.Errorf("never, AirPassengers: seasonal %v, warnings %q", isSeasonal(f), warns(f))
	}
	if f := fit("auto", lake, 12); isSeasonal(f) || len(warns(f)) != 0 {
		t.Errorf("auto, LakeHuron: seasonal %v, warnings %q", isSeasonal(f), warns(f))
	}
	if f := fit("always", lake, 12); !isSeasonal(f) || len(warns(f)) != 0 {
		t.Errorf("always, LakeHuron: seasonal %v, warnings %q", isSeasonal(f), warns(f))
	}
	if f := fit("auto", air, 1); isSeasonal(f) || len(warns(f)) != 0 {
		t.Errorf("auto, season 1: seasonal %v, warnings %q", isSeasonal(f), warns(f))
	}
	f := fit("always", air, 1)
	if w := warns(f); isSeasonal(f) || len(w) != 1 || w[0] != "theta: season length 1; nothing to deseasonalize" {
		t.Errorf("always, season 1: seasonal %v, warnings %q", isSeasonal(f), w)
	}

	// A zero in a seasonal series: no multiplicative decomposition; the
	// forecast equals the never forecast.
	zero := append([]float64(nil), air...)
	zero[30] = 0
	for _, des := range []string{"auto", "always"} {
		f := fit(des, zero, 12)
		want := "theta: multiplicative deseasonalizing needs strictly positive values; found 1 values ≤ 0; not deseasonalized"
		if w := warns(f); isSeasonal(f) || len(w) != 1 || w[0] != want {
			t.Errorf("%s with a zero: seasonal %v, warnings %q", des, isSeasonal(f), w)
		}
		decompClose(t, des+" with a zero = never", f.Forecast(5), fit("never", zero, 12).Forecast(5), 0)
	}

	// Too short for two seasons.
	f = fit("auto", air[:23], 12)
	if w := warns(f); isSeasonal(f) || len(w) != 1 || w[0] != "theta: 23 observed values; deseasonalizing needs at least 24 (2 seasons of 12); not deseasonalized" {
		t.Errorf("23 values: seasonal %v, warnings %q", isSeasonal(f), w)
	}

	// Missing values that leave a season position without a detrended
	// value: the decomposition fails, the fit goes on without it. With
	// NaN at indices 6, 18 and 30 of 36 values (season 12) no centred
	// moving average is defined anywhere.
	gappy := append([]float64(nil), air[:36]...)
	for _, i := range []int{6, 18, 30} {
		gappy[i] = math.NaN()
	}
	f = fit("always", gappy, 12)
	if w := warns(f); isSeasonal(f) || len(w) != 1 || !strings.HasPrefix(w[0], "theta: not deseasonalized: classical: no detrended value at season position") {
		t.Errorf("gappy: seasonal %v, warnings %q", isSeasonal(f), w)
	}

	// The seasonal forecast cycles through the factors from position n mod m.
	sf := fit("always", air[:30], 12).(*thetaSeasonalFit)
	plain := *sf.thetaFit
	plain.factors = nil
	a, b := sf.Forecast(14), plain.Forecast(14)
	for s := range a {
		if want := b[s] * sf.Components().Factors[(30+s)%12]; math.Abs(a[s]-want) > 1e-12*want {
			t.Errorf("seasonal forecast[%d] = %v, want %v", s, a[s], want)
		}
	}
}

func TestThetaErrorsAndOptions(t *testing.T) {
	m, err := New("theta", nil)
	if err != nil || m.Name() != "theta" {
		t.Fatalf("New(theta) = %v, %v", m, err)
	}
	nan := math.NaN()
	baselineFitErr(t, m, nil, 1, ErrTooShort)
	baselineFitErr(t, m, []float64{nan, nan}, 1, ErrAllMissing)
	baselineFitErr(t, m, []float64{nan, 3, nan}, 1, ErrTooShort)
	if _, err := m.Fit([]float64{3, 5}, 4); err != nil {
		t.Errorf("two values: %v", err)
	}
	for _, tc := range []struct {
		o    Options
		want string
	}{
		{Options{"deseasonalize": "sometimes"}, `theta: unknown deseasonalize "sometimes" (want auto, always, never)`},
		{Options{"deseasonalize": true}, `theta: option deseasonalize must be a string, got bool`},
		{Options{"alpha": 0.3}, `theta: unknown option "alpha" (want deseasonalize)`},
	} {
		if _, err := New("theta", tc.o); err == nil || err.Error() != tc.want {
			t.Errorf("New(theta, %v) error %v, want %q", tc.o, err, tc.want)
		}
	}
	for _, des := range thetaDeseasonNames {
		if _, err := New("theta", Options{"deseasonalize": des}); err != nil {
			t.Errorf("deseasonalize=%s: %v", des, err)
		}
	}
	f, err := m.Fit([]float64{3, 5, 4, 6}, 1)
	if err != nil {
		t.Fatal(err)
	}
	if got := f.Forecast(0); len(got) != 0 {
		t.Errorf("Forecast(0) = %v", got)
	}
	defer func() {
		if r := recover(); r == nil || !strings.HasPrefix(r.(string), "engines: theta: ") {
			t.Errorf("Forecast(-1) panic %v", r)
		}
	}()
	f.Forecast(-1)
}

// TestThetaDoesNotModifyInput runs every option on a series with a gap and
// checks y bit for bit afterwards.
func TestThetaDoesNotModifyInput(t *testing.T) {
	y := append([]float64(nil), loadThetaFixtures(t)["UKgas_deseason_test"].X...)
	y[40] = math.NaN()
	for _, des := range thetaDeseasonNames {
		baselineForecast(t, mustTheta(t, des), y, 4, 8) // checks y
	}
}

func benchmarkTheta(b *testing.B, des, name string, n, m, h int) {
	y, freq := classicalBenchSeries(b, name)
	if len(y) != n || freq != m {
		b.Fatalf("%s: %d values of season %d, want %d of %d", name, len(y), freq, n, m)
	}
	th := mustTheta(b, des)
	b.ReportAllocs()
	for b.Loop() {
		f, err := th.Fit(y, m)
		if err != nil {
			b.Fatal(err)
		}
		f.Forecast(h)
	}
}

// BenchmarkThetaWeekly156: fit (seasonality test, which says not
// seasonal here, and alpha search) and 13-step forecast, 3 years of weeks.
func BenchmarkThetaWeekly156(b *testing.B) { benchmarkTheta(b, "auto", "weekly156", 156, 52, 13) }

// BenchmarkThetaMonthly60: the same on 5 years of months (also not
// seasonal by the test).
func BenchmarkThetaMonthly60(b *testing.B) { benchmarkTheta(b, "auto", "monthly60", 60, 12, 13) }

// BenchmarkThetaWeekly156Always and BenchmarkThetaMonthly60Always take the
// seasonal path: classical decomposition, then the rest.
func BenchmarkThetaWeekly156Always(b *testing.B) {
	benchmarkTheta(b, "always", "weekly156", 156, 52, 13)
}

func BenchmarkThetaMonthly60Always(b *testing.B) {
	benchmarkTheta(b, "always", "monthly60", 60, 12, 13)
}

// BenchmarkThetaIntermittent: the invented intermittent series of
// croston_test.go (season 52; zeros rule out deseasonalising).
func BenchmarkThetaIntermittent(b *testing.B) {
	intermittentBench(b, mustTheta(b, "auto"), "intermittent")
}
