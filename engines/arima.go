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

// ArimaFitted is a fitted ARIMA model. It implements Described, Warner,
// InSampler, ForecastVariancer and Parameterized.
type ArimaFitted struct {
	o        arimaOrders
	coef     arimaCoef
	loglik   float64
	aicc     float64
	sigma2   float64
	nobs     int
	ss       armaSS    // the ARMA part (phi, theta, r)
	state    []float64 // predicted state after the last value
	pEnd     []float64 // its covariance (units of σ²), r×r
	diff     []float64 // c_0…c_L of the differencing
	tail     []float64 // last L values of y
	inSample []float64

	auto     bool
	strength float64
	warnings []string

	// levels: a differenced series with gaps, forecast by continuing the
	// filter over y (state and pEnd then hold its state, r + L elements).
	levels bool
}

var (
	_ Fitted            = (*ArimaFitted)(nil)
	_ Described         = (*ArimaFitted)(nil)
	_ Warner            = (*ArimaFitted)(nil)
	_ InSampler         = (*ArimaFitted)(nil)
	_ ForecastVariancer = (*ArimaFitted)(nil)
	_ Parameterized     = (*ArimaFitted)(nil)
)

func newArimaFitted(y []float64, pr *arimaProblem, est arimaEstimate) (*ArimaFitted, error) {
	o := pr.o
	if err := pr.setCoef(est.coef); err != nil {
		return nil, fmt.Errorf("arima: %s: %w", o, err)
	}
	if pr.y != nil {
		return newArimaFittedLevels(y, pr, est)
	}
	pred := make([]float64, len(pr.w))
	if _, ok := pr.ss.filter(pr.deviations(est.coef.mu), &pr.kw, pred, nil); !ok {
		return nil, fmt.Errorf("arima: %s: the Kalman filter failed", o)
	}
	f := &ArimaFitted{
		o: o, coef: est.coef, loglik: est.loglik, aicc: est.aicc, sigma2: est.sigma2, nobs: est.nobs,
		ss: armaSS{
			r:     pr.ss.r,
			phi:   append([]float64(nil), pr.ss.phi...),
			theta: append([]float64(nil), pr.ss.theta...),
		},
		state:    append([]float64(nil), pr.kw.a...),
		pEnd:     append([]float64(nil), pr.kw.P...),
		diff:     o.diffPoly(),
		strength: math.NaN(),
	}
	// In-sample values, and the series with each missing value (after the
	// first L) replaced by its one-step prediction, in time order, so that
	// the forecasts can be integrated through missing values at the end.
	L := o.lost()
	filled := arimaFillStart(y, L)
	f.inSample = make([]float64, len(y))
	for t := range y {
		if t < L {
			f.inSample[t] = math.NaN()
			continue
		}
		v := est.coef.mu + pred[t-L]
		for k := 1; k <= L; k++ {
			v -= f.diff[k] * filled[t-k]
		}
		f.inSample[t] = v
		if math.IsNaN(filled[t]) {
			filled[t] = v
		}
	}
	f.tail = filled[len(y)-L:]
	for _, v := range f.tail {
		if math.IsNaN(v) {
			return nil, fmt.Errorf("arima: %s forecasts from the last %d values, and one of them is missing without a prediction (too close to the start)", o, L)
		}
	}
	return f, nil
}

// newArimaFittedLevels is newArimaFitted for a differenced series with
// gaps: in-sample values, forecasts and their variances all come from the
// filter over y with the differencing in the state (filterIntegrated), as
// the likelihood did, so missing values near the end are estimated from
// everything observed.
func newArimaFittedLevels(y []float64, pr *arimaProblem, est arimaEstimate) (*ArimaFitted, error) {
	o := pr.o
	if err := pr.setCoef(est.coef); err != nil {
		return nil, fmt.Errorf("arima: %s: %w", o, err)
	}
	pred := make([]float64, len(y))
	var ws arimaKalmanWork
	if _, ok := pr.ss.filterIntegrated(y, pr.yStart, pr.diff, est.coef.mu, &ws, pred, nil, true); !ok {
		return nil, fmt.Errorf("arima: %s: the Kalman filter failed", o)
	}
	L := o.lost()
	for t := 0; t < L; t++ {
		pred[t] = math.NaN()
	}
	f := &ArimaFitted{
		o: o, coef: est.coef, loglik: est.loglik, aicc: est.aicc, sigma2: est.sigma2, nobs: est.nobs,
		ss: armaSS{
			r:     pr.ss.r,
			phi:   append([]float64(nil), pr.ss.phi...),
			theta: append([]float64(nil), pr.ss.theta...),
		},
		diff:     o.diffPoly(),
		strength: math.NaN(),
		inSample: pred,
		levels:   true,
		state:    append([]float64(nil), ws.a...),
		pEnd:     append([]float64(nil), ws.P...),
	}
	return f, nil
}

// levelsAhead continues the filter over y from the end of the series
// through h missing values: the forecasts and their variances (units of
// σ²).
func (f *ArimaFitted) levelsAhead(h int) (mean, fvar []float64) {
	L := len(f.diff) - 1
	ws := arimaKalmanWork{a: append([]float64(nil), f.state...), P: append([]float64(nil), f.pEnd...)}
	y := make([]float64, L+h)
	for i := range y {
		y[i] = math.NaN()
	}
	pred, fv := make([]float64, L+h), make([]float64, L+h)
	f.ss.filterIntegrated(y, nil, f.diff, f.coef.mu, &ws, pred, fv, false)
	return pred[L:], fv[L:]
}

// arimaFillStart returns a copy of y whose missing values among the first L are
// filled by linear interpolation between the nearest observed values (the
// nearest one at an end), so that predictions can be integrated past them;
// the model never sees these values.
func arimaFillStart(y []float64, L int) []float64 {
	out := append([]float64(nil), y...)
	for t := 0; t < L && t < len(y); t++ {
		if !math.IsNaN(out[t]) {
			continue
		}
		lo, hi := t-1, t+1
		for lo >= 0 && math.IsNaN(y[lo]) {
			lo--
		}
		for hi < len(y) && math.IsNaN(y[hi]) {
			hi++
		}
		switch {
		case lo >= 0 && hi < len(y):
			out[t] = y[lo] + (y[hi]-y[lo])*float64(t-lo)/float64(hi-lo)
		case lo >= 0:
			out[t] = y[lo]
		case hi < len(y):
			out[t] = y[hi]
		}
	}
	return out
}

// degenerateFit is the model of a differenced series with one observed
// value repeated: no AR or MA terms, the constant (when fitted) equal to
// that value, and σ² the mean square of what is left (zero when the
// constant takes it all; the log-likelihood is then +Inf).
func degenerateFit(y []float64, o arimaOrders, pr *arimaProblem) *ArimaFitted {
	o.p, o.q, o.sp, o.sq = 0, 0, 0, 0
	c := arimaCoef{}
	if o.constant {
		c.mu = pr.center
	}
	ss := 0.0
	for _, v := range pr.w {
		if !math.IsNaN(v) {
			ss += (v - c.mu) * (v - c.mu)
		}
	}
	s2 := ss / float64(max(pr.nobs, 1))
	ll := math.Inf(1)
	if s2 > 0 {
		ll = -0.5 * float64(pr.nobs) * (math.Log(2*math.Pi*s2) + 1)
	}
	f := &ArimaFitted{
		o: o, coef: c, loglik: ll, aicc: arimaAICcOf(ll, o.nCoef(), pr.nobs), sigma2: s2, nobs: pr.nobs,
		ss:       armaSS{r: 1, phi: []float64{0}, theta: []float64{1}},
		state:    []float64{0},
		pEnd:     []float64{1},
		diff:     o.diffPoly(),
		strength: math.NaN(),
	}
	L := o.lost()
	filled := arimaFillStart(y, L)
	f.inSample = make([]float64, len(y))
	for t := range y {
		if t < L {
			f.inSample[t] = math.NaN()
			continue
		}
		v := c.mu
		for k := 1; k <= L; k++ {
			v -= f.diff[k] * filled[t-k]
		}
		f.inSample[t] = v
		if math.IsNaN(filled[t]) {
			filled[t] = v
		}
	}
	f.tail = filled[len(y)-L:]
	return f
}

// Forecast implements Fitted.
func (f *ArimaFitted) Forecast(h int) []float64 {
	if h <= 0 {
		return []float64{}
	}
	if f.levels {
		m, _ := f.levelsAhead(h)
		return m
	}
	dev := f.ss.forecastDeviations(f.state, h)
	L := len(f.diff) - 1
	ext := make([]float64, L, L+h)
	copy(ext, f.tail)
	out := make([]float64, h)
	for k := 0; k < h; k++ {
		v := f.coef.mu + dev[k]
		n := len(ext)
		for j := 1; j <= L; j++ {
			v -= f.diff[j] * ext[n-j]
		}
		ext = append(ext, v)
		out[k] = v
	}
	return out
}

// Describe implements Described: the form fitted, for example
// "arima(0,1,1)(0,1,1)12".
func (f *ArimaFitted) Describe() string { return f.o.String() }

// Warnings implements Warner.
func (f *ArimaFitted) Warnings() []string { return f.warnings }

// InSample implements InSampler.
func (f *ArimaFitted) InSample() []float64 { return f.inSample }

// ResidualVariance implements ForecastVariancer: the maximum-likelihood σ².
func (f *ArimaFitted) ResidualVariance() float64 { return f.sigma2 }

// ForecastVariance implements ForecastVariancer. (For a differenced series
// with gaps it is the variance of the filter over y continued h steps.)
// The h-step error of y is
// Σ_{j=1}^{h} κ_{h−j} u_j, with u_j the j-step error of the differenced
// series and κ the weights of 1/[(1 − B)^d (1 − B^m)^D]; with P the
// filter's covariance of the state after the last value,
//
//	Var_h = σ² [ g_h' P g_h + Σ_{k=0}^{h−2} ψ_k² ],  g_h' = Σ_j κ_{h−j} Z T^{j−1},
//
// where ψ are the weights of the full model. Once the filter has converged
// (P = R R'), g_h' P g_h = ψ_{h−1}² and this is the textbook σ² Σ_{k<h} ψ_k²;
// on short series it is the exact finite-sample variance that R's
// predict.Arima reports.
func (f *ArimaFitted) ForecastVariance(h int) []float64 {
	if h < 0 {
		panic("engines: ArimaFitted.ForecastVariance: negative horizon")
	}
	if f.levels {
		_, fv := f.levelsAhead(h)
		for i := range fv {
			fv[i] *= f.sigma2
		}
		return fv
	}
	psi := f.psiWeights(h)
	L := len(f.diff) - 1
	kappa := make([]float64, h)
	for k := 0; k < h; k++ {
		v := 0.0
		if k == 0 {
			v = 1
		}
		for i := 1; i <= min(k, L); i++ {
			v -= f.diff[i] * kappa[k-i]
		}
		kappa[k] = v
	}
	r := f.ss.r
	z := make([]float64, h*r) // row j−1 holds Z T^{j−1}
	if h > 0 {
		z[0] = 1
	}
	for j := 1; j < h; j++ {
		prev, cur := z[(j-1)*r:j*r], z[j*r:(j+1)*r]
		v := 0.0
		for i := 0; i < r; i++ {
			v += prev[i] * f.ss.phi[i]
		}
		cur[0] = v
		copy(cur[1:], prev[:r-1])
	}
	out := make([]float64, h)
	g := make([]float64, r)
	acc := 0.0 // Σ_{k=0}^{h−2} ψ_k²
	for hh := 1; hh <= h; hh++ {
		for i := range g {
			g[i] = 0
		}
		for j := 1; j <= hh; j++ {
			kj := kappa[hh-j]
			row := z[(j-1)*r : j*r]
			for i := range g {
				g[i] += kj * row[i]
			}
		}
		q := 0.0
		for i := 0; i < r; i++ {
			s := 0.0
			for k := 0; k < r; k++ {
				s += f.pEnd[i*r+k] * g[k]
			}
			q += g[i] * s
		}
		out[hh-1] = f.sigma2 * (q + acc)
		acc += psi[hh-1] * psi[hh-1]
	}
	return out
}

// psiWeights returns ψ_0…ψ_{h−1} of the full model.
func (f *ArimaFitted) psiWeights(h int) []float64 {
	a := arimaExpandAR(f.coef.phi, f.coef.sphi, f.o.m, nil)
	b := arimaExpandMA(f.coef.theta, f.coef.stheta, f.o.m, nil)
	// AR side including the differencing: (1 − Σ a_k B^k)·Σ c_k B^k.
	ar := make([]float64, len(a)+1)
	ar[0] = 1
	for i, v := range a {
		ar[i+1] = -v
	}
	full := make([]float64, len(ar)+len(f.diff)-1)
	for i, u := range ar {
		for j, c := range f.diff {
			full[i+j] += u * c
		}
	}
	psi := make([]float64, h)
	for j := 0; j < h; j++ {
		v := 0.0
		if j == 0 {
			v = 1
		} else if j <= len(b) {
			v = b[j-1]
		}
		for i := 1; i < len(full) && i <= j; i++ {
			v -= full[i] * psi[j-i]
		}
		psi[j] = v
	}
	return psi
}

// Params implements Parameterized: ar1…, ma1…, seasonal_ar1…,
// seasonal_ma1…, mean or drift, innovation_variance.
func (f *ArimaFitted) Params() []Param {
	var out []Param
	add := func(prefix string, v []float64) {
		for i, x := range v {
			out = append(out, Param{Name: fmt.Sprintf("%s%d", prefix, i+1), Value: x})
		}
	}
	add("ar", f.coef.phi)
	add("ma", f.coef.theta)
	add("seasonal_ar", f.coef.sphi)
	add("seasonal_ma", f.coef.stheta)
	if f.o.constant {
		if f.o.d+f.o.sd == 0 {
			out = append(out, Param{Name: "mean", Value: f.coef.mu})
		} else {
			out = append(out, Param{Name: "drift", Value: f.coef.mu / f.o.driftStep()})
		}
	}
	out = append(out, Param{Name: "innovation_variance", Value: f.sigma2})
	return out
}

// LogLik returns the maximised exact log-likelihood of the differenced
// series, and AICc the corrected Akaike criterion from it.
func (f *ArimaFitted) LogLik() float64 { return f.loglik }

// AICc returns −2ℓ + 2k + 2k(k+1)/(n−k−1), k the coefficients plus σ².
func (f *ArimaFitted) AICc() float64 { return f.aicc }
