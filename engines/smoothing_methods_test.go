package engines

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// TestSmoothingOptions checks the registered names and that the factories
// validate their options with messages that list what is allowed (common
// practice).
func TestSmoothingOptions(t *testing.T) {
	for _, name := range []string{"ses", "holt", "holt_winters", "smoothing_auto"} {
		if m := esNew(t, name, nil); m.Name() != name {
			t.Errorf("New(%q).Name() = %q", name, m.Name())
		}
	}
	bad := []struct {
		name string
		o    Options
		want string
	}{
		{"ses", Options{"alpha": 0.3}, `takes no options`},
		{"smoothing_auto", Options{"damped": true}, `takes no options`},
		{"holt", Options{"dampd": true}, `unknown option "dampd" (want damped)`},
		{"holt", Options{"damped": "yes"}, `damped must be a bool`},
		{"holt_winters", Options{"seasonal": "mult"}, `unknown seasonal "mult" (want auto, additive or multiplicative)`},
		{"holt_winters", Options{"seasonal": 1}, `seasonal must be a string`},
		{"holt_winters", Options{"trend": 1}, `trend must be a bool`},
		{"holt_winters", Options{"damped": true, "trend": false}, `damped = true needs trend = true`},
		{"holt_winters", Options{"season": "additive"}, `unknown option "season" (want seasonal, damped or trend)`},
	}
	for _, c := range bad {
		_, err := New(c.name, c.o)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("New(%q, %v) error %v, want one containing %q", c.name, c.o, err, c.want)
		}
	}
	good := []struct {
		o    Options
		form esForm
		auto bool
	}{
		{nil, esForm{trend: esTrendAdditive, season: esSeasonAdditive}, true},
		{Options{"seasonal": "auto", "damped": true}, esForm{trend: esTrendDamped, season: esSeasonAdditive}, true},
		{Options{"seasonal": "multiplicative"}, esForm{esErrorMultiplicative, esTrendAdditive, esSeasonMultiplicative}, false},
		{Options{"seasonal": "additive", "damped": true}, esForm{trend: esTrendDamped, season: esSeasonAdditive}, false},
		{Options{"seasonal": "additive", "trend": false}, esForm{trend: esTrendNone, season: esSeasonAdditive}, false},
		{Options{"trend": true, "damped": false, "seasonal": "additive"}, esForm{trend: esTrendAdditive, season: esSeasonAdditive}, false},
	}
	for _, c := range good {
		h := esNew(t, "holt_winters", c.o).(*HoltWinters)
		if h.form != c.form || h.auto != c.auto {
			t.Errorf("holt_winters %v: form %s auto %v, want %s auto %v", c.o, h.form.describe(), h.auto, c.form.describe(), c.auto)
		}
	}
	if h := esNew(t, "holt", Options{"damped": true}).(Holt); !h.Damped {
		t.Error("holt damped=true: not damped")
	}
}

// TestSmoothingFittedModels fits each method to AirPassengers and checks
// the fitted model's contract: Describe, the optional interfaces, the
// forecast from the final states, the parameter count k, AICc from the
// log-likelihood, and that y is not modified (common practice; the numbers
// themselves are checked against R and statsmodels in smoothing_test.go).
func TestSmoothingFittedModels(t *testing.T) {
	y, m := esDataset(t, "AirPassengers")
	orig := slices.Clone(y)
	season := func(p string) []string {
		out := []string{p}
		for j := 1; j <= 12; j++ {
			out = append(out, fmt.Sprintf("initial_season_%d", j))
		}
		return out
	}
	cases := []struct {
		name     string
		o        Options
		describe string
		params   []string
		k        int
		variance bool
	}{
		{"ses", nil, "ses(error=additive, trend=none, season=none)", []string{"alpha", "initial_level"}, 2, true},
		{"holt", nil, "holt(error=additive, trend=additive, season=none)", []string{"alpha", "beta", "initial_level", "initial_trend"}, 4, true},
		{"holt", Options{"damped": true}, "holt(error=additive, trend=damped, season=none)", []string{"alpha", "beta", "phi", "initial_level", "initial_trend"}, 5, true},
		{"holt_winters", Options{"seasonal": "additive"}, "holt_winters(error=additive, trend=additive, season=additive)",
			append([]string{"alpha", "beta", "gamma", "initial_level"}, season("initial_trend")...), 3 + 2 + 11, true},
		{"holt_winters", Options{"seasonal": "multiplicative", "damped": true}, "holt_winters(error=multiplicative, trend=damped, season=multiplicative)",
			append([]string{"alpha", "beta", "gamma", "phi", "initial_level"}, season("initial_trend")...), 4 + 2 + 11, false},
		{"holt_winters", Options{"seasonal": "additive", "trend": false}, "holt_winters(error=additive, trend=none, season=additive)",
			append([]string{"alpha", "gamma"}, season("initial_level")...), 2 + 1 + 11, true},
	}
	// smoothing_auto: ETS(M,A,M) and ETS(M,Ad,M) are within a fraction of
	// an AICc unit of each other on AirPassengers (the literature picks
	// M,Ad,M; from memory: Hyndman and Athanasopoulos, Forecasting:
	// Principles and Practice, 2nd ed., §7.7), so the case follows the
	// trend chosen; TestSmoothingAutoChoice checks the choice itself.
	autoFit, err := SmoothingAuto{}.Fit(y, m)
	if err != nil {
		t.Fatal(err)
	}
	if autoFit.(*esModel).form.trend == esTrendDamped {
		cases = append(cases, struct {
			name     string
			o        Options
			describe string
			params   []string
			k        int
			variance bool
		}{"smoothing_auto", nil, "smoothing_auto(error=multiplicative, trend=damped, season=multiplicative)",
			append([]string{"alpha", "beta", "gamma", "phi", "initial_level"}, season("initial_trend")...), 4 + 2 + 11, false})
	} else {
		cases = append(cases, struct {
			name     string
			o        Options
			describe string
			params   []string
			k        int
			variance bool
		}{"smoothing_auto", nil, "smoothing_auto(error=multiplicative, trend=additive, season=multiplicative)",
			append([]string{"alpha", "beta", "gamma", "initial_level"}, season("initial_trend")...), 3 + 2 + 11, false})
	}
	for _, c := range cases {
		t.Run(c.describe, func(t *testing.T) {
			fit, err := esNew(t, c.name, c.o).Fit(y, m)
			if err != nil {
				t.Fatal(err)
			}
			if !slices.Equal(y, orig) {
				t.Fatal("Fit modified y")
			}
			mod := fit.(*esModel)
			if got := fit.(Described).Describe(); got != c.describe {
				t.Errorf("Describe = %q, want %q", got, c.describe)
			}
			if w := fit.(Warner).Warnings(); len(w) != 0 {
				t.Errorf("warnings %q", w)
			}
			var names []string
			for _, p := range fit.(Parameterized).Params() {
				names = append(names, p.Name)
				if math.IsNaN(p.Value) {
					t.Errorf("param %s is NaN", p.Name)
				}
			}
			if !slices.Equal(names, c.params) {
				t.Errorf("Params names %q, want %q", names, c.params)
			}
			if mod.k != c.k {
				t.Errorf("k = %d, want %d", mod.k, c.k)
			}
			in := fit.(InSampler).InSample()
			if len(in) != len(y) {
				t.Fatalf("InSample has %d values, want %d", len(in), len(y))
			}
			var sse, sre, logmu float64
			for i, v := range y {
				sse += (v - in[i]) * (v - in[i])
				sre += (v - in[i]) * (v - in[i]) / (in[i] * in[i])
				logmu += math.Log(math.Abs(in[i]))
			}
			if math.Abs(sse-mod.SSE()) > 1e-9*sse {
				t.Errorf("SSE %v, but the in-sample errors sum to %v", mod.SSE(), sse)
			}
			fv := fit.(ForecastVariancer)
			if want := sse / float64(len(y)-c.k); math.Abs(fv.ResidualVariance()-want) > 1e-12*want {
				t.Errorf("ResidualVariance %v, want SSE/(n−k) = %v", fv.ResidualVariance(), want)
			}
			v := fv.ForecastVariance(24)
			if c.variance != (v != nil) {
				t.Errorf("ForecastVariance nil = %v, want %v", v == nil, !c.variance)
			}
			for i := 1; i < len(v); i++ {
				if !(v[i] >= v[i-1]) || v[0] != fv.ResidualVariance() {
					t.Errorf("ForecastVariance %v: not increasing from σ²", v)
					break
				}
			}
			// AICc = −2 log L + 2K + 2K(K+1)/(n−K−1), K = k + 1 (σ²),
			// log L = −n/2·(log(2π·q/n) + 1) (− Σ log|μ| for the
			// multiplicative error), q = SSE or Σ(e/μ)².
			nf, kf := float64(len(y)), float64(c.k+1)
			q, extra := sse, 0.0
			if mod.form.err == esErrorMultiplicative {
				q, extra = sre, logmu
			}
			ll := -nf/2*(math.Log(2*math.Pi*q/nf)+1) - extra
			if want := -2*ll + 2*kf + 2*kf*(kf+1)/(nf-kf-1); math.Abs(mod.AICc()-want) > 1e-9*math.Abs(want) {
				t.Errorf("AICc %v, want %v", mod.AICc(), want)
			}
			// The forecast continues the recursions: running esFilter over
			// y followed by the forecasts as data leaves the forecasts as
			// the one-step fitted values.
			fc := fit.Forecast(30)
			st := esState{level: mod.l0, slope: mod.b0, season: slices.Clone(mod.s0)}
			ext := append(slices.Clone(y), fc[0])
			fitted := make([]float64, len(ext))
			esFilter(ext, 0, mod.form, mod.p, &st, fitted)
			if d := math.Abs(fitted[len(y)] - fc[0]); d > 1e-9*math.Abs(fc[0]) {
				t.Errorf("forecast[0] %v, one-step fitted %v", fc[0], fitted[len(y)])
			}
			if len(fit.Forecast(0)) != 0 {
				t.Error("Forecast(0) not empty")
			}
		})
	}
}

// TestSmoothingMissingValues checks the missing-value rule: at a NaN the
// forecast is made and the states move on as if the value had equalled
// it, and the value is left out of the SSE. Replacing each NaN by its
// one-step forecast must therefore give identical fitted values and SSE
// (common practice: the rule stated as an identity).
func TestSmoothingMissingValues(t *testing.T) {
	y, m := esDataset(t, "AirPassengers")
	gaps := slices.Clone(y)
	for _, i := range []int{0, 4, 29, 30, 99, 143} {
		gaps[i] = math.NaN()
	}
	for _, form := range esAutoForms {
		p := esParams{alpha: 0.3, beta: 0.1, gamma: 0.2, phi: 0.9}
		s0 := make([]float64, m)
		for j := range s0 {
			s0[j] = 1 + 0.1*math.Sin(float64(j))
			if form.season == esSeasonAdditive {
				s0[j] = 10 * math.Sin(float64(j))
			}
		}
		run := func(v []float64) ([]float64, float64, int) {
			st := esState{level: 110, slope: 1, season: slices.Clone(s0)}
			fitted := make([]float64, len(v))
			stats := esFilter(v, 0, form, p, &st, fitted)
			if !stats.ok {
				t.Fatalf("%s: recursion failed", form.describe())
			}
			return fitted, stats.sse, stats.nobs
		}
		f1, sse1, n1 := run(gaps)
		filled := slices.Clone(gaps)
		for i, v := range filled {
			if math.IsNaN(v) {
				filled[i] = f1[i]
			}
		}
		f2, sse2, n2 := run(filled)
		esClose(t, form.describe()+" fitted", f1, f2, 1e-12)
		if math.Abs(sse1-sse2) > 1e-9*sse2 || n1 != len(y)-6 || n2 != len(y) {
			t.Errorf("%s: SSE %v (n %d) with gaps, %v (n %d) filled", form.describe(), sse1, n1, sse2, n2)
		}
	}
	// The methods fit through the gaps.
	for _, name := range []string{"ses", "holt", "holt_winters", "smoothing_auto"} {
		fit, err := esNew(t, name, nil).Fit(gaps, m)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		for i, v := range fit.(InSampler).InSample() {
			if math.IsNaN(v) {
				t.Fatalf("%s: in-sample value %d is NaN", name, i)
			}
		}
		for _, v := range fit.Forecast(12) {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				t.Fatalf("%s: forecast %v", name, v)
			}
		}
	}
}

// TestSmoothingInitialStatesEstimated checks that the fit estimates the
// initial states: at the fitted point no single free initial state (level,
// trend, m−1 seasonal terms) can be moved by ±0.1% of the series' scale,
// or a multiplicative seasonal term by ±0.001, to a lower −2·log L (common
// practice: a minimum; the tolerance 1e-4 is the refinement's stopping
// rule), and the seasonal terms satisfy the normalisation.
func TestSmoothingInitialStatesEstimated(t *testing.T) {
	y, m := esDataset(t, "AirPassengers")
	for _, form := range esAutoForms {
		mm := m
		if form.season == esSeasonNone {
			mm = 1
		}
		var f esFitter
		f.reset(y, mm)
		if err := f.initStates(form); err != nil {
			t.Fatal(err)
		}
		sol := f.optimise()
		if !sol.finite() {
			t.Fatalf("%s: no finite fit", form.describe())
		}
		f.form, f.p, f.l0, f.b0 = form, sol.p, sol.l0, sol.b0
		copy(f.s0, sol.s0)
		base := f.run(f.p).objective(form, f.scale)
		if math.Abs(base-sol.obj) > 1e-9*math.Abs(base) {
			t.Errorf("%s: objective %v, solution says %v", form.describe(), base, sol.obj)
		}
		k := f.nFree()
		th := make([]float64, k)
		f.getTheta(th)
		off := 1
		if form.trend != esTrendNone {
			off = 2
		}
		for x := range k {
			h := 1e-3 * f.scale
			if x >= off && form.season == esSeasonMultiplicative {
				h = 1e-3
			}
			for _, sgn := range []float64{-1, 1} {
				tr := slices.Clone(th)
				tr[x] += sgn * h
				f.setTheta(tr)
				if o := f.run(f.p).objective(form, f.scale); o < base-1e-4 {
					t.Errorf("%s: moving free state %d by %+g lowers −2 log L from %.6f to %.6f", form.describe(), x, sgn*h, base, o)
				}
			}
		}
		f.setTheta(th)
		if form.season != esSeasonNone {
			var sum float64
			for _, v := range sol.s0 {
				sum += v
			}
			want := 0.0
			if form.season == esSeasonMultiplicative {
				want = float64(m)
			}
			if math.Abs(sum-want) > 1e-9*f.scale {
				t.Errorf("%s: initial seasonal terms sum to %v, want %v", form.describe(), sum, want)
			}
		}
	}
}

// TestSmoothingAutoChoice checks the automatic choice: a multiplicative
// seasonal form for AirPassengers (the textbook case of a season growing
// with the level; from memory of the literature, e.g. Hyndman et al. 2008
// ch. 2, which select ETS(M,A,M) there), a non-seasonal form for Nile
// (annual, season 1), and no multiplicative form for a series with a zero.
// The chosen AICc is the lowest of the admissible candidates, refitted
// one by one.
func TestSmoothingAutoChoice(t *testing.T) {
	auto := esNew(t, "smoothing_auto", nil)
	y, m := esDataset(t, "AirPassengers")
	fit, err := auto.Fit(y, m)
	if err != nil {
		t.Fatal(err)
	}
	mod := fit.(*esModel)
	t.Logf("AirPassengers: %s, AICc %.2f", mod.Describe(), mod.AICc())
	if mod.form.season != esSeasonMultiplicative || !strings.HasPrefix(mod.Describe(), "smoothing_auto(error=multiplicative, trend=") {
		t.Errorf("AirPassengers: chose %s, want a multiplicative seasonal form", mod.Describe())
	}
	if fit.(ForecastVariancer).ForecastVariance(3) != nil {
		t.Error("multiplicative season: ForecastVariance not nil")
	}
	for _, form := range esAutoForms {
		mm := m
		if form.season == esSeasonNone {
			mm = 1
		}
		var f esFitter
		f.reset(y, mm)
		if f.initStates(form) != nil {
			t.Fatalf("%s: no start-up values", form.describe())
		}
		sol := f.optimise()
		a := esAICc(sol.stats.logLik(form), sol.stats.nobs, form.nParams(m))
		t.Logf("  %s: AICc %.3f admissible %v", esShort(form), a, sol.admiss)
		if sol.admiss && a < mod.AICc()-1e-9 {
			t.Errorf("%s has AICc %.3f below the chosen %.3f", form.describe(), a, mod.AICc())
		}
	}

	nile, mn := esDataset(t, "Nile")
	fit, err = auto.Fit(nile, mn)
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("Nile: %s", fit.(Described).Describe())
	if fit.(*esModel).form.season != esSeasonNone {
		t.Errorf("Nile: chose %s, want a non-seasonal form", fit.(Described).Describe())
	}
	// Nile with a season of 4 imposed: seasonal forms compete but need not win.
	if _, err := auto.Fit(nile, 4); err != nil {
		t.Errorf("Nile, season 4: %v", err)
	}

	zero := slices.Clone(y)
	zero[50] = 0
	fit, err = auto.Fit(zero, m)
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("AirPassengers with a zero: %s", fit.(Described).Describe())
	if f := fit.(*esModel).form; f.positive() {
		t.Errorf("series with a zero: chose %s", fit.(Described).Describe())
	}
}

// TestHoltWintersMultiplicativeFallsBack checks that the multiplicative
// form given a value ≤ 0 uses the additive one, with a warning and a note
// in Describe (common practice, as Classical does).
func TestHoltWintersMultiplicativeFallsBack(t *testing.T) {
	y, m := esDataset(t, "AirPassengers")
	y = slices.Clone(y)
	y[7] = -1
	fit, err := esNew(t, "holt_winters", Options{"seasonal": "multiplicative"}).Fit(y, m)
	if err != nil {
		t.Fatal(err)
	}
	if got, want := fit.(Described).Describe(), "holt_winters(error=additive, trend=additive, season=additive; fell back from multiplicative)"; got != want {
		t.Errorf("Describe = %q, want %q", got, want)
	}
	w := fit.(Warner).Warnings()
	if len(w) != 1 || !strings.Contains(w[0], "found 1 values ≤ 0") {
		t.Errorf("warnings %q", w)
	}
	if fit.(ForecastVariancer).ForecastVariance(2) == nil {
		t.Error("additive fallback: ForecastVariance nil")
	}
}

// TestSmoothingEdgeCases runs every method on awkward series: each call
// must return a model with finite forecasts or an error (the right kind of
// error where one is expected), never panic (common practice).
func TestSmoothingEdgeCases(t *testing.T) {
	nan := math.NaN()
	rep := func(v float64, n int) []float64 {
		out := make([]float64, n)
		for i := range out {
			out[i] = v
		}
		return out
	}
	ramp := func(n int) []float64 {
		out := make([]float64, n)
		for i := range out {
			out[i] = float64(i)
		}
		return out
	}
	cases := []struct {
		name   string
		y      []float64
		m      int
		errIs  error // expected for every method, if not nil
		anyErr bool  // some methods may refuse
	}{
		{"empty", nil, 12, ErrTooShort, false},
		{"all missing", rep(nan, 30), 12, ErrAllMissing, false},
		{"one value", []float64{5}, 12, ErrTooShort, false},
		{"two values", []float64{5, 6}, 1, nil, true},
		{"three values", []float64{5, 6, 8}, 1, nil, true},
		{"constant", rep(7, 48), 12, nil, false},
		{"all zero", rep(0, 48), 12, nil, false},
		{"all zero weekly", rep(0, 156), 52, nil, false},
		{"constant short", rep(3, 5), 4, nil, true},
		{"one season", ramp(12), 12, nil, true},
		{"two seasons", ramp(24), 12, nil, false},
		{"two seasons quarterly", []float64{1, 2, 3, 4, 2, 3, 4, 5}, 4, nil, false},
		{"season 2", []float64{1, 3, 1, 3, 1, 3, 1, 3}, 2, nil, false},
		{"negative", []float64{-5, -3, -6, -2, -5, -3, -6, -2, -5, -3, -6, -2}, 4, nil, false},
		{"zeros and spikes", []float64{0, 0, 9, 0, 0, 0, 7, 0, 0, 0, 8, 0, 0, 0, 6, 0}, 4, nil, false},
		{"mostly missing", []float64{nan, 4, nan, nan, 5, nan, nan, nan, 6, nan, nan, 7, nan, nan, 8, nan}, 4, nil, true},
		{"leading gap", append(rep(nan, 12), ramp(36)...), 12, nil, false},
		{"huge", []float64{1e300, -1e300, 1e300, -1e300, 1e300, -1e300, 1e300, -1e300}, 2, nil, true},
		{"tiny", []float64{1e-300, 2e-300, 1e-300, 3e-300, 1e-300, 2e-300, 1e-300, 3e-300}, 2, nil, false},
		{"season 0", ramp(20), 0, nil, true},
		{"season -3", ramp(20), -3, nil, true},
	}
	methods := []Method{SES{}, Holt{}, Holt{Damped: true}, SmoothingAuto{}}
	for _, o := range []Options{nil, {"seasonal": "multiplicative"}, {"damped": true}, {"trend": false}} {
		methods = append(methods, esNew(t, "holt_winters", o))
	}
	for _, c := range cases {
		for _, meth := range methods {
			y := slices.Clone(c.y)
			fit, err := func() (f Fitted, err error) {
				defer func() {
					if r := recover(); r != nil {
						t.Errorf("%s, %s: panic: %v", c.name, meth.Name(), r)
					}
				}()
				return meth.Fit(y, c.m)
			}()
			if !slices.EqualFunc(y, c.y, func(a, b float64) bool { return a == b || a != a && b != b }) {
				t.Errorf("%s, %s: Fit modified y", c.name, meth.Name())
			}
			if c.errIs != nil {
				if !errors.Is(err, c.errIs) {
					t.Errorf("%s, %s: error %v, want %v", c.name, meth.Name(), err, c.errIs)
				}
				continue
			}
			_, isHW := meth.(*HoltWinters)
			if err != nil {
				if !c.anyErr && !(isHW && c.m < 2) {
					t.Errorf("%s, %s: %v", c.name, meth.Name(), err)
				}
				continue
			}
			for _, v := range fit.Forecast(8) {
				if math.IsNaN(v) || math.IsInf(v, 0) {
					t.Errorf("%s, %s (%s): forecast %v", c.name, meth.Name(), fit.(Described).Describe(), v)
					break
				}
			}
			fit.(ForecastVariancer).ForecastVariance(8)
			fit.(Parameterized).Params()
		}
	}
	// The constant series is fitted exactly and ties go to the simplest form.
	fit, err := SmoothingAuto{}.Fit(rep(7, 48), 12)
	if err != nil {
		t.Fatal(err)
	}
	if d := fit.(Described).Describe(); d != "smoothing_auto(error=additive, trend=none, season=none)" {
		t.Errorf("constant series: chose %s, want ses", d)
	}
	for _, v := range fit.Forecast(5) {
		if math.Abs(v-7) > 1e-9 {
			t.Errorf("constant series: forecast %v, want 7", v)
		}
	}
}

// TestSmoothingForecastPanics checks that a negative horizon is treated as
// programmer misuse: a panic with the "engines: " prefix (common practice).
func TestSmoothingForecastPanics(t *testing.T) {
	y, m := esDataset(t, "AirPassengers")
	fit, err := SES{}.Fit(y, m)
	if err != nil {
		t.Fatal(err)
	}
	for name, f := range map[string]func(){
		"Forecast":         func() { fit.Forecast(-1) },
		"ForecastVariance": func() { fit.(ForecastVariancer).ForecastVariance(-1) },
	} {
		func() {
			defer func() {
				r := recover()
				if s, ok := r.(string); !ok || !strings.HasPrefix(s, "engines: ses: negative horizon") {
					t.Errorf("%s(-1): panic %v, want an \"engines: \" panic", name, r)
				}
			}()
			f()
		}()
	}
}

// TestSmoothingSimplex checks the Nelder–Mead minimiser on the Rosenbrock
// function (minimum 0 at (1, 1), a standard test; common practice) and that
// it reports a stop at its evaluation budget.
func TestSmoothingSimplex(t *testing.T) {
	var s esSimplex
	x := []float64{-1.2, 1}
	res := s.minimize(esRosenbrock{}, x, 0.5, 1e-10, 1e-7, 5000, true)
	if !res.Converged || math.Abs(x[0]-1) > 1e-4 || math.Abs(x[1]-1) > 1e-4 || res.F > 1e-8 {
		t.Errorf("Rosenbrock: x %v, f %g, converged %v after %d evaluations", x, res.F, res.Converged, res.Evals)
	}
	x = []float64{-1.2, 1}
	res = s.minimize(esRosenbrock{}, x, 0.5, 1e-14, 1e-9, 20, true)
	if res.Converged || res.Evals < 20 || res.Evals > 23 {
		t.Errorf("budget 20: converged %v after %d evaluations", res.Converged, res.Evals)
	}
	if f := (esRosenbrock{}).eval(x); f != res.F {
		t.Errorf("reported f %v, f at the returned point %v", res.F, f)
	}
}

type esRosenbrock struct{}

func (esRosenbrock) eval(u []float64) float64 {
	a, b := 1-u[0], u[1]-u[0]*u[0]
	return a*a + 100*b*b
}

// TestSmoothingNonConvergenceWarns checks that a fit that stopped at its
// evaluation budget says so in a warning and still gives a model (common
// practice).
func TestSmoothingNonConvergenceWarns(t *testing.T) {
	y, m := esDataset(t, "AirPassengers")
	var f esFitter
	f.reset(y, m)
	form := esForm{esErrorMultiplicative, esTrendAdditive, esSeasonMultiplicative}
	if err := f.initStates(form); err != nil {
		t.Fatal(err)
	}
	sol := f.optimise()
	sol.conv = false
	mod := f.model("holt_winters", sol)
	if len(mod.warnings) != 1 || !strings.Contains(mod.warnings[0], "without converging") {
		t.Errorf("warnings %q", mod.warnings)
	}
	if fc := mod.Forecast(3); len(fc) != 3 || math.IsNaN(fc[0]) {
		t.Errorf("forecast %v", fc)
	}
}

// TestSmoothingEvalAllocates checks that evaluating the SSE, the inner loop
// of the fit, allocates nothing (common practice).
func TestSmoothingEvalAllocates(t *testing.T) {
	y, m := esDataset(t, "AirPassengers")
	for _, form := range esAutoForms {
		var f esFitter
		f.reset(y, m)
		if err := f.initStates(form); err != nil {
			t.Fatal(err)
		}
		f.setSlots(form)
		u := []float64{-1, -2, -2, 0}[:f.d]
		if v := f.eval(u); math.IsInf(v, 0) || v != v {
			t.Errorf("%s: objective %v at the test point", form.describe(), v)
		}
		if a := testing.AllocsPerRun(50, func() { f.eval(u) }); a != 0 {
			t.Errorf("%s: %v allocations per evaluation", form.describe(), a)
		}
	}
}

// TestSmoothingMultErrVariance checks the class 2 forecast variance of the
// multiplicative-error forms against the closed form for ETS(M,N,N),
// v_h = ℓ²·((1+σ²)·(1+α²σ²)^{h−1} − 1), which follows from the recursion
// θ_h = μ_h² + σ²·Σ_{j<h} c_j²·θ_{h−j} with c_j = α and μ_h = ℓ (from memory
// of Hyndman et al. 2008, ch. 6, derived here by induction: θ_h/ℓ² =
// (1+α²σ²)^{h−1}); tolerance 1e-12 relative.
func TestSmoothingMultErrVariance(t *testing.T) {
	const l, a, s2 = 250.0, 0.35, 0.004
	mu := make([]float64, 15)
	for i := range mu {
		mu[i] = l
	}
	got := make([]float64, len(mu))
	esForecastVarianceMultErr(esForm{err: esErrorMultiplicative}, 1, esParams{alpha: a, phi: 1}, s2, mu, got)
	for i, g := range got {
		want := l * l * ((1+s2)*math.Pow(1+a*a*s2, float64(i)) - 1)
		if math.Abs(g-want) > 1e-12*want {
			t.Errorf("h=%d: %v, want %v", i+1, g, want)
		}
	}
	// A fitted M,N,N model uses it with σ² = Σ(e/μ)²/(n−k).
	y, _ := esDataset(t, "Nile")
	mod, err := esFitForm("test", y, 1, esForm{err: esErrorMultiplicative})
	if err != nil {
		t.Fatal(err)
	}
	v := mod.ForecastVariance(3)
	lv, sr := mod.final.level, mod.relVariance()
	for i, g := range v {
		want := lv * lv * ((1+sr)*math.Pow(1+mod.p.alpha*mod.p.alpha*sr, float64(i)) - 1)
		if math.Abs(g-want) > 1e-9*want {
			t.Errorf("fitted M,N,N h=%d: %v, want %v", i+1, g, want)
		}
	}
}

// TestSmoothingNonPositiveState checks the positivity rule: a form with a
// multiplicative part that finds no point where every level, seasonal
// factor and one-step forecast stays > 0 returns an error wrapping
// ErrNonPositiveState (common practice). Here a season of values far below
// zero is given directly to two multiplicative forms: to follow it the
// level or the forecasts would have to go ≤ 0, where the recursion is
// refused.
func TestSmoothingNonPositiveState(t *testing.T) {
	y, m := esDataset(t, "AirPassengers")
	y = slices.Clone(y)
	for i := 60; i < 72; i++ {
		y[i] = -500 // a whole season far below zero: the level must follow
	}
	for _, form := range []esForm{
		{err: esErrorMultiplicative},
		{err: esErrorMultiplicative, trend: esTrendAdditive, season: esSeasonMultiplicative},
	} {
		mm := m
		if form.season == esSeasonNone {
			mm = 1
		}
		_, err := esFitForm("test", y, mm, form)
		if !errors.Is(err, ErrNonPositiveState) {
			t.Errorf("%s: error %v, want ErrNonPositiveState", form.describe(), err)
		}
	}
	// The methods never reach it for such data: holt_winters falls back to
	// the additive form, smoothing_auto leaves the multiplicative forms out.
	for _, meth := range []Method{SmoothingAuto{}, esMustHW(t, FormMultiplicative, true, false)} {
		fit, err := meth.Fit(y, m)
		if err != nil {
			t.Errorf("%s: %v", meth.Name(), err)
			continue
		}
		if fit.(*esModel).form.positive() {
			t.Errorf("%s: fitted %s", meth.Name(), fit.(Described).Describe())
		}
	}
}

// TestHoltWintersSeasonalAuto checks seasonal: auto (the default): with no
// season found by SeasonalityTest the non-seasonal form with the same trend
// is fitted and Describe says so; with a season, a seasonal form (common
// practice; the test itself is checked in seasonality_test.go).
func TestHoltWintersSeasonalAuto(t *testing.T) {
	hw := esNew(t, "holt_winters", nil)
	air, m := esDataset(t, "AirPassengers")
	if _, seasonal := SeasonalityTest(air, m); !seasonal {
		t.Fatal("AirPassengers not seasonal by the test")
	}
	fit, err := hw.Fit(air, m)
	if err != nil {
		t.Fatal(err)
	}
	if d := fit.(Described).Describe(); fit.(*esModel).form.season == esSeasonNone || strings.Contains(d, "no season") {
		t.Errorf("AirPassengers: %s", d)
	}
	// Invented: 60 values of 100 plus uniform noise in [−5, 5) from a
	// linear congruential generator (no season by construction).
	noise := make([]float64, 60)
	state := uint32(12345)
	for i := range noise {
		state = state*1664525 + 1013904223
		noise[i] = 100 + 10*(float64(state)/(1<<32)-0.5)
	}
	if stat, seasonal := SeasonalityTest(noise, 12); seasonal {
		t.Fatalf("invented noise seasonal at lag 12 by the test (stat %v)", stat)
	}
	fit, err = hw.Fit(noise, 12)
	if err != nil {
		t.Fatal(err)
	}
	if got, want := fit.(Described).Describe(), "holt_winters(error=additive, trend=additive, season=none; no season found)"; got != want {
		t.Errorf("invented noise, m = 12: %q, want %q", got, want)
	}
	fit, err = esNew(t, "holt_winters", Options{"damped": true}).Fit(air[:20], 12)
	if err != nil {
		t.Fatal(err)
	}
	if got, want := fit.(Described).Describe(), "holt_winters(error=additive, trend=damped, season=none; too short to test for a season)"; got != want {
		t.Errorf("20 values, m = 12: %q, want %q", got, want)
	}
}

// TestSmoothingAdmissible checks esAdmissible, which tests the roots of
// the characteristic polynomial by the Schur–Cohn recursion, against the
// eigenvalues of the discount matrix D = F − g·w′ computed by gonum's
// mat.Eigen (all but the one unit eigenvalue inside the unit circle;
// Hyndman et al. 2008, ch. 10), on 3,000 random parameter sets over and
// beyond the usual region, for m = 2, 4, 7, 12 and every seasonal trend.
// The two must agree except within 1e-6 of the boundary.
func TestSmoothingAdmissible(t *testing.T) {
	state := uint64(7)
	rnd := func() float64 {
		state = state*6364136223846793005 + 1442695040888963407
		return float64(state>>11) / (1 << 53)
	}
	agree, admissible := 0, 0
	for i := 0; i < 3000; i++ {
		m := []int{2, 4, 7, 12}[i%4]
		form := esForm{trend: esTrend(i / 4 % 3), season: esSeasonAdditive}
		// alpha in (0, 1); beta, gamma as shares, up to 1.6 of their usual
		// range so that inadmissible points occur; phi in [0.8, 1].
		p := esParams{alpha: rnd(), beta: 1.6 * rnd(), gamma: 1.6 * rnd(), phi: 0.8 + 0.2*rnd()}
		got := esAdmissible(form, m, p)
		radius := esSpectralRadiusWithoutUnit(form, m, p)
		if math.Abs(radius-1) < 1e-6 {
			continue
		}
		if want := radius < 1; got != want {
			t.Errorf("%s m=%d %+v: esAdmissible %v, eigenvalues say %v (radius %.9f)", esShort(form), m, p, got, want, radius)
		} else {
			agree++
		}
		if got {
			admissible++
		}
	}
	if agree < 2900 || admissible < 300 || admissible > agree-300 {
		t.Errorf("%d agreeing cases, %d admissible: the sample does not cover both sides", agree, admissible)
	}
	t.Logf("%d cases agree, %d admissible", agree, admissible)
}

// esSpectralRadiusWithoutUnit is the largest modulus of the eigenvalues of
// D = F − g·w′ other than the one closest to 1.
func esSpectralRadiusWithoutUnit(form esForm, m int, p esParams) float64 {
	a, be, ge, phi := p.ec(form)
	k := m + 2
	d := mat.NewDense(k, k, nil)
	w, g := make([]float64, k), make([]float64, k)
	w[0], w[k-1] = 1, 1
	g[0], g[1], g[2] = a, be, ge
	d.Set(0, 0, 1)
	if form.trend != esTrendNone {
		w[1] = phi
		d.Set(0, 1, phi)
		d.Set(1, 1, phi)
	}
	d.Set(2, k-1, 1)
	for j := 3; j < k; j++ {
		d.Set(j, j-1, 1)
	}
	for r := range k {
		for c := range k {
			d.Set(r, c, d.At(r, c)-g[r]*w[c])
		}
	}
	var eig mat.Eigen
	if !eig.Factorize(d, mat.EigenNone) {
		return math.Inf(1)
	}
	vals := eig.Values(nil)
	skip, best := -1, math.Inf(1)
	for i, z := range vals {
		if dd := cmplx.Abs(z - 1); dd < best {
			skip, best = i, dd
		}
	}
	radius := 0.0
	for i, z := range vals {
		if i != skip {
			radius = math.Max(radius, cmplx.Abs(z))
		}
	}
	return radius
}
