package engines

import (
	"fmt"
	"maps"
	"slices"
)

// Holt is exponential smoothing with a level and a trend (Holt 1957), or
// with a damped trend (Gardner and McKenzie 1985), fitted to each series by
// minimising the in-sample sum of squared one-step errors. With y_t,
// t = 1…n (y[0] is t = 1):
//
//	ŷ_t = ℓ_{t−1} + φ·b_{t−1}
//	ℓ_t = α·y_t + (1−α)·(ℓ_{t−1} + φ·b_{t−1})
//	b_t = β(ℓ_t − ℓ_{t−1}) + (1−β)·φ·b_{t−1}
//	ŷ_{n+h} = ℓ_n + (φ + φ² + … + φ^h)·b_n
//
// with φ = 1 (the sum is then h) unless damped. β is in Holt's form; in the
// error-correction form b_t = φb_{t−1} + β_e·e_t it is β_e = αβ, so
// 0 < β < 1 is 0 < β_e < α.
//
// Fitting. α, β (and φ) minimise SSE = Σ (y_t − ŷ_t)² over the observed
// t = 1…n, jointly with the initial level and trend ℓ_0, b_0: for fixed
// smoothing parameters the SSE is quadratic in (ℓ_0, b_0), which are found
// in closed form from one pass (when that 2×2 system is singular, b_0 is
// the least-squares slope of the first ten observed values and only ℓ_0 is
// fitted). The smoothing parameters come from the Nelder–Mead method on
// the logistic scale within α, β ∈ [0.0001, 0.9999] and φ ∈ [0.8, 0.98],
// from α = 0.3, β = 0.1, φ = 0.9 (see HoltWinters for the details shared
// by the family, including missing values).
//
// AICc, σ² = SSE/(n−k) and the forecast variance
// v_h = σ²·(1 + Σ_{j=1}^{h−1} (α + β_e(φ + … + φ^j))²) are as for
// HoltWinters, with k = 4 (α, β, ℓ_0, b_0), or 5 when damped (φ). The
// fitted model implements Described, Warner, InSampler, Parameterized
// (alpha, beta, phi, initial_level, initial_trend) and ForecastVariancer.
//
// Options (registered name "holt"):
//
//	damped  bool, default false: damp the trend (0.8 ≤ φ ≤ 0.98).
//
// It ignores the season length. It needs three observed values.
//
// References:
//   - C. C. Holt (1957), Forecasting seasonals and trends by exponentially
//     weighted moving averages, ONR Memorandum 52, Carnegie Institute of
//     Technology; reprinted in International Journal of Forecasting 20(1)
//     (2004), 5–10.
//   - E. S. Gardner Jr. and E. McKenzie (1985), Forecasting trends in time
//     series, Management Science 31(10), 1237–1246.
//   - R. J. Hyndman, A. B. Koehler, J. K. Ord and R. D. Snyder (2008),
//     Forecasting with Exponential Smoothing: The State Space Approach,
//     Springer, ch. 6 and Table 6.1 (models ETS(A,A,N) and ETS(A,Ad,N)).
//   - statsmodels Holt (0.13.5), the reference checked in smoothing_test.go.
type Holt struct {
	// Damped selects the damped trend. The zero value is Holt's linear
	// trend.
	Damped bool
}

var _ Method = Holt{}

func init() {
	Register("holt", func(o Options) (Method, error) {
		var h Holt
		for _, k := range slices.Sorted(maps.Keys(o)) {
			v := o[k]
			if k != "damped" {
				return nil, fmt.Errorf("holt: unknown option %q (want damped)", k)
			}
			b, ok := v.(bool)
			if !ok {
				return nil, fmt.Errorf("holt: option damped must be a bool, got %T", v)
			}
			h.Damped = b
		}
		return h, nil
	})
}

// Name returns "holt".
func (Holt) Name() string { return "holt" }

// Fit fits the level and trend to y (see Holt).
func (h Holt) Fit(y []float64, season int) (Fitted, error) {
	form := esForm{trend: esTrendAdditive}
	if h.Damped {
		form.trend = esTrendDamped
	}
	mod, err := esFitForm("holt", y, 1, form, nil)
	if err != nil {
		return nil, err
	}
	return mod, nil
}
