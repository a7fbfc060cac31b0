package engines

// SES is simple exponential smoothing: a level and no trend or season,
// fitted to each series by minimising the in-sample sum of squared
// one-step errors. With y_t, t = 1…n (y[0] is t = 1):
//
//	ŷ_t = ℓ_{t−1}
//	ℓ_t = α·y_t + (1−α)·ℓ_{t−1}
//	ŷ_{n+h} = ℓ_n   for every h
//
// Fitting. α and the initial level ℓ_0 minimise SSE = Σ (y_t − ŷ_t)² over
// the observed t = 1…n: for each α the SSE is quadratic in ℓ_0, so ℓ_0 is
// found in closed form from one pass, and α by the Nelder–Mead method on
// the logistic scale, within α ∈ [0.0001, 0.9999], from α = 0.3 (see
// HoltWinters for the details shared by the family). A missing y_t is
// skipped (ℓ_t = ℓ_{t−1}) and left out of the SSE.
//
// AICc, σ² = SSE/(n−k) and the forecast variance
// v_h = σ²·(1 + (h−1)α²) are as for HoltWinters, with k = 2 (α, ℓ_0).
// The fitted model implements Described, Warner, InSampler, Parameterized
// (alpha, initial_level) and ForecastVariancer.
//
// It takes no options and ignores the season length. It needs two observed
// values.
//
// References:
//   - R. G. Brown (1959), Statistical Forecasting for Inventory Control,
//     McGraw-Hill.
//   - R. J. Hyndman, A. B. Koehler, J. K. Ord and R. D. Snyder (2008),
//     Forecasting with Exponential Smoothing: The State Space Approach,
//     Springer, ch. 2, ch. 6 and Table 6.1 (model ETS(A,N,N)).
//   - statsmodels SimpleExpSmoothing (0.13.5), the reference checked in
//     smoothing_test.go.
type SES struct{}

var _ Method = SES{}

func init() {
	Register("ses", func(o Options) (Method, error) {
		if err := baselineNoOptions("ses", o); err != nil {
			return nil, err
		}
		return SES{}, nil
	})
}

// Name returns "ses".
func (SES) Name() string { return "ses" }

// Fit fits α and ℓ_0 to y (see SES).
func (SES) Fit(y []float64, season int) (Fitted, error) {
	mod, err := esFitForm("ses", y, 1, esForm{}, nil)
	if err != nil {
		return nil, err
	}
	return mod, nil
}
