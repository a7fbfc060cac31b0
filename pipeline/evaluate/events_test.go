package evaluate

import (
	"math"
	"os"
	"path/filepath"
	"slices"
	"sync"
	"testing"

	"almanac/engines"
	"almanac/pipeline/forecast"
	"almanac/pipeline/series"
	"almanac/spec"
)

const eventsSpec = `version: 1
name: events
sources: [data/sales.csv]
columns: {time: day, value: qty, keys: [store]}
calendar: {frequency: day}
methods: [naive]
horizon: 5
backtest: {folds: 3, horizon: 7, step: 7}
`

// ctxRecorder is a context-aware method that records what it was handed:
// the training length and the context of each fit. Its forecast is the
// last observed value plus 100 × the first driver's future value.
type ctxRecorder struct {
	mu    sync.Mutex
	fits  []engines.Context
	ys    [][]float64
	plain int // fits through Fit
}

func (r *ctxRecorder) Name() string { return "recorder" }
func (r *ctxRecorder) Fit(y []float64, season int) (engines.Fitted, error) {
	r.mu.Lock()
	r.plain++
	r.mu.Unlock()
	return recFit{last: lastObserved(y)}, nil
}
func (r *ctxRecorder) FitContext(y []float64, season int, c engines.Context) (engines.Fitted, error) {
	r.mu.Lock()
	r.fits = append(r.fits, c)
	r.ys = append(r.ys, y)
	r.mu.Unlock()
	var d []float64
	if len(c.Drivers) > 0 {
		d = c.Drivers[0][len(y):]
	}
	return recFit{last: lastObserved(y), future: d}, nil
}

type recFit struct {
	last   float64
	future []float64
}

func (f recFit) Forecast(h int) []float64 {
	out := make([]float64, h)
	for i := range out {
		out[i] = f.last
		if i < len(f.future) {
			out[i] += 100 * f.future[i]
		}
	}
	return out
}

func lastObserved(y []float64) float64 {
	for i := len(y) - 1; i >= 0; i-- {
		if !math.IsNaN(y[i]) {
			return y[i]
		}
	}
	return math.NaN()
}

func loadEventsSpec(t *testing.T) *spec.Spec {
	t.Helper()
	p := filepath.Join(t.TempDir(), "spec.yaml")
	if err := os.WriteFile(p, []byte(eventsSpec), 0o644); err != nil {
		t.Fatal(err)
	}
	s, err := spec.Load(p)
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// eventSeries is 60 days of values 10, 11, …, with a promotion driver on
// days 20, 47 and 50 and on the first forecast step, and closures on days
// 45 and 52 (inside the last two folds' test windows), whose values are
// missing as the events stage leaves them.
func eventSeries(horizon int) *series.Series {
	n := 60
	y := make([]float64, n)
	closed := make([]bool, n)
	for i := range y {
		y[i] = 10 + float64(i)
	}
	for _, i := range []int{45, 52} {
		y[i], closed[i] = math.NaN(), true
	}
	promo := make([]float64, n+horizon)
	for _, i := range []int{20, 47, 50, n} {
		promo[i] = 1
	}
	future := make([]bool, horizon)
	future[2] = true
	return &series.Series{Key: []string{"s1"}, Values: y, Closed: closed, FutureClosed: future,
		Drivers: []series.Driver{{Name: "promo", Values: promo}}}
}

// TestBacktestContextAndClosures: each fold's fit gets its training stretch
// and the drivers over that stretch plus the fold's horizon
// (driver[a:b+H]); closed periods of a test window are never scored.
func TestBacktestContextAndClosures(t *testing.T) {
	s := loadEventsSpec(t)
	rec := &ctxRecorder{}
	work := &forecast.Work{Spec: s, Methods: []forecast.Method{{Spec: s.Methods[0], Engine: rec}}}
	se := eventSeries(s.Horizon)
	r := New(s, 1).Backtest(work, se)
	if rec.plain != 0 || len(rec.fits) != 3 {
		t.Fatalf("%d plain fits, %d context fits; want 0 and 3", rec.plain, len(rec.fits))
	}
	H := s.Backtest.Horizon
	for k, f := range r.entries[0].folds {
		c := rec.fits[k]
		a, b := f.fold.TrainStart, f.fold.TrainEnd
		if len(rec.ys[k]) != b-a {
			t.Errorf("fold %d: trained on %d values, want %d", f.fold.Index, len(rec.ys[k]), b-a)
		}
		if c.H != H || !slices.Equal(c.DriverNames, []string{"promo"}) || !slices.Equal(c.Drivers[0], se.Drivers[0].Values[a:b+H]) {
			t.Errorf("fold %d: context H %d, names %v, driver %v; want %d, [promo], driver[%d:%d]", f.fold.Index, c.H, c.DriverNames, c.Drivers[0], H, a, b+H)
		}
		if cap(c.Drivers[0]) != b+H-a {
			t.Errorf("fold %d: driver capacity %d reaches past the fold's horizon", f.fold.Index, cap(c.Drivers[0]))
		}
		if c.Seasons != nil {
			t.Errorf("fold %d: seasons %v with a single-season calendar", f.fold.Index, c.Seasons)
		}
	}
	// Folds: origins 39, 46, 53 (test windows 39–45, 46–52, 53–59). The
	// closed days 45 and 52 fall in the first two windows.
	wantN := []int{6, 6, 7}
	for k, f := range r.entries[0].folds {
		if f.scores.N != wantN[k] {
			t.Errorf("fold %d scored %d points, want %d (closed days are not scored)", f.fold.Index, f.scores.N, wantN[k])
		}
		// By hand: the forecast is y[b−1] (+100 on promo days), the
		// actuals y[t] = 10 + t where open.
		b := f.fold.TrainEnd
		sum, n := 0.0, 0
		for t := b; t < f.fold.TestEnd; t++ {
			if se.Closed[t] {
				continue
			}
			fc := se.Values[b-1] + 100*se.Drivers[0].Values[t]
			sum += math.Abs(10 + float64(t) - fc)
			n++
		}
		if math.Abs(f.scores.MAE-sum/float64(n)) > 1e-12 || math.IsNaN(f.scores.MAE) {
			t.Errorf("fold %d: MAE %v, want %v over the open days", f.fold.Index, f.scores.MAE, sum/float64(n))
		}
		if f.scores.MAPEZeros != 0 {
			t.Errorf("fold %d: %d zero actuals counted; closed days are missing, not zero", f.fold.Index, f.scores.MAPEZeros)
		}
	}
	if math.IsNaN(r.entries[0].score) {
		t.Errorf("entry ineligible: %s", r.entries[0].reason)
	}
}

// TestFinalForecastContextAndClosedSteps: the final fit gets the drivers
// over the whole history and the horizon; a closed step is forecast as 0
// and the model column says so. Without events the plain Fit path runs.
func TestFinalForecastContextAndClosedSteps(t *testing.T) {
	s := loadEventsSpec(t)
	rec := &ctxRecorder{}
	work := &forecast.Work{Spec: s, Methods: []forecast.Method{{Spec: s.Methods[0], Engine: rec}}}
	se := eventSeries(s.Horizon)
	res := work.Run(se)
	if len(rec.fits) != 1 || !slices.Equal(rec.fits[0].Drivers[0], se.Drivers[0].Values) || rec.fits[0].H != s.Horizon {
		t.Fatalf("final fit contexts %+v", rec.fits)
	}
	if len(res.Forecasts) != 1 {
		t.Fatalf("forecasts %+v, problems %+v", res.Forecasts, res.Problems)
	}
	f := res.Forecasts[0]
	want := []float64{169, 69, 0, 69, 69} // last value 69, promo on step 1, step 3 closed
	if !slices.Equal(f.Values, want) {
		t.Errorf("forecast %v, want %v", f.Values, want)
	}
	if f.Model != "recorder; closed: 1 of 5 steps forecast as 0" {
		t.Errorf("model %q", f.Model)
	}
	f.Lower, f.Upper = [][]float64{{1, 2, 3, 4, 5}}, [][]float64{{6, 7, 8, 9, 10}}
	res.Forecasts[0] = f
	forecast.CloseBounds(res)
	if res.Forecasts[0].Lower[0][2] != 0 || res.Forecasts[0].Upper[0][2] != 0 || res.Forecasts[0].Upper[0][1] != 7 {
		t.Errorf("bounds after CloseBounds: %v %v", res.Forecasts[0].Lower, res.Forecasts[0].Upper)
	}

	plain := &series.Series{Key: []string{"s2"}, Values: se.Values[:40]}
	rec2 := &ctxRecorder{}
	work.Methods[0].Engine = rec2
	if res := work.Run(plain); len(res.Forecasts) != 1 || rec2.plain != 1 || len(rec2.fits) != 0 || res.Forecasts[0].Model != "recorder" {
		t.Errorf("without events: %d plain and %d context fits, forecasts %+v", rec2.plain, len(rec2.fits), res.Forecasts)
	}
}

// TestContextSeasons: several season lengths reach the method even
// without drivers; one does not make a context.
func TestContextSeasons(t *testing.T) {
	se := &series.Series{Values: make([]float64, 30)}
	c, err := forecast.Context(se, []int{7, 365}, 0, 30, 4)
	if err != nil || !slices.Equal(c.Seasons, []int{7, 365}) || c.Empty() || c.Drivers != nil {
		t.Errorf("context %+v, err %v", c, err)
	}
	c, err = forecast.Context(se, []int{7}, 0, 30, 4)
	if err != nil || !c.Empty() {
		t.Errorf("single season: context %+v, err %v", c, err)
	}
	se.Drivers = []series.Driver{{Name: "d", Values: make([]float64, 32)}}
	if _, err := forecast.Context(se, []int{7}, 0, 30, 4); err == nil {
		t.Error("a driver shorter than the horizon was accepted")
	}
}

// TestBacktestDriverMethods: through the real backtest, on an invented
// daily series (labelled invented: weekday pattern, a +60% promotion on
// some days, closed days), the driver-aware methods score better than
// seasonal_naive, which cannot know the promotions, and no closed day is
// scored.
func TestBacktestDriverMethods(t *testing.T) {
	src := `version: 1
name: events
sources: [data/sales.csv]
columns: {time: day, value: qty, keys: [store]}
calendar: {frequency: day}
methods: [seasonal_naive, regression_arima, {method: uplift, base: seasonal_naive}]
horizon: 14
backtest: {folds: 3, horizon: 14, step: 14}
`
	p := filepath.Join(t.TempDir(), "spec.yaml")
	if err := os.WriteFile(p, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	s, err := spec.Load(p)
	if err != nil {
		t.Fatal(err)
	}
	methods, _, err := forecast.Compile(s)
	if err != nil {
		t.Fatal(err)
	}
	n, h := 210, s.Horizon
	week := []float64{0.8, 0.9, 1, 1, 1.1, 1.5, 0.7}
	promo := make([]float64, n+h)
	for i := range promo {
		if i%11 == 3 || i%17 == 8 {
			promo[i] = 1
		}
	}
	y := make([]float64, n)
	closed := make([]bool, n)
	for i := range y {
		y[i] = 200 * week[i%7] * (1 + 0.6*promo[i]) * (1 + 0.03*math.Sin(1.7*float64(i)))
	}
	for _, i := range []int{170, 171, 190, 203} {
		y[i], closed[i] = math.NaN(), true
	}
	se := &series.Series{Key: []string{"s1"}, Values: y, Closed: closed, FutureClosed: make([]bool, h),
		Drivers: []series.Driver{{Name: "promo", Values: promo}}}
	work := &forecast.Work{Spec: s, Methods: methods}
	r := New(s, 1).Backtest(work, se)
	mase := map[string]float64{}
	for _, eb := range r.entries {
		if eb.reason != "" {
			t.Fatalf("%s: %s", eb.label, eb.reason)
		}
		mase[eb.label] = eb.mase
		for _, f := range eb.folds {
			open := 0
			for i := f.fold.TrainEnd; i < f.fold.TestEnd; i++ {
				if !closed[i] {
					open++
				}
			}
			if f.scores.N != open {
				t.Errorf("%s fold %d: %d scored, %d open days", eb.label, f.fold.Index, f.scores.N, open)
			}
		}
	}
	t.Logf("mean MASE %v", mase)
	for _, l := range []string{"regression_arima", "uplift"} {
		if !(mase[l] < 0.6*mase["seasonal_naive"]) {
			t.Errorf("%s MASE %.3f, seasonal_naive %.3f: the drivers did not help", l, mase[l], mase["seasonal_naive"])
		}
	}
}

// A fold whose whole test window is closed scores nothing and is left out
// of the means; the entry stays eligible on the other folds.
func TestBacktestFoldAllClosed(t *testing.T) {
	s := loadEventsSpec(t)
	rec := &ctxRecorder{}
	work := &forecast.Work{Spec: s, Methods: []forecast.Method{{Spec: s.Methods[0], Engine: rec}}}
	se := eventSeries(s.Horizon)
	for i := 46; i < 53; i++ { // the second fold's test window
		se.Values[i], se.Closed[i] = math.NaN(), true
	}
	r := New(s, 1).Backtest(work, se)
	eb := r.entries[0]
	if eb.reason != "" || math.IsNaN(eb.score) {
		t.Fatalf("entry ineligible: %q", eb.reason)
	}
	if f := eb.folds[1]; !f.noActuals || f.scores.N != 0 {
		t.Errorf("closed fold: noActuals %v, N %d", f.noActuals, f.scores.N)
	}
	want := (metricOf(eb.folds[0].scores, s.Selection.Metric) + metricOf(eb.folds[2].scores, s.Selection.Metric)) / 2
	if math.Abs(eb.score-want) > 1e-12 {
		t.Errorf("score %v, want the mean of the two open folds %v", eb.score, want)
	}
}
