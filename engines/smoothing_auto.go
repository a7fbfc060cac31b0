package engines

import (
	"fmt"
	"math"
)

// SmoothingAuto is exponential smoothing as innovations state-space models
// (Hyndman, Koehler, Snyder and Grose 2002; Hyndman, Koehler, Ord and
// Snyder 2008): it fits every admissible form to a series and keeps the
// one with the lowest AICc.
//
// Forms. Error additive (A) or multiplicative (M); trend none (N),
// additive (A) or additive damped (Ad); season none (N), additive (A) or
// multiplicative (M). With season length m, y_t for t = 1…n (y[0] is
// t = 1), base_t = ℓ_{t−1} + φ·b_{t−1} and e_t = y_t − μ_t, the one-step
// forecast and the state updates are (esFilter)
//
//	season N:  μ_t = base_t,          ℓ_t = base_t + α·e_t,        b_t = φb_{t−1} + β·e_t
//	season A:  μ_t = base_t + s_{t−m}, ℓ_t = base_t + α·e_t,        b_t = φb_{t−1} + β·e_t,        s_t = s_{t−m} + γ·e_t
//	season M:  μ_t = base_t·s_{t−m},   ℓ_t = base_t + α·e_t/s_{t−m}, b_t = φb_{t−1} + β·e_t/s_{t−m}, s_t = s_{t−m} + γ·e_t/base_t
//
// (without a trend b ≡ 0; φ = 1 unless damped). The error form does not
// change these recursions: it says whether e_t (A) or e_t/μ_t (M) is the
// Gaussian white noise of variance σ², and so changes the likelihood.
//
// Forecasts: ŷ_{n+h} = (ℓ_n + (φ + … + φ^h)·b_n) (+ or ×) s_{n+h−m⌈h/m⌉}.
//
// Likelihood. With σ² concentrated out, −2·log L is, up to constants,
//
//	A:  n·log Σ e_t²        M:  n·log Σ (e_t/μ_t)² + 2·Σ log|μ_t|
//
// over the n observed values (a missing y_t gets a forecast, moves the
// states on as if y_t = μ_t, and is left out).
//
// Fit. The smoothing parameters and the initial states — ℓ_0, b_0 and the
// seasonal terms s_{1−m}…s_0 normalised to sum 0 (A) or m (M), so m−1 of
// them free — maximise the likelihood. The parameters stay in the usual
// region 0 < α < 1, 0 < β < α, 0 < γ < 1−α, 0.8 ≤ φ ≤ 0.98 (each
// kept 1e-4 inside its ends), and the seasonal forms must be admissible
// (esAdmissible). The fit alternates a Nelder–Mead search over the
// smoothing parameters with a Levenberg–Marquardt step over the initial
// states (smoothing_fit.go), from the start values α = 0.3, β = 0.1α,
// γ = 0.1(1−α), φ = 0.9, and initial states from a classical decomposition
// of the first two seasons (or, without a season, the line through the
// first ten values). A form with a multiplicative part is fitted only where
// every level, seasonal factor and one-step forecast stays > 0.
//
// Choice. AICc = −2·log L + 2k + 2k(k+1)/(n−k−1), with k the smoothing
// parameters, the free initial states (1 + 1 with a trend + m−1 with a
// season) and 1 for σ². The candidates, in this order (on equal AICc the
// earlier one is kept), are
//
//	A,N,N  A,A,N  A,Ad,N  A,N,A  A,A,A  A,Ad,A
//	M,N,N  M,A,N  M,Ad,N  M,N,A  M,A,A  M,Ad,A  M,N,M  M,A,M  M,Ad,M
//
// The additive error with a multiplicative season is left out (Hyndman et
// al. 2008; from memory, §2.5: numerically unstable). A candidate is admissible
// when:
//
//   - multiplicative error or season: every observed value is > 0;
//   - seasonal: m ≥ 2 and the series holds two full seasons of observed
//     values;
//   - every form: n > k+1 (finite AICc), a finite likelihood and
//     admissible parameters.
//
// If no form has a finite AICc (a very short series) the model is A,N,N
// with a warning. Describe names the chosen form, for example
// "smoothing_auto(error=multiplicative, trend=damped, season=multiplicative)".
// The fitted model implements Described, Warner, InSampler, Parameterized
// and ForecastVariancer: analytic variances for the linear forms (A error,
// N or A season; Hyndman et al. 2008, Table 6.1) and for the M-error forms
// with N or A season (ibid., §6.3, class 2), nil with an M season.
//
// It takes no options. It needs two observed values.
//
// References:
//   - R. J. Hyndman, A. B. Koehler, R. D. Snyder and S. Grose (2002), A
//     state space framework for automatic forecasting using exponential
//     smoothing methods, International Journal of Forecasting 18(3),
//     439–454.
//   - R. J. Hyndman, A. B. Koehler, J. K. Ord and R. D. Snyder (2008),
//     Forecasting with Exponential Smoothing: The State Space Approach,
//     Springer (Table 2.3: the recursions; ch. 6: forecast variances;
//     ch. 10: admissible parameters; the section and table numbers cited
//     in this package are from memory — the recursions themselves are
//     checked against statsmodels, see smoothing_test.go).
//   - C. M. Hurvich and C.-L. Tsai (1989), Regression and time series model
//     selection in small samples, Biometrika 76(2), 297–307 (AICc).
//   - J. A. Nelder and R. Mead (1965), The Computer Journal 7(4), 308–313;
//     D. W. Marquardt (1963), Journal of the Society for Industrial and
//     Applied Mathematics 11(2), 431–441 (the two steps of the fit).
type SmoothingAuto struct{}

var _ Method = SmoothingAuto{}

func init() {
	Register("smoothing_auto", func(o Options) (Method, error) {
		if err := baselineNoOptions("smoothing_auto", o); err != nil {
			return nil, err
		}
		return SmoothingAuto{}, nil
	})
}

// Name returns "smoothing_auto".
func (SmoothingAuto) Name() string { return "smoothing_auto" }

// esAutoForms are the candidate forms of SmoothingAuto, in order.
var esAutoForms = [...]esForm{
	{esErrorAdditive, esTrendNone, esSeasonNone},
	{esErrorAdditive, esTrendAdditive, esSeasonNone},
	{esErrorAdditive, esTrendDamped, esSeasonNone},
	{esErrorAdditive, esTrendNone, esSeasonAdditive},
	{esErrorAdditive, esTrendAdditive, esSeasonAdditive},
	{esErrorAdditive, esTrendDamped, esSeasonAdditive},
	{esErrorMultiplicative, esTrendNone, esSeasonNone},
	{esErrorMultiplicative, esTrendAdditive, esSeasonNone},
	{esErrorMultiplicative, esTrendDamped, esSeasonNone},
	{esErrorMultiplicative, esTrendNone, esSeasonAdditive},
	{esErrorMultiplicative, esTrendAdditive, esSeasonAdditive},
	{esErrorMultiplicative, esTrendDamped, esSeasonAdditive},
	{esErrorMultiplicative, esTrendNone, esSeasonMultiplicative},
	{esErrorMultiplicative, esTrendAdditive, esSeasonMultiplicative},
	{esErrorMultiplicative, esTrendDamped, esSeasonMultiplicative},
}

// esWarmFrom gives, for each candidate of esAutoForms, the index of the
// earlier candidate whose solution starts its fit (esFitter.optimiseFrom),
// or −1 for a fit from the start values: a damped trend starts from the
// undamped one, a multiplicative error from the additive error with the
// same trend and season (the same recursions).
var esWarmFrom = [len(esAutoForms)]int{-1, -1, 1, -1, -1, 4, 0, 1, 2, 3, 4, 5, -1, -1, 13}

// Fit fits the admissible forms to y and keeps the best by AICc (see
// SmoothingAuto).
func (SmoothingAuto) Fit(y []float64, season int) (Fitted, error) {
	const name = "smoothing_auto"
	nobs, positive, err := esCheck(name, y)
	if err != nil {
		return nil, err
	}
	if min := esMinObserved(esForm{}); nobs < min {
		return nil, fmt.Errorf("%s: %d observed values; needs at least %d: %w", name, nobs, min, ErrTooShort)
	}
	m := season
	if m < 1 {
		m = 1
	}
	seasonal := m >= 2 && nobs >= 2*m
	f := new(esFitter)
	f.reset(y, m)

	var best, first esSolution
	bestAICc := 0.0
	haveBest, haveFirst := false, false
	var done [len(esAutoForms)]*esSolution
	for i, form := range esAutoForms {
		k := form.nParams(m)
		switch {
		case form.season != esSeasonNone && !seasonal,
			form.positive() && !positive,
			form.season == esSeasonNone && nobs < esMinObserved(form):
			continue
		}
		if haveFirst && nobs <= k+1 {
			continue // AICc would be +Inf; A,N,N (first) is already fitted
		}
		if f.initStates(form) != nil {
			continue
		}
		var sol esSolution
		if w := esWarmFrom[i]; w >= 0 && done[w] != nil {
			sol = f.optimiseFrom(done[w])
		} else {
			sol = f.optimise()
		}
		if !sol.finite() {
			continue
		}
		done[i] = &sol
		if !sol.admiss {
			continue
		}
		if !haveFirst {
			first, haveFirst = sol, true
		}
		a := esAICc(sol.stats.logLik(form), sol.stats.nobs, k)
		if !math.IsInf(a, 1) && (!haveBest || a < bestAICc) {
			best, bestAICc, haveBest = sol, a, true
		}
	}
	var warnings []string
	if !haveBest {
		if !haveFirst {
			// A,N,N is always a candidate here, so it overflowed.
			return nil, fmt.Errorf("%s: the recursions overflow even without trend and season; the values are too large to smooth", name)
		}
		best = first
		warnings = []string{fmt.Sprintf("%s: %d observed values are too few to compare forms by AICc; used %s", name, nobs, first.form.describe())}
	}
	f.form = best.form
	mod := f.model(name, best)
	mod.warnings = append(warnings, mod.warnings...)
	return mod, nil
}
