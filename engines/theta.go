package engines

import (
	"fmt"
	"math"
	"strings"
)

// Theta is the Theta method of Assimakopoulos and Nikolopoulos (2000), in
// the form Hyndman and Billah (2003) showed it to be: simple exponential
// smoothing with a drift of half the slope of the least-squares line, on
// data that are deseasonalised first when they are seasonal.
//
// With season length m and the series y_t, t = 1…n (y[0] is t = 1):
//
//  1. Seasonality test (deseasonalize=auto, m ≥ 2). With the sample
//     autocorrelations r_k = Σ_t (y_t − ȳ)(y_{t+k} − ȳ) / Σ_t (y_t − ȳ)²,
//     the series is seasonal when
//
//     |r_m| > 1.6448536… · sqrt((1 + 2·Σ_{k=1}^{m−1} r_k²) / n)
//
//     that is, when r_m lies outside the two-sided 90% band built from
//     Bartlett's variance (1.6448536… is the 95% quantile of the standard
//     normal).
//
//  2. Deseasonalising. A seasonal series is divided by the factors F_j of
//     the classical multiplicative decomposition (Classical with
//     form=multiplicative, average=mean): x_t = y_t / F_{(t−1) mod m}.
//     Otherwise x_t = y_t.
//
//  3. Drift. b0 is the slope of the ordinary least-squares line through
//     the (t, x_t); the drift is b0/2.
//
//  4. Smoothing. Simple exponential smoothing of x with the initial level
//     ℓ_0 = x_1 and ℓ_t = ℓ_{t−1} + α·(x_t − ℓ_{t−1}). The smoothing
//     constant α ∈ [0.0001, 1] minimises the one-step sum of squared
//     errors Σ_{t=1}^{n} (x_t − ℓ_{t−1})² (see below).
//
//  5. Forecast, for h = 1, 2, …:
//
//     ŷ_{n+h} = [ℓ_n + (b0/2)·(h − 1 + 1/α − (1−α)^n/α)] · F_{(n+h−1) mod m}
//
//     (without the factor when the series was not deseasonalised). The
//     bracket is the Hyndman–Billah expression; as α → 1 it tends to
//     ℓ_n + h·b0/2, the line through the last value with half the slope.
//
// With deseasonalize=auto this is the computation of statsmodels 0.13.5
// ThetaModel(period=m, deseasonalize=True, use_test=True, method="auto")
// followed by fit() and forecast(h, theta=2), apart from the seasonality
// test: statsmodels compares n·r_m² / Σ_{k=0}^{m−1} r_k² with 1.645², a
// denominator without Bartlett's factor 2. (statsmodels 0.13.5 also adds
// 1 to every forecast when its test finds no season; Theta does not.) Like
// statsmodels, Theta fixes ℓ_0 at x_1 rather than estimating it.
//
// Missing values (NaN) are left out of the autocorrelations (a product
// enters r_k only when both of its values are observed), of the line and
// of the sum of squared errors; the smoothing carries the level unchanged
// through them. Leading missing values are dropped: t = 1 is then the first
// observed value, and n counts the periods from there to the end of y.
//
// The fitted model implements Described and Warner, and, when it
// deseasonalised, Decomposed (the classical decomposition it divided by).
//
// Options (registered name "theta"; for NewTheta an empty string means the
// default):
//
//	deseasonalize  auto (default): test for seasonality as in step 1 and
//	               deseasonalise when the test says seasonal; always:
//	               deseasonalise without testing; never: do not.
//
// Deseasonalising needs m ≥ 2, at least two full seasons of observed
// values (which the test needs too) and every observed value > 0. Theta
// forecasts the series as it is, with a warning saying why, when
// deseasonalizing is called for (always, or auto with a positive test) but
// one of these fails, and when under auto the series is too short to be
// tested. Under auto, m < 2 simply means no season: no test, no warning.
// The series needs at least two observed values.
//
// The smoothing constant is found by a scan of α = 0.0001, 0.05, 0.10, …,
// 0.95, 1, then Brent's minimiser on the two grid steps around the best
// point of the scan (to about 1.5e-8·α), then a comparison with the bounds
// 0.0001 and 1 when that bracket reaches them. The scan guards against a
// local minimum of the sum of squares away from the global one. If the
// search stops without converging (100 iterations), Theta keeps the best α
// it evaluated and adds a warning.
//
// References:
//   - V. Assimakopoulos and K. Nikolopoulos (2000), The theta model: a
//     decomposition approach to forecasting, International Journal of
//     Forecasting 16(4), 521–530.
//   - R. J. Hyndman and B. Billah (2003), Unmasking the Theta method,
//     International Journal of Forecasting 19(2), 287–290.
//   - M. S. Bartlett (1946), On the theoretical specification and sampling
//     properties of autocorrelated time-series, Supplement to the Journal
//     of the Royal Statistical Society 8(1), 27–41 (the variance of r_k).
//   - R. P. Brent (1973), Algorithms for Minimization without Derivatives,
//     Prentice-Hall, chapter 5 (the search for α).
//   - statsmodels 0.13.5 documentation of
//     statsmodels.tsa.forecasting.theta.ThetaModel, the reference
//     implementation checked in theta_test.go.
type Theta struct {
	deseason  thetaDeseason
	classical *Classical
}

var (
	_ Method     = (*Theta)(nil)
	_ Fitted     = (*thetaFit)(nil)
	_ Described  = (*thetaFit)(nil)
	_ Warner     = (*thetaFit)(nil)
	_ Fitted     = (*thetaSeasonalFit)(nil)
	_ Decomposed = (*thetaSeasonalFit)(nil)
)

type thetaDeseason uint8

const (
	thetaAuto thetaDeseason = iota
	thetaAlways
	thetaNever
)

var thetaDeseasonNames = []string{"auto", "always", "never"}

func init() {
	Register("theta", func(o Options) (Method, error) {
		var des string
		for k, v := range o {
			if k != "deseasonalize" {
				return nil, fmt.Errorf("theta: unknown option %q (want deseasonalize)", k)
			}
			s, ok := v.(string)
			if !ok {
				return nil, fmt.Errorf("theta: option deseasonalize must be a string, got %T", v)
			}
			des = s
		}
		return NewTheta(des)
	})
}

// NewTheta returns the Theta method with the given deseasonalize option
// (auto, always or never; see Theta). An empty string selects auto.
func NewTheta(deseasonalize string) (*Theta, error) {
	th := &Theta{deseason: thetaAuto}
	if deseasonalize != "" {
		found := false
		for i, n := range thetaDeseasonNames {
			if deseasonalize == n {
				th.deseason, found = thetaDeseason(i), true
				break
			}
		}
		if !found {
			return nil, fmt.Errorf("theta: unknown deseasonalize %q (want %s)", deseasonalize, strings.Join(thetaDeseasonNames, ", "))
		}
	}
	c, err := NewClassical(FormMultiplicative, "", "mean")
	if err != nil {
		panic("engines: theta: " + err.Error())
	}
	th.classical = c
	return th, nil
}

// Name returns "theta".
func (th *Theta) Name() string { return "theta" }

// Fit deseasonalises y if called for, fits the drift and the smoothing
// constant, and returns the model (see Theta).
func (th *Theta) Fit(y []float64, season int) (Fitted, error) {
	return th.fit(y, season, math.NaN())
}

// fit is Fit with the smoothing constant fixed at alpha, or estimated when
// alpha is NaN.
func (th *Theta) fit(y []float64, season int, alpha float64) (Fitted, error) {
	n := len(y)
	first, observed, nonPositive := -1, 0, 0
	for i, v := range y {
		if v == v {
			if first < 0 {
				first = i
			}
			observed++
			if v <= 0 {
				nonPositive++
			}
		}
	}
	switch {
	case n == 0:
		return nil, fmt.Errorf("theta: empty series; needs at least 2 values: %w", ErrTooShort)
	case observed == 0:
		return nil, fmt.Errorf("theta: %w", ErrAllMissing)
	case observed < 2:
		return nil, fmt.Errorf("theta: 1 observed value; needs at least 2: %w", ErrTooShort)
	}

	f := &thetaFit{n: n, describe: "theta(deseasonalized=none)"}
	d := th.deseasonalize(f, y, season, observed, nonPositive)
	x := y
	if d != nil {
		x = d.Adjusted
		f.factors = d.Factors
		f.describe = "theta(deseasonalized=multiplicative)"
	}

	_, _, b0 := classicalLine(x)
	x = x[first:]
	var level float64
	if alpha != alpha {
		var warn string
		alpha, level, warn = thetaSESFit(x)
		if warn != "" {
			f.warnings = append(f.warnings, warn)
		}
	} else {
		_, level = esLevelFilter(x, alpha, x[0])
	}
	f.alpha, f.level, f.b0 = alpha, level, b0
	// 1/α − (1−α)^n/α − 1, with the first two terms written as
	// −expm1(n·log1p(−α))/α so that small α loses no digits.
	f.offset = -math.Expm1(float64(len(x))*math.Log1p(-alpha))/alpha - 1
	if d != nil {
		return &thetaSeasonalFit{thetaFit: f, d: d}, nil
	}
	return f, nil
}

// deseasonalize decides whether to deseasonalise y and returns the
// decomposition to divide by, or nil. It records the reason for skipping in
// f's warnings where one is due.
func (th *Theta) deseasonalize(f *thetaFit, y []float64, m, observed, nonPositive int) *Decomposition {
	if th.deseason == thetaNever {
		return nil
	}
	if m < 2 {
		if th.deseason == thetaAlways {
			f.warnings = append(f.warnings, fmt.Sprintf("theta: season length %d; nothing to deseasonalize", m))
		}
		return nil
	}
	if observed < 2*m {
		f.warnings = append(f.warnings, fmt.Sprintf("theta: %d observed values; deseasonalizing needs at least %d (2 seasons of %d); not deseasonalized", observed, 2*m, m))
		return nil
	}
	if th.deseason == thetaAuto {
		if _, seasonal := SeasonalityTest(y, m); !seasonal {
			return nil
		}
	}
	if nonPositive > 0 {
		f.warnings = append(f.warnings, fmt.Sprintf("theta: multiplicative deseasonalizing needs strictly positive values; found %d values ≤ 0; not deseasonalized", nonPositive))
		return nil
	}
	d, err := th.classical.Decompose(y, m)
	if err != nil {
		f.warnings = append(f.warnings, "theta: not deseasonalized: "+err.Error())
		return nil
	}
	return d
}

// Bounds of the smoothing constant of Theta's smoothing.
const (
	thetaAlphaLo = 0.0001
	thetaAlphaHi = 1.0
)

// thetaSearchIterations caps the iterations of the smoothing-constant
// search. It is a variable only so that a test can make the search stop
// early.
var thetaSearchIterations = 100

// thetaSESFit returns the smoothing constant in [thetaAlphaLo, thetaAlphaHi]
// that minimises the sum of squared one-step errors of simple exponential
// smoothing of x from ℓ_0 = x[0] (esLevelFit, the level-only fit the
// smoothing core shares with stl), the final level at that constant, and a
// warning if the search did not converge.
func thetaSESFit(x []float64) (alpha, level float64, warn string) {
	alpha, level, ok := esLevelFit(x, thetaAlphaLo, thetaAlphaHi, thetaSearchIterations)
	if !ok {
		warn = fmt.Sprintf("theta: smoothing-constant search stopped after %d iterations without converging; used the best alpha found, %.6g", thetaSearchIterations, alpha)
	}
	return alpha, level, warn
}

// thetaFit is a fitted Theta model.
type thetaFit struct {
	n        int       // len(y), counting leading missing values
	factors  []float64 // seasonal factors, nil when not deseasonalised
	alpha    float64
	b0       float64 // slope of the least-squares line
	level    float64 // ℓ_n
	offset   float64 // 1/α − (1−α)^n/α − 1
	describe string
	warnings []string
}

// thetaSeasonalFit is a Theta model fitted to deseasonalised data.
type thetaSeasonalFit struct {
	*thetaFit
	d *Decomposition
}

// Forecast returns the forecasts for the h periods after the training data.
// It panics if h < 0.
func (f *thetaFit) Forecast(h int) []float64 {
	if h < 0 {
		panic(fmt.Sprintf("engines: theta: negative horizon %d", h))
	}
	out := make([]float64, h)
	drift := f.b0 / 2
	for s := range out {
		out[s] = f.level + drift*(float64(s+1)+f.offset)
	}
	if m := len(f.factors); m > 0 {
		j := f.n % m // season position of t = n+1
		for s := range out {
			out[s] *= f.factors[j]
			if j++; j == m {
				j = 0
			}
		}
	}
	return out
}

// Describe names the fitted form: "theta(deseasonalized=multiplicative)"
// or "theta(deseasonalized=none)".
func (f *thetaFit) Describe() string { return f.describe }

// Warnings returns the caveats met while fitting, if any.
func (f *thetaFit) Warnings() []string { return f.warnings }

// Components returns the classical multiplicative decomposition the model
// divided by. The caller must not modify it.
func (f *thetaSeasonalFit) Components() *Decomposition { return f.d }
