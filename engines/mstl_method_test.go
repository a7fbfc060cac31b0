package engines

import (
	"math"
	"slices"
	"strings"
	"testing"
)

// TestMSTLMethodAgainstR: on the MSTL reference cases (the R loop around
// R 4.2.2's stats::stl, engines/testdata/reference/mstl/make_mstl.R) with
// the method's settings (2 iterations, default windows), the forecast is
// R's seasonal components' last cycles carried forward (to 1e-8) plus the
// damped trend of the series less R's seasonal components (to 1e-6
// relative: the optimiser sees inputs that differ by up to 1e-8).
func TestMSTLMethodAgainstR(t *testing.T) {
	used := 0
	for name, c := range mstlLoadRef(t) {
		wantWindows := make([]int, len(c.Seasons))
		for j := range wantWindows {
			wantWindows[j] = 7 + 4*(j+1)
		}
		if c.Iterate != 2 || !slices.Equal(c.Windows, wantWindows) || !slices.IsSorted(c.Seasons) {
			continue
		}
		used++
		t.Run(name, func(t *testing.T) {
			n, h := len(c.Y), 2*c.Seasons[0]+3
			ctx := Context{}
			if len(c.Seasons) > 1 {
				ctx.Seasons = c.Seasons
			}
			fit, err := MSTLMethod{}.FitContext(c.Y, c.Seasons[0], ctx)
			if err != nil {
				t.Fatal(err)
			}
			f := fit.(*MSTLFitted)
			t.Log(f.Describe())
			adj := append([]float64(nil), c.Y...)
			seas := make([]float64, h)
			for j, m := range c.Seasons {
				for i := range adj {
					adj[i] -= c.Seasonal[j][i]
				}
				for i := range seas {
					seas[i] += c.Seasonal[j][n-m+i%m]
				}
			}
			_, got := f.Decomposition().SeasonalAhead(h)
			if e := mstlMaxAbs(got, seas); e > 1e-8 {
				t.Errorf("seasonal part off R's last cycles by %.2g", e)
			}
			trend := must(Holt{Damped: true}.Fit(adj, 1)).Forecast(h)
			fc := f.Forecast(h)
			for i := range fc {
				if e := arimaRelErr(fc[i], trend[i]+seas[i]); e > 1e-6 {
					t.Errorf("step %d: %v, from R's components %v (rel %.2g)", i+1, fc[i], trend[i]+seas[i], e)
				}
			}
			if v := f.ForecastVariance(h); len(v) != h || !(v[0] > 0) {
				t.Errorf("variance %v", v)
			}
		})
	}
	if used < 3 {
		t.Fatalf("only %d reference cases with the method's settings", used)
	}
}

// Missing values are filled (a warning, the model column), a season too
// long for the history is left out, and the plain Fit is STL-like with
// one season.
func TestMSTLMethodGapsAndShort(t *testing.T) {
	n := 120
	y := make([]float64, n)
	for i := range y {
		y[i] = 50 + 0.1*float64(i) + 5*math.Sin(2*math.Pi*float64(i)/7) + math.Cos(float64(i))
	}
	y[40], y[41] = math.NaN(), math.NaN()
	fit, err := MSTLMethod{}.FitContext(y, 7, Context{Seasons: []int{7, 365}})
	if err != nil {
		t.Fatal(err)
	}
	f := fit.(*MSTLFitted)
	if d := f.Describe(); !strings.HasPrefix(d, "mstl(seasons 7; adjusted: holt(") || !strings.HasSuffix(d, "; 2 missing values filled)") {
		t.Errorf("model %q", d)
	}
	w := strings.Join(f.Warnings(), " | ")
	if !strings.Contains(w, "2 missing values filled") || !strings.Contains(w, "season length 365 left out") {
		t.Errorf("warnings %q", w)
	}
	fc := f.Forecast(14)
	for i := 0; i < 7; i++ {
		// the weekly pattern repeats, on a damped (nearly flat) trend
		if math.Abs((fc[i+7] - fc[i])) > 1 {
			t.Errorf("steps %d and %d: %v, %v", i+1, i+8, fc[i], fc[i+7])
		}
	}
	if _, err := (MSTLMethod{}).Fit(y[:10], 7); err == nil {
		t.Error("10 values with season 7 fitted")
	}
}

// BenchmarkMSTLMethodDaily: one fit + 14-step forecast of the 3-year daily
// series of BenchmarkRegressionARIMADaily (six closed days) with the
// seasons 7 and 365.
func BenchmarkMSTLMethodDaily(b *testing.B) {
	n, h := 1095, 14
	y, _, _ := regDaily(n, h, []int{100, 101, 459, 460, 824, 825})
	c := Context{Seasons: []int{7, 365}}
	esLoop(b, func() {
		f, err := MSTLMethod{}.FitContext(y, 7, c)
		if err != nil {
			b.Fatal(err)
		}
		f.Forecast(h)
	})
}
