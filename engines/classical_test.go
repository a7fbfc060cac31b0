package engines

import (
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// decompFloats reads a JSON array of numbers in which null stands for a
// missing value (NaN).
type decompFloats []float64

func (f *decompFloats) UnmarshalJSON(b []byte) error {
	var raw []*float64
	if err := json.Unmarshal(b, &raw); err != nil {
		return err
	}
	out := make([]float64, len(raw))
	for i, p := range raw {
		if p == nil {
			out[i] = math.NaN()
		} else {
			out[i] = *p
		}
	}
	*f = out
	return nil
}

// decompFixture is one file of testdata/reference/decompose (R) or
// testdata/reference/statsmodels_decompose (statsmodels). R calls the
// remainder "random", statsmodels "resid".
type decompFixture struct {
	Source    string       `json:"source"`
	Frequency int          `json:"frequency"`
	X         decompFloats `json:"x"`
	Trend     decompFloats `json:"trend"`
	Seasonal  decompFloats `json:"seasonal"`
	Random    decompFloats `json:"random"`
	Resid     decompFloats `json:"resid"`
	Figure    decompFloats `json:"figure"`
}

func loadDecompFixtures(t *testing.T, dir string, want int) map[string]decompFixture {
	t.Helper()
	paths, err := filepath.Glob(filepath.Join("testdata", "reference", dir, "*.json"))
	if err != nil {
		t.Fatal(err)
	}
	if len(paths) != want {
		t.Fatalf("%s: found %d fixtures, want %d (regenerate: see testdata/reference/README.md)", dir, len(paths), want)
	}
	out := make(map[string]decompFixture, len(paths))
	for _, p := range paths {
		b, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		var fx decompFixture
		if err := json.Unmarshal(b, &fx); err != nil {
			t.Fatalf("%s: %v", p, err)
		}
		if fx.Source == "" || fx.Frequency < 2 || len(fx.X) == 0 {
			t.Fatalf("%s: incomplete fixture", p)
		}
		out[strings.TrimSuffix(filepath.Base(p), ".json")] = fx
	}
	return out
}

// decompClose compares got with want element by element: both NaN, or
// |got − want| ≤ tol. It returns the largest difference seen.
func decompClose(t *testing.T, what string, got, want []float64, tol float64) float64 {
	t.Helper()
	if len(got) != len(want) {
		t.Errorf("%s: len %d, want %d", what, len(got), len(want))
		return math.Inf(1)
	}
	worst, bad := 0.0, 0
	for i := range got {
		g, w := got[i], want[i]
		if math.IsNaN(w) || math.IsNaN(g) {
			if math.IsNaN(w) != math.IsNaN(g) {
				if bad++; bad <= 5 {
					t.Errorf("%s[%d] = %v, want %v", what, i, g, w)
				}
			}
			continue
		}
		d := math.Abs(g - w)
		worst = math.Max(worst, d)
		if !(d <= tol) {
			if bad++; bad <= 5 {
				t.Errorf("%s[%d] = %.17g, want %.17g (diff %.3g > %.0e)", what, i, g, w, d, tol)
			}
		}
	}
	return worst
}

func mustClassical(t testing.TB, form, trend, average string) *Classical {
	t.Helper()
	c, err := NewClassical(form, trend, average)
	if err != nil {
		t.Fatal(err)
	}
	return c
}

// TestClassicalMatchesR compares the decomposition with R 4.2.2
// stats::decompose on datasets::AirPassengers, nottem, UKgas and
// USAccDeaths and on the invented weekly series of bench/time_r.R
// (season 52), both types, plus AirPassengers with five values set to NA
// (R's decompose refuses internal NAs, so that fixture runs the steps of
// stats::decompose one by one: stats::filter and mean(na.rm=TRUE)). The
// fixtures come from testdata/reference/decompose.R; each one records its
// exact source in its "source" field, which the failure messages repeat.
func TestClassicalMatchesR(t *testing.T) {
	const tol = 1e-9
	fixtures := loadDecompFixtures(t, "decompose", 12)
	worst := 0.0
	for name, fx := range fixtures {
		t.Run(name, func(t *testing.T) {
			form := FormAdditive
			if strings.HasSuffix(name, "_multiplicative") {
				form = FormMultiplicative
			}
			d, err := mustClassical(t, form, "", "mean").Decompose(fx.X, fx.Frequency)
			if err != nil {
				t.Fatalf("%s: %v", fx.Source, err)
			}
			if d.Form != form {
				t.Fatalf("form %q, want %q", d.Form, form)
			}
			if len(d.Warnings) != 0 {
				t.Errorf("warnings %q, want none", d.Warnings)
			}
			src := fx.Source + ": "
			w := decompClose(t, src+"trend", d.Trend, fx.Trend, tol)
			w = math.Max(w, decompClose(t, src+"seasonal", d.Seasonal, fx.Seasonal, tol))
			w = math.Max(w, decompClose(t, src+"random", d.Remainder, fx.Random, tol))
			w = math.Max(w, decompClose(t, src+"figure", d.Factors, fx.Figure, tol))

			// Adjusted and counts are not part of R's output; derive them
			// from R's x, seasonal and trend.
			adj := make([]float64, len(fx.X))
			for i, x := range fx.X {
				if form == FormMultiplicative {
					adj[i] = x / fx.Seasonal[i]
				} else {
					adj[i] = x - fx.Seasonal[i]
				}
			}
			w = math.Max(w, decompClose(t, src+"x and seasonal → adjusted", d.Adjusted, adj, tol))
			counts := make([]int, fx.Frequency)
			for i, x := range fx.X {
				if !math.IsNaN(x) && !math.IsNaN(fx.Trend[i]) {
					counts[i%fx.Frequency]++
				}
			}
			for j := range counts {
				if d.Counts[j] != counts[j] {
					t.Errorf("%scounts[%d] = %d, want %d (non-NA x and trend at that position)", src, j, d.Counts[j], counts[j])
				}
			}
			worst = math.Max(worst, w)
		})
	}
	t.Logf("largest difference from R stats::decompose: %.3g", worst)
}

// TestClassicalMatchesStatsmodels compares the decomposition with
// statsmodels 0.13.5 seasonal_decompose (period = frequency, two-sided
// filter) on the same five series, both models. The fixtures come from
// testdata/reference/seasonal_decompose.py, which reads its numbers from
// the R fixtures' x arrays.
func TestClassicalMatchesStatsmodels(t *testing.T) {
	const tol = 1e-9
	fixtures := loadDecompFixtures(t, "statsmodels_decompose", 10)
	worst := 0.0
	for name, fx := range fixtures {
		t.Run(name, func(t *testing.T) {
			form := FormAdditive
			if strings.HasSuffix(name, "_multiplicative") {
				form = FormMultiplicative
			}
			d, err := mustClassical(t, form, "", "mean").Decompose(fx.X, fx.Frequency)
			if err != nil {
				t.Fatalf("%s: %v", fx.Source, err)
			}
			src := fx.Source + ": "
			w := decompClose(t, src+"trend", d.Trend, fx.Trend, tol)
			w = math.Max(w, decompClose(t, src+"seasonal", d.Seasonal, fx.Seasonal, tol))
			w = math.Max(w, decompClose(t, src+"resid", d.Remainder, fx.Resid, tol))
			w = math.Max(w, decompClose(t, src+"figure", d.Factors, fx.Figure, tol))
			worst = math.Max(worst, w)
		})
	}
	t.Logf("largest difference from statsmodels seasonal_decompose: %.3g", worst)
}

// TestClassicalKendallStuartExample: the example in the R documentation of
// stats::decompose ("example taken from Kendall/Stuart"), quarterly
// 1951–1958, additive, whose comment gives round(figure/10, 2) as
// 6.25, 8.62, −8.84, −6.03.
func TestClassicalKendallStuartExample(t *testing.T) {
	x := []float64{-50, 175, 149, 214, 247, 237, 225, 329, 729, 809,
		530, 489, 540, 457, 195, 176, 337, 239, 128, 102, 232, 429, 3,
		98, 43, -141, -77, -13, 125, 361, -45, 184}
	d, err := mustClassical(t, "additive", "", "").Decompose(x, 4)
	if err != nil {
		t.Fatal(err)
	}
	want := []float64{6.25, 8.62, -8.84, -6.03}
	for j, f := range d.Factors {
		if got := math.Round(f/10*100) / 100; got != want[j] {
			t.Errorf("round(figure[%d]/10, 2) = %v, want %v (R documentation of stats::decompose)", j, got, want[j])
		}
	}
}

// TestClassicalForecastByHandQuadratic: y_t = t², t = 1…12, m = 4, additive.
// Worked by hand (common practice: the formulas in the Classical doc):
//
//	T_t = (½(t−2)² + (t−1)² + t² + (t+1)² + ½(t+2)²)/4 = (4t² + 6)/4 = t² + 1.5,
//	      defined for t = 3…10, so T_3 = 10.5 and T_10 = 101.5;
//	D_t = −1.5 at every position, so every factor is −1.5 − (−1.5) = 0,
//	      the seasonal part is 0 and the adjusted series is y itself.
//	trend_flat:    P(t) = 101.5
//	trend_step:    slope (101.5 − 10.5)/(10 − 3) = 13; P(t) = 101.5 + 13(t − 10)
//	trend_line:    OLS of t² + 1.5 on t = 3…10: mean t 6.5, Σ(t−6.5)² = 42,
//	               Σ(t−6.5)t² = 13·42, so slope 13; mean T = 380/8 + 1.5 = 49;
//	               P(t) = 49 + 13(t − 6.5)
//	adjusted_line: OLS of t² on t = 1…12: mean t 6.5, Σ(t−6.5)² = 143,
//	               Σ(t−6.5)t² = 13·143, so slope 13; mean t² = 650/12;
//	               P(t) = 650/12 + 13(t − 6.5)
func TestClassicalForecastByHandQuadratic(t *testing.T) {
	y := make([]float64, 12)
	for i := range y {
		y[i] = float64((i + 1) * (i + 1))
	}
	want := map[string][]float64{ // t = 13, 14, 15
		"trend_flat":    {101.5, 101.5, 101.5},
		"trend_step":    {140.5, 153.5, 166.5},
		"trend_line":    {133.5, 146.5, 159.5},
		"adjusted_line": {650.0/12 + 84.5, 650.0/12 + 97.5, 650.0/12 + 110.5},
	}
	for _, opt := range classicalTrendNames {
		f, err := mustClassical(t, "additive", opt, "").Fit(y, 4)
		if err != nil {
			t.Fatal(err)
		}
		decompClose(t, "hand-worked t² "+opt, f.Forecast(3), want[opt], 1e-9)
		d := f.(Decomposed).Components()
		decompClose(t, "hand-worked t² factors", d.Factors, []float64{0, 0, 0, 0}, 0)
		decompClose(t, "hand-worked t² trend", d.Trend[:4], []float64{math.NaN(), math.NaN(), 10.5, 17.5}, 0)
	}
}

// TestClassicalForecastByHandSeasonal: y_t = 10 + t + s_{(t−1) mod 4},
// s = (2, −1, −3, 2), t = 1…12, additive. Worked by hand (common practice):
// the 2×4 average of a line plus a zero-sum quarterly pattern is the line,
// so T_t = 10 + t for t = 3…10 and the factors are s exactly. The adjusted
// series is the line, so adjusted_line, trend_line and trend_step all
// project 10 + t; trend_flat holds T_10 = 20.
func TestClassicalForecastByHandSeasonal(t *testing.T) {
	s := []float64{2, -1, -3, 2}
	y := make([]float64, 12)
	for i := range y {
		y[i] = 10 + float64(i+1) + s[i%4]
	}
	line := []float64{23 + 2, 24 - 1, 25 - 3, 26 + 2, 27 + 2} // t = 13…17
	flat := []float64{20 + 2, 20 - 1, 20 - 3, 20 + 2, 20 + 2}
	for _, opt := range classicalTrendNames {
		f, err := mustClassical(t, "additive", opt, "").Fit(y, 4)
		if err != nil {
			t.Fatal(err)
		}
		want := line
		if opt == "trend_flat" {
			want = flat
		}
		decompClose(t, "hand-worked line+pattern "+opt, f.Forecast(5), want, 1e-12)
		d := f.(Decomposed).Components()
		decompClose(t, "hand-worked line+pattern factors", d.Factors, s, 1e-12)
		decompClose(t, "hand-worked line+pattern remainder", d.Remainder[2:10], make([]float64, 8), 1e-12)
	}
}

// classicalByTheBook is a second, deliberately plain implementation of the
// classical forecast for the tests: explicit weight vector, per-position
// lists, textbook least-squares sums. It shares no code with classical.go.
func classicalByTheBook(y []float64, m int, mult bool, trendOpt string, h int) []float64 {
	n := len(y)
	// Weights of the centred moving average.
	var w []float64
	if m%2 == 0 {
		w = append(w, 0.5/float64(m))
		for i := 1; i < m; i++ {
			w = append(w, 1/float64(m))
		}
		w = append(w, 0.5/float64(m))
	} else {
		for i := 0; i < m; i++ {
			w = append(w, 1/float64(m))
		}
	}
	half := len(w) / 2
	trend := make([]float64, n)
	for i := range trend {
		trend[i] = math.NaN()
		if i-half < 0 || i+half >= n {
			continue
		}
		sum := 0.0
		for k := range w {
			sum += w[k] * y[i-half+k]
		}
		trend[i] = sum
	}
	// Raw factors.
	lists := make([][]float64, m)
	for i := range y {
		if math.IsNaN(trend[i]) {
			continue
		}
		if mult {
			lists[i%m] = append(lists[i%m], y[i]/trend[i])
		} else {
			lists[i%m] = append(lists[i%m], y[i]-trend[i])
		}
	}
	fac := make([]float64, m)
	avg := 0.0
	for j, l := range lists {
		for _, v := range l {
			fac[j] += v
		}
		fac[j] /= float64(len(l))
		avg += fac[j] / float64(m)
	}
	for j := range fac {
		if mult {
			fac[j] /= avg
		} else {
			fac[j] -= avg
		}
	}
	// Trend projection.
	fitLine := func(xs, ys []float64) (a, b float64) {
		var sx, sy, sxx, sxy float64
		k := float64(len(xs))
		for i := range xs {
			sx += xs[i]
			sy += ys[i]
			sxx += xs[i] * xs[i]
			sxy += xs[i] * ys[i]
		}
		b = (k*sxy - sx*sy) / (k*sxx - sx*sx)
		a = (sy - b*sx) / k
		return a, b
	}
	var ts, tv []float64 // defined trend: t (1-based) and value
	for i, v := range trend {
		if !math.IsNaN(v) {
			ts = append(ts, float64(i+1))
			tv = append(tv, v)
		}
	}
	proj := func(t float64) float64 {
		switch trendOpt {
		case "adjusted_line":
			var xs, as []float64
			for i := range y {
				if mult {
					as = append(as, y[i]/fac[i%m])
				} else {
					as = append(as, y[i]-fac[i%m])
				}
				xs = append(xs, float64(i+1))
			}
			a, b := fitLine(xs, as)
			return a + b*t
		case "trend_line":
			a, b := fitLine(ts, tv)
			return a + b*t
		case "trend_step":
			last := len(ts) - 1
			step := (tv[last] - tv[0]) / (ts[last] - ts[0])
			return tv[last] + step*(t-ts[last])
		case "trend_flat":
			return tv[len(tv)-1]
		}
		panic(trendOpt)
	}
	out := make([]float64, h)
	for k := range out {
		t := float64(n + 1 + k)
		f := fac[(n+k)%m]
		if mult {
			out[k] = proj(t) * f
		} else {
			out[k] = proj(t) + f
		}
	}
	return out
}

// classicalInvented is an invented quarterly series (numbers made up for
// these tests, no source): 3½ years with a rising trend and a strong
// fourth quarter.
var classicalInvented = []float64{112, 95, 87, 130, 121, 101, 96, 142, 128, 110, 99, 151, 137, 118}

// TestClassicalForecastAgainstPlainImplementation checks every trend option
// in both forms, on 12 and on 14 values (so the forecast starts at two
// different season positions), against classicalByTheBook (common
// practice: the formulas of the Classical doc, implemented independently).
func TestClassicalForecastAgainstPlainImplementation(t *testing.T) {
	for _, n := range []int{12, 14} {
		y := classicalInvented[:n]
		for _, form := range classicalFormNames {
			for _, opt := range classicalTrendNames {
				f, err := mustClassical(t, form, opt, "mean").Fit(y, 4)
				if err != nil {
					t.Fatal(err)
				}
				want := classicalByTheBook(y, 4, form == FormMultiplicative, opt, 9)
				decompClose(t, fmt.Sprintf("%s %s n=%d", form, opt, n), f.Forecast(9), want, 1e-9)
			}
		}
	}
	// An odd season length (plain m-term average) on the same numbers.
	for _, opt := range classicalTrendNames {
		f, err := mustClassical(t, "additive", opt, "mean").Fit(classicalInvented, 3)
		if err != nil {
			t.Fatal(err)
		}
		decompClose(t, "m=3 "+opt, f.Forecast(5), classicalByTheBook(classicalInvented, 3, false, opt, 5), 1e-9)
	}
}

// TestClassicalMedian works a tiny additive example by hand (common
// practice): m = 3, y = 3 6 9 | 3 6 9 | 3 6 30 | 3 6 9.
//
//	T (t = 2…11)  = 6 6 6 6 6 6 13 13 13 6 (plain 3-term average)
//	D (t = 2…11)  = 0 3 −3 0 3 −3 −7 17 −10 0
//	position 1 (t = 1, 4, 7, 10): −3 −3 −10 → median −3, mean −16/3
//	position 2 (t = 2, 5, 8, 11): 0 0 −7 0  → median 0,  mean −7/4
//	position 3 (t = 3, 6, 9, 12): 3 3 17    → median 3,  mean 23/3
//
// The medians already sum to 0. The means sum to 7/12, so each loses 7/36:
// −199/36, −70/36, 269/36.
func TestClassicalMedian(t *testing.T) {
	y := []float64{3, 6, 9, 3, 6, 9, 3, 6, 30, 3, 6, 9}
	med, err := mustClassical(t, "additive", "", "median").Decompose(y, 3)
	if err != nil {
		t.Fatal(err)
	}
	nan := math.NaN()
	decompClose(t, "hand-worked trend", med.Trend, []float64{nan, 6, 6, 6, 6, 6, 6, 13, 13, 13, 6, nan}, 1e-12)
	decompClose(t, "hand-worked median factors", med.Factors, []float64{-3, 0, 3}, 1e-12)
	if want := []int{3, 4, 3}; med.Counts[0] != want[0] || med.Counts[1] != want[1] || med.Counts[2] != want[2] {
		t.Errorf("counts %v, want %v", med.Counts, want)
	}
	mean, err := mustClassical(t, "additive", "", "mean").Decompose(y, 3)
	if err != nil {
		t.Fatal(err)
	}
	decompClose(t, "hand-worked mean factors", mean.Factors, []float64{-199.0 / 36, -70.0 / 36, 269.0 / 36}, 1e-12)

	// Even counts take the midpoint of the middle two.
	if got := classicalMedianOf([]float64{4, 1, 3, 2}); got != 2.5 {
		t.Errorf("median of 4 1 3 2 = %v, want 2.5", got)
	}
	if got := classicalMedianOf([]float64{5, -1, 2}); got != 2 {
		t.Errorf("median of 5 −1 2 = %v, want 2", got)
	}
}

// TestClassicalFallsBackToAdditive: a multiplicative fit of a series with
// values ≤ 0 uses the additive form and says so.
func TestClassicalFallsBackToAdditive(t *testing.T) {
	y := append([]float64(nil), classicalInvented...)
	y[3], y[9] = 0, -4
	f, err := mustClassical(t, "", "", "").Fit(y, 4)
	if err != nil {
		t.Fatal(err)
	}
	d := f.(Decomposed).Components()
	if d.Form != FormAdditive {
		t.Errorf("form %q, want additive", d.Form)
	}
	w := f.(Warner).Warnings()
	if len(w) != 1 || !strings.Contains(w[0], "strictly positive") || !strings.Contains(w[0], "found 2 values ≤ 0") || !strings.Contains(w[0], "used additive") {
		t.Errorf("warnings %q", w)
	}
	if got, want := f.(Described).Describe(), "classical(additive, trend=adjusted_line, average=mean; fell back from multiplicative)"; got != want {
		t.Errorf("Describe() = %q, want %q", got, want)
	}
	add, err := mustClassical(t, "additive", "", "").Fit(y, 4)
	if err != nil {
		t.Fatal(err)
	}
	da := add.(Decomposed).Components()
	decompClose(t, "fallback factors vs additive", d.Factors, da.Factors, 0)
	decompClose(t, "fallback remainder vs additive", d.Remainder, da.Remainder, 0)
	decompClose(t, "fallback forecast vs additive", f.Forecast(6), add.Forecast(6), 0)
	if len(add.(Warner).Warnings()) != 0 {
		t.Errorf("additive fit warned: %q", add.(Warner).Warnings())
	}

	// Strictly positive data: no fallback, no warning.
	g, err := mustClassical(t, "", "", "").Fit(classicalInvented, 4)
	if err != nil {
		t.Fatal(err)
	}
	if got, want := g.(Described).Describe(), "classical(multiplicative, trend=adjusted_line, average=mean)"; got != want {
		t.Errorf("Describe() = %q, want %q", got, want)
	}
	if len(g.(Warner).Warnings()) != 0 || g.(Decomposed).Components().Form != FormMultiplicative {
		t.Errorf("positive series: form %q, warnings %q", g.(Decomposed).Components().Form, g.(Warner).Warnings())
	}
}

func TestClassicalErrors(t *testing.T) {
	c := mustClassical(t, "", "", "")
	nan := math.NaN()
	allNaN := []float64{nan, nan, nan, nan, nan, nan, nan, nan}
	// A NaN at index 5 (m = 4) leaves the moving average defined only at
	// indices 2, 8 and 9: position 4 (index 3, 7, 11) gets no detrended value.
	holed := append([]float64(nil), classicalInvented[:12]...)
	holed[5] = nan
	// 8 values but only 7 observed: R's rule counts observed values.
	sparse := append([]float64(nil), classicalInvented[:8]...)
	sparse[2] = nan
	for _, tc := range []struct {
		name   string
		y      []float64
		season int
		is     error
	}{
		{"one value short of two seasons", classicalInvented[:7], 4, ErrTooShort},
		{"empty", nil, 4, ErrTooShort},
		{"all missing", allNaN, 4, ErrAllMissing},
		{"fewer than 2m observed", sparse, 4, ErrTooShort},
		{"season position without a detrended value", holed, 4, ErrTooShort},
		{"season 1", classicalInvented, 1, nil},
		{"season 0", classicalInvented, 0, nil},
	} {
		f, err := c.Fit(tc.y, tc.season)
		if err == nil || f != nil {
			t.Errorf("%s: Fit = %v, %v; want an error", tc.name, f, err)
			continue
		}
		if tc.is != nil && !errors.Is(err, tc.is) {
			t.Errorf("%s: error %q does not wrap %q", tc.name, err, tc.is)
		}
		if tc.is == nil && (errors.Is(err, ErrTooShort) || errors.Is(err, ErrAllMissing)) {
			t.Errorf("%s: error %q should not be a data-length error", tc.name, err)
		}
		if d, err2 := c.Decompose(tc.y, tc.season); d != nil || err2 == nil || err2.Error() != err.Error() {
			t.Errorf("%s: Decompose = %v, %v; want the Fit error", tc.name, d, err2)
		}
	}
	// Exactly two seasons is enough.
	if _, err := c.Fit(classicalInvented[:8], 4); err != nil {
		t.Errorf("n = 2m: %v", err)
	}
}

// TestClassicalMissingValues: a missing value blanks the trend over the
// m+1 (even m) windows that hold it and the remainder and adjusted values
// at it; the seasonal value stays (it belongs to the position). The R
// fixture AirPassengers_gaps checks the numbers; this pins the pattern.
func TestClassicalMissingValues(t *testing.T) {
	y := append([]float64(nil), classicalInvented...) // n = 14, m = 4
	y[1], y[13] = math.NaN(), math.NaN()
	d, err := mustClassical(t, "", "", "").Decompose(y, 4)
	if err != nil {
		t.Fatal(err)
	}
	// Without gaps the trend is defined at indices 2…11; the gap at 1
	// blanks centres up to 3, the gap at 13 blanks centre 11.
	for i := range y {
		wantTrend := i >= 4 && i <= 10
		if !math.IsNaN(d.Trend[i]) != wantTrend {
			t.Errorf("trend[%d] = %v; defined should be %v", i, d.Trend[i], wantTrend)
		}
		if math.IsNaN(d.Seasonal[i]) {
			t.Errorf("seasonal[%d] is NaN", i)
		}
		if math.IsNaN(d.Adjusted[i]) != (i == 1 || i == 13) {
			t.Errorf("adjusted[%d] = %v", i, d.Adjusted[i])
		}
		if math.IsNaN(d.Remainder[i]) != !wantTrend {
			t.Errorf("remainder[%d] = %v", i, d.Remainder[i])
		}
	}
	// Trend defined at indices 4…10: positions 0 1 2 3 0 1 2.
	if want := []int{2, 2, 2, 1}; d.Counts[0] != want[0] || d.Counts[1] != want[1] || d.Counts[2] != want[2] || d.Counts[3] != want[3] {
		t.Errorf("counts %v, want %v", d.Counts, want)
	}
	// The forecast still comes out, from the observed values only: compare
	// trend_flat, whose level is the last defined trend value, T at index 10.
	f, err := mustClassical(t, "additive", "trend_flat", "").Fit(y, 4)
	if err != nil {
		t.Fatal(err)
	}
	da := f.(Decomposed).Components()
	got := f.Forecast(2) // t = 15, 16: positions 2 and 3
	want := []float64{da.Trend[10] + da.Factors[2], da.Trend[10] + da.Factors[3]}
	decompClose(t, "trend_flat with gaps", got, want, 0)
}

// TestClassicalDoesNotModifyInput runs every option combination and checks
// y bit for bit afterwards.
func TestClassicalDoesNotModifyInput(t *testing.T) {
	y := append([]float64(nil), classicalInvented...)
	y[5] = math.NaN()
	y[12] = 0 // forces the fallback path too
	orig := append([]float64(nil), y...)
	for _, form := range classicalFormNames {
		for _, opt := range classicalTrendNames {
			for _, avg := range classicalAverageNames {
				c := mustClassical(t, form, opt, avg)
				f, err := c.Fit(y, 3)
				if err != nil {
					t.Fatal(err)
				}
				f.Forecast(7)
				if _, err := c.Decompose(y, 3); err != nil {
					t.Fatal(err)
				}
			}
		}
	}
	for i := range y {
		if math.Float64bits(y[i]) != math.Float64bits(orig[i]) {
			t.Fatalf("y[%d] changed from %v to %v", i, orig[i], y[i])
		}
	}
}

func TestClassicalRegistryAndOptions(t *testing.T) {
	m, err := New("classical", Options{"form": "additive", "trend": "trend_step", "average": "median"})
	if err != nil {
		t.Fatal(err)
	}
	if m.Name() != "classical" {
		t.Errorf("Name() = %q", m.Name())
	}
	f, err := m.Fit(classicalInvented, 4)
	if err != nil {
		t.Fatal(err)
	}
	if got, want := f.(Described).Describe(), "classical(additive, trend=trend_step, average=median)"; got != want {
		t.Errorf("Describe() = %q, want %q", got, want)
	}
	// Defaults.
	m, err = New("classical", nil)
	if err != nil {
		t.Fatal(err)
	}
	f, err = m.Fit(classicalInvented, 4)
	if err != nil {
		t.Fatal(err)
	}
	if got, want := f.(Described).Describe(), "classical(multiplicative, trend=adjusted_line, average=mean)"; got != want {
		t.Errorf("default Describe() = %q, want %q", got, want)
	}
	for _, tc := range []struct {
		o    Options
		want string
	}{
		{Options{"form": "additve"}, `classical: unknown form "additve" (want multiplicative, additive)`},
		{Options{"trend": "line"}, `classical: unknown trend "line" (want adjusted_line, trend_line, trend_step, trend_flat)`},
		{Options{"average": "mode"}, `classical: unknown average "mode" (want mean, median)`},
		{Options{"shape": "x"}, `classical: unknown option "shape" (want form, trend, average or seasonal)`},
		{Options{"form": 2}, `classical: option form must be a string, got int`},
	} {
		if _, err := New("classical", tc.o); err == nil || err.Error() != tc.want {
			t.Errorf("New(classical, %v) error %v, want %q", tc.o, err, tc.want)
		}
	}
	// Forecast edge cases.
	if got := f.Forecast(0); len(got) != 0 {
		t.Errorf("Forecast(0) = %v", got)
	}
	defer func() {
		if recover() == nil {
			t.Error("Forecast(-1) did not panic")
		}
	}()
	f.Forecast(-1)
}

// classicalBenchSeries reads testdata/reference/bench/<name>.json, the
// invented series that bench/time_r.R also times R's decompose on.
func classicalBenchSeries(b *testing.B, name string) ([]float64, int) {
	b.Helper()
	raw, err := os.ReadFile(filepath.Join("testdata", "reference", "bench", name+".json"))
	if err != nil {
		b.Fatal(err)
	}
	var fx decompFixture
	if err := json.Unmarshal(raw, &fx); err != nil {
		b.Fatal(err)
	}
	if len(fx.X) == 0 || fx.Frequency < 2 {
		b.Fatalf("%s: incomplete series", name)
	}
	return fx.X, fx.Frequency
}

func benchmarkClassical(b *testing.B, name string, n, m, h int) {
	y, freq := classicalBenchSeries(b, name)
	if len(y) != n || freq != m {
		b.Fatalf("%s: %d values of season %d, want %d of %d", name, len(y), freq, n, m)
	}
	c := mustClassical(b, "", "", "")
	b.ReportAllocs()
	for b.Loop() {
		f, err := c.Fit(y, m)
		if err != nil {
			b.Fatal(err)
		}
		f.Forecast(h)
	}
}

// BenchmarkClassicalWeekly156: fit and 13-step forecast, 3 years of weeks.
func BenchmarkClassicalWeekly156(b *testing.B) { benchmarkClassical(b, "weekly156", 156, 52, 13) }

// BenchmarkClassicalMonthly60: fit and 12-step forecast, 5 years of months.
func BenchmarkClassicalMonthly60(b *testing.B) { benchmarkClassical(b, "monthly60", 60, 12, 12) }

// BenchmarkClassicalDecomposeWeekly156 is the decomposition alone (no
// forecast), the figure to set beside R's decompose() on the same series.
func BenchmarkClassicalDecomposeWeekly156(b *testing.B) {
	y, _ := classicalBenchSeries(b, "weekly156")
	c := mustClassical(b, "", "", "")
	b.ReportAllocs()
	for b.Loop() {
		if _, err := c.Decompose(y, 52); err != nil {
			b.Fatal(err)
		}
	}
}
