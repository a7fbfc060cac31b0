package engines

import (
	"errors"
	"fmt"
	"math"
)

// ARIMA fits a seasonal ARIMA(p,d,q)(P,D,Q)m model
//
//	φ(B) Φ(B^m) [(1 − B)^d (1 − B^m)^D y_t − μ] = θ(B) Θ(B^m) ε_t,
//	ε_t ~ N(0, σ²) independent,
//
// with φ(B) = 1 − φ_1B − … − φ_pB^p, Φ(B^m) = 1 − Φ_1B^m − … − Φ_PB^{mP},
// θ(B) = 1 + θ_1B + … + θ_qB^q and Θ(B^m) = 1 + Θ_1B^m + … + Θ_QB^{mQ}.
// The constant μ is the mean of y when d + D = 0 and a drift otherwise:
// with d + D = 1 the model is y_t = δ·t + u_t with u an ARIMA process, and
// μ = δ (d = 1) or m·δ (D = 1). With d + D ≥ 2 there is no constant.
//
// Estimation is by exact Gaussian maximum likelihood of the differenced
// series w = (1 − B)^d (1 − B^m)^D y: the ARMA part in the state-space form
// of Gardner, Harvey & Phillips (1980), started from its stationary
// covariance (from the autocovariances, Brockwell & Davis 1991 §3.3) and
// run through the Kalman filter, with σ² concentrated out; without missing
// values the filter's sums come from the Chandrasekhar recursions (Morf,
// Sidhu & Kailath 1974), O(r) a step instead of O(r²). Start values come
// from conditional sum of squares. The AR and MA polynomials are
// parametrised through partial autocorrelations tanh(u) (Jones 1980;
// Monahan 1984), so every point the optimiser (gonum's BFGS with central
// differences; see arimaMinimise for why BFGS) visits is stationary and
// invertible. Missing values (NaN)
// are skipped by the filter. When the model differences a series with
// gaps, the filter runs over y itself with the last d + mD values in the
// state (filterIntegrated), so that a missing value costs one observation
// rather than every difference it enters; a missing value among the first
// d + mD starts as a diffuse state element, as in R. This is the
// likelihood of R's stats::arima(method = "ML"), whose fits are the
// reference of the tests (conditional on the first d + mD values, which is
// R's diffuse likelihood in the limit of its kappa).
//
// Options (registered name "arima"): p, d, q, seasonal_p, seasonal_d,
// seasonal_q, each "auto" (the default) or a fixed order (p, q 0…5; d 0…2;
// seasonal_p, seasonal_q 0…2; seasonal_d 0…1), and constant (default
// true: a constant may be fitted; false: never). Fixed orders are held;
// the others are chosen per series as Hyndman & Khandakar (2008, §3.2):
//
//   - D: with m ≥ 2 and at least two full seasons, 1 when the seasonal
//     strength max(0, 1 − Var(R)/Var(S+R)) of the classical additive
//     decomposition exceeds 0.64 (Wang, Smith & Hyndman 2006; the paper
//     used a seasonal unit-root test instead, from memory).
//   - d ∈ {0, 1, 2}: repeated KPSS tests at 5% on the (seasonally
//     differenced) series (Kwiatkowski et al. 1992; ℓ4 lags).
//   - p, q, P, Q and the constant: the paper's stepwise search by AICc
//     from its four start forms, (2,d,2)(1,D,1), (0,d,0)(0,D,0),
//     (1,d,0)(1,D,0), (0,d,1)(0,D,1), with the constant when d + D ≤ 1;
//     moves: p, q, P or Q by ±1, p and q together by ±1, P and Q together
//     by ±1, the constant in or out; the first move that lowers the AICc
//     is taken, until none does; 0 ≤ p, q ≤ 5, 0 ≤ P, Q ≤ 2, at most 94
//     forms. Without seasonal terms (m < 2 or fewer than two seasons) P
//     and Q stay 0. (Two seasons rather than three: on the 37 seasonal
//     M1 series with fewer than three seasons of history, the mean sMAPE
//     of the 8- and 18-step forecasts fell from 16.8 to 13.5 with seasonal
//     terms allowed; the other seasonal M1 series are unaffected.)
//
// Shortcut: during the search each form is scored by the AICc of the exact
// likelihood at its CSS estimates (for a series with gaps, the likelihood
// of the observed differences); only the chosen form is refitted by exact
// maximum likelihood. Forms with an AR or MA root of modulus below
// 1.001 are refused in the search. When the chosen form cannot be refitted
// the next best is taken, and as a last resort (0,d,0)(0,D,0) (with the
// fixed orders), so the search returns a model for any series it can fit
// at all.
//
// The fitted model forecasts by the Kalman filter's prediction of w,
// integrated back to y through the last d + mD values; for a differenced
// series with gaps, by continuing the filter over y, which estimates
// missing values near the end from everything observed. Forecast
// variances are the exact finite-sample ones from the filter's final state
// (see ForecastVariance), which reduce to σ² Σ_{j<h} ψ_j² with ψ the
// weights of the full model θ(B)Θ(B^m) / [φ(B)Φ(B^m)(1 − B)^d(1 − B^m)^D]
// once the filter has converged. In-sample values are the one-step
// predictions of the filter (NaN for the first d + mD periods).
//
// A fixed form needs at least k + 3 observed differenced values (k
// coefficients), the automatic choice at least 3 observed values; fewer is
// ErrTooShort.
//
// References:
//   - Box, G. E. P., Jenkins, G. M. (1976). Time Series Analysis:
//     Forecasting and Control. Holden-Day.
//   - Gardner, G., Harvey, A. C., Phillips, G. D. A. (1980). Algorithm
//     AS 154. Applied Statistics 29(3), 311–322.
//   - Jones, R. H. (1980). Maximum likelihood fitting of ARMA models to
//     time series with missing observations. Technometrics 22(3), 389–395.
//   - Monahan, J. F. (1984). A note on enforcing stationarity in
//     autoregressive-moving average models. Biometrika 71(2), 403–404.
//   - Kwiatkowski, D., Phillips, P. C. B., Schmidt, P., Shin, Y. (1992).
//     Testing the null hypothesis of stationarity against the alternative
//     of a unit root. Journal of Econometrics 54, 159–178.
//   - Wang, X., Smith, K. A., Hyndman, R. J. (2006). Characteristic-based
//     clustering for time series data. Data Mining and Knowledge
//     Discovery 13(3), 335–364.
//   - Hyndman, R. J., Khandakar, Y. (2008). Automatic time series
//     forecasting. Journal of Statistical Software 27(3).
//   - Brockwell, P. J., Davis, R. A. (1991). Time Series: Theory and
//     Methods, 2nd ed. Springer.
//   - Morf, M., Sidhu, G. S., Kailath, T. (1974). Some new algorithms for
//     recursive estimation in constant, linear, discrete-time systems.
//     IEEE Transactions on Automatic Control 19(4), 315–323.
//   - Herbst, E. (2015). Using the "Chandrasekhar recursions" for
//     likelihood evaluation of DSGE models. Computational Economics 45,
//     693–705.
//   - Durbin, J., Koopman, S. J. (2012). Time Series Analysis by State
//     Space Methods, 2nd ed. Oxford.
type ARIMA struct {
	// each order is fixed (≥ 0) or chosen per series (arimaAutoOrder)
	p, d, q, sp, sd, sq int
	allowConstant       bool
}

// arimaAutoOrder marks an order the method chooses per series.
const arimaAutoOrder = -1

var _ Method = (*ARIMA)(nil)

func init() {
	Register("arima", func(o Options) (Method, error) { return NewARIMA(o) })
}

// NewARIMA builds the method from its options (see ARIMA): p, d, q,
// seasonal_p, seasonal_d, seasonal_q each an integer or "auto" (the
// default), and constant (bool, default true).
func NewARIMA(o Options) (*ARIMA, error) {
	m := &ARIMA{allowConstant: o.Bool("constant", true)}
	for _, f := range []struct {
		key string
		dst *int
		max int
	}{
		{"p", &m.p, arimaMaxP}, {"d", &m.d, arimaMaxD}, {"q", &m.q, arimaMaxQ},
		{"seasonal_p", &m.sp, arimaMaxSP}, {"seasonal_d", &m.sd, 1}, {"seasonal_q", &m.sq, arimaMaxSQ},
	} {
		*f.dst = arimaAutoOrder
		v, set := o[f.key]
		if !set {
			continue
		}
		if w, ok := v.(string); ok {
			if w != "auto" {
				return nil, fmt.Errorf("arima: %s must be an integer or auto, not %q", f.key, w)
			}
			continue
		}
		n := o.Int(f.key, -1)
		if n < 0 || n > f.max {
			return nil, fmt.Errorf("arima: %s must be auto or an integer in 0…%d, found %v", f.key, f.max, v)
		}
		*f.dst = n
	}
	return m, nil
}

func (a *ARIMA) allFixed() bool {
	return a.p >= 0 && a.d >= 0 && a.q >= 0 && a.sp >= 0 && a.sd >= 0 && a.sq >= 0
}

func (a *ARIMA) anySeasonalFixed() bool { return a.sp > 0 || a.sd > 0 || a.sq > 0 }

// Name implements Method.
func (*ARIMA) Name() string { return "arima" }

// Fit implements Method.
func (a *ARIMA) Fit(y []float64, season int) (Fitted, error) {
	nobs := 0
	for _, v := range y {
		if !math.IsNaN(v) {
			nobs++
		}
	}
	if nobs == 0 {
		return nil, ErrAllMissing
	}
	if a.anySeasonalFixed() && season < 2 {
		return nil, fmt.Errorf("arima: seasonal orders need a season length of at least 2 (have %d)", season)
	}
	if !a.allFixed() {
		return a.fitAuto(y, season, nobs)
	}
	o := arimaOrders{p: a.p, d: a.d, q: a.q, sp: a.sp, sd: a.sd, sq: a.sq, m: 1}
	if o.sp+o.sd+o.sq > 0 {
		o.m = season
	}
	o.constant = a.allowConstant && o.d+o.sd <= 1
	return fitArimaOrders(y, o)
}

// fitArimaOrders fits one form by exact maximum likelihood.
func fitArimaOrders(y []float64, o arimaOrders) (*ArimaFitted, error) {
	w := arimaDifference(y, o.diffPoly())
	pr := newArimaProblem(o, w)
	pr.useLevels(y)
	if pr.nobs < o.nCoef()+3 {
		return nil, fmt.Errorf("arima: %s needs at least %d observed values after differencing, have %d: %w",
			o, o.nCoef()+3, pr.nobs, ErrTooShort)
	}
	if arimaConstantObserved(w) {
		return degenerateFit(y, o, pr), nil
	}
	est, err := pr.fitML()
	if err != nil {
		return nil, err
	}
	return newArimaFitted(y, pr, est)
}

// arimaConstantObserved reports whether every observed value of w is the same.
func arimaConstantObserved(w []float64) bool {
	first := math.NaN()
	for _, v := range w {
		if math.IsNaN(v) {
			continue
		}
		if math.IsNaN(first) {
			first = v
		} else if v != first {
			return false
		}
	}
	return true
}

func (a *ARIMA) fitAuto(y []float64, season, nobs int) (Fitted, error) {
	if nobs < 3 {
		return nil, fmt.Errorf("arima: automatic orders need at least 3 observed values, have %d: %w", nobs, ErrTooShort)
	}
	d, D, seasonal, strength := arimaAutoOrders(y, season, a.d, a.sd)
	if a.anySeasonalFixed() {
		seasonal = true
	}
	base := arimaOrders{d: d, sd: D, m: 1}
	if seasonal {
		base.m = season
	}
	// Differencing chosen by the tests must leave enough values to fit
	// anything.
	for base.d+base.sd > 0 && arimaCountObserved(arimaDifference(y, base.diffPoly())) < 4 {
		if base.sd > 0 && a.sd == arimaAutoOrder {
			base.sd = 0
		} else if base.d > 0 && a.d == arimaAutoOrder {
			base.d--
		} else {
			break
		}
	}
	fix := arimaKey{p: a.p, q: a.q, sp: a.sp, sq: a.sq}
	w := arimaDifference(y, base.diffPoly())
	var warnings []string
	var fit *ArimaFitted
	if arimaConstantObserved(w) {
		o := base
		o.constant = a.allowConstant && o.d+o.sd <= 1
		fit = degenerateFit(y, o, newArimaProblem(o, w))
	} else {
		scored := arimaStepwise(base, w, seasonal, a.allowConstant, fix)
		for i, est := range scored {
			pr := newArimaProblem(est.o, w)
			pr.useLevels(y)
			ml, err := pr.fitMLFrom(est.raw, arimaTolSearch)
			if err != nil {
				continue
			}
			if f, err := newArimaFitted(y, pr, ml); err == nil {
				fit = f
				if i > 0 {
					warnings = append(warnings, fmt.Sprintf("arima: the best form of the search could not be fitted by maximum likelihood; took %s", est.o))
				}
				break
			}
		}
		if fit == nil {
			// Last resort: no AR or MA terms beyond the fixed ones, with the
			// constant when allowed.
			for _, c := range []bool{a.allowConstant && base.d+base.sd <= 1, false} {
				o := base
				o.p, o.q, o.sp, o.sq = max(a.p, 0), max(a.q, 0), max(a.sp, 0), max(a.sq, 0)
				o.constant = c
				f, err := fitArimaOrders(y, o)
				if err == nil {
					fit = f
					warnings = append(warnings, fmt.Sprintf("arima: the arimaStepwise search found no usable form; fell back to %s", o))
					break
				}
				if errors.Is(err, ErrTooShort) {
					return nil, err
				}
			}
		}
		if fit == nil {
			return nil, fmt.Errorf("arima: no form could be fitted")
		}
	}
	fit.auto = true
	fit.strength = strength
	fit.warnings = warnings
	return fit, nil
}

func arimaCountObserved(x []float64) int {
	n := 0
	for _, v := range x {
		if !math.IsNaN(v) {
			n++
		}
	}
	return n
}
