package engines

import (
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

// stlFixtureParams are the settings R's stl used, read back from the fit
// ($win, $deg, $jump, $inner, $outer).
type stlFixtureParams struct {
	Periodic bool `json:"periodic"`
	Period   int  `json:"period"`
	SWindow  int  `json:"s_window"`
	TWindow  int  `json:"t_window"`
	LWindow  int  `json:"l_window"`
	SDegree  int  `json:"s_degree"`
	TDegree  int  `json:"t_degree"`
	LDegree  int  `json:"l_degree"`
	SJump    int  `json:"s_jump"`
	TJump    int  `json:"t_jump"`
	LJump    int  `json:"l_jump"`
	Inner    int  `json:"inner"`
	Outer    int  `json:"outer"`
}

// stlFixture is one file of testdata/reference/stl (R's stats::stl, see
// REFERENCE-METHODS.md there) or of testdata/reference/stl/statsmodels
// (statsmodels' STL with R's parameters, see stl/make_stl_statsmodels.py).
type stlFixture struct {
	Source     string           `json:"source"`
	Frequency  int              `json:"frequency"`
	X          []float64        `json:"x"`
	Parameters stlFixtureParams `json:"parameters"`
	Seasonal   []float64        `json:"seasonal"`
	Trend      []float64        `json:"trend"`
	Remainder  []float64        `json:"remainder"`
	Weights    []float64        `json:"weights"`
}

// stlForecastFixture is one file of testdata/reference/stl/forecast (R,
// see stl/make_stl_forecast.R).
type stlForecastFixture struct {
	Source    string    `json:"source"`
	Frequency int       `json:"frequency"`
	X         []float64 `json:"x"`
	SWindow   any       `json:"s_window"`
	Seasonal  []float64 `json:"seasonal"`
	Adjusted  []float64 `json:"adjusted"`
	H         int       `json:"h"`
	Drift     struct {
		Forecast []float64 `json:"forecast"`
	} `json:"drift"`
	SES struct {
		HoltWintersSSE float64   `json:"holtwinters_sse"`
		Alpha          float64   `json:"alpha"`
		SSE            float64   `json:"sse"`
		Level          float64   `json:"level"`
		Forecast       []float64 `json:"forecast"`
	} `json:"ses"`
}

// stlLoad reads every JSON file of dir (under testdata/reference), keyed by
// base name, and checks their number.
func stlLoad[T any](t *testing.T, dir string, want int) map[string]*T {
	t.Helper()
	paths, err := filepath.Glob(filepath.Join("testdata", "reference", dir, "*.json"))
	if err != nil {
		t.Fatal(err)
	}
	if len(paths) != want {
		t.Fatalf("%s: found %d fixtures, want %d (regenerate: see testdata/reference/REFERENCE-METHODS.md and stl/make_stl_*.{R,py})", dir, len(paths), want)
	}
	out := make(map[string]*T, len(paths))
	for _, p := range paths {
		b, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		fx := new(T)
		if err := json.Unmarshal(b, fx); err != nil {
			t.Fatalf("%s: %v", p, err)
		}
		out[strings.TrimSuffix(filepath.Base(p), ".json")] = fx
	}
	return out
}

// stlOptionsFor returns the options of the fixture's call,
// stl(x, s.window = <"periodic" | w>, robust = <outer > 0>), every other
// option left at its default.
func stlOptionsFor(p stlFixtureParams) Options {
	o := Options{"robust": p.Outer > 0, "seasonal_window": "periodic"}
	if !p.Periodic {
		o["seasonal_window"] = p.SWindow
	}
	return o
}

// stlDecomposeFixture decomposes the fixture's x with the fixture's call and
// returns the decomposition and the robustness weights of the last pass. It
// checks that x is not modified.
func stlDecomposeFixture(t *testing.T, fx *stlFixture) (*Decomposition, []float64) {
	t.Helper()
	s, err := NewSTL(stlOptionsFor(fx.Parameters))
	if err != nil {
		t.Fatal(err)
	}
	x := slices.Clone(fx.X)
	d, err := s.Decompose(x, fx.Frequency)
	if err != nil {
		t.Fatal(err)
	}
	// The weights are not part of a Decomposition: run the core again.
	var d2 Decomposition
	w := make([]float64, len(x))
	stlDecompose(&d2, x, s.resolve(len(x), fx.Frequency), w)
	if !slices.Equal(d.Trend, d2.Trend) || !slices.Equal(d.Seasonal, d2.Seasonal) {
		t.Fatal("Decompose and stlDecompose disagree")
	}
	if !slices.Equal(x, fx.X) {
		t.Fatal("Decompose modified its input")
	}
	return d, w
}

// stlMaxDiff returns the largest |got − want|, failing on a length mismatch
// or a NaN.
func stlMaxDiff(t *testing.T, what string, got, want []float64) float64 {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%s: %d values, want %d", what, len(got), len(want))
	}
	var worst float64
	for i := range got {
		d := math.Abs(got[i] - want[i])
		if d != d {
			t.Fatalf("%s[%d] = %v, want %v", what, i, got[i], want[i])
		}
		worst = math.Max(worst, d)
	}
	return worst
}

// stlCheckComponents compares a decomposition with a fixture at tol and
// checks the additive identities. It returns the largest difference.
func stlCheckComponents(t *testing.T, d *Decomposition, w []float64, fx *stlFixture, tol float64) float64 {
	t.Helper()
	ds := stlMaxDiff(t, "seasonal", d.Seasonal, fx.Seasonal)
	dt := stlMaxDiff(t, "trend", d.Trend, fx.Trend)
	dr := stlMaxDiff(t, "remainder", d.Remainder, fx.Remainder)
	dw := stlMaxDiff(t, "weights", w, fx.Weights)
	if worst := max(ds, dt, dr, dw); worst > tol {
		t.Errorf("max |diff|: seasonal %.3g, trend %.3g, remainder %.3g, weights %.3g; want ≤ %g\nsource: %s", ds, dt, dr, dw, tol, fx.Source)
	}
	for i, v := range fx.X {
		if d.Adjusted[i] != v-d.Seasonal[i] || d.Remainder[i] != v-d.Trend[i]-d.Seasonal[i] {
			t.Fatalf("index %d: adjusted or remainder is not y − S or y − T − S", i)
		}
	}
	return max(ds, dt, dr, dw)
}

// stlRScaleDiffers lists the robust R fixtures on which R's stl uses a
// robustness scale other than 6·median|R| in at least one pass: its Fortran
// takes the "median" from a partial sort that does not always leave the two
// middle order statistics in place. (On nottem with s.window = 7 the 12th
// pass used the 111th and 121st of the 240 sorted |R| instead of the 120th
// and 121st: found by solving R's weights of stl(..., outer = 12) for the
// scale; the first 11 passes agree with STL to 1e-12.) STL follows the
// paper's definition, as statsmodels does; TestSTLMatchesStatsmodels checks
// these cases, and statsmodels agrees with STL to about 1e-11 on all 22.
var stlRScaleDiffers = map[string]bool{
	"AirPassengers_log_periodic_robust": true,
	"AirPassengers_log_s13_robust":      true,
	"AirPassengers_log_s7_robust":       true,
	"UKgas_periodic_robust":             true,
	"co2_s13_robust":                    true,
	"nottem_s13_robust":                 true,
	"nottem_s7_robust":                  true,
}

// Source: R 4.2.2 stats::stl (testdata/reference/stl/*.json, written by
// stl/make_stl.R; the call is in each file's source field). Seasonal,
// trend, remainder and robustness weights to 1e-6 (they agree to about
// 1e-10): all 11 non-robust fits, and the 4 robust fits (UKgas s7, co2
// periodic and s7, nottem periodic) on which R's robustness scale is
// 6·median|R|.
func TestSTLMatchesR(t *testing.T) {
	const tol = 1e-6
	fixtures := stlLoad[stlFixture](t, "stl", 22)
	robustKinds := map[string]int{}
	for name, fx := range fixtures {
		t.Run(name, func(t *testing.T) {
			d, w := stlDecomposeFixture(t, fx)
			if stlRScaleDiffers[name] {
				// Pin the documented difference, so that the list is
				// revisited if STL ever starts agreeing.
				worst := max(stlMaxDiff(t, "seasonal", d.Seasonal, fx.Seasonal),
					stlMaxDiff(t, "trend", d.Trend, fx.Trend), stlMaxDiff(t, "weights", w, fx.Weights))
				if worst <= tol {
					t.Errorf("agrees with R now (max diff %.2g): remove it from stlRScaleDiffers", worst)
				}
				return
			}
			stlCheckComponents(t, d, w, fx, tol)
			if fx.Parameters.Outer == 0 {
				for i, v := range w {
					if v != 1 {
						t.Fatalf("weight %d = %v without robustness passes, want 1", i, v)
					}
				}
			} else if fx.Parameters.Periodic {
				robustKinds["periodic"]++
			} else {
				robustKinds["numeric"]++
			}
		})
	}
	if robustKinds["periodic"] == 0 || robustKinds["numeric"] == 0 {
		t.Errorf("robust R fixtures checked: %v; want both window kinds", robustKinds)
	}
}

// Source: statsmodels 0.13.5 STL with R's parameters
// (testdata/reference/stl/statsmodels/*.json, written by
// stl/make_stl_statsmodels.py); all 22 fits, robust included, to 1e-6.
func TestSTLMatchesStatsmodels(t *testing.T) {
	const tol = 1e-6
	for name, fx := range stlLoad[stlFixture](t, filepath.Join("stl", "statsmodels"), 22) {
		t.Run(name, func(t *testing.T) {
			d, w := stlDecomposeFixture(t, fx)
			stlCheckComponents(t, d, w, fx, tol)
		})
	}
}

// Source: R 4.2.2 stats::stl, the parameters it used ($win, $deg, $jump,
// $inner, $outer in testdata/reference/stl/*.json): the defaults STL
// derives from the season length, the series length and the options.
func TestSTLDefaultsMatchR(t *testing.T) {
	for name, fx := range stlLoad[stlFixture](t, "stl", 22) {
		s, err := NewSTL(stlOptionsFor(fx.Parameters))
		if err != nil {
			t.Fatal(err)
		}
		p := s.resolve(len(fx.X), fx.Frequency)
		r := fx.Parameters
		got := [...]int{p.sWindow, p.tWindow, p.lWin, p.sDegree, p.tDegree, p.tDegree, p.sJump, p.tJump, p.lJump, p.inner, p.outer}
		want := [...]int{r.SWindow, r.TWindow, r.LWindow, r.SDegree, r.TDegree, r.LDegree, r.SJump, r.TJump, r.LJump, r.Inner, r.Outer}
		if got != want || p.periodic != r.Periodic {
			t.Errorf("%s: windows s,t,l, degrees s,t,l, jumps s,t,l, inner, outer = %v, want %v", name, got, want)
		}
	}
}

// Source: R 4.2.2 (testdata/reference/stl/forecast/*.json, written by
// stl/make_stl_forecast.R): the adjusted series of stl(x, s.window =
// "periodic" | 7), its drift forecast, and simple exponential smoothing as
// stats::HoltWinters(a, beta = FALSE, gamma = FALSE) defines it, with α
// minimising the SSE (refined by optimize at tol 1e-12), plus the seasonal
// of the last cycle.
func TestSTLForecastMatchesR(t *testing.T) {
	for name, fx := range stlLoad[stlForecastFixture](t, filepath.Join("stl", "forecast"), 8) {
		t.Run(name, func(t *testing.T) {
			x := slices.Clone(fx.X)
			scale := 0.0
			for _, v := range x {
				scale = math.Max(scale, math.Abs(v))
			}
			for _, adj := range []string{"drift", "ses"} {
				m, err := New("stl", Options{"seasonal_window": fx.SWindow, "adjusted_method": adj})
				if err != nil {
					t.Fatal(err)
				}
				f, err := m.Fit(x, fx.Frequency)
				if err != nil {
					t.Fatal(err)
				}
				if !slices.Equal(x, fx.X) {
					t.Fatal("Fit modified its input")
				}
				d := f.(Decomposed).Components()
				if diff := stlMaxDiff(t, "adjusted", d.Adjusted, fx.Adjusted); diff > 1e-6 {
					t.Errorf("adjusted: max diff %.3g vs R, want ≤ 1e-6", diff)
				}
				got := f.Forecast(fx.H)
				want := fx.Drift.Forecast
				tol := 1e-6
				if adj == "ses" {
					want = fx.SES.Forecast
					// α agrees with R's to 1e-6 (about 1e-8 seen); the level, and so
					// the forecast, to a relative 1e-7 of the series.
					tol = 1e-7 * scale
					alpha, level := stlSES(d.Adjusted)
					sse, _ := esLevelFilter(d.Adjusted, alpha, d.Adjusted[0])
					if math.Abs(alpha-fx.SES.Alpha) > 1e-6 {
						t.Errorf("ses: alpha %.9g, R %.9g", alpha, fx.SES.Alpha)
					}
					if sse > fx.SES.SSE*(1+1e-9) || sse > fx.SES.HoltWintersSSE {
						t.Errorf("ses: SSE %.12g, R %.12g (HoltWinters' own %.12g)", sse, fx.SES.SSE, fx.SES.HoltWintersSSE)
					}
					if math.Abs(level-fx.SES.Level) > tol {
						t.Errorf("ses: level %.12g, R %.12g", level, fx.SES.Level)
					}
				}
				if diff := stlMaxDiff(t, adj+" forecast", got, want); diff > tol {
					t.Errorf("%s forecast: max diff %.3g vs R, want ≤ %.3g", adj, diff, tol)
				}
			}
		})
	}
}

// Source: hand computation. For y_t = 20 + 0.5t + s_{(t−1) mod 4}, s = (3,
// −1, −4, 2), a straight line plus a fixed pattern summing to 0, STL with
// seasonal_degree 1 is exact: local-linear loess reproduces the line in
// every cycle-subseries and in the trend, and the three moving averages of
// the extended cycle-subseries, (line + pattern), leave the line alone and
// cancel the pattern. So T_t = 20 + 0.5t, S = s and R = 0, the adjusted
// series is the line, drift continues it, and SES, whose SSE on a line
// falls as α rises, takes α = 1 and ends on the last value. n = 18 is not
// a whole number of cycles, so the forecast starts at position 18 mod 4 = 2.
func TestSTLForecastByHand(t *testing.T) {
	s := []float64{3, -1, -4, 2}
	y := make([]float64, 18)
	for i := range y {
		y[i] = 20 + 0.5*float64(i+1) + s[i%4]
	}
	// t = 19…24 sit at positions 2, 3, 0, 1, 2, 3.
	wantDrift := []float64{
		29.5 - 4, 30 + 2, 30.5 + 3, 31 - 1, 31.5 - 4, 32 + 2,
	}
	last := 20 + 0.5*18.0 // adjusted y_18 = 29
	wantSES := []float64{last - 4, last + 2, last + 3, last - 1, last - 4, last + 2}
	for _, c := range []struct {
		adj  string
		want []float64
	}{{"drift", wantDrift}, {"ses", wantSES}} {
		m, err := New("stl", Options{"seasonal_window": 7, "seasonal_degree": 1, "adjusted_method": c.adj})
		if err != nil {
			t.Fatal(err)
		}
		f, err := m.Fit(y, 4)
		if err != nil {
			t.Fatal(err)
		}
		d := f.(Decomposed).Components()
		for i := range y {
			tr := 20 + 0.5*float64(i+1)
			if math.Abs(d.Trend[i]-tr) > 1e-9 || math.Abs(d.Seasonal[i]-s[i%4]) > 1e-9 || math.Abs(d.Remainder[i]) > 1e-9 {
				t.Fatalf("t=%d: T %.12g S %.12g R %.3g, want %g, %g, 0", i+1, d.Trend[i], d.Seasonal[i], d.Remainder[i], tr, s[i%4])
			}
		}
		got := f.Forecast(len(c.want))
		if diff := stlMaxDiff(t, c.adj, got, c.want); diff > 1e-6 {
			t.Errorf("%s: forecast %v, want %v", c.adj, got, c.want)
		}
	}
}

// Source: hand computation. For (10, 14, 13), ℓ_1 = 10, the one-step
// errors are 4 and 3 − 4α, so the SSE 16 + (3 − 4α)² is least at α = 3/4,
// where ℓ_2 = 13 and ℓ_3 = 13. For (5, 5, 5, 5) every α fits exactly.
func TestSTLSESByHand(t *testing.T) {
	y := []float64{10, 14, 13}
	alpha, level := stlSES(y)
	if math.Abs(alpha-0.75) > 1e-6 || math.Abs(level-13) > 1e-6 {
		t.Errorf("stlSES(10, 14, 13) = α %.9g, ℓ %.9g; want 0.75, 13", alpha, level)
	}
	if sse, _ := esLevelFilter(y, 0.75, y[0]); sse != 16 {
		t.Errorf("SSE at α = 0.75: %v, want 16", sse)
	}
	if _, level := stlSES([]float64{5, 5, 5, 5}); level != 5 {
		t.Errorf("constant series: level %v, want 5", level)
	}
}

// Source: R 4.2.2 stats::HoltWinters(Nile, alpha = 0.3, beta = FALSE,
// gamma = FALSE) (testdata/reference/hw/fixed_Nile_level_only.json): the
// same recursion and SSE, to a relative 1e-12.
func TestSTLSESRecursionMatchesR(t *testing.T) {
	b, err := os.ReadFile(filepath.Join("testdata", "reference", "hw", "fixed_Nile_level_only.json"))
	if err != nil {
		t.Fatal(err)
	}
	var fx struct {
		Alpha        float64   `json:"alpha"`
		X            []float64 `json:"x"`
		SSE          float64   `json:"sse"`
		Coefficients struct {
			A float64 `json:"a"`
		} `json:"coefficients"`
	}
	if err := json.Unmarshal(b, &fx); err != nil {
		t.Fatal(err)
	}
	sse, level := esLevelFilter(fx.X, fx.Alpha, fx.X[0])
	if math.Abs(sse-fx.SSE) > 1e-12*fx.SSE || math.Abs(level-fx.Coefficients.A) > 1e-12*fx.Coefficients.A {
		t.Errorf("SSE %.15g, level %.15g; R %.15g, %.15g", sse, level, fx.SSE, fx.Coefficients.A)
	}
}

func TestSTLFactors(t *testing.T) {
	fixtures := stlLoad[stlFixture](t, "stl", 22)
	for _, name := range []string{"nottem_periodic_nonrobust", "UKgas_s7_robust"} {
		fx := fixtures[name]
		d, _ := stlDecomposeFixture(t, fx)
		m := fx.Frequency
		if d.Form != FormAdditive || len(d.Factors) != m || len(d.Counts) != m {
			t.Fatalf("%s: form %q, %d factors, %d counts", name, d.Form, len(d.Factors), len(d.Counts))
		}
		var sumF float64
		sumC := 0
		for j := 0; j < m; j++ {
			var s float64
			k := 0
			for i := j; i < len(fx.X); i += m {
				s += fx.Seasonal[i] // R's seasonal
				k++
			}
			sumF += d.Factors[j]
			sumC += d.Counts[j]
			if d.Counts[j] != k {
				t.Errorf("%s: count %d = %d, want %d", name, j, d.Counts[j], k)
			}
			// Before the shift to mean 0, the factor is the mean of S.
			if got := d.Factors[j]; math.Abs(got-s/float64(k)) > 1e-6+math.Abs(stlMean(fx.Seasonal, m)) {
				t.Errorf("%s: factor %d = %.9g, want about %.9g", name, j, got, s/float64(k))
			}
		}
		if math.Abs(sumF) > 1e-9 || sumC != len(fx.X) {
			t.Errorf("%s: factors sum to %.3g, counts to %d", name, sumF, sumC)
		}
		if fx.Parameters.Periodic {
			for i := m; i < len(fx.X); i++ {
				if d.Seasonal[i] != d.Seasonal[i-m] {
					t.Fatalf("%s: periodic seasonal changes at %d", name, i)
				}
			}
		}
	}
}

// stlMean returns the mean over positions of the per-position means of s.
func stlMean(s []float64, m int) float64 {
	var total float64
	for j := 0; j < m; j++ {
		var v float64
		k := 0
		for i := j; i < len(s); i += m {
			v += s[i]
			k++
		}
		total += v / float64(k)
	}
	return total / float64(m)
}

func TestSTLDataErrors(t *testing.T) {
	s, err := NewSTL(nil)
	if err != nil {
		t.Fatal(err)
	}
	nan := math.NaN()
	y12 := []float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12}
	for _, c := range []struct {
		name   string
		y      []float64
		season int
		is     error
		has    string
	}{
		{"season 1", y12, 1, nil, "season of at least 2"},
		{"season 0", y12, 0, nil, "season of at least 2"},
		{"empty", nil, 4, ErrTooShort, "empty"},
		{"under two seasons", y12[:7], 4, ErrTooShort, "7 values; needs at least 8"},
		{"all missing", []float64{nan, nan, nan, nan, nan, nan, nan, nan}, 4, ErrAllMissing, ""},
		{"a gap", []float64{1, 2, nan, 4, 5, 6, 7, 8}, 4, nil, "1 missing values"},
		{"infinite", []float64{1, 2, math.Inf(1), 4, 5, 6, 7, 8}, 4, nil, "infinite"},
	} {
		_, errD := s.Decompose(c.y, c.season)
		_, errF := s.Fit(c.y, c.season)
		for _, err := range []error{errD, errF} {
			switch {
			case err == nil:
				t.Errorf("%s: no error", c.name)
			case c.is != nil && !errors.Is(err, c.is):
				t.Errorf("%s: %v, want %v", c.name, err, c.is)
			case c.is == nil && (errors.Is(err, ErrTooShort) || errors.Is(err, ErrAllMissing)):
				t.Errorf("%s: %v wraps a too-short/all-missing error", c.name, err)
			case !strings.Contains(err.Error(), c.has) || !strings.HasPrefix(err.Error(), "stl: "):
				t.Errorf("%s: %q, want it to say %q", c.name, err, c.has)
			}
		}
	}
	// Exactly two seasons is enough (R's stl wants more than two).
	if _, err := s.Fit(y12[:8], 4); err != nil {
		t.Errorf("8 values, season 4: %v", err)
	}
}

func TestSTLOptionErrors(t *testing.T) {
	for _, c := range []struct {
		o   Options
		has string
	}{
		{Options{"window": 7}, `unknown option "window"`},
		{Options{"seasonal_window": "weekly"}, `"periodic" or an odd integer ≥ 7`},
		{Options{"seasonal_window": 5}, `"periodic" or an odd integer ≥ 7`},
		{Options{"seasonal_window": 8}, `"periodic" or an odd integer ≥ 7`},
		{Options{"seasonal_window": 7.5}, "must be an integer"},
		{Options{"seasonal_window": 7, "seasonal_degree": 2}, "want 0 or 1"},
		{Options{"seasonal_degree": 1}, `"periodic" uses degree 0`},
		{Options{"trend_degree": -1}, "want 0 or 1"},
		{Options{"trend_window": 20}, "odd integer ≥ 3"},
		{Options{"lowpass_window": 1}, "odd integer ≥ 3"},
		{Options{"robust": "yes"}, "true or false"},
		{Options{"inner": 0}, "from 1 to 100"},
		{Options{"outer": 3}, "need robust: true"},
		{Options{"robust": true, "outer": 0}, "from 1 to 100 when robust"},
		{Options{"adjusted_method": "naive"}, "want ses or drift"},
		{Options{"adjusted_method": 1}, "want ses or drift"},
	} {
		_, err := New("stl", c.o)
		if err == nil || !strings.Contains(err.Error(), c.has) || !strings.HasPrefix(err.Error(), "stl: ") {
			t.Errorf("%v: error %v, want one saying %q", c.o, err, c.has)
		}
	}
	// Accepted spellings: whole floats, explicit defaults.
	for _, o := range []Options{
		{"seasonal_window": 13.0, "seasonal_degree": 1, "trend_window": 21, "trend_degree": 0, "lowpass_window": 13},
		{"seasonal_window": "periodic", "seasonal_degree": 0, "robust": true, "inner": 2, "outer": 5, "adjusted_method": "drift"},
	} {
		if _, err := New("stl", o); err != nil {
			t.Errorf("%v: %v", o, err)
		}
	}
}

func TestSTLFitted(t *testing.T) {
	fx := stlLoad[stlFixture](t, "stl", 22)["nottem_periodic_nonrobust"]
	m, err := New("stl", nil)
	if err != nil {
		t.Fatal(err)
	}
	if m.Name() != "stl" {
		t.Errorf("name %q", m.Name())
	}
	if _, ok := m.(Decomposer); !ok {
		t.Fatal("stl is not a Decomposer")
	}
	f, err := m.Fit(fx.X, 12)
	if err != nil {
		t.Fatal(err)
	}
	desc := f.(Described).Describe()
	if !strings.HasPrefix(desc, "stl(seasonal_window=periodic, seasonal_degree=0, trend_window=19, trend_degree=1, lowpass_window=13, robust=false, inner=2, outer=0; adjusted=ses(alpha=") {
		t.Errorf("describe %q", desc)
	}
	if got := f.Forecast(0); len(got) != 0 {
		t.Errorf("Forecast(0) = %v", got)
	}
	// The forecast repeats the last cycle's seasonal around a flat SES level.
	got := f.Forecast(30)
	d := f.(Decomposed).Components()
	n := len(fx.X)
	for h := 1; h <= 30; h++ {
		want := got[0] - d.Seasonal[n-12] + d.Seasonal[n-12+(h-1)%12]
		if math.Abs(got[h-1]-want) > 1e-9 {
			t.Errorf("h=%d: %v, want %v", h, got[h-1], want)
		}
	}
	defer func() {
		if r := recover(); r == nil || !strings.HasPrefix(fmt.Sprint(r), "engines: stl: ") {
			t.Errorf("Forecast(-1): panic %v", r)
		}
	}()
	f.Forecast(-1)
}

// stlBenchSeries reads a series of testdata/reference/bench.
func stlBenchSeries(b *testing.B, name string) ([]float64, int) {
	raw, err := os.ReadFile(filepath.Join("testdata", "reference", "bench", name+".json"))
	if err != nil {
		b.Fatal(err)
	}
	var fx struct {
		Frequency int       `json:"frequency"`
		X         []float64 `json:"x"`
	}
	if err := json.Unmarshal(raw, &fx); err != nil {
		b.Fatal(err)
	}
	return fx.X, fx.Frequency
}

func stlBench(b *testing.B, series string) {
	y, m := stlBenchSeries(b, series)
	for _, c := range []struct {
		name string
		o    Options
		fit  bool
	}{
		{"decompose", Options{}, false},
		{"decompose_robust", Options{"robust": true}, false},
		{"decompose_s7", Options{"seasonal_window": 7}, false},
		{"decompose_s7_robust", Options{"seasonal_window": 7, "robust": true}, false},
		{"forecast_ses", Options{}, true},
		{"forecast_drift", Options{"adjusted_method": "drift"}, true},
		{"forecast_ses_robust", Options{"robust": true}, true},
	} {
		s, err := NewSTL(c.o)
		if err != nil {
			b.Fatal(err)
		}
		b.Run(c.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if c.fit {
					f, err := s.Fit(y, m)
					if err != nil {
						b.Fatal(err)
					}
					f.Forecast(m)
				} else if _, err := s.Decompose(y, m); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkSTLWeekly156: testdata/reference/bench/weekly156.json, m = 52.
func BenchmarkSTLWeekly156(b *testing.B) { stlBench(b, "weekly156") }

// BenchmarkSTLMonthly60: testdata/reference/bench/monthly60.json, m = 12.
func BenchmarkSTLMonthly60(b *testing.B) { stlBench(b, "monthly60") }

// Edge cases: the shortest series, a constant series (robust: the residuals
// are zero or rounding noise, so the scale h can be 0), and a season as
// long as half the series. The components must stay finite and add up; a
// constant c decomposes into T = c, S = 0, R = 0.
func TestSTLEdgeCases(t *testing.T) {
	alt := []float64{1, 5, 2, 6}
	const5 := slices.Repeat([]float64{5}, 24)
	long := make([]float64, 104)
	for i := range long {
		long[i] = 10 + math.Sin(2*math.Pi*float64(i)/52) + 0.01*float64(i%7)
	}
	for _, c := range []struct {
		name   string
		y      []float64
		season int
		o      Options
	}{
		{"m=2, n=4", alt, 2, nil},
		{"m=2, n=4, s7 degree 1", alt, 2, Options{"seasonal_window": 7, "seasonal_degree": 1}},
		{"m=2, n=4, robust", alt, 2, Options{"robust": true}},
		{"constant", const5, 4, nil},
		{"constant, robust", const5, 4, Options{"robust": true}},
		{"constant, s7 robust", const5, 4, Options{"seasonal_window": 7, "robust": true}},
		{"m=52, n=104, robust", long, 52, Options{"robust": true, "adjusted_method": "drift"}},
	} {
		m, err := New("stl", c.o)
		if err != nil {
			t.Fatal(err)
		}
		f, err := m.Fit(c.y, c.season)
		if err != nil {
			t.Errorf("%s: %v", c.name, err)
			continue
		}
		d := f.(Decomposed).Components()
		for i, v := range c.y {
			parts := []float64{d.Trend[i], d.Seasonal[i], d.Remainder[i]}
			for _, p := range parts {
				if math.IsNaN(p) || math.IsInf(p, 0) {
					t.Fatalf("%s: index %d: components %v", c.name, i, parts)
				}
			}
			if math.Abs(d.Trend[i]+d.Seasonal[i]+d.Remainder[i]-v) > 1e-12*math.Max(1, math.Abs(v)) {
				t.Fatalf("%s: index %d: components %v do not add up to %v", c.name, i, parts, v)
			}
			if c.y[0] == 5 && (math.Abs(d.Trend[i]-5) > 1e-12 || math.Abs(d.Seasonal[i]) > 1e-12) {
				t.Fatalf("%s: index %d: T %v S %v, want 5, 0", c.name, i, d.Trend[i], d.Seasonal[i])
			}
		}
		for _, v := range f.Forecast(2 * c.season) {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				t.Fatalf("%s: forecast %v", c.name, v)
			}
		}
	}
}
