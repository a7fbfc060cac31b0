package engines

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// upliftInvented is an invented short daily series (16 weeks): level 50
// drifting up 0.05 a day, a weekday pattern, Poisson-like noise (σ ≈ 5%),
// a promotion (uplift 1.6) on 12 scattered days, a holiday (uplift 0.5) on
// 3 days, and one day with both.
func upliftInvented(rs uint64) (y []float64, promo, holiday []float64) {
	n := 112
	rng := rand.New(rand.NewPCG(rs, 7))
	week := []float64{0.8, 0.9, 1.0, 1.0, 1.1, 1.4, 0.8}
	promo = make([]float64, n)
	holiday = make([]float64, n)
	for _, t := range []int{5, 6, 20, 21, 33, 47, 48, 61, 75, 76, 90, 100} {
		promo[t] = 1
	}
	for _, t := range []int{15, 50, 85} {
		holiday[t] = 1
	}
	promo[85] = 1 // a promoted holiday
	y = make([]float64, n)
	for t := range y {
		b := (50 + 0.05*float64(t)) * week[t%7]
		f := (1 + 0.6*promo[t]) * (1 - 0.5*holiday[t])
		y[t] = math.Max(0, b*f*(1+0.05*rng.NormFloat64()))
	}
	return y, promo, holiday
}

// TestUpliftsRecovered: on 20 invented series the mean estimated uplift
// is within 0.03 of the generating value for the promotion (1.6) and the
// holiday (0.5), and every single estimate within 0.12 (promotion, 12
// days) and 0.1 (holiday, 2 days alone).
func TestUpliftsRecovered(t *testing.T) {
	var sp, sh float64
	const reps = 20
	for r := uint64(0); r < reps; r++ {
		y, promo, hol := upliftInvented(r + 1)
		f, err := FitUplifts(y, [][]float64{promo, hol}, 7, []string{"promo", "holiday"})
		if err != nil {
			t.Fatal(err)
		}
		u := f.Uplifts()
		if math.Abs(u[0]-1.6) > 0.12 || math.Abs(u[1]-0.5) > 0.1 {
			t.Errorf("series %d: uplifts %v, want about [1.6 0.5]", r, u)
		}
		if p := f.Periods(); p[0] != 12 || p[1] != 2 {
			t.Errorf("periods %v, want [12 2] (the shared day left out)", p)
		}
		sp += u[0]
		sh += u[1]
	}
	sp /= reps
	sh /= reps
	t.Logf("mean uplifts: promotion %.4f (true 1.6), holiday %.4f (true 0.5)", sp, sh)
	if math.Abs(sp-1.6) > 0.03 || math.Abs(sh-0.5) > 0.03 {
		t.Errorf("mean uplifts %.4f, %.4f", sp, sh)
	}
}

// TestUpliftAdjustApply: dividing by the factors removes the drivers
// (adjusted promotion days sit at the level of their weekday), and Apply
// puts them back exactly.
func TestUpliftAdjustApply(t *testing.T) {
	y, promo, hol := upliftInvented(3)
	f, err := FitUplifts(y, [][]float64{promo, hol}, 7, nil)
	if err != nil {
		t.Fatal(err)
	}
	adj := f.Adjusted()
	fac := f.Factors()
	for i := range y {
		if math.Abs(adj[i]*fac[i]-y[i]) > 1e-9*math.Max(1, y[i]) {
			t.Fatalf("adjusted·factor %g ≠ y %g at %d", adj[i]*fac[i], y[i], i)
		}
	}
	if math.Abs(fac[85]-f.Uplifts()[0]*f.Uplifts()[1]) > 1e-12 {
		t.Errorf("shared day factor %g ≠ product of uplifts", fac[85])
	}
	// A promoted day of the busiest weekday (47) against plain ones of the
	// same weekday (12, 26, 40, 54), adjusted:
	// within 15%.
	sat := 0.0
	for _, s := range []int{12, 26, 40, 54} {
		sat += adj[s]
	}
	sat /= 4
	if r := adj[47] / sat; math.Abs(r-1) > 0.15 {
		t.Errorf("adjusted promoted day %g vs plain %g", adj[47], sat)
	}
	out, err := f.Apply([]float64{10, 10, 10}, [][]float64{{0, 1, 0.5}, {0, 0, 1}})
	if err != nil {
		t.Fatal(err)
	}
	u := f.Uplifts()
	want := []float64{10, 10 * u[0], 10 * (1 + (u[0]-1)*0.5) * u[1]}
	for i := range want {
		if math.Abs(out[i]-want[i]) > 1e-12 {
			t.Errorf("apply %d: %g, want %g", i, out[i], want[i])
		}
	}
}

func TestUpliftEdgeCases(t *testing.T) {
	y, promo, hol := upliftInvented(4)
	never := make([]float64, len(y))
	f, err := FitUplifts(y, [][]float64{promo, never}, 7, []string{"promo", "clearance"})
	if err != nil {
		t.Fatal(err)
	}
	if f.Uplifts()[1] != 1 || len(f.Warnings()) != 1 || !strings.Contains(f.Warnings()[0], "clearance") {
		t.Errorf("never-on driver: uplift %v, warnings %v", f.Uplifts(), f.Warnings())
	}
	// A driver only ever on together with another.
	both := append([]float64(nil), promo...)
	f, err = FitUplifts(y, [][]float64{hol, promo, both}, 7, []string{"holiday", "promo", "display"})
	if err != nil {
		t.Fatal(err)
	}
	if len(f.Warnings()) == 0 {
		t.Error("no warning for drivers never on alone")
	}
	// Without a season the neighbours give the baseline.
	f, err = FitUplifts(y, [][]float64{promo}, 1, nil)
	if err != nil {
		t.Fatal(err)
	}
	if u := f.Uplifts()[0]; math.Abs(u-1.6) > 0.35 {
		t.Errorf("no season: uplift %g", u)
	}
	bad := append([]float64(nil), promo...)
	bad[3] = -1
	if _, err := FitUplifts(y, [][]float64{bad}, 7, []string{"promo"}); err == nil || !strings.Contains(err.Error(), "promo has value -1 at position 3") {
		t.Errorf("negative driver: %v", err)
	}
	if _, err := FitUplifts(y, [][]float64{promo[:5]}, 7, nil); err == nil {
		t.Error("short driver accepted")
	}
	f, _ = FitUplifts(y, [][]float64{promo}, 7, []string{"promo"})
	if _, err := f.Apply([]float64{1, 2}, [][]float64{{1}}); err == nil || !strings.Contains(err.Error(), "future driver promo") {
		t.Errorf("short future driver: %v", err)
	}
}

// TestUpliftModelForecast: seasonal naive on the adjusted history, with a
// promotion on day 3 of the horizon, forecasts that day at the uplift
// times the plain forecast, and a missing value in the history is filled
// with a warning.
func TestUpliftModelForecast(t *testing.T) {
	y, promo, hol := upliftInvented(6)
	y[30] = math.NaN()
	base, err := New("seasonal_naive", Options{})
	if err != nil {
		t.Fatal(err)
	}
	m, err := FitUpliftModel(y, [][]float64{promo, hol}, 7, []string{"promo", "holiday"}, base)
	if err != nil {
		t.Fatal(err)
	}
	if len(m.Warnings()) != 1 || !strings.Contains(m.Warnings()[0], "1 missing values") {
		t.Errorf("warnings %v", m.Warnings())
	}
	fp := make([]float64, 7)
	fh := make([]float64, 7)
	fp[2] = 1
	fc, err := m.Forecast([][]float64{fp, fh})
	if err != nil {
		t.Fatal(err)
	}
	plain := m.Base.Forecast(7)
	u := m.Uplift.Uplifts()[0]
	for i := range fc {
		want := plain[i]
		if i == 2 {
			want *= u
		}
		if math.Abs(fc[i]-want) > 1e-12 {
			t.Errorf("step %d: %g, want %g", i, fc[i], want)
		}
	}
	// A promotion in the last week is divided out before the seasonal
	// naive forecast: its weekday is forecast at y/u, not at the spike.
	promo2 := append([]float64(nil), promo...)
	y2 := append([]float64(nil), y...)
	promo2[108] = 1
	y2[108] *= 1.6
	m2, err := FitUpliftModel(y2, [][]float64{promo2, hol}, 7, nil, base)
	if err != nil {
		t.Fatal(err)
	}
	p2 := m2.Base.Forecast(7)
	u2 := m2.Uplift.Uplifts()[0]
	if got, want := p2[108-105], y2[108]/u2; math.Abs(got-want) > 1e-9 {
		t.Errorf("forecast of the promoted weekday %g, want %g (y/u)", got, want)
	}
}

func BenchmarkFitUplifts(b *testing.B) {
	y, promo, hol := upliftInvented(1)
	x := [][]float64{promo, hol}
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		if _, err := FitUplifts(y, x, 7, nil); err != nil {
			b.Fatal(err)
		}
	}
}
