package engines

import (
	"fmt"
	"maps"
	"math"
	"slices"
	"strings"
)

// RegressionARIMA is the registered method "regression_arima": a
// regression on the series' drivers (holidays, promotions, price changes)
// and on Fourier terms of its long cycles, with ARIMA errors chosen
// automatically — dynamic (harmonic) regression (Hyndman & Athanasopoulos,
// Forecasting: Principles and Practice, 3rd ed., ch. 10):
//
//	y_t = Σ_j b_j x_{j,t} + Σ_c Σ_{k≤K_c} [a_{ck} sin(2πkt/m_c) + g_{ck} cos(2πkt/m_c)] + η_t,
//	η_t ~ ARIMA(p,d,q)(P,D,Q)m,
//
// fitted by FitRegressionARIMA with every order automatic and a constant
// allowed (see there: exact maximum likelihood, missing values — closed
// periods — skipped by the Kalman filter).
//
// Missing values. With gaps (at most a third of the values missing) the
// orders and first estimates come from the series with its gaps filled by
// SeasonalInterpolate, where the filter's fast recursions apply (a
// complete series); the form is then refitted by exact maximum likelihood
// over the observed values alone when that costs about a second at most
// (see regressionARIMAExactWork: monthly and weekly series), else the
// filled series' estimates are kept and the model is built by the exact
// filter over the observed values — the forecast state, σ², the reported
// likelihood and the in-sample values never see a filled value — and the
// model column says "estimated with the missing periods filled". On a
// three-year daily series with six closed days that costs 0.16 in
// log-likelihood against the exact optimum and moves the driver
// coefficients by less than 0.1%, for 0.4 s instead of 6–15 s. With more
// than a third missing the exact search runs on the series itself.
//
// Seasons. The shortest season length m (the calendar's primary season,
// the season passed to Fit) is the ARIMA model's seasonal period when
// 2 ≤ m ≤ FourierAbove (24); every longer season length of the context
// (Context.Seasons; 365 on a daily calendar with [7, 365]), and m itself
// when longer than 24, is carried by Fourier terms instead, which a
// seasonal ARIMA of that length could not hold. A cycle longer than the
// history is left out (noted). The number of harmonics K (the same for
// every long cycle, at most ⌊m_c/2⌋) is the option harmonics, or by
// default the K in 1…10 with the lowest AICc of the least-squares fit of y
// on an intercept, a linear trend, the drivers and the Fourier terms
// (cheap, and close to the book's choice by the AICc of the full model,
// which would refit the ARIMA errors ten times).
//
// Drivers (Context.Drivers): each column covers the training history and
// the H steps to forecast. A driver that is zero (or constant) wherever
// the series is observed cannot be estimated: it is left out, and the
// model column and a warning name it; so is one that is a combination of
// the drivers before it.
//
// Without drivers and long cycles (plain Fit, or a context with neither)
// this is the automatic ARIMA of the arima method, fitted through the
// regression engine (the same likelihood and search; a monthly series
// gives the arima method's model). With Fit alone and a primary season
// longer than 24 it is the ARIMA with Fourier terms for that season.
//
// Forecasts: ŷ_{n+h} = Σ b x_{n+h} + Fourier terms at n+h + η̂_{n+h}; the
// forecast variances are those of η (the coefficients taken as known, as
// R's predict.Arima does). Forecast must not be asked for more steps than
// the context's H when there are drivers (it panics; the pipeline never
// does).
//
// Options: harmonics (1…50, default chosen per series as above).
//
// References:
//   - Hyndman, R. J., Athanasopoulos, G. (2021). Forecasting: Principles
//     and Practice, 3rd ed., OTexts, §10 (dynamic regression; §10.5
//     dynamic harmonic regression).
//   - See FitRegressionARIMA and ARIMA for the likelihood and the
//     automatic orders.
type RegressionARIMA struct {
	// Harmonics fixes K for every long cycle (capped at ⌊m_c/2⌋); 0
	// chooses it per series.
	Harmonics int
	// FourierAbove is the longest season the ARIMA model's seasonal part
	// takes; longer ones become Fourier terms. 0 means 24.
	FourierAbove int
}

// RegressionARIMAFourierAbove is the default of RegressionARIMA.FourierAbove:
// a seasonal ARIMA with a period of more than about two dozen is slow and
// poorly determined (common practice; FPP §10.5 uses Fourier terms for
// periods such as 52 and 365).
const RegressionARIMAFourierAbove = 24

// regressionARIMAMaxK bounds the automatic choice of harmonics.
const regressionARIMAMaxK = 10

var (
	_ Method        = RegressionARIMA{}
	_ ContextFitter = RegressionARIMA{}
)

func init() {
	Register("regression_arima", func(o Options) (Method, error) {
		var r RegressionARIMA
		for _, k := range slices.Sorted(maps.Keys(o)) {
			v := o[k]
			if k != "harmonics" {
				return nil, fmt.Errorf("regression_arima: unknown option %q (want harmonics)", k)
			}
			n := o.Int(k, -1)
			if _, isStr := v.(string); isStr || n < 1 || n > 50 {
				return nil, fmt.Errorf("regression_arima: harmonics must be an integer in 1…50, found %v", v)
			}
			r.Harmonics = n
		}
		return r, nil
	})
}

// Name returns "regression_arima".
func (RegressionARIMA) Name() string { return "regression_arima" }

// Fit fits without drivers, with the season length alone (see
// RegressionARIMA).
func (r RegressionARIMA) Fit(y []float64, season int) (Fitted, error) {
	return r.FitContext(y, season, Context{})
}

// regFourier is one long cycle carried by Fourier terms.
type regFourier struct {
	period float64
	k      int
}

// RegressionARIMAFitted is a fitted regression_arima model.
type RegressionARIMAFitted struct {
	fit      *RegressionARIMAFit
	n        int
	drivers  [][]float64 // future values of the kept drivers (H each)
	dnames   []string
	fourier  []regFourier
	arimaM   int
	notes    []string // for the model column
	warnings []string
}

// FitContext fits y with the context's season lengths and drivers (see
// RegressionARIMA).
func (r RegressionARIMA) FitContext(y []float64, season int, c Context) (Fitted, error) {
	n := len(y)
	nobs := arimaCountObserved(y)
	if nobs == 0 {
		return nil, ErrAllMissing
	}
	above := r.FourierAbove
	if above == 0 {
		above = RegressionARIMAFourierAbove
	}
	f := &RegressionARIMAFitted{n: n, arimaM: 1}
	// Seasons: the primary one to the ARIMA model when short, the others
	// to Fourier terms.
	seasons := c.Seasons
	if len(seasons) == 0 {
		seasons = []int{season}
	}
	var long []int
	for i, m := range seasons {
		switch {
		case m < 2:
		case i == 0 && m <= above:
			f.arimaM = m
		case m > n:
			f.notes = append(f.notes, fmt.Sprintf("cycle %d left out (longer than the %d values)", m, n))
		default:
			long = append(long, m)
		}
	}
	// Drivers: the estimable ones.
	var x [][]float64
	if len(c.Drivers) > 0 {
		if c.H < 0 {
			return nil, fmt.Errorf("regression_arima: negative driver horizon %d", c.H)
		}
		x = f.screenDrivers(y, c)
	}
	// Fourier terms of the long cycles.
	if len(long) > 0 {
		k := r.Harmonics
		if k == 0 {
			k = chooseHarmonics(y, x, long)
		}
		for _, m := range long {
			kc := min(k, m/2)
			f.fourier = append(f.fourier, regFourier{period: float64(m), k: kc})
		}
	}
	cols, names := append([][]float64(nil), x...), append([]string(nil), f.dnames...)
	for _, fr := range f.fourier {
		t, err := FourierTerms(fr.period, fr.k, 0, n)
		if err != nil {
			return nil, fmt.Errorf("regression_arima: %w", err)
		}
		cols = append(cols, t...)
		names = append(names, FourierNames(fr.period, fr.k)...)
	}
	opt := AutoRegressionARIMAOptions()
	opt.Names = names
	var fit *RegressionARIMAFit
	var err error
	if missing := n - nobs; missing > 0 && 3*missing <= n {
		fit, err = f.fitWithGaps(y, cols, seasons, f.arimaM, opt)
	} else {
		fit, err = FitRegressionARIMA(y, cols, f.arimaM, opt)
	}
	if err != nil {
		return nil, fmt.Errorf("regression_arima: %w", trimRegPrefix(err))
	}
	f.fit = fit
	f.warnings = append(f.warnings, fit.Warnings()...)
	return f, nil
}

// trimRegPrefix keeps the engine's error (with its wrapped sentinel) but
// drops the "regression arima: " prefix the method's name replaces.
func trimRegPrefix(err error) error {
	if msg := err.Error(); strings.HasPrefix(msg, "regression arima: ") {
		return regError{msg: strings.TrimPrefix(msg, "regression arima: "), err: err}
	}
	return err
}

type regError struct {
	msg string
	err error
}

func (e regError) Error() string { return e.msg }
func (e regError) Unwrap() error { return e.err }

// screenDrivers keeps the drivers that can be estimated: not zero or
// constant where y is observed, and not a combination of an intercept and
// the drivers kept before them. It records the future values of the kept
// ones and notes the others; it returns their training columns.
func (f *RegressionARIMAFitted) screenDrivers(y []float64, c Context) [][]float64 {
	n := len(y)
	one := make([]float64, n)
	for i := range one {
		one[i] = 1
	}
	kept := [][]float64{one}
	keptNames := []string{"constant"}
	var x [][]float64
	for j, col := range c.Drivers {
		name := fmt.Sprintf("x%d", j+1)
		if j < len(c.DriverNames) {
			name = c.DriverNames[j]
		}
		if len(col) < n+c.H {
			panic(fmt.Sprintf("engines: regression_arima: driver %s has %d values for %d + %d", name, len(col), n, c.H))
		}
		first, constant, zero := math.NaN(), true, true
		for t := 0; t < n; t++ {
			if math.IsNaN(y[t]) {
				continue
			}
			v := col[t]
			if math.IsNaN(first) {
				first = v
			}
			if v != first {
				constant = false
			}
			if v != 0 {
				zero = false
			}
		}
		why := ""
		switch {
		case zero:
			why = "zero over the history"
		case constant:
			why = "constant over the history"
		default:
			if _, _, _, err := regLeastSquares(y, append(kept, col[:n]), append(keptNames, name)); err != nil {
				why = "a combination of the drivers before it"
			}
		}
		if why != "" {
			f.notes = append(f.notes, fmt.Sprintf("driver %s left out (%s)", name, why))
			f.warnings = append(f.warnings, fmt.Sprintf("regression_arima: driver %s left out: %s, so its effect cannot be estimated; its future values are ignored", name, why))
			continue
		}
		kept = append(kept, col[:n])
		keptNames = append(keptNames, name)
		x = append(x, col[:n:n])
		f.dnames = append(f.dnames, name)
		f.drivers = append(f.drivers, col[n:n+c.H])
	}
	return x
}

// chooseHarmonics picks K in 1…10 (capped by the shortest long cycle) by
// the AICc of the least-squares fit of y on an intercept, a linear trend,
// the drivers x and K harmonics of every long cycle.
func chooseHarmonics(y []float64, x [][]float64, long []int) int {
	n := len(y)
	base := make([][]float64, 2, 2+len(x))
	base[0], base[1] = make([]float64, n), make([]float64, n)
	for t := range base[0] {
		base[0][t], base[1][t] = 1, float64(t)/float64(n)
	}
	base = append(base, x...)
	nobs := arimaCountObserved(y)
	maxK := regressionARIMAMaxK
	for _, m := range long {
		maxK = min(maxK, m/2)
	}
	best, bestAICc := 1, math.Inf(1)
	for k := 1; k <= maxK; k++ {
		z := append([][]float64(nil), base...)
		for _, m := range long {
			t, err := FourierTerms(float64(m), k, 0, n)
			if err != nil {
				return best
			}
			z = append(z, t...)
		}
		if len(z)+2 >= nobs {
			break
		}
		_, _, res, err := regLeastSquares(y, z, make([]string, len(z)))
		if err != nil {
			continue
		}
		sse := 0.0
		for _, v := range res {
			if !math.IsNaN(v) {
				sse += v * v
			}
		}
		p := float64(len(z) + 1)
		fn := float64(nobs)
		aicc := fn*math.Log(sse/fn) + 2*p + 2*p*(p+1)/(fn-p-1)
		if aicc < bestAICc {
			best, bestAICc = k, aicc
		}
	}
	return best
}

// Forecast implements Fitted. With drivers h must not exceed the context's H.
func (f *RegressionARIMAFitted) Forecast(h int) []float64 {
	var xf [][]float64
	for j, d := range f.drivers {
		if h > len(d) {
			panic(fmt.Sprintf("engines: regression_arima: %d steps asked, driver %s known for %d", h, f.dnames[j], len(d)))
		}
		xf = append(xf, d[:h])
	}
	for _, fr := range f.fourier {
		t, err := FourierTerms(fr.period, fr.k, f.n, h)
		if err != nil {
			panic("engines: regression_arima: " + err.Error())
		}
		xf = append(xf, t...)
	}
	if len(xf) == 0 {
		out, err := f.fit.ForecastNoRegressors(h)
		if err != nil {
			panic("engines: regression_arima: " + err.Error())
		}
		return out
	}
	if h == 0 {
		return []float64{}
	}
	out, err := f.fit.Forecast(xf)
	if err != nil {
		panic("engines: regression_arima: " + err.Error())
	}
	return out
}

// Describe names the error model, the drivers and the Fourier terms, for
// example "regression_arima(arima(1,0,1)(0,1,1)7 errors; drivers: promo;
// fourier: 365 × 4)", and what was left out.
func (f *RegressionARIMAFitted) Describe() string {
	parts := []string{f.fit.Errors().Describe() + " errors"}
	if len(f.dnames) > 0 {
		parts = append(parts, "drivers: "+strings.Join(f.dnames, ", "))
	}
	for _, fr := range f.fourier {
		parts = append(parts, fmt.Sprintf("fourier: %v × %d", fr.period, fr.k))
	}
	parts = append(parts, f.notes...)
	return "regression_arima(" + strings.Join(parts, "; ") + ")"
}

// Warnings lists drivers left out and what the fit worked around.
func (f *RegressionARIMAFitted) Warnings() []string { return f.warnings }

// Params lists the driver and Fourier coefficients, then the error model's.
func (f *RegressionARIMAFitted) Params() []Param { return f.fit.Params() }

// InSample returns the one-step predictions of y.
func (f *RegressionARIMAFitted) InSample() []float64 { return f.fit.InSample() }

// ResidualVariance is σ² of the ARIMA innovations.
func (f *RegressionARIMAFitted) ResidualVariance() float64 { return f.fit.ResidualVariance() }

// ForecastVariance is the variance of η's forecast errors (coefficients
// taken as known).
func (f *RegressionARIMAFitted) ForecastVariance(h int) []float64 {
	return f.fit.ForecastVariance(h)
}

// Coefficients returns the regression coefficients (drivers kept, then
// Fourier terms) by name.
func (f *RegressionARIMAFitted) Coefficients() []Param {
	return f.fit.Params()[:len(f.fit.Coefficients())]
}

// Regression returns the underlying fit.
func (f *RegressionARIMAFitted) Regression() *RegressionARIMAFit { return f.fit }

// regressionARIMAExactWork bounds the exact refit over gaps, in units of
// n·(r+L)²·k²: one pass of the Kalman filter over the levels costs about
// 4 ns per n·(r+L)² (r the ARMA state, L = d + mD the differencing lags it
// carries) and BFGS with numerical gradients takes about 15·k² passes for
// k coefficients (measured: 2,234 passes for k = 12). 16 million units
// keep a refit near 1 s. A monthly series of 15 years with seasonal errors
// and one driver (n = 180, r + L = 38, k = 5) is 6.5 million; a three-year
// daily series with weekly seasonal errors, three drivers and a yearly
// Fourier pair (n = 1095, r + L = 23, k = 12) is 83 million, whose exact
// refit took 6–15 s.
const regressionARIMAExactWork = 16_000_000

// fitWithGaps fits y, which has missing values, in two steps: the orders
// and estimates on y with its gaps filled by SeasonalInterpolate (the
// complete series takes the fast Chandrasekhar filter), then either the
// exact maximum-likelihood refit of that form over the observed values
// alone, when its work n·(r+L)² is at most regressionARIMAExactWork, or
// the filled series' estimates kept and the model built by the exact
// filter over the observed values (forecast state, σ², likelihood and
// in-sample values never see a filled value). The second case is
// recorded in the notes.
func (f *RegressionARIMAFitted) fitWithGaps(y []float64, x [][]float64, seasons []int, m int, opt RegressionARIMAOptions) (*RegressionARIMAFit, error) {
	filled, _, err := SeasonalInterpolate(y, seasons)
	if err != nil {
		return nil, err
	}
	first, err := FitRegressionARIMA(filled, x, m, opt)
	if err != nil {
		return nil, err
	}
	o := first.errs.o
	ns := max(o.p+o.m*o.sp, o.q+o.m*o.sq+1) + o.lost()
	k := o.nCoef() + len(x)
	if len(y)*ns*ns*k*k <= regressionARIMAExactWork {
		exact, err := fitRegressionOrders(y, x, o, nil, arimaTolSearch, opt.Names)
		if err == nil {
			exact.auto = true
			exact.warn = append(append([]string(nil), first.warn...), exact.warn...)
			return exact, nil
		}
	}
	rp, err := newRegProblem(y, x, o, opt.Names)
	if err != nil {
		return nil, err
	}
	fit, err := rp.build(first.errs.coef, first.beta, opt.Names)
	if err != nil {
		return nil, err
	}
	fit.auto = true
	fit.warn = append([]string(nil), first.warn...)
	f.notes = append(f.notes, "estimated with the missing periods filled")
	return fit, nil
}
