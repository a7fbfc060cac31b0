package engines

import (
	"fmt"
	"maps"
	"slices"
)

// Holt is exponential smoothing with a level and a trend (Holt 1957), or
// with a damped trend (Gardner and McKenzie 1985): the state-space forms
// with additive error and no season (ETS(A,A,N), ETS(A,Ad,N) in Hyndman et
// al. 2008). With y_t, t = 1…n (y[0] is t = 1) and e_t = y_t − μ_t:
//
//	μ_t = ℓ_{t−1} + φ·b_{t−1}
//	ℓ_t = μ_t + α·e_t
//	b_t = φ·b_{t−1} + β·e_t
//	ŷ_{n+h} = ℓ_n + (φ + φ² + … + φ^h)·b_n
//
// with φ = 1 (the sum is then h) unless damped. β is the error-correction
// trend parameter (β = α·β* with Holt's weight β*).
//
// α, β (and φ) and the initial level and trend ℓ_0, b_0 maximise the
// Gaussian likelihood (minimise the sum of squared one-step errors), in
// the usual region 0 < β < α < 1, 0.8 ≤ φ ≤ 0.98 (see SmoothingAuto for
// the fit shared by the family, including missing values).
//
// Describe gives "holt(error=additive, trend=additive, season=none)" (or
// trend=damped). AICc counts k = 5 (α, β, ℓ_0, b_0, σ²), 6 when damped;
// the forecast variance is v_h = σ²·(1 + Σ_{j=1}^{h−1} (α + β(φ + … +
// φ^j))²), σ² = SSE/(n−k+1). The fitted model implements Described,
// Warner, InSampler, Parameterized (alpha, beta, phi, initial_level,
// initial_trend) and ForecastVariancer.
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
	mod, err := esFitForm("holt", y, 1, form)
	if err != nil {
		return nil, err
	}
	return mod, nil
}
