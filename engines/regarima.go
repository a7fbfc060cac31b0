package engines

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// Regression with ARIMA errors ("dynamic regression", Hyndman &
// Athanasopoulos, Forecasting: Principles and Practice, 3rd ed., ch. 10):
//
//	y_t = Σ_j b_j x_{j,t} + η_t,  η_t ~ ARIMA(p,d,q)(P,D,Q)m,
//
// with the ARIMA model of the ARIMA method (see ARIMA), including its
// constant: a mean of η when d + D = 0 (the intercept of R's
// stats::arima(xreg = …, include.mean = TRUE)), a drift when d + D = 1.
// Differencing the model differences y and every regressor alike, so the
// likelihood is that of the ARMA model of
//
//	w_t = ∇^d ∇_m^D y_t − Σ_j b_j ∇^d ∇_m^D x_{j,t},
//
// the exact Gaussian likelihood of the ARIMA engine (the Kalman filter,
// conditional on the first d + mD values, σ² concentrated out; missing y
// values are skipped, and with gaps and differencing the filter runs over
// y − Xb with the differencing in the state). The regression coefficients
// are estimated jointly with the ARMA coefficients by maximum likelihood
// (gonum's BFGS, as the ARIMA engine), from start values b⁰ = the least
// squares fit of the differenced y on the differenced regressors and ARMA
// start values from conditional sum of squares on its residuals; each b_j
// is optimised as b⁰_j + s_j·u_j with s_j the least-squares standard error,
// so that every direction has a comparable scale. This is the likelihood
// of R's stats::arima(xreg = …, method = "ML") (the reference of the
// tests; for differenced models in the limit of its diffuse prior).
//
// Automatic orders (any order given as OrderAuto) follow the book's
// recipe: the differencing is chosen on the residuals of the least-squares
// fit of y on the regressors (with an intercept), by the tests of the
// ARIMA method (seasonal strength for D, KPSS for d); the stepwise AICc
// search of the ARIMA method then runs on the differenced regression
// residuals w⁰ = ∇y − ∇X b⁰, and the best forms are refitted jointly with
// b by maximum likelihood until one fits. The AICc counts the regression
// coefficients.
//
// Forecasts need the regressors' values over the horizon:
// ŷ_{n+h} = Σ_j b_j x_{j,n+h} + η̂_{n+h}. Their variances are those of η
// (b taken as known, as R's predict.Arima does).
//
// Regressors must be complete (no NaN or ±Inf), one value per period of y,
// and linearly independent after differencing (a regressor that the
// differencing makes zero, such as a constant with d ≥ 1, is an error
// naming it).
//
// References:
//   - Hyndman, R. J., Athanasopoulos, G. (2021). Forecasting: Principles
//     and Practice, 3rd ed., OTexts, chapter 10 (Dynamic regression models).
//   - Harvey, A. C., Phillips, G. D. A. (1979). Maximum likelihood
//     estimation of regression models with autoregressive-moving average
//     disturbances. Biometrika 66(1), 49–58.
//   - See ARIMA for the likelihood and the automatic choice.

// OrderAuto marks an order of RegressionARIMAOptions chosen per series.
const OrderAuto = arimaAutoOrder

// RegressionARIMAOptions are the orders of the error model and whether a
// constant may be fitted. The zero value is ARIMA(0,0,0) errors without a
// constant; AutoRegressionARIMAOptions gives every order automatic.
type RegressionARIMAOptions struct {
	P, D, Q                         int // non-seasonal orders, or OrderAuto
	SeasonalP, SeasonalD, SeasonalQ int // seasonal orders, or OrderAuto
	Constant                        bool
	Names                           []string // regressor names for Params (default x1, x2, …)
}

// AutoRegressionARIMAOptions returns options with every order automatic
// and a constant allowed.
func AutoRegressionARIMAOptions() RegressionARIMAOptions {
	return RegressionARIMAOptions{P: OrderAuto, D: OrderAuto, Q: OrderAuto,
		SeasonalP: OrderAuto, SeasonalD: OrderAuto, SeasonalQ: OrderAuto, Constant: true}
}

func (o RegressionARIMAOptions) validate() error {
	for _, f := range []struct {
		name string
		v    int
		max  int
	}{{"p", o.P, arimaMaxP}, {"d", o.D, arimaMaxD}, {"q", o.Q, arimaMaxQ},
		{"seasonal p", o.SeasonalP, arimaMaxSP}, {"seasonal d", o.SeasonalD, 1}, {"seasonal q", o.SeasonalQ, arimaMaxSQ}} {
		if f.v != OrderAuto && (f.v < 0 || f.v > f.max) {
			return fmt.Errorf("regression arima: %s must be OrderAuto or 0…%d, found %d", f.name, f.max, f.v)
		}
	}
	return nil
}

func (o RegressionARIMAOptions) allFixed() bool {
	return o.P >= 0 && o.D >= 0 && o.Q >= 0 && o.SeasonalP >= 0 && o.SeasonalD >= 0 && o.SeasonalQ >= 0
}

// RegressionARIMAFit is a fitted regression with ARIMA errors.
type RegressionARIMAFit struct {
	beta   []float64
	errs   *ArimaFitted // the model of η = y − Xb
	loglik float64
	aicc   float64
	nobs   int
	names  []string
	ins    []float64
	warn   []string
	auto   bool
}

// FitRegressionARIMA fits y_t = Σ_j b_j x[j][t] + η_t with ARIMA errors
// (see the comment at the top of this file). x holds one column per
// regressor, each as long as y; x may be empty (then this is the ARIMA
// method's model). season is the season length m (seasonal orders need
// m ≥ 2). NaN in y marks a missing value.
func FitRegressionARIMA(y []float64, x [][]float64, season int, opt RegressionARIMAOptions) (*RegressionARIMAFit, error) {
	if err := opt.validate(); err != nil {
		return nil, err
	}
	names := opt.Names
	if len(names) == 0 {
		names = make([]string, len(x))
		for j := range names {
			names[j] = fmt.Sprintf("x%d", j+1)
		}
	}
	if len(names) != len(x) {
		return nil, fmt.Errorf("regression arima: %d names for %d regressors", len(names), len(x))
	}
	for j, c := range x {
		if len(c) != len(y) {
			return nil, fmt.Errorf("regression arima: regressor %s has %d values, the series %d", names[j], len(c), len(y))
		}
		for t, v := range c {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fmt.Errorf("regression arima: regressor %s has no finite value at position %d", names[j], t)
			}
		}
	}
	nobs := arimaCountObserved(y)
	if nobs == 0 {
		return nil, ErrAllMissing
	}
	seasonalFixed := opt.SeasonalP > 0 || opt.SeasonalD > 0 || opt.SeasonalQ > 0
	if seasonalFixed && season < 2 {
		return nil, fmt.Errorf("regression arima: seasonal orders need a season length of at least 2 (have %d)", season)
	}
	var f *RegressionARIMAFit
	var err error
	if opt.allFixed() {
		o := arimaOrders{p: opt.P, d: opt.D, q: opt.Q, sp: opt.SeasonalP, sd: opt.SeasonalD, sq: opt.SeasonalQ, m: 1}
		if o.sp+o.sd+o.sq > 0 {
			o.m = season
		}
		o.constant = opt.Constant && o.d+o.sd <= 1
		f, err = fitRegressionOrders(y, x, o, nil, arimaTolReference, names)
	} else {
		f, err = fitRegressionAuto(y, x, season, opt, nobs, names)
	}
	if err != nil {
		return nil, err
	}
	return f, nil
}

// regLeastSquares fits b minimising Σ (w_t − Σ_j b_j z[j][t])² over the t
// with w_t observed; it returns b, the standard errors and the residuals
// (NaN where w is missing). It reports collinear regressors as an error
// naming the first column that is (nearly) a combination of the others.
func regLeastSquares(w []float64, z [][]float64, names []string) (b, se, res []float64, err error) {
	k := len(z)
	rows := make([]int, 0, len(w))
	for t, v := range w {
		if !math.IsNaN(v) {
			rows = append(rows, t)
		}
	}
	res = make([]float64, len(w))
	if k == 0 {
		copy(res, w)
		return nil, nil, res, nil
	}
	if len(rows) <= k {
		return nil, nil, nil, fmt.Errorf("regression arima: %d observed values for %d regressors: %w", len(rows), k, ErrTooShort)
	}
	A := mat.NewDense(len(rows), k, nil)
	rhs := mat.NewVecDense(len(rows), nil)
	for i, t := range rows {
		for j := 0; j < k; j++ {
			A.Set(i, j, z[j][t])
		}
		rhs.SetVec(i, w[t])
	}
	// Collinearity: each column against the ones before it (Gram–Schmidt
	// norms through the QR factor's diagonal), relative to its own norm.
	var qr mat.QR
	qr.Factorize(A)
	var R mat.Dense
	qr.RTo(&R)
	for j := 0; j < k; j++ {
		norm := 0.0
		for _, t := range rows {
			norm += z[j][t] * z[j][t]
		}
		norm = math.Sqrt(norm)
		if norm == 0 || math.Abs(R.At(j, j)) <= 1e-9*norm {
			what := "is a combination of the others"
			if norm == 0 {
				what = "is zero"
			}
			return nil, nil, nil, fmt.Errorf("regression arima: regressor %s %s (after differencing, where the series is observed)", names[j], what)
		}
	}
	var bv mat.VecDense
	if err := qr.SolveVecTo(&bv, false, rhs); err != nil {
		return nil, nil, nil, fmt.Errorf("regression arima: least squares: %w", err)
	}
	b = make([]float64, k)
	for j := range b {
		b[j] = bv.AtVec(j)
	}
	ssq := 0.0
	for t := range w {
		if math.IsNaN(w[t]) {
			res[t] = math.NaN()
			continue
		}
		v := w[t]
		for j := 0; j < k; j++ {
			v -= b[j] * z[j][t]
		}
		res[t] = v
		ssq += v * v
	}
	s2 := ssq / float64(max(len(rows)-k, 1))
	// diag((R'R)^{-1}) = row norms² of R^{-1}.
	var Rk, Rinv mat.Dense
	Rk.CloneFrom(R.Slice(0, k, 0, k))
	se = make([]float64, k)
	if err := Rinv.Inverse(&Rk); err == nil {
		for j := 0; j < k; j++ {
			v := 0.0
			for i := 0; i < k; i++ {
				v += Rinv.At(j, i) * Rinv.At(j, i)
			}
			se[j] = math.Sqrt(s2 * v)
		}
	}
	for j := range se {
		if !(se[j] > 0) || math.IsInf(se[j], 0) {
			se[j] = 0.01 * math.Max(math.Abs(b[j]), 1)
		}
	}
	return b, se, res, nil
}

// regProblem is the likelihood of one form as a function of the ARMA
// coefficients and b.
type regProblem struct {
	o     arimaOrders
	y     []float64
	x     [][]float64
	wy    []float64   // differenced y
	wx    [][]float64 // differenced regressors
	b0, s []float64   // b = b0 + s·u
	beta  []float64
	u     []float64 // y − Xb (levels filter only)
	pr    *arimaProblem
	nc    int // ARMA coefficients + constant
}

func newRegProblem(y []float64, x [][]float64, o arimaOrders, names []string) (*regProblem, error) {
	c := o.diffPoly()
	rp := &regProblem{o: o, y: y, x: x, wy: arimaDifference(y, c), nc: o.nCoef()}
	for _, col := range x {
		rp.wx = append(rp.wx, arimaDifference(col, c))
	}
	need := o.nCoef() + len(x) + 3
	if n := arimaCountObserved(rp.wy); n < need {
		return nil, fmt.Errorf("regression arima: %s with %d regressors needs at least %d observed values after differencing, have %d: %w",
			o, len(x), need, n, ErrTooShort)
	}
	// Start values: least squares of the differenced series on the
	// differenced regressors, with an intercept when the model has a
	// constant (so that b⁰ is not pulled by the level or the drift).
	z := rp.wx
	zn := names
	if o.constant {
		one := make([]float64, len(rp.wy))
		for i := range one {
			one[i] = 1
		}
		z = append([][]float64{one}, rp.wx...)
		zn = append([]string{"constant"}, names...)
	}
	b, se, _, err := regLeastSquares(rp.wy, z, zn)
	if err != nil {
		return nil, err
	}
	if o.constant {
		b, se = b[1:], se[1:]
	}
	rp.b0, rp.s = b, se
	rp.beta = append([]float64(nil), b...)
	w0 := make([]float64, len(rp.wy))
	for t, v := range rp.wy {
		for j, col := range rp.wx {
			v -= b[j] * col[t]
		}
		w0[t] = v
	}
	// The constant's parametrisation (center, scale) comes from w⁰.
	rp.pr = newArimaProblem(o, w0)
	if rp.pr.gaps && o.lost() > 0 {
		rp.u = make([]float64, len(y))
		rp.pr.useLevels(rp.u)
	}
	rp.setBeta(b)
	return rp, nil
}

// setBeta loads b: w = ∇y − ∇X b (and u = y − X b for the levels filter).
func (rp *regProblem) setBeta(b []float64) {
	copy(rp.beta, b)
	w := rp.pr.w
	for t, v := range rp.wy {
		for j, col := range rp.wx {
			v -= b[j] * col[t]
		}
		w[t] = v
	}
	if rp.u != nil {
		for t, v := range rp.y {
			for j, col := range rp.x {
				v -= b[j] * col[t]
			}
			rp.u[t] = v
		}
		if rp.pr.y != nil {
			rp.pr.yStart = arimaFillStart(rp.u, rp.o.lost())
		}
	}
}

func (rp *regProblem) betaOf(raw []float64) []float64 {
	b := make([]float64, len(rp.b0))
	for j := range b {
		b[j] = rp.b0[j] + rp.s[j]*raw[rp.nc+j]
	}
	return b
}

// criterion is the exact criterion of the ARIMA engine at raw (ARMA and
// constant in raw[:nc], b through raw[nc:]).
func (rp *regProblem) criterion(raw []float64) float64 {
	rp.setBeta(rp.betaOf(raw))
	return rp.pr.exact(raw[:rp.nc])
}

// fit maximises the likelihood from the ARMA start armaStart (CSS values
// on the least-squares residuals when nil).
func (rp *regProblem) fit(armaStart []float64, tol arimaTolerance) ([]float64, error) {
	if armaStart == nil {
		rp.setBeta(rp.b0)
		armaStart = rp.pr.startCSS(200)
	}
	x0 := make([]float64, rp.nc+len(rp.b0))
	copy(x0, armaStart)
	x, _ := arimaMinimise(rp.criterion, x0, 500, tol)
	return x, nil
}

// build makes the fitted model at the ARMA coefficients c and b.
func (rp *regProblem) build(c arimaCoef, b []float64, names []string) (*RegressionARIMAFit, error) {
	rp.setBeta(b)
	est, err := rp.pr.evaluateCoef(c)
	if err != nil {
		return nil, err
	}
	u := make([]float64, len(rp.y))
	for t, v := range rp.y {
		for j, col := range rp.x {
			v -= b[j] * col[t]
		}
		u[t] = v
	}
	ef, err := newArimaFitted(u, rp.pr, est)
	if err != nil {
		return nil, err
	}
	f := &RegressionARIMAFit{
		beta: append([]float64(nil), b...), errs: ef, loglik: est.loglik, nobs: est.nobs,
		aicc: arimaAICcOf(est.loglik, rp.o.nCoef()+len(b), est.nobs), names: names,
	}
	f.ins = make([]float64, len(rp.y))
	for t, v := range ef.InSample() {
		for j, col := range rp.x {
			v += b[j] * col[t]
		}
		f.ins[t] = v
	}
	return f, nil
}

func fitRegressionOrders(y []float64, x [][]float64, o arimaOrders, armaStart []float64, tol arimaTolerance, names []string) (*RegressionARIMAFit, error) {
	rp, err := newRegProblem(y, x, o, names)
	if err != nil {
		return nil, err
	}
	raw, err := rp.fit(armaStart, tol)
	if err != nil {
		return nil, err
	}
	b := rp.betaOf(raw)
	rp.setBeta(b)
	c := rp.pr.coef(raw[:rp.nc])
	f, err := rp.build(c, b, names)
	if err != nil {
		// The optimum could not be evaluated to the end: the start.
		rp.setBeta(rp.b0)
		start := rp.pr.coef(make([]float64, rp.nc))
		if f0, err0 := rp.build(start, rp.b0, names); err0 == nil {
			f0.warn = append(f0.warn, fmt.Sprintf("regression arima: %s: the maximum-likelihood fit failed (%v); kept the start values", o, err))
			return f0, nil
		}
		return nil, err
	}
	return f, nil
}

func fitRegressionAuto(y []float64, x [][]float64, season int, opt RegressionARIMAOptions, nobs int, names []string) (*RegressionARIMAFit, error) {
	if nobs < len(x)+3 {
		return nil, fmt.Errorf("regression arima: automatic orders need at least %d observed values, have %d: %w", len(x)+3, nobs, ErrTooShort)
	}
	// Differencing: the tests on the least-squares residuals in levels.
	one := make([]float64, len(y))
	for i := range one {
		one[i] = 1
	}
	_, _, res, err := regLeastSquares(y, append([][]float64{one}, x...), append([]string{"constant"}, names...))
	if err != nil {
		return nil, err
	}
	d, D, seasonal, _ := arimaAutoOrders(res, season, opt.D, opt.SeasonalD)
	if opt.SeasonalP > 0 || opt.SeasonalD > 0 || opt.SeasonalQ > 0 {
		seasonal = true
	}
	base := arimaOrders{d: d, sd: D, m: 1}
	if seasonal {
		base.m = season
	}
	for base.d+base.sd > 0 && arimaCountObserved(arimaDifference(y, base.diffPoly())) < len(x)+4 {
		if base.sd > 0 && opt.SeasonalD == OrderAuto {
			base.sd = 0
		} else if base.d > 0 && opt.D == OrderAuto {
			base.d--
		} else {
			break
		}
	}
	constOK := opt.Constant && base.d+base.sd <= 1
	// The search on the differenced regression residuals w⁰ (their mean
	// kept: it is what the constant estimates).
	probe := base
	probe.constant = constOK
	rp, err := newRegProblem(y, x, probe, names)
	var warn []string
	if err != nil && constOK {
		// A regressor that the differencing turns into a constant (a
		// linear trend with d = 1) is the drift: search without one.
		probe.constant, constOK = false, false
		if rp, err = newRegProblem(y, x, probe, names); err == nil {
			warn = append(warn, "regression arima: a regressor plays the part of the constant after differencing; no constant fitted")
		}
	}
	if err != nil {
		return nil, err
	}
	w0 := append([]float64(nil), rp.pr.w...)
	fix := arimaKey{p: opt.P, q: opt.Q, sp: opt.SeasonalP, sq: opt.SeasonalQ}
	scored := arimaStepwise(base, w0, seasonal, constOK, fix)
	for i, est := range scored {
		f, err := fitRegressionOrders(y, x, est.o, est.raw, arimaTolSearch, names)
		if err != nil {
			continue // the next best form
		}
		if i > 0 {
			warn = append(warn, fmt.Sprintf("regression arima: the best form of the search could not be fitted; took %s", est.o))
		}
		f.warn = append(warn, f.warn...)
		f.auto = true
		return f, nil
	}
	for _, c := range []bool{constOK, false} {
		o := base
		o.p, o.q, o.sp, o.sq = max(opt.P, 0), max(opt.Q, 0), max(opt.SeasonalP, 0), max(opt.SeasonalQ, 0)
		o.constant = c
		f, err := fitRegressionOrders(y, x, o, nil, arimaTolSearch, names)
		if err == nil {
			f.warn = append(append(warn, f.warn...), fmt.Sprintf("regression arima: the search found no usable form; fell back to %s", o))
			f.auto = true
			return f, nil
		}
		if errors.Is(err, ErrTooShort) {
			return nil, err
		}
	}
	return nil, fmt.Errorf("regression arima: no form could be fitted")
}

// Coefficients returns b, one per regressor.
func (f *RegressionARIMAFit) Coefficients() []float64 { return append([]float64(nil), f.beta...) }

// Errors returns the fitted ARIMA model of η = y − Xb (its Forecast is the
// forecast of η, its Params the ARMA coefficients).
func (f *RegressionARIMAFit) Errors() *ArimaFitted { return f.errs }

// Forecast returns ŷ_{n+1…n+h} given the regressors over the horizon,
// xFuture[j] holding h values of regressor j (h = len(xFuture[0]); with no
// regressors use ForecastNoRegressors).
func (f *RegressionARIMAFit) Forecast(xFuture [][]float64) ([]float64, error) {
	if len(xFuture) != len(f.beta) {
		return nil, fmt.Errorf("regression arima: %d future regressors for %d fitted", len(xFuture), len(f.beta))
	}
	if len(xFuture) == 0 {
		return nil, errors.New("regression arima: no regressors; use ForecastNoRegressors")
	}
	h := len(xFuture[0])
	for j, c := range xFuture {
		if len(c) != h {
			return nil, fmt.Errorf("regression arima: future regressor %s has %d values, %s has %d", f.names[j], len(c), f.names[0], h)
		}
		for t, v := range c {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fmt.Errorf("regression arima: future regressor %s has no finite value at step %d", f.names[j], t+1)
			}
		}
	}
	out := f.errs.Forecast(h)
	for t := range out {
		for j, c := range xFuture {
			out[t] += f.beta[j] * c[t]
		}
	}
	return out, nil
}

// ForecastNoRegressors forecasts a fit without regressors h steps.
func (f *RegressionARIMAFit) ForecastNoRegressors(h int) ([]float64, error) {
	if len(f.beta) != 0 {
		return nil, fmt.Errorf("regression arima: the fit has %d regressors; give their future values", len(f.beta))
	}
	return f.errs.Forecast(h), nil
}

// ForecastVariance returns the variances of the 1…h step forecast errors
// (those of η; b taken as known).
func (f *RegressionARIMAFit) ForecastVariance(h int) []float64 { return f.errs.ForecastVariance(h) }

// ResidualVariance is the maximum-likelihood σ² of the ARIMA innovations.
func (f *RegressionARIMAFit) ResidualVariance() float64 { return f.errs.ResidualVariance() }

// InSample returns the one-step predictions of y (NaN for the first d + mD).
func (f *RegressionARIMAFit) InSample() []float64 { return f.ins }

// LogLik is the maximised exact log-likelihood (of the differenced model).
func (f *RegressionARIMAFit) LogLik() float64 { return f.loglik }

// AICc counts the ARMA coefficients, the constant, b and σ².
func (f *RegressionARIMAFit) AICc() float64 { return f.aicc }

// Describe names the form, for example
// "regression on 2 regressors with arima(0,1,1)(0,1,1)12 errors".
func (f *RegressionARIMAFit) Describe() string {
	return fmt.Sprintf("regression on %d regressors with %s errors", len(f.beta), f.errs.Describe())
}

// Automatic reports whether the error orders were chosen by the search.
func (f *RegressionARIMAFit) Automatic() bool { return f.auto }

// Warnings lists what the fit had to work around.
func (f *RegressionARIMAFit) Warnings() []string { return f.warn }

// Params returns the regression coefficients by name, then the error
// model's parameters (see ArimaFitted.Params).
func (f *RegressionARIMAFit) Params() []Param {
	out := make([]Param, 0, len(f.beta)+8)
	for j, b := range f.beta {
		out = append(out, Param{Name: f.names[j], Value: b})
	}
	return append(out, f.errs.Params()...)
}
