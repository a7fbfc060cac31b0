package engines

// SES is simple exponential smoothing: the state-space form with additive
// error, no trend and no season (ETS(A,N,N) in Hyndman et al. 2008). With
// y_t, t = 1…n (y[0] is t = 1):
//
//	μ_t = ℓ_{t−1},  ℓ_t = ℓ_{t−1} + α·(y_t − μ_t),  ŷ_{n+h} = ℓ_n
//
// α ∈ (0, 1) and the initial level ℓ_0 maximise the Gaussian likelihood,
// that is, minimise the sum of squared one-step errors over the observed
// t = 1…n (see SmoothingAuto for the fit shared by the family). A missing
// y_t is skipped (ℓ_t = ℓ_{t−1}) and left out of the likelihood.
//
// Describe gives "ses(error=additive, trend=none, season=none)". AICc
// counts k = 3 (α, ℓ_0, σ²); σ² = SSE/(n−2) and the forecast variance
// v_h = σ²·(1 + (h−1)α²). The fitted model implements Described, Warner,
// InSampler, Parameterized (alpha, initial_level) and ForecastVariancer.
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
	mod, err := esFitForm("ses", y, 1, esForm{})
	if err != nil {
		return nil, err
	}
	return mod, nil
}
