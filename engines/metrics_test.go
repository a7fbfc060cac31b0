package engines

import (
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"
)

// metricsTol is the relative tolerance for comparisons with values R
// computed from the same formulas: |got − want| ≤ metricsTol·max(1, |want|).
// The two sides add the same terms, possibly in another order or with R's
// extended-precision mean, so they agree to a few units in the last place
// (the largest relative difference seen was 4e-16).
const metricsTol = 1e-14

// metricsNum reads a JSON number, or null as NaN.
type metricsNum float64

func (v *metricsNum) UnmarshalJSON(b []byte) error {
	var p *float64
	if err := json.Unmarshal(b, &p); err != nil {
		return err
	}
	*v = metricsNum(math.NaN())
	if p != nil {
		*v = metricsNum(*p)
	}
	return nil
}

func metricsLoad(t testing.TB, path string, into any) {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("testdata", "reference", path))
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, into); err != nil {
		t.Fatalf("%s: %v", path, err)
	}
}

// metricsClose checks got against want: both NaN, equal (infinities), or
// within tol relative to max(1, |want|).
func metricsClose(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if math.IsNaN(got) || math.IsNaN(want) {
		if math.IsNaN(got) != math.IsNaN(want) {
			t.Errorf("%s = %v, want %v", what, got, want)
		}
		return
	}
	if got == want {
		return
	}
	if d := math.Abs(got - want); !(d <= tol*math.Max(1, math.Abs(want))) {
		t.Errorf("%s = %.17g, want %.17g (diff %.3g, tol %.0e relative)", what, got, want, d, tol)
	}
}

func metricsCount(t *testing.T, what string, got, want int) {
	t.Helper()
	if got != want {
		t.Errorf("%s: count %d, want %d", what, got, want)
	}
}

// metricsCopy returns deep copies of the slices, for metricsUnchanged.
func metricsCopy(xs ...[]float64) [][]float64 {
	out := make([][]float64, len(xs))
	for i, x := range xs {
		out[i] = append([]float64(nil), x...)
	}
	return out
}

// metricsUnchanged fails if any slice differs bit for bit from its copy.
func metricsUnchanged(t *testing.T, what string, before [][]float64, after ...[]float64) {
	t.Helper()
	for i, x := range after {
		for j := range x {
			if math.Float64bits(x[j]) != math.Float64bits(before[i][j]) {
				t.Errorf("%s: input %d modified at %d: %v, was %v", what, i, j, x[j], before[i][j])
				break
			}
		}
	}
}

// Source: holdout/metrics.json, base R 4.2.2 evaluating the formula text
// recorded beside each value (holdout/make_holdout.R).
func TestMetricsFixedVectorR(t *testing.T) {
	type entry struct {
		Value  metricsNum `json:"value"`
		Scale  metricsNum `json:"scale"`
		M      int        `json:"m"`
		NUsed  int        `json:"n_used"`
		Formul string     `json:"formula"`
	}
	var fx struct {
		Source   string           `json:"source"`
		Actual   decompFloats     `json:"actual"`
		Forecast decompFloats     `json:"forecast"`
		Train    decompFloats     `json:"train"`
		Metrics  map[string]entry `json:"metrics"`
	}
	metricsLoad(t, "holdout/metrics.json", &fx)
	want := func(k string) entry {
		e, ok := fx.Metrics[k]
		if !ok || math.IsNaN(float64(e.Value)) {
			t.Fatalf("holdout/metrics.json: no value for %q", k)
		}
		return e
	}
	y, f, train := fx.Actual, fx.Forecast, fx.Train
	if len(y) != 8 || len(f) != 8 || len(train) != 10 {
		t.Fatalf("holdout/metrics.json: unexpected sizes %d, %d, %d", len(y), len(f), len(train))
	}
	before := metricsCopy(y, f, train)
	n8 := len(y)

	v, n := MAE(y, f)
	metricsClose(t, "MAE", v, float64(want("mae").Value), metricsTol)
	metricsCount(t, "MAE", n, n8)
	v, n = RMSE(y, f)
	metricsClose(t, "RMSE", v, float64(want("rmse").Value), metricsTol)
	metricsCount(t, "RMSE", n, n8)
	v, n, zeros := MAPE(y, f)
	metricsClose(t, "MAPE", v, float64(want("mape").Value), metricsTol)
	metricsCount(t, "MAPE used", n, want("mape").NUsed)
	metricsCount(t, "MAPE zeros", zeros, n8-want("mape").NUsed)
	v, n = SMAPE(y, f)
	metricsClose(t, "SMAPE", v, float64(want("smape").Value), metricsTol)
	metricsCount(t, "SMAPE", n, n8)
	for _, k := range []string{"mase", "mase_m1"} {
		e := want(k)
		v, n, err := MASE(y, f, train, e.M)
		if err != nil {
			t.Errorf("MASE m=%d: %v", e.M, err)
		}
		metricsClose(t, fmt.Sprintf("MASE m=%d", e.M), v, float64(e.Value), metricsTol)
		metricsCount(t, "MASE", n, n8)
	}
	v, n, err := RMSSE(y, f, train)
	if err != nil {
		t.Error(err)
	}
	metricsClose(t, "RMSSE", v, float64(want("rmsse").Value), metricsTol)
	metricsCount(t, "RMSSE", n, n8)
	e := want("rmsse_seasonal")
	v, _, err = SeasonalRMSSE(y, f, train, e.M)
	if err != nil {
		t.Error(err)
	}
	metricsClose(t, "SeasonalRMSSE", v, float64(e.Value), metricsTol)
	v, n = WAPE(y, f)
	metricsClose(t, "WAPE", v, float64(want("wape").Value), metricsTol)
	metricsCount(t, "WAPE", n, n8)
	v, n = Bias(y, f)
	metricsClose(t, "Bias", v, float64(want("bias").Value), metricsTol)
	metricsCount(t, "Bias", n, n8)

	s, err := PointScores(y, f, train, want("mase").M)
	if err != nil {
		t.Error(err)
	}
	for _, c := range []struct {
		what      string
		got, want float64
	}{
		{"MAE", s.MAE, float64(want("mae").Value)},
		{"RMSE", s.RMSE, float64(want("rmse").Value)},
		{"MAPE", s.MAPE, float64(want("mape").Value)},
		{"SMAPE", s.SMAPE, float64(want("smape").Value)},
		{"MASE", s.MASE, float64(want("mase").Value)},
		{"MASEScale", s.MASEScale, float64(want("mase").Scale)},
		{"RMSSE", s.RMSSE, float64(want("rmsse").Value)},
		{"RMSSEScale", s.RMSSEScale, float64(want("rmsse").Scale)},
		{"WAPE", s.WAPE, float64(want("wape").Value)},
		{"Bias", s.Bias, float64(want("bias").Value)},
	} {
		metricsClose(t, "PointScores."+c.what, c.got, c.want, metricsTol)
	}
	metricsCount(t, "PointScores.N", s.N, n8)
	metricsCount(t, "PointScores.Skipped", s.Skipped, 0)
	metricsCount(t, "PointScores.MAPEZeros", s.MAPEZeros, n8-want("mape").NUsed)
	metricsUnchanged(t, "holdout/metrics.json", before, y, f, train)
}

// holdoutFixture is holdout/<dataset>.json.
type metricsHoldoutFixture struct {
	Source    string       `json:"source"`
	Frequency int          `json:"frequency"`
	X         decompFloats `json:"x"`
	NTrain    int          `json:"n_train"`
	Test      decompFloats `json:"test"`
	MASEScale float64      `json:"mase_scale"`
	Methods   []struct {
		Name     string       `json:"name"`
		Forecast decompFloats `json:"forecast"`
		MAE      float64      `json:"mae"`
		MASE     float64      `json:"mase"`
	} `json:"methods"`
}

func metricsHoldoutFixtures(t *testing.T) map[string]metricsHoldoutFixture {
	t.Helper()
	paths, err := filepath.Glob(filepath.Join("testdata", "reference", "holdout", "*.json"))
	if err != nil {
		t.Fatal(err)
	}
	out := map[string]metricsHoldoutFixture{}
	for _, p := range paths {
		name := strings.TrimSuffix(filepath.Base(p), ".json")
		if name == "metrics" {
			continue
		}
		var fx metricsHoldoutFixture
		metricsLoad(t, filepath.Join("holdout", name+".json"), &fx)
		if fx.Frequency < 2 || fx.NTrain+len(fx.Test) != len(fx.X) || len(fx.Methods) == 0 {
			t.Fatalf("%s: incomplete fixture", p)
		}
		out[name] = fx
	}
	if len(out) != 4 {
		t.Fatalf("holdout: found %d dataset fixtures, want 4", len(out))
	}
	return out
}

// Source: holdout/<dataset>.json, R 4.2.2: MASE = mean(abs(test - f)) /
// mean(abs(diff(train, lag = frequency))) for the seasonal naive and the
// two HoltWinters forecasts of the last season of four datasets.
func TestMetricsMASEHoldoutR(t *testing.T) {
	checked := 0
	for name, fx := range metricsHoldoutFixtures(t) {
		train := fx.X[:fx.NTrain]
		if d := metricsMaxDiff(fx.X[fx.NTrain:], fx.Test); d != 0 {
			t.Fatalf("%s: test is not the tail of x", name)
		}
		for _, me := range fx.Methods {
			what := name + "/" + me.Name
			before := metricsCopy(fx.Test, me.Forecast, train)
			v, n, err := MASE(fx.Test, me.Forecast, train, fx.Frequency)
			if err != nil {
				t.Errorf("%s: %v", what, err)
			}
			metricsClose(t, what+" MASE", v, me.MASE, metricsTol)
			metricsCount(t, what+" MASE", n, len(fx.Test))
			mae, _ := MAE(fx.Test, me.Forecast)
			metricsClose(t, what+" MAE", mae, me.MAE, metricsTol)
			s, err := PointScores(fx.Test, me.Forecast, train, fx.Frequency)
			if err != nil {
				t.Errorf("%s: %v", what, err)
			}
			metricsClose(t, what+" PointScores.MASE", s.MASE, me.MASE, metricsTol)
			metricsClose(t, what+" PointScores.MASEScale", s.MASEScale, fx.MASEScale, metricsTol)
			metricsUnchanged(t, what, before, fx.Test, me.Forecast, train)
			checked++
		}
	}
	if checked != 12 {
		t.Errorf("checked %d forecasts, want 12", checked)
	}
}

func metricsMaxDiff(a, b []float64) float64 {
	if len(a) != len(b) {
		return math.Inf(1)
	}
	d := 0.0
	for i := range a {
		d = math.Max(d, math.Abs(a[i]-b[i]))
	}
	return d
}

// metricsPoint is the "point" object of the metrics/ fixtures.
type metricsPoint struct {
	N                  int        `json:"n"`
	Skipped            int        `json:"skipped"`
	MAE                metricsNum `json:"mae"`
	RMSE               metricsNum `json:"rmse"`
	MAPE               metricsNum `json:"mape"`
	MAPEN              int        `json:"mape_n"`
	MAPEZeros          int        `json:"mape_zeros"`
	SMAPE              metricsNum `json:"smape"`
	ScaleLag           int        `json:"scale_lag"`
	MASE               metricsNum `json:"mase"`
	MASEScale          metricsNum `json:"mase_scale"`
	RMSSE              metricsNum `json:"rmsse"`
	RMSSEScale         metricsNum `json:"rmsse_scale"`
	RMSSESeasonal      metricsNum `json:"rmsse_seasonal"`
	RMSSESeasonalScale metricsNum `json:"rmsse_seasonal_scale"`
	WAPE               metricsNum `json:"wape"`
	Bias               metricsNum `json:"bias"`
}

type metricsInterval struct {
	Alpha         float64    `json:"alpha"`
	N             int        `json:"n"`
	Coverage      metricsNum `json:"coverage"`
	IntervalScore metricsNum `json:"interval_score"`
}

type metricsPinball struct {
	Tau  float64    `json:"tau"`
	N    int        `json:"n"`
	Loss metricsNum `json:"loss"`
}

// metricsCheckPoint compares every point metric function, and PointScores,
// with the R values in want. A NaN scaled metric must come with
// ErrZeroScale (the fixtures have no case of a scale without pairs).
func metricsCheckPoint(t *testing.T, what string, y, f, train []float64, m int, want metricsPoint) {
	t.Helper()
	before := metricsCopy(y, f, train)
	scaleErr := func(name string, v metricsNum, err error) {
		t.Helper()
		if math.IsNaN(float64(v)) {
			if !errors.Is(err, ErrZeroScale) {
				t.Errorf("%s %s: error %v, want ErrZeroScale", what, name, err)
			}
		} else if err != nil {
			t.Errorf("%s %s: %v", what, name, err)
		}
	}
	v, n := MAE(y, f)
	metricsClose(t, what+" MAE", v, float64(want.MAE), metricsTol)
	metricsCount(t, what+" MAE", n, want.N)
	v, n = RMSE(y, f)
	metricsClose(t, what+" RMSE", v, float64(want.RMSE), metricsTol)
	metricsCount(t, what+" RMSE", n, want.N)
	v, n, zeros := MAPE(y, f)
	metricsClose(t, what+" MAPE", v, float64(want.MAPE), metricsTol)
	metricsCount(t, what+" MAPE used", n, want.MAPEN)
	metricsCount(t, what+" MAPE zeros", zeros, want.MAPEZeros)
	v, n = SMAPE(y, f)
	metricsClose(t, what+" SMAPE", v, float64(want.SMAPE), metricsTol)
	metricsCount(t, what+" SMAPE", n, want.N)
	v, n, err := MASE(y, f, train, m)
	metricsClose(t, what+" MASE", v, float64(want.MASE), metricsTol)
	metricsCount(t, what+" MASE", n, want.N)
	scaleErr("MASE", want.MASE, err)
	v, n, err = RMSSE(y, f, train)
	metricsClose(t, what+" RMSSE", v, float64(want.RMSSE), metricsTol)
	metricsCount(t, what+" RMSSE", n, want.N)
	scaleErr("RMSSE", want.RMSSE, err)
	v, n, err = SeasonalRMSSE(y, f, train, m)
	metricsClose(t, what+" SeasonalRMSSE", v, float64(want.RMSSESeasonal), metricsTol)
	metricsCount(t, what+" SeasonalRMSSE", n, want.N)
	scaleErr("SeasonalRMSSE", want.RMSSESeasonal, err)
	v, n = WAPE(y, f)
	metricsClose(t, what+" WAPE", v, float64(want.WAPE), metricsTol)
	metricsCount(t, what+" WAPE", n, want.N)
	v, n = Bias(y, f)
	metricsClose(t, what+" Bias", v, float64(want.Bias), metricsTol)
	metricsCount(t, what+" Bias", n, want.N)
	if want.ScaleLag != metricsScaleLag("test", len(train), m) {
		t.Errorf("%s: scale lag %d, R used %d", what, metricsScaleLag("test", len(train), m), want.ScaleLag)
	}

	s, err := PointScores(y, f, train, m)
	for _, c := range []struct {
		name      string
		got, want float64
	}{
		{"MAE", s.MAE, float64(want.MAE)},
		{"RMSE", s.RMSE, float64(want.RMSE)},
		{"MAPE", s.MAPE, float64(want.MAPE)},
		{"SMAPE", s.SMAPE, float64(want.SMAPE)},
		{"MASE", s.MASE, float64(want.MASE)},
		{"MASEScale", s.MASEScale, float64(want.MASEScale)},
		{"RMSSE", s.RMSSE, float64(want.RMSSE)},
		{"RMSSEScale", s.RMSSEScale, float64(want.RMSSEScale)},
		{"WAPE", s.WAPE, float64(want.WAPE)},
		{"Bias", s.Bias, float64(want.Bias)},
	} {
		metricsClose(t, what+" PointScores."+c.name, c.got, c.want, metricsTol)
	}
	metricsCount(t, what+" PointScores.N", s.N, want.N)
	metricsCount(t, what+" PointScores.Skipped", s.Skipped, want.Skipped)
	metricsCount(t, what+" PointScores.MAPEZeros", s.MAPEZeros, want.MAPEZeros)
	zeroScale := math.IsNaN(float64(want.MASE)) || math.IsNaN(float64(want.RMSSE))
	if zeroScale != errors.Is(err, ErrZeroScale) || (!zeroScale && err != nil) {
		t.Errorf("%s PointScores: error %v (R: MASE %v, RMSSE %v)", what, err, want.MASE, want.RMSSE)
	}
	metricsUnchanged(t, what, before, y, f, train)
}

func metricsCheckInterval(t *testing.T, what string, y, lo, hi []float64, want metricsInterval) {
	t.Helper()
	before := metricsCopy(y, lo, hi)
	v, n := Coverage(y, lo, hi)
	metricsClose(t, what+" Coverage", v, float64(want.Coverage), metricsTol)
	metricsCount(t, what+" Coverage", n, want.N)
	v, n = IntervalScore(y, lo, hi, want.Alpha)
	metricsClose(t, what+" IntervalScore", v, float64(want.IntervalScore), metricsTol)
	metricsCount(t, what+" IntervalScore", n, want.N)
	metricsUnchanged(t, what, before, y, lo, hi)
}

func metricsCheckPinball(t *testing.T, what string, y, q []float64, want metricsPinball) {
	t.Helper()
	before := metricsCopy(y, q)
	v, n := PinballLoss(y, q, want.Tau)
	metricsClose(t, fmt.Sprintf("%s PinballLoss τ=%v", what, want.Tau), v, float64(want.Loss), metricsTol)
	metricsCount(t, what+" PinballLoss", n, want.N)
	metricsUnchanged(t, what, before, y, q)
}

// Source: metrics/holdout_scores.json, base R 4.2.2 (metrics/make_metrics.R):
// every metric for the hold-out forecasts of holdout/make_holdout.R, with
// the 80% and 95% prediction intervals of predict.HoltWinters.
func TestMetricsHoldoutScoresR(t *testing.T) {
	var fx struct {
		Source string `json:"source"`
		Cases  []struct {
			Dataset string       `json:"dataset"`
			M       int          `json:"m"`
			Train   decompFloats `json:"train"`
			Test    decompFloats `json:"test"`
			Methods []struct {
				Name          string           `json:"name"`
				Forecast      decompFloats     `json:"forecast"`
				Lwr80         decompFloats     `json:"lwr80"`
				Upr80         decompFloats     `json:"upr80"`
				Lwr95         decompFloats     `json:"lwr95"`
				Upr95         decompFloats     `json:"upr95"`
				Point         metricsPoint     `json:"point"`
				PinballMedian metricsPinball   `json:"pinball_median"`
				Interval80    *metricsInterval `json:"interval80"`
				Interval95    *metricsInterval `json:"interval95"`
				Pinball       []metricsPinball `json:"pinball"`
				PinballFrom   []string         `json:"pinball_quantile_from"`
			} `json:"methods"`
		} `json:"cases"`
	}
	metricsLoad(t, "metrics/holdout_scores.json", &fx)
	holdout := metricsHoldoutFixtures(t)
	if len(fx.Cases) != 4 {
		t.Fatalf("metrics/holdout_scores.json: %d cases, want 4", len(fx.Cases))
	}
	intervals := 0
	for _, c := range fx.Cases {
		// The forecasts must be those of holdout/<dataset>.json.
		h, ok := holdout[c.Dataset]
		if !ok || len(h.Methods) != len(c.Methods) || metricsMaxDiff(c.Test, h.Test) != 0 {
			t.Fatalf("%s: does not match holdout/%s.json", c.Dataset, c.Dataset)
		}
		for i, me := range c.Methods {
			what := c.Dataset + "/" + me.Name
			if h.Methods[i].Name != me.Name || metricsMaxDiff(me.Forecast, h.Methods[i].Forecast) != 0 {
				t.Errorf("%s: forecast differs from holdout/%s.json", what, c.Dataset)
			}
			metricsCheckPoint(t, what, c.Test, me.Forecast, c.Train, c.M, me.Point)
			metricsCheckPinball(t, what+" median", c.Test, me.Forecast, me.PinballMedian)
			if me.Interval80 == nil {
				continue
			}
			metricsCheckInterval(t, what+" 80%", c.Test, me.Lwr80, me.Upr80, *me.Interval80)
			metricsCheckInterval(t, what+" 95%", c.Test, me.Lwr95, me.Upr95, *me.Interval95)
			bounds := map[string][]float64{"lwr80": me.Lwr80, "upr80": me.Upr80, "lwr95": me.Lwr95, "upr95": me.Upr95}
			if len(me.Pinball) != 4 || len(me.PinballFrom) != 4 {
				t.Fatalf("%s: want 4 pinball values", what)
			}
			for j, p := range me.Pinball {
				metricsCheckPinball(t, what+" "+me.PinballFrom[j], c.Test, bounds[me.PinballFrom[j]], p)
			}
			intervals++
		}
	}
	if intervals != 8 {
		t.Errorf("checked intervals of %d forecasts, want 8", intervals)
	}
}

// Source: metrics/edge_cases.json, base R 4.2.2 (metrics/make_metrics.R):
// missing values in every input, zero actuals, a training series shorter
// than m + 1, periodic and constant training series, points on and outside
// the interval bounds, a perfect forecast.
func TestMetricsEdgeCasesR(t *testing.T) {
	var fx struct {
		Cases []struct {
			Name     string          `json:"name"`
			Actual   decompFloats    `json:"actual"`
			Forecast decompFloats    `json:"forecast"`
			Lower    decompFloats    `json:"lower"`
			Upper    decompFloats    `json:"upper"`
			Train    decompFloats    `json:"train"`
			M        int             `json:"m"`
			Point    metricsPoint    `json:"point"`
			Interval metricsInterval `json:"interval"`
			Pinball  metricsPinball  `json:"pinball"`
		} `json:"cases"`
	}
	metricsLoad(t, "metrics/edge_cases.json", &fx)
	names := make([]string, 0, len(fx.Cases))
	for _, c := range fx.Cases {
		names = append(names, c.Name)
		metricsCheckPoint(t, c.Name, c.Actual, c.Forecast, c.Train, c.M, c.Point)
		metricsCheckInterval(t, c.Name, c.Actual, c.Lower, c.Upper, c.Interval)
		metricsCheckPinball(t, c.Name, c.Actual, c.Forecast, c.Pinball)
	}
	sort.Strings(names)
	if got := strings.Join(names, " "); got != "constant_train gaps interval_edges perfect periodic_train short_train zeros_in_actuals" {
		t.Errorf("edge cases %s", got)
	}
}

// Hand values (common practice: the definitions in metrics.go evaluated by
// hand) for the cases the fixtures do not hold: empty and all-missing
// input, no zero-free actual, no usable training pair, WAPE on zero
// actuals, the sign of Bias.
func TestMetricsHand(t *testing.T) {
	nan := math.NaN()
	isNaN := func(what string, v float64, n, wantN int) {
		t.Helper()
		if !math.IsNaN(v) || n != wantN {
			t.Errorf("%s = %v with n = %d, want NaN with n = %d", what, v, n, wantN)
		}
	}
	train := []float64{1, 3, 2, 5}
	for _, in := range []struct {
		name string
		y, f []float64
	}{
		{"empty", nil, nil},
		{"all pairs missing", []float64{nan, 1, nan}, []float64{2, nan, nan}},
	} {
		v, n := MAE(in.y, in.f)
		isNaN(in.name+" MAE", v, n, 0)
		v, n = RMSE(in.y, in.f)
		isNaN(in.name+" RMSE", v, n, 0)
		v, n, z := MAPE(in.y, in.f)
		isNaN(in.name+" MAPE", v, n+z, 0)
		v, n = SMAPE(in.y, in.f)
		isNaN(in.name+" SMAPE", v, n, 0)
		v, n, err := MASE(in.y, in.f, train, 1)
		isNaN(in.name+" MASE", v, n, 0)
		if err != nil {
			t.Errorf("%s MASE: %v (the scale is fine)", in.name, err)
		}
		v, n, _ = RMSSE(in.y, in.f, train)
		isNaN(in.name+" RMSSE", v, n, 0)
		v, n = WAPE(in.y, in.f)
		isNaN(in.name+" WAPE", v, n, 0)
		v, n = Bias(in.y, in.f)
		isNaN(in.name+" Bias", v, n, 0)
		v, n = Coverage(in.y, in.f, in.f)
		isNaN(in.name+" Coverage", v, n, 0)
		v, n = IntervalScore(in.y, in.f, in.f, 0.2)
		isNaN(in.name+" IntervalScore", v, n, 0)
		v, n = PinballLoss(in.y, in.f, 0.5)
		isNaN(in.name+" PinballLoss", v, n, 0)
		s, err := PointScores(in.y, in.f, train, 1)
		if err != nil || s.N != 0 || s.Skipped != len(in.y) || !math.IsNaN(s.MAE) || !math.IsNaN(s.MASE) || !math.IsNaN(s.WAPE) {
			t.Errorf("%s PointScores = %+v, %v", in.name, s, err)
		}
	}

	// Every actual zero: MAPE has nothing to average, and counts 3 zeros
	// (the NaN pair is in neither count); WAPE divides by Σ|y| = 0.
	y := []float64{0, 0, nan, 0}
	f := []float64{1, 0, 2, 0}
	v, n, z := MAPE(y, f)
	isNaN("MAPE all zero", v, n, 0)
	metricsCount(t, "MAPE all zero, zeros", z, 3)
	if v, _ := WAPE(y, f); !math.IsInf(v, 1) {
		t.Errorf("WAPE all zero actuals = %v, want +Inf", v)
	}
	if v, _ := WAPE([]float64{0, 0}, []float64{0, 0}); !math.IsNaN(v) {
		t.Errorf("WAPE 0/0 = %v, want NaN", v)
	}
	// sMAPE: zero actual with a non-zero forecast scores 200, 0/0 scores 0.
	v, n = SMAPE(y, f)
	metricsClose(t, "SMAPE all zero", v, (200+0+0)/3.0, 1e-15)
	metricsCount(t, "SMAPE all zero", n, 3)

	// Bias sign: forecasts 1 too high on average → +1; too low → −1.
	if v, _ := Bias([]float64{1, 2}, []float64{2, 3}); v != 1 {
		t.Errorf("Bias over-forecast = %v, want +1", v)
	}
	if v, _ := Bias([]float64{1, 2}, []float64{0, 1}); v != -1 {
		t.Errorf("Bias under-forecast = %v, want −1", v)
	}

	// Training series without two observed values lag apart: ErrTooShort,
	// both alone and from PointScores.
	for _, tr := range [][]float64{nil, {4}, {nan, nan, nan}, {1, nan, 2, nan}} {
		v, n, err := MASE([]float64{1}, []float64{2}, tr, 1)
		if !math.IsNaN(v) || n != 1 || !errors.Is(err, ErrTooShort) {
			t.Errorf("MASE train %v = %v, %d, %v; want NaN, 1, ErrTooShort", tr, v, n, err)
		}
		v, _, err = RMSSE([]float64{1}, []float64{2}, tr)
		if !math.IsNaN(v) || !errors.Is(err, ErrTooShort) {
			t.Errorf("RMSSE train %v = %v, %v; want NaN, ErrTooShort", tr, v, err)
		}
		s, err := PointScores([]float64{1}, []float64{2}, tr, 1)
		if !errors.Is(err, ErrTooShort) || !math.IsNaN(s.MASE) || !math.IsNaN(s.RMSSE) || s.MAE != 1 {
			t.Errorf("PointScores train %v = %+v, %v", tr, s, err)
		}
	}
	// Gaps: 1, NaN, 2, NaN has 4 ≥ m + 1 values, so the lag stays 2; its
	// only observed pair 2 apart is (1, 2), so the scale is 1.
	v, _, err := MASE([]float64{3}, []float64{1}, []float64{1, nan, 2, nan}, 2)
	if err != nil || v != 2 {
		t.Errorf("MASE lag 2 over gaps = %v, %v; want 2/|2−1| = 2", v, err)
	}
	// Length fallback: 2 values with m = 4, and exactly m = 2 values (one
	// short of m + 1) → lag 1, scale |7 − 3| = 4; with m = 1, lag 1 anyway.
	for _, m := range []int{4, 2, 1} {
		v, _, err = MASE([]float64{3}, []float64{1}, []float64{3, 7}, m)
		if err != nil || v != 0.5 {
			t.Errorf("MASE short train, m = %d: %v, %v; want 2/4 = 0.5", m, v, err)
		}
		v, _, err = SeasonalRMSSE([]float64{3}, []float64{1}, []float64{3, 7}, m)
		if err != nil || v != 0.5 {
			t.Errorf("SeasonalRMSSE short train, m = %d: %v, %v; want sqrt(4/16) = 0.5", m, v, err)
		}
	}
	// With m + 1 = 3 values the lag is m = 2: scale |5 − 3| = 2.
	v, _, err = MASE([]float64{3}, []float64{1}, []float64{3, 7, 5}, 2)
	if err != nil || v != 1 {
		t.Errorf("MASE train of m + 1 values = %v, %v; want 2/2 = 1", v, err)
	}

	// A perfect forecast on a constant training series: the error metrics
	// are 0 but the scaled ones NaN with ErrZeroScale.
	s, err := PointScores([]float64{5, 5}, []float64{5, 5}, []float64{5, 5, 5}, 1)
	if !errors.Is(err, ErrZeroScale) || !math.IsNaN(s.MASE) || !math.IsNaN(s.RMSSE) || s.MAE != 0 || s.RMSE != 0 || s.SMAPE != 0 || s.N != 2 {
		t.Errorf("PointScores constant = %+v, %v", s, err)
	}
}

// PointScores must give exactly the values of the single-metric functions
// (common practice: the same sums in the same order), on random data with
// missing values and zeros.
func TestPointScoresMatchFunctions(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	for trial := range 200 {
		h, n, m := 1+r.IntN(20), r.IntN(60), 1+r.IntN(12)
		draw := func(k int) []float64 {
			x := make([]float64, k)
			for i := range x {
				switch u := r.Float64(); {
				case u < 0.1:
					x[i] = math.NaN()
				case u < 0.15:
					x[i] = 0
				default:
					x[i] = math.Round(100*r.NormFloat64()) / 10
				}
			}
			return x
		}
		y, f, train := draw(h), draw(h), draw(n)
		before := metricsCopy(y, f, train)
		s, err := PointScores(y, f, train, m)
		what := fmt.Sprintf("trial %d", trial)
		same := func(name string, a, b float64) {
			if math.Float64bits(a) != math.Float64bits(b) && !(math.IsNaN(a) && math.IsNaN(b)) {
				t.Errorf("%s: PointScores.%s = %.17g, function %.17g", what, name, a, b)
			}
		}
		v, k := MAE(y, f)
		same("MAE", s.MAE, v)
		metricsCount(t, what+" N", s.N, k)
		metricsCount(t, what+" Skipped", s.Skipped, h-k)
		v, _ = RMSE(y, f)
		same("RMSE", s.RMSE, v)
		v, k, z := MAPE(y, f)
		same("MAPE", s.MAPE, v)
		metricsCount(t, what+" MAPEZeros", s.MAPEZeros, z)
		metricsCount(t, what+" MAPE used", s.N-s.MAPEZeros, k)
		v, _ = SMAPE(y, f)
		same("SMAPE", s.SMAPE, v)
		v, _, err1 := MASE(y, f, train, m)
		same("MASE", s.MASE, v)
		v, _, err2 := RMSSE(y, f, train)
		same("RMSSE", s.RMSSE, v)
		v, _ = WAPE(y, f)
		same("WAPE", s.WAPE, v)
		v, _ = Bias(y, f)
		same("Bias", s.Bias, v)
		for _, target := range []error{ErrZeroScale, ErrTooShort} {
			if errors.Is(err, target) != (errors.Is(err1, target) || errors.Is(err2, target)) {
				t.Errorf("%s: PointScores error %v; MASE %v, RMSSE %v", what, err, err1, err2)
			}
		}
		if (err == nil) != (err1 == nil && err2 == nil) {
			t.Errorf("%s: PointScores error %v; MASE %v, RMSSE %v", what, err, err1, err2)
		}
		metricsUnchanged(t, what, before, y, f, train)
	}
}

// SeasonalRMSSE with m = 1 is RMSSE (common practice: the definitions).
func TestMetricsSeasonalRMSSELag1(t *testing.T) {
	y, f, train := []float64{3, 5, 2}, []float64{4, 4, 4}, []float64{1, 4, 2, 6, 3}
	a, _, _ := RMSSE(y, f, train)
	b, _, _ := SeasonalRMSSE(y, f, train, 1)
	// Hand value: mean e² = (1+1+4)/3 = 2; scale = (9+4+16+9)/4 = 9.5.
	metricsClose(t, "RMSSE", a, math.Sqrt(2/9.5), 1e-15)
	if a != b {
		t.Errorf("SeasonalRMSSE(m=1) = %v, RMSSE = %v", b, a)
	}
}

// Pinball loss, hand values (common practice) and the defining property
// (Koenker and Bassett 1978; Gneiting 2011): over constant forecasts, the
// mean loss is smallest at the τ-quantile of the sample, which for nτ not
// an integer is the order statistic y_(⌈nτ⌉) alone.
func TestPinballLoss(t *testing.T) {
	// Under-forecast by 2 at τ = 0.9 costs 0.9·2; over-forecast by 2 costs 0.1·2.
	v, _ := PinballLoss([]float64{10}, []float64{8}, 0.9)
	metricsClose(t, "pinball under", v, 1.8, 1e-15)
	v, _ = PinballLoss([]float64{8}, []float64{10}, 0.9)
	metricsClose(t, "pinball over", v, 0.2, 1e-15)
	// At τ = ½ the loss is half the absolute error.
	y := []float64{3, -1, 4, 1, -5, 9, 2, 6, 5, 3.5}
	q := []float64{2, 0, 4, 3, -2, 7, 2, 8, 1, 3}
	half, _ := PinballLoss(y, q, 0.5)
	mae, _ := MAE(y, q)
	metricsClose(t, "pinball τ=½ vs MAE/2", half, mae/2, 1e-15)

	sorted := append([]float64(nil), y...)
	sort.Float64s(sorted)
	for _, tau := range []float64{0.05, 0.25, 0.55, 0.85} {
		k := int(math.Ceil(float64(len(y))*tau)) - 1
		loss := func(c float64) float64 {
			cs := make([]float64, len(y))
			for i := range cs {
				cs[i] = c
			}
			v, _ := PinballLoss(y, cs, tau)
			return v
		}
		best := loss(sorted[k])
		for _, c := range append(sorted, sorted[k]-0.01, sorted[k]+0.01) {
			if c != sorted[k] && !(loss(c) > best) {
				t.Errorf("τ = %v: loss at %v is %v, not above %v at the quantile %v", tau, c, loss(c), best, sorted[k])
			}
		}
	}
}

// The interval score is 2/α times the sum of the pinball losses of its
// bounds at levels α/2 and 1 − α/2 (common practice: follows from the two
// definitions; stated by Bracher et al. 2021, PLoS Comput Biol 17(2),
// e1008618 — from memory). Checked on random intervals, crossing ones
// included.
func TestIntervalScorePinballIdentity(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 4))
	for trial := range 100 {
		k := 1 + r.IntN(15)
		y, lo, hi := make([]float64, k), make([]float64, k), make([]float64, k)
		for i := range y {
			y[i] = r.NormFloat64()
			c, w := 0.3*r.NormFloat64(), 2*r.Float64()
			lo[i], hi[i] = c-w, c+w
		}
		alpha := 0.01 + 0.98*r.Float64()
		is, _ := IntervalScore(y, lo, hi, alpha)
		pl, _ := PinballLoss(y, lo, alpha/2)
		pu, _ := PinballLoss(y, hi, 1-alpha/2)
		metricsClose(t, fmt.Sprintf("trial %d interval score vs pinball", trial), is, 2/alpha*(pl+pu), 1e-12)
	}
	// Hand values (common practice), α = 0.2 so 2/α = 10: inside → width 2;
	// 1 below lo → 2 + 10; 0.5 above hi → 2 + 5.
	v, n := IntervalScore([]float64{1, -2, 3.5}, []float64{0, -1, 1}, []float64{2, 1, 3}, 0.2)
	metricsClose(t, "interval score hand", v, (2+12+7)/3.0, 1e-15)
	metricsCount(t, "interval score hand", n, 3)
}

// Coverage, hand values (common practice): bounds are inside; NaN in any of
// y, lo, hi skips the period; a crossed interval covers nothing.
func TestCoverage(t *testing.T) {
	nan := math.NaN()
	v, n := Coverage(
		[]float64{1, 2, 3, 4, 5, nan, 7},
		[]float64{1, 0, 3.5, nan, 6, 0, 8},
		[]float64{2, 2, 4, 9, 4, 9, 9})
	metricsClose(t, "coverage", v, 2.0/5, 1e-15) // in: 1 (on lo), 2 (on hi); out: 3, 5 (crossed), 7
	metricsCount(t, "coverage", n, 5)
}

func TestMetricsPanics(t *testing.T) {
	two, three := []float64{1, 2}, []float64{1, 2, 3}
	for name, call := range map[string]func(){
		"MAE length":              func() { MAE(two, three) },
		"RMSE length":             func() { RMSE(two, three) },
		"MAPE length":             func() { MAPE(two, three) },
		"SMAPE length":            func() { SMAPE(two, three) },
		"MASE length":             func() { MASE(two, three, three, 1) },
		"MASE m = 0":              func() { MASE(two, two, three, 0) },
		"RMSSE length":            func() { RMSSE(two, three, three) },
		"SeasonalRMSSE m = -1":    func() { SeasonalRMSSE(two, two, three, -1) },
		"WAPE length":             func() { WAPE(three, two) },
		"Bias length":             func() { Bias(three, two) },
		"PointScores length":      func() { PointScores(two, three, three, 1) },
		"PointScores m = 0":       func() { PointScores(two, two, nil, 0) },
		"Coverage lo length":      func() { Coverage(two, three, two) },
		"Coverage hi length":      func() { Coverage(two, two, three) },
		"IntervalScore length":    func() { IntervalScore(two, two, three, 0.1) },
		"IntervalScore alpha 0":   func() { IntervalScore(two, two, two, 0) },
		"IntervalScore alpha 1":   func() { IntervalScore(two, two, two, 1) },
		"IntervalScore alpha NaN": func() { IntervalScore(two, two, two, math.NaN()) },
		"PinballLoss length":      func() { PinballLoss(two, three, 0.5) },
		"PinballLoss tau 0":       func() { PinballLoss(two, two, 0) },
		"PinballLoss tau 1":       func() { PinballLoss(two, two, 1) },
		"PinballLoss tau NaN":     func() { PinballLoss(two, two, math.NaN()) },
	} {
		func() {
			defer func() {
				r := recover()
				if s, ok := r.(string); !ok || !strings.HasPrefix(s, "engines: ") {
					t.Errorf("%s: recovered %v, want a panic starting with \"engines: \"", name, r)
				}
			}()
			call()
		}()
	}
}

// BenchmarkPointScores: every point metric of a 13-step forecast, scaled
// by a 156-point weekly training series (bench/weekly156.json, season 52).
func BenchmarkPointScores(b *testing.B) {
	var fx struct {
		Frequency int          `json:"frequency"`
		X         decompFloats `json:"x"`
	}
	metricsLoad(b, "bench/weekly156.json", &fx)
	if len(fx.X) != 156 || fx.Frequency != 52 {
		b.Fatalf("weekly156: %d values of season %d", len(fx.X), fx.Frequency)
	}
	train, m := fx.X, fx.Frequency
	// Seasonal naive forecasts of the next 13 weeks, and actuals one year
	// of drift (0.2 a week) above them with a small wobble.
	f := make([]float64, 13)
	y := make([]float64, 13)
	for h := range f {
		f[h] = train[len(train)-m+h]
		y[h] = f[h] + 10.4 + math.Sin(float64(h))
	}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := PointScores(y, f, train, m); err != nil {
			b.Fatal(err)
		}
	}
}
