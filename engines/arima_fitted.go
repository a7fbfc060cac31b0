package engines

import (
	"fmt"
	"math"
)

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
