package engines

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// lcgNoise returns n values uniform in [−0.5, 0.5) from a linear
// congruential generator (Numerical Recipes constants, from memory).
func lcgNoise(n int, state uint32) []float64 {
	out := make([]float64, n)
	for i := range out {
		state = state*1664525 + 1013904223
		out[i] = float64(state)/(1<<32) - 0.5
	}
	return out
}

// springWeeks is an invented weekly series of three years (156 weeks):
// a level of 100 rising 1 a week, a sharp spring peak (weeks 11–18 of
// each year, a bell of height 150) and uniform noise of width 30.
func springWeeks() []float64 {
	e := lcgNoise(156, 2024)
	y := make([]float64, 156)
	for t := range y {
		w := float64(t%52) - 14.5
		y[t] = 100 + float64(t) + 30*e[t]
		if math.Abs(w) < 4 {
			y[t] += 150 * math.Exp(-w*w/4)
		}
	}
	return y
}

// TestAutoSeasonalLongSeason: a clearly seasonal weekly series of three
// years that the lag-52 autocorrelation test misses is seasonal by
// AutoSeasonal, through its strength and F test, and holt_winters,
// classical and stl in auto mode fit their seasonal forms on it.
func TestAutoSeasonalLongSeason(t *testing.T) {
	y := springWeeks()
	const m = 52
	if stat, s := SeasonalityTest(y, m); s {
		t.Fatalf("lag-52 test finds the season (stat %.3f); the test needs a series it misses", stat)
	}
	fs, used, k, ok := seasonalStrength(y, m)
	if !ok || fs < 0.9 || used != 104 || k != 52 {
		t.Fatalf("strength %.3f from %d values in %d positions (ok %v), want > 0.9, 104, 52", fs, used, k, ok)
	}
	if !AutoSeasonal(y, m) {
		t.Fatal("AutoSeasonal: no season in the spring series")
	}
	for _, c := range []struct {
		method string
		opts   Options
		none   string
	}{
		{"holt_winters", nil, "no season"},
		{"classical", nil, "no season"},
		{"stl", nil, "no season"},
	} {
		meth, err := New(c.method, c.opts)
		if err != nil {
			t.Fatal(err)
		}
		fit, err := meth.Fit(y, m)
		if err != nil {
			t.Fatalf("%s: %v", c.method, err)
		}
		if d := fit.(Described).Describe(); strings.Contains(d, c.none) {
			t.Errorf("%s: %s", c.method, d)
		}
	}
	// The same series cut to its first 117 weeks (the shortest backtest
	// fold of the garden example, 2¼ seasons) stays seasonal.
	if !AutoSeasonal(y[:117], m) {
		t.Error("AutoSeasonal: no season in 117 weeks of the spring series")
	}
}

// TestAutoSeasonalNoSeason: invented series with no season stay
// non-seasonal, including where the strength alone would call them
// seasonal: with 2¼ seasons of noise each position's mean is one or two
// values, the strength is high and only the F test refuses it.
func TestAutoSeasonalNoSeason(t *testing.T) {
	const m = 52
	for _, c := range []struct {
		n     int
		state uint32
	}{{156, 7}, {130, 11}, {117, 3}} {
		e := lcgNoise(c.n, c.state)
		y := make([]float64, c.n)
		for i := range y {
			y[i] = 100 + 20*e[i]
		}
		if AutoSeasonal(y, m) {
			fs, used, k, _ := seasonalStrength(y, m)
			t.Errorf("noise of %d weeks seasonal (strength %.3f, %d values, %d positions)", c.n, fs, used, k)
		}
		meth, err := New("stl", nil)
		if err != nil {
			t.Fatal(err)
		}
		fit, err := meth.Fit(y, m)
		if err != nil {
			t.Fatal(err)
		}
		if d := fit.(Described).Describe(); !strings.Contains(d, "no season") {
			t.Errorf("stl on noise of %d weeks: %s", c.n, d)
		}
	}
	// The case the F test is for: strength above the limit on noise.
	e := lcgNoise(117, 3)
	y := make([]float64, 117)
	for i := range y {
		y[i] = 100 + 20*e[i]
	}
	if fs, _, _, _ := seasonalStrength(y, m); !(fs > arimaStrengthLimit) {
		t.Errorf("strength of 117 weeks of noise %.3f: the case needs one above %.2f", fs, arimaStrengthLimit)
	}
	// Short seasons: WWWusage (R datasets) at lag 12 stays non-seasonal,
	// AirPassengers seasonal (the autocorrelation test alone decides both).
	if AutoSeasonal(datasetValues(t, "WWWusage"), 12) {
		t.Error("WWWusage at 12: seasonal")
	}
	if !AutoSeasonal(datasetValues(t, "AirPassengers"), 12) {
		t.Error("AirPassengers at 12: not seasonal")
	}
}

// TestSeasonalStrengthFAgainstR compares the strength, the F statistic, its
// degrees of freedom, the 95% quantile and the decision with
// seasonal_auto/ftest.json (R: stats::decompose, lm, anova, qf; see
// seasonal_auto/make_auto.R). Tolerances: 1e-10 relative (different
// summation orders).
func TestSeasonalStrengthFAgainstR(t *testing.T) {
	b, err := os.ReadFile(filepath.Join("testdata", "reference", "seasonal_auto", "ftest.json"))
	if err != nil {
		t.Fatal(err)
	}
	var fx struct {
		Cases []struct {
			Name                       string
			Season                     int
			Y                          []float64
			Strength, F, Df1, Df2, F95 float64
		}
	}
	if err := json.Unmarshal(b, &fx); err != nil {
		t.Fatal(err)
	}
	if len(fx.Cases) != 12 {
		t.Fatalf("%d cases, want 12", len(fx.Cases))
	}
	refused := 0
	near := func(got, want float64) bool { return math.Abs(got-want) <= 1e-10*math.Max(1, math.Abs(want)) }
	for _, c := range fx.Cases {
		fs, f, d1, d2, ok := seasonalStrengthF(c.Y, c.Season)
		if !ok || !near(fs, c.Strength) || !near(f, c.F) || d1 != c.Df1 || d2 != c.Df2 {
			t.Errorf("%s: strength %v F %v (%v, %v) ok %v; R %v F %v (%v, %v)", c.Name, fs, f, d1, d2, ok, c.Strength, c.F, c.Df1, c.Df2)
			continue
		}
		if q := (distuv.F{D1: d1, D2: d2}).Quantile(0.95); !near(q, c.F95) {
			t.Errorf("%s: F quantile %v, R qf %v", c.Name, q, c.F95)
		}
		_, acf := SeasonalityTest(c.Y, c.Season)
		want := acf || (c.Strength > 0.64 && c.F > c.F95)
		if got := AutoSeasonal(c.Y, c.Season); got != want {
			t.Errorf("%s: AutoSeasonal %v, want %v", c.Name, got, want)
		}
		if !acf && c.Strength > 0.64 && !want {
			refused++
		}
	}
	// Nile[1:30] at 12: strength 0.696 from 2.5 seasons, F 1.25 below
	// 4.03; the F test is what keeps it non-seasonal.
	if refused != 1 {
		t.Errorf("%d cases with strength above 0.64 refused by the F test, want 1 (Nile[1:30])", refused)
	}
}
