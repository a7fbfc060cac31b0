package engines

import (
	"fmt"
	"sort"
	"strconv"
	"strings"
)

// Croston is Croston's method for intermittent demand: simple exponential
// smoothing of the non-zero demand sizes and, separately, of the intervals
// between them, both updated only in periods with demand. The forecast is
// their ratio, the same for every period ahead.
//
// With the demands y_t ≥ 0, t = 1…n, let t_1 < t_2 < … < t_k be the
// periods with y_t > 0 and q_i = t_i − t_{i−1} the interval before the i-th
// demand (t_0 = 0, so q_1 = t_1):
//
//	initial     z_1 = y_{t_1},  p_1 = q_1 = t_1
//	update      z_i = z_{i−1} + α·(y_{t_i} − z_{i−1})
//	            p_i = p_{i−1} + α·(q_i − p_{i−1})            i = 2…k
//	forecast    ŷ_{n+h} = z_k / p_k                         h = 1, 2, …
//
// The initial values are the first demand size and the first interval,
// counted from the start of the series: a first demand in period 1 gives
// p_1 = 1. (Running the update on the first demand from these values would
// leave them unchanged.) Periods after the last demand do not change the
// forecast.
//
// Options (registered name "croston"; for NewCroston 0 means the default):
//
//	alpha  smoothing constant α of both sizes and intervals, a float in
//	       [0.01, 1]; default 0.1. It is fixed, not estimated, as is
//	       common practice for these methods.
//
// The season length is ignored. Missing values (NaN) are left out, as if
// the series did not contain those periods: they neither count towards an
// interval nor break one. Demands must be ≥ 0: a negative value is an
// error. A series with no non-zero demand forecasts 0, with a warning. The
// fitted model implements Described and Warner.
//
// References:
//   - J. D. Croston (1972), Forecasting and stock control for intermittent
//     demands, Operational Research Quarterly 23(3), 289–303.
//   - A. A. Syntetos and J. E. Boylan (2005), The accuracy of intermittent
//     demand estimates, International Journal of Forecasting 21(2),
//     303–314.
type Croston struct {
	alpha    float64
	describe string
}

var (
	_ Method    = (*Croston)(nil)
	_ Fitted    = (*intermittentFit)(nil)
	_ Described = (*intermittentFit)(nil)
	_ Warner    = (*intermittentFit)(nil)
)

// Range and default of the smoothing constants of Croston, SBA and TSB.
const (
	intermittentMin     = 0.01
	intermittentMax     = 1.0
	intermittentDefault = 0.1
)

func init() {
	Register("croston", func(o Options) (Method, error) {
		v, err := intermittentOptions("croston", o, "alpha")
		if err != nil {
			return nil, err
		}
		return NewCroston(v[0])
	})
}

// NewCroston returns Croston's method with smoothing constant alpha in
// [0.01, 1]; 0 selects the default 0.1.
func NewCroston(alpha float64) (*Croston, error) {
	a, err := intermittentConstant("croston", "alpha", alpha)
	if err != nil {
		return nil, err
	}
	return &Croston{alpha: a, describe: "croston(alpha=" + intermittentFormat(a) + ")"}, nil
}

// Name returns "croston".
func (c *Croston) Name() string { return "croston" }

// Fit smooths the demand sizes and intervals of y (see Croston).
func (c *Croston) Fit(y []float64, season int) (Fitted, error) {
	f, err := crostonFit("croston", c.describe, y, c.alpha, 1)
	if err != nil {
		return nil, err
	}
	return f, nil
}

// crostonFit runs Croston's recursion on y with constant alpha and returns
// the flat forecast factor·z/p of the method name, described as describe.
func crostonFit(name, describe string, y []float64, alpha, factor float64) (*intermittentFit, error) {
	f := &intermittentFit{name: name, describe: describe}
	demands, err := intermittentCheck(name, y, f)
	if err != nil {
		return nil, err
	}
	if demands == 0 {
		return f, nil
	}
	var z, p float64
	q := 0.0 // periods since the last demand, counting the current one
	started := false
	for _, v := range y {
		if v != v {
			continue
		}
		q++
		if v == 0 {
			continue
		}
		if started {
			z += alpha * (v - z)
			p += alpha * (q - p)
		} else {
			z, p, started = v, q, true
		}
		q = 0
	}
	f.value = factor * z / p
	return f, nil
}

// intermittentCheck validates the demand series y for the method name and
// returns the number of periods with demand (y > 0). With none, it sets a
// warning on f (whose forecast stays 0).
func intermittentCheck(name string, y []float64, f *intermittentFit) (demands int, err error) {
	if len(y) == 0 {
		return 0, fmt.Errorf("%s: empty series; needs 1 value: %w", name, ErrTooShort)
	}
	observed := 0
	for i, v := range y {
		switch {
		case v != v:
			continue
		case v < 0:
			return 0, fmt.Errorf("%s: negative demand %v at index %d; demands must be ≥ 0", name, v, i)
		case v > 0:
			demands++
		}
		observed++
	}
	if observed == 0 {
		return 0, fmt.Errorf("%s: %w", name, ErrAllMissing)
	}
	if demands == 0 {
		f.warnings = []string{fmt.Sprintf("%s: no non-zero demand in %d observed periods; forecast 0", name, observed)}
	}
	return demands, nil
}

// intermittentOptions reads the float options names (in that order) of the
// method called method, rejecting any other option; an absent option is 0,
// meaning the default.
func intermittentOptions(method string, o Options, names ...string) ([]float64, error) {
	out := make([]float64, len(names))
	var unknown []string
	for k, v := range o {
		i := -1
		for j, n := range names {
			if k == n {
				i = j
			}
		}
		if i < 0 {
			unknown = append(unknown, k)
			continue
		}
		switch x := v.(type) {
		case float64:
			out[i] = x
		case int:
			out[i] = float64(x)
		case int64:
			out[i] = float64(x)
		default:
			return nil, fmt.Errorf("%s: option %s must be a number, got %T", method, k, v)
		}
		if out[i] == 0 {
			// An explicit 0 is out of range, not "default".
			return nil, intermittentRangeError(method, k, 0)
		}
	}
	if len(unknown) > 0 {
		sort.Strings(unknown)
		return nil, fmt.Errorf("%s: unknown option %q (want %s)", method, unknown[0], strings.Join(names, " or "))
	}
	return out, nil
}

// intermittentConstant checks a smoothing constant: 0 gives the default,
// otherwise it must lie in [intermittentMin, intermittentMax].
func intermittentConstant(method, name string, v float64) (float64, error) {
	if v == 0 {
		return intermittentDefault, nil
	}
	if !(v >= intermittentMin && v <= intermittentMax) {
		return 0, intermittentRangeError(method, name, v)
	}
	return v, nil
}

func intermittentRangeError(method, name string, v float64) error {
	return fmt.Errorf("%s: %s %v out of range; want a value in [%v, %v]", method, name, v, intermittentMin, intermittentMax)
}

func intermittentFormat(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

// intermittentFit is a fitted Croston, SBA or TSB model: a flat forecast.
type intermittentFit struct {
	name     string
	value    float64
	describe string
	warnings []string
}

// Forecast returns h copies of the fitted demand rate. It panics if h < 0.
func (f *intermittentFit) Forecast(h int) []float64 {
	if h < 0 {
		panic(fmt.Sprintf("engines: %s: negative horizon %d", f.name, h))
	}
	out := make([]float64, h)
	for i := range out {
		out[i] = f.value
	}
	return out
}

// Describe names the method and its constants, for example
// "croston(alpha=0.1)".
func (f *intermittentFit) Describe() string { return f.describe }

// Warnings returns the caveats met while fitting, if any.
func (f *intermittentFit) Warnings() []string { return f.warnings }
