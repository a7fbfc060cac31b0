package engines

import (
	"fmt"
	"maps"
	"math"
	"slices"
	"strings"
)

// Uplift is the registered method "uplift": one multiplicative uplift per
// driver laid on a simple seasonal baseline, for series too short for
// regression_arima (see UpliftFit for the estimate and FitUpliftModel for
// the chain):
//
//	ŷ_{n+h} = base_{n+h} · Π_j (1 + (u_j − 1)·x_{j,n+h}),
//
// where u_j is driver j's uplift, estimated on the history as the ratio of
// the sales in its periods to their baseline (the mean of the same season
// position in driver-free periods up to four seasons each way), and base
// is the forecast of the base method fitted on the history with the
// drivers' effects divided out (missing values — closed periods — and
// periods a driver emptied filled by SeasonalInterpolate, a warning).
//
// Option base (default stl): stl — STL with a periodic season, the
// adjusted series by SES (the stl method's defaults, its season test
// included); seasonal_naive — the adjusted value one season earlier; ses —
// simple exponential smoothing (no season). A series too short for its
// base gets a simpler one, named in the model column: stl needs two
// seasons (else seasonal_naive), seasonal_naive one (else ses); with a
// season length below 2 the seasonal bases are replaced by ses.
//
// Drivers come from the Context; a driver with a negative value anywhere
// (a price cut coded −0.1, say) is left out, named in the model column and
// a warning: a multiplicative uplift takes values ≥ 0 (regression_arima
// takes any). A driver never on in the history gets
// the uplift 1 and a warning (its future values then change nothing).
// Without drivers (plain Fit, or a context without any) the method is its
// base method on the history (gaps filled). Only the primary season length
// is used; further ones of the context are ignored. There is no model
// variance.
//
// References: see UpliftFit (a lift factor per event against comparable
// unpromoted periods, common practice in demand planning; the ratio
// estimator, Cochran 1977).
type Uplift struct {
	// Base is "stl" (the zero value means it), "seasonal_naive" or "ses".
	Base string
}

// UpliftBases are the base methods the uplift method accepts.
var UpliftBases = []string{"stl", "seasonal_naive", "ses"}

var (
	_ Method        = Uplift{}
	_ ContextFitter = Uplift{}
)

func init() {
	Register("uplift", func(o Options) (Method, error) {
		u := Uplift{Base: "stl"}
		for _, k := range slices.Sorted(maps.Keys(o)) {
			if k != "base" {
				return nil, fmt.Errorf("uplift: unknown option %q (want base)", k)
			}
			b, ok := o[k].(string)
			if !ok || !slices.Contains(UpliftBases, b) {
				return nil, fmt.Errorf("uplift: base must be one of %s, found %v", strings.Join(UpliftBases, ", "), o[k])
			}
			u.Base = b
		}
		return u, nil
	})
}

// Name returns "uplift".
func (Uplift) Name() string { return "uplift" }

// Fit fits the base method without drivers (see Uplift).
func (u Uplift) Fit(y []float64, season int) (Fitted, error) {
	return u.FitContext(y, season, Context{})
}

// baseMethod returns the base method for a series of n values with the
// season length season, and a note when the series forced a simpler one:
// stl needs two seasons (else seasonal_naive), seasonal_naive one (else
// ses), and without a season both become ses.
func (u Uplift) baseMethod(season, n int) (Method, string, error) {
	b := u.Base
	if b == "" {
		b = "stl"
	}
	note := ""
	switch {
	case season < 2 && b != "ses":
		note = fmt.Sprintf("base ses (no season for %s)", b)
		b = "ses"
	case b == "stl" && n < 2*season && n >= season:
		note = "base seasonal_naive (stl needs two seasons)"
		b = "seasonal_naive"
	case b != "ses" && n < season:
		note = fmt.Sprintf("base ses (%s needs a season)", b)
		b = "ses"
	}
	switch b {
	case "stl":
		m, err := NewSTL(Options{})
		return m, note, err
	case "seasonal_naive":
		return SeasonalNaive{}, note, nil
	case "ses":
		return SES{}, note, nil
	}
	return nil, "", fmt.Errorf("uplift: unknown base %q", b)
}

// UpliftFitted is a fitted uplift model.
type UpliftFitted struct {
	model  *UpliftModel
	future [][]float64 // the drivers' future values (H each)
	names  []string
	note   string
	baseNm string
	left   []string // drivers left out, for the model column
	warn   []string
}

// FitContext estimates the drivers' uplifts and fits the base method on
// the adjusted history (see Uplift).
func (u Uplift) FitContext(y []float64, season int, c Context) (Fitted, error) {
	base, note, err := u.baseMethod(season, len(y))
	if err != nil {
		return nil, err
	}
	n := len(y)
	var x, future [][]float64
	var names, left []string
	for j, col := range c.Drivers {
		name := fmt.Sprintf("x%d", j+1)
		if j < len(c.DriverNames) {
			name = c.DriverNames[j]
		}
		if len(col) < n+c.H || c.H < 0 {
			panic(fmt.Sprintf("engines: uplift: driver %s has %d values for %d + %d", name, len(col), n, c.H))
		}
		if slices.ContainsFunc(col[:n+c.H], func(v float64) bool { return !(v >= 0) || math.IsInf(v, 1) }) {
			left = append(left, name)
			continue
		}
		names = append(names, name)
		x = append(x, col[:n:n])
		future = append(future, col[n:n+c.H])
	}
	m, err := FitUpliftModel(y, x, max(season, 1), names, base)
	if err != nil {
		return nil, fmt.Errorf("uplift: %w", trimUpliftPrefix(err))
	}
	f := &UpliftFitted{model: m, future: future, names: names, note: note, baseNm: base.Name()}
	for _, name := range left {
		f.left = append(f.left, fmt.Sprintf("driver %s left out (negative values)", name))
		f.warn = append(f.warn, fmt.Sprintf("uplift: driver %s has negative values, which a multiplicative uplift cannot take; left out (regression_arima takes it)", name))
	}
	return f, nil
}

func trimUpliftPrefix(err error) error {
	if msg := err.Error(); strings.HasPrefix(msg, "uplift: ") {
		return regError{msg: strings.TrimPrefix(msg, "uplift: "), err: err}
	}
	return err
}

// Forecast implements Fitted; with drivers h must not exceed the
// context's H.
func (f *UpliftFitted) Forecast(h int) []float64 {
	if len(f.future) == 0 {
		return f.model.Base.Forecast(h)
	}
	xf := make([][]float64, len(f.future))
	for j, d := range f.future {
		if h > len(d) {
			panic(fmt.Sprintf("engines: uplift: %d steps asked, driver %s known for %d", h, f.names[j], len(d)))
		}
		xf[j] = d[:h]
	}
	out, err := f.model.Uplift.Apply(f.model.Base.Forecast(h), xf)
	if err != nil {
		panic("engines: uplift: " + err.Error())
	}
	return out
}

// Describe names the base model and each driver's uplift, for example
// "uplift(promo ×1.31, holiday ×0.42; base: stl(…))".
func (f *UpliftFitted) Describe() string {
	var parts []string
	for j, u := range f.model.Uplift.Uplifts() {
		parts = append(parts, fmt.Sprintf("%s ×%.3g", f.names[j], u))
	}
	base := f.baseNm
	if d, ok := f.model.Base.(Described); ok {
		base = d.Describe()
	}
	if f.note != "" {
		base += "; " + f.note
	}
	parts = append(parts, "base: "+base)
	parts = append(parts, f.left...)
	return "uplift(" + strings.Join(parts, "; ") + ")"
}

// Warnings lists the uplift warnings, the fill and the base's warnings.
func (f *UpliftFitted) Warnings() []string {
	out := append(append([]string(nil), f.warn...), f.model.Warnings()...)
	if w, ok := f.model.Base.(Warner); ok {
		out = append(out, w.Warnings()...)
	}
	return out
}

// Params lists uplift_<driver> for each driver.
func (f *UpliftFitted) Params() []Param {
	var out []Param
	for j, u := range f.model.Uplift.Uplifts() {
		out = append(out, Param{Name: "uplift_" + f.names[j], Value: u})
	}
	return out
}

// Uplifts returns the fitted uplift of each driver.
func (f *UpliftFitted) Uplifts() []float64 { return f.model.Uplift.Uplifts() }
