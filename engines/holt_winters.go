package engines

import (
	"fmt"
	"maps"
	"slices"
	"strings"
)

// HoltWinters is exponential smoothing with a level, a trend and a season
// (Holt 1957, Winters 1960), optionally with a damped trend (Gardner and
// McKenzie 1985) or without a trend, fitted to each series by minimising
// the in-sample sum of squared one-step errors.
//
// With season length m, y_t for t = 1…n (y[0] is t = 1), and the additive
// season (the multiplicative one in brackets):
//
//	base_t = ℓ_{t−1} + φ·b_{t−1}
//	ŷ_t    = base_t + s_{t−m}                               [base_t · s_{t−m}]
//	ℓ_t    = α(y_t − s_{t−m}) + (1−α)·base_t                [α·y_t/s_{t−m} + (1−α)·base_t]
//	b_t    = β(ℓ_t − ℓ_{t−1}) + (1−β)·φ·b_{t−1}
//	s_t    = γ(y_t − ℓ_t) + (1−γ)·s_{t−m}                   [γ·y_t/ℓ_t + (1−γ)·s_{t−m}]
//
//	ŷ_{n+h} = ℓ_n + (φ + φ² + … + φ^h)·b_n + s_{n+h−m⌈h/m⌉}  [(ℓ_n + …)·s_{n+h−m⌈h/m⌉}]
//
// φ = 1 for the undamped trend (the sum is then h); without a trend b ≡ 0.
// These are the recursions of R's stats::HoltWinters, which the tests
// reproduce to 1e-8 from R's start values and parameters.
//
// Parameters. β is in Holt's form above; in the error-correction form
// b_t = φb_{t−1} + β_e·e_t (e_t = y_t − ŷ_t) it is β_e = αβ, so
// 0 < β < 1 is 0 < β_e < α. γ is in Winters' form, the seasonal update
// using the new level ℓ_t; for the additive season this equals the
// error-correction form s_t = s_{t−m} + γ_e·e_t with γ_e = (1−α)γ, so
// 0 < γ < 1 is 0 < γ_e < 1−α. The multiplicative season is Winters'
// original form, not a reparametrisation of an error-correction one.
//
// Fitting. α, β, γ and φ (those the form has) minimise
// SSE = Σ (y_t − ŷ_t)² over the observed t = 1…n, by the Nelder–Mead
// method (see esSimplex) on logistic-transformed parameters, so the bounds
// hold: α, β, γ ∈ [0.0001, 0.9999] and φ ∈ [0.8, 0.98]. The search starts
// at α = 0.3, β = 0.1, γ = 0.1, φ = 0.9, with a budget of 300 evaluations
// per parameter; if it ends without converging, the best point found is
// used and a warning says so. If no point gives a finite SSE (a
// multiplicative form whose level reaches 0), the model falls back to SES,
// with a warning and a note in Describe.
//
// Missing values. At a missing y_t the forecast ŷ_t is made but the states
// are not updated from the data: they move on as if y_t = ŷ_t
// (ℓ_t = base_t, b_t = φb_{t−1}, s_t = s_{t−m}); y_t is left out of the SSE.
//
// Start-up values, at t = 0: a classical decomposition (Classical, mean
// factors) of the first two seasons, y_1…y_2m, or of more whole seasons
// when missing values leave a season position without a value. The
// seasonal factors give s_{1−m}…s_0 (they sum to 0, or average 1); the
// least-squares line a + b·t through the seasonally adjusted values of that
// window gives ℓ_0 = a and b_0 = b; without a trend, ℓ_0 is the mean of the
// adjusted values of the first season (Hyndman et al. 2008, §2.6.1). They
// are not refined by the fit.
//
// Model choice and uncertainty. With n the number of observed values and
// k the number of parameters — the smoothing parameters plus the initial
// states: 1 level, 1 trend, m−1 seasonal terms (the m factors are
// normalised) —
//
//	AICc = n·log(SSE/n) + 2k + 2k(k+1)/(n−k−1)     (+Inf when n ≤ k+1)
//	σ²   = SSE/(n−k)                               (NaN when n ≤ k)
//
// (AICc is −2 log L of the Gaussian likelihood with σ² = SSE/n, up to a
// constant; SSE/n is floored at (1e-10·max|y|)² so that exact fits tie.)
// For the additive season the h-step forecast variance is that of the
// linear (class 1) state space model with the same recursions:
//
//	v_h = σ²·(1 + Σ_{j=1}^{h−1} c_j²),  c_j = α + β_e(φ + … + φ^j) + γ_e·[j mod m = 0]
//
// (Hyndman et al. 2008, ch. 6, Table 6.1); for the multiplicative season
// ForecastVariance returns nil.
//
// The fitted model implements Described, Warner, InSampler (one-step
// forecasts ŷ_1…ŷ_n), Parameterized (alpha, beta, gamma, phi,
// initial_level, initial_trend) and ForecastVariancer.
//
// Options (registered name "holt_winters"):
//
//	seasonal  additive (default) or multiplicative. The multiplicative
//	          form needs every observed value > 0; given a value ≤ 0 the
//	          additive form is used, with a warning and a note in Describe.
//	damped    bool, default false: damp the trend (0.8 ≤ φ ≤ 0.98).
//	trend     bool, default true: false drops the trend (b ≡ 0); damped
//	          then must be false.
//
// The season length must be at least 2 and the series must hold at least
// two full seasons, with two seasons of observed values in the start-up
// window.
//
// References:
//   - C. C. Holt (1957), Forecasting seasonals and trends by exponentially
//     weighted moving averages, ONR Memorandum 52, Carnegie Institute of
//     Technology; reprinted in International Journal of Forecasting 20(1)
//     (2004), 5–10.
//   - P. R. Winters (1960), Forecasting sales by exponentially weighted
//     moving averages, Management Science 6(3), 324–342.
//   - E. S. Gardner Jr. and E. McKenzie (1985), Forecasting trends in time
//     series, Management Science 31(10), 1237–1246.
//   - R. J. Hyndman, A. B. Koehler, J. K. Ord and R. D. Snyder (2008),
//     Forecasting with Exponential Smoothing: The State Space Approach,
//     Springer: §2.6.1 (start-up values), ch. 6 and Table 6.1 (forecast
//     variance of the class 1 models).
//   - C. M. Hurvich and C.-L. Tsai (1989), Regression and time series model
//     selection in small samples, Biometrika 76(2), 297–307 (AICc).
//   - R Core Team, R documentation of stats::HoltWinters, the reference
//     implementation checked in smoothing_test.go.
type HoltWinters struct {
	form esForm
}

var _ Method = (*HoltWinters)(nil)

func init() {
	Register("holt_winters", func(o Options) (Method, error) {
		for _, k := range slices.Sorted(maps.Keys(o)) {
			if k != "seasonal" && k != "damped" && k != "trend" {
				return nil, fmt.Errorf("holt_winters: unknown option %q (want seasonal, damped or trend)", k)
			}
		}
		seasonal := ""
		if v, ok := o["seasonal"]; ok {
			s, ok := v.(string)
			if !ok {
				return nil, fmt.Errorf("holt_winters: option seasonal must be a string, got %T", v)
			}
			seasonal = s
		}
		trend, damped := true, false
		for _, b := range []struct {
			key string
			dst *bool
		}{{"trend", &trend}, {"damped", &damped}} {
			v, ok := o[b.key]
			if !ok {
				continue
			}
			x, ok := v.(bool)
			if !ok {
				return nil, fmt.Errorf("holt_winters: option %s must be a bool, got %T", b.key, v)
			}
			*b.dst = x
		}
		return NewHoltWinters(seasonal, trend, damped)
	})
}

// NewHoltWinters returns the Holt-Winters method with the given seasonal
// form (additive or multiplicative; "" means additive), with or without a
// trend, damped or not (see HoltWinters). A damped form needs the trend.
func NewHoltWinters(seasonal string, trend, damped bool) (*HoltWinters, error) {
	h := new(HoltWinters)
	switch seasonal {
	case "", FormAdditive:
		h.form.season = esSeasonAdditive
	case FormMultiplicative:
		h.form.season = esSeasonMultiplicative
	default:
		return nil, fmt.Errorf("holt_winters: unknown seasonal %q (want %s or %s)", seasonal, FormAdditive, FormMultiplicative)
	}
	switch {
	case damped && !trend:
		return nil, fmt.Errorf("holt_winters: damped = true needs trend = true")
	case damped:
		h.form.trend = esTrendDamped
	case trend:
		h.form.trend = esTrendAdditive
	}
	return h, nil
}

// Name returns "holt_winters".
func (h *HoltWinters) Name() string { return "holt_winters" }

// Fit fits the smoothing parameters of the form to y (see HoltWinters).
func (h *HoltWinters) Fit(y []float64, season int) (Fitted, error) {
	const name = "holt_winters"
	form := h.form
	var warnings []string
	fellBack := false
	if form.season == esSeasonMultiplicative {
		_, positive, err := esCheck(name, y)
		if err != nil {
			return nil, err
		}
		if !positive {
			nonPositive := 0
			for _, v := range y {
				if v <= 0 {
					nonPositive++
				}
			}
			form.season = esSeasonAdditive
			fellBack = true
			warnings = []string{fmt.Sprintf("%s: multiplicative form needs strictly positive values; found %d values ≤ 0; used additive", name, nonPositive)}
		}
	}
	mod, err := esFitForm(name, y, season, form, warnings)
	if err != nil {
		return nil, err
	}
	if fellBack && mod.form.season != esSeasonNone {
		mod.describe = strings.TrimSuffix(mod.describe, ")") + "; fell back from multiplicative)"
	}
	return mod, nil
}
