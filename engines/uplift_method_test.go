package engines

import (
	"math"
	"strings"
	"testing"
)

// Reference: engines/testdata/reference/uplift/make_uplift.R, the uplift
// definition written out in base R 4.2.2 (independently of the Go code) on
// R's Seatbelts (drivers on the seat belt law and an invented pulse
// driver, m = 12) and beaver2 (temperature on activ, m = 1).
type upliftRefCase struct {
	Name    string      `json:"name"`
	Y       []float64   `json:"y"`
	Season  int         `json:"season"`
	XNames  []string    `json:"x_names"`
	X       [][]float64 `json:"x"`
	Uplift  []float64   `json:"uplift"`
	Periods []int       `json:"periods"`
}

// TestUpliftMethodAgainstR: the method's uplifts equal R's to 1e-12
// relative and count the same periods; its forecast is the base method's
// forecast of the adjusted history times the future factors, worked by
// hand for seasonal_naive.
func TestUpliftMethodAgainstR(t *testing.T) {
	cases, err := loadRefCases[upliftRefCase]("testdata/reference/uplift/uplifts.json")
	if err != nil {
		t.Fatal(err)
	}
	if len(cases) < 2 {
		t.Fatalf("%d cases", len(cases))
	}
	for _, c := range cases {
		t.Run(c.Name, func(t *testing.T) {
			h := 12
			n := len(c.Y) - h
			ctx := Context{Drivers: c.X, DriverNames: c.XNames, H: h}
			// The history is the first n values; R's uplifts are over all
			// of them, so fit FitUplifts on the whole series for the
			// comparison, and the method on the history.
			u, err := FitUplifts(c.Y, c.X, c.Season, c.XNames)
			if err != nil {
				t.Fatal(err)
			}
			for j, want := range c.Uplift {
				if got := u.Uplifts()[j]; arimaRelErr(got, want) > 1e-12 || u.Periods()[j] != c.Periods[j] {
					t.Errorf("%s: uplift %.15g over %d periods, R %.15g over %d", c.XNames[j], got, u.Periods()[j], want, c.Periods[j])
				}
			}
			fit, err := Uplift{Base: "seasonal_naive"}.FitContext(c.Y[:n], c.Season, ctx)
			if err != nil {
				t.Fatal(err)
			}
			f := fit.(*UpliftFitted)
			t.Log(f.Describe())
			adj := f.model.Uplift.Adjusted()
			fac := f.model.Uplift.Uplifts()
			m := max(c.Season, 1)
			fc := f.Forecast(h)
			var ses []float64
			if c.Season < 2 { // the base is then ses, on the adjusted history
				ses = must(SES{}.Fit(adj, 1)).Forecast(h)
			}
			for i := 0; i < h; i++ {
				want := adj[n-m+i%m]
				if ses != nil {
					want = ses[i]
				}
				for j := range c.X {
					want *= math.Max(0, 1+(fac[j]-1)*c.X[j][n+i])
				}
				if math.Abs(fc[i]-want) > 1e-9*math.Abs(want) {
					t.Errorf("step %d: %v, by hand %v", i+1, fc[i], want)
				}
			}
		})
	}
}

// The method on an invented daily series with closed days and a promotion
// that lifts sales by 40%: the uplift is recovered, the closed days are
// filled for the base (a warning), and without drivers the method is its
// base.
func TestUpliftMethodInvented(t *testing.T) {
	n, h := 140, 14
	y := make([]float64, n)
	promo := make([]float64, n+h)
	week := []float64{0.8, 0.9, 1, 1, 1.1, 1.4, 0.8}
	for i := range promo {
		if i%23 == 5 || i%23 == 6 {
			promo[i] = 1
		}
	}
	for i := range y {
		y[i] = 100 * week[i%7] * (1 + 0.4*promo[i]) * (1 + 0.02*math.Sin(float64(i)))
	}
	y[30], y[31] = math.NaN(), math.NaN()
	fit, err := Uplift{}.FitContext(y, 7, Context{Drivers: [][]float64{promo}, DriverNames: []string{"promo"}, H: h})
	if err != nil {
		t.Fatal(err)
	}
	f := fit.(*UpliftFitted)
	if u := f.Uplifts()[0]; math.Abs(u-1.4) > 0.03 {
		t.Errorf("uplift %v, true 1.4", u)
	}
	if d := f.Describe(); !strings.HasPrefix(d, "uplift(promo ×1.") || !strings.Contains(d, "base: stl(") {
		t.Errorf("model %q", d)
	}
	found := false
	for _, w := range f.Warnings() {
		found = found || strings.Contains(w, "2 missing values of the adjusted history filled")
	}
	if !found {
		t.Errorf("warnings %v", f.Warnings())
	}
	fc := f.Forecast(h)
	for i := 0; i < h; i++ {
		// promo days of the horizon: about 1.4 × the same weekday without
		if promo[n+i] == 1 {
			ratio := fc[i] / fc[(i+7)%h]
			if promo[n+(i+7)%h] == 0 && math.Abs(ratio-1.4) > 0.1 {
				t.Errorf("step %d: promo forecast %v, same weekday without %v", i+1, fc[i], fc[(i+7)%h])
			}
		}
	}
	price := make([]float64, n+h)
	price[50] = -0.1
	fit, err = Uplift{}.FitContext(y, 7, Context{Drivers: [][]float64{price, promo}, DriverNames: []string{"price", "promo"}, H: h})
	if err != nil {
		t.Fatal(err)
	}
	if d := fit.(*UpliftFitted).Describe(); !strings.HasPrefix(d, "uplift(promo ×1.") || !strings.HasSuffix(d, "; driver price left out (negative values))") {
		t.Errorf("negative driver: model %q", d)
	}
	if w := fit.(*UpliftFitted).Warnings(); len(w) == 0 || !strings.Contains(w[0], "driver price has negative values") {
		t.Errorf("negative driver: warnings %v", w)
	}
	plain, err := Uplift{Base: "ses"}.Fit(y[32:], 7)
	if err != nil {
		t.Fatal(err)
	}
	ses, _ := SES{}.Fit(y[32:], 7)
	if a, b := plain.Forecast(3), ses.Forecast(3); a[0] != b[0] || a[2] != b[2] {
		t.Errorf("no drivers: %v, ses %v", a, b)
	}
	for _, c := range []struct {
		n    int
		want string
	}{{6, "base ses (stl needs a season)"}, {10, "base seasonal_naive (stl needs two seasons)"}, {14, "base: stl("}} {
		fit, err := Uplift{}.FitContext(y[:c.n], 7, Context{Drivers: [][]float64{promo[:c.n+h]}, DriverNames: []string{"promo"}, H: h})
		if err != nil {
			t.Errorf("%d values: %v", c.n, err)
		} else if d := fit.(*UpliftFitted).Describe(); !strings.Contains(d, c.want) {
			t.Errorf("%d values: model %q lacks %q", c.n, d, c.want)
		}
	}
	if _, err := (Uplift{}).Fit(y[32:], 1); err != nil {
		t.Errorf("no season: %v", err)
	} else if d := must(Uplift{}.Fit(y[32:], 1)).(*UpliftFitted).Describe(); !strings.Contains(d, "base ses (no season for stl)") {
		t.Errorf("no season: model %q", d)
	}
}

// BenchmarkUpliftDaily: one fit + 14-step forecast of the 3-year daily
// series of BenchmarkRegressionARIMADaily (six closed days, 3 drivers),
// on the default stl base.
func BenchmarkUpliftDaily(b *testing.B) {
	n, h := 1095, 14
	y, x, names := regDaily(n, h, []int{100, 101, 459, 460, 824, 825})
	for i := range x[2] { // uplift drivers are ≥ 0 and mostly off: the price step as a 0/1 driver
		x[2][i] -= 1
	}
	c := Context{Seasons: []int{7, 365}, Drivers: x, DriverNames: names, H: h}
	esLoop(b, func() {
		f, err := Uplift{}.FitContext(y, 7, c)
		if err != nil {
			b.Fatal(err)
		}
		f.Forecast(h)
	})
}
