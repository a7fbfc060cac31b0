package engines

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/optimize"
)

// arimaOrders is one model form: ARIMA(p,d,q)(P,D,Q)m, with a constant when
// constant is set (a mean when d+D = 0, a drift when d+D = 1; never fitted
// when d+D ≥ 2).
type arimaOrders struct {
	p, d, q    int
	sp, sd, sq int
	m          int
	constant   bool
}

// nARMA is the number of AR and MA coefficients.
func (o arimaOrders) nARMA() int { return o.p + o.q + o.sp + o.sq }

// nCoef is the number of estimated coefficients (σ² not counted).
func (o arimaOrders) nCoef() int {
	n := o.nARMA()
	if o.constant {
		n++
	}
	return n
}

// lost is the number of values differencing takes off the front.
func (o arimaOrders) lost() int { return o.d + o.m*o.sd }

// diffPoly returns c_0…c_L of (1 − B)^d (1 − B^m)^D = Σ_k c_k B^k.
func (o arimaOrders) diffPoly() []float64 {
	c := []float64{1}
	mul := func(lag int) {
		out := make([]float64, len(c)+lag)
		for i, v := range c {
			out[i] += v
			out[i+lag] -= v
		}
		c = out
	}
	for i := 0; i < o.d; i++ {
		mul(1)
	}
	for i := 0; i < o.sd; i++ {
		mul(o.m)
	}
	return c
}

// driftStep is ∇^d ∇_m^D applied to t: the change in the differenced
// series per unit of drift (1 when d = 1, m when D = 1).
func (o arimaOrders) driftStep() float64 {
	if o.d == 1 {
		return 1
	}
	return float64(o.m)
}

// String names the form, for example arima(1,1,1)(0,1,1)12 with drift.
func (o arimaOrders) String() string {
	s := fmt.Sprintf("arima(%d,%d,%d)", o.p, o.d, o.q)
	if o.m > 1 && (o.sp > 0 || o.sd > 0 || o.sq > 0) {
		s += fmt.Sprintf("(%d,%d,%d)%d", o.sp, o.sd, o.sq, o.m)
	}
	if o.constant {
		if o.d+o.sd == 0 {
			s += " with mean"
		} else {
			s += " with drift"
		}
	}
	return s
}

// arimaDifference returns w_t = Σ_k c_k y_{t+L−k} for t = 0…n−L−1 (NaN when a
// value it needs is missing).
func arimaDifference(y, c []float64) []float64 {
	L := len(c) - 1
	if len(y) <= L {
		return nil
	}
	w := make([]float64, len(y)-L)
	for t := range w {
		v := 0.0
		for k, ck := range c {
			if ck != 0 {
				v += ck * y[t+L-k]
			}
		}
		w[t] = v
	}
	return w
}

// arimaProblem evaluates the criteria of one model form on one differenced
// series. It is used by a single goroutine.
type arimaProblem struct {
	o    arimaOrders
	w    []float64 // differenced series, NaN = missing
	nobs int       // observed values of w
	gaps bool      // some value of w is missing
	// y and yStart, when set (series with gaps and d + D > 0), make the
	// likelihood that of y through filterIntegrated rather than that of
	// the observed differences.
	y, yStart []float64
	diff      []float64
	center    float64 // mean of the observed w
	scale     float64 // their standard deviation (1 when zero)

	// scratch
	phi, theta, sphi, stheta []float64
	a, b, work, x, e         []float64
	ss                       armaSS
	kw                       arimaKalmanWork
}

func newArimaProblem(o arimaOrders, w []float64) *arimaProblem {
	pr := &arimaProblem{o: o, w: w}
	sum, n := 0.0, 0
	for _, v := range w {
		if !math.IsNaN(v) {
			sum += v
			n++
		}
	}
	pr.nobs = n
	pr.gaps = n < len(w)
	if n > 0 {
		pr.center = sum / float64(n)
	}
	ss := 0.0
	for _, v := range w {
		if !math.IsNaN(v) {
			d := v - pr.center
			ss += d * d
		}
	}
	pr.scale = 1
	if n > 1 && ss > 0 {
		pr.scale = math.Sqrt(ss / float64(n-1))
	}
	pr.phi = make([]float64, o.p)
	pr.theta = make([]float64, o.q)
	pr.sphi = make([]float64, o.sp)
	pr.stheta = make([]float64, o.sq)
	pr.work = make([]float64, max(o.p, o.q, o.sp, o.sq))
	pr.x = make([]float64, len(w))
	pr.e = make([]float64, len(w))
	return pr
}

// decode turns the optimiser's unbounded vector into coefficients: the AR
// and MA blocks through arimaPACFToAR (so every point is stationary and
// invertible), the constant as center + scale·u. It returns the mean μ of
// the differenced series.
func (pr *arimaProblem) decode(raw []float64) float64 {
	o := pr.o
	i := 0
	arimaPACFToAR(raw[i:i+o.p], pr.phi, pr.work)
	i += o.p
	arimaPACFToAR(raw[i:i+o.q], pr.theta, pr.work)
	for j := range pr.theta {
		pr.theta[j] = -pr.theta[j]
	}
	i += o.q
	arimaPACFToAR(raw[i:i+o.sp], pr.sphi, pr.work)
	i += o.sp
	arimaPACFToAR(raw[i:i+o.sq], pr.stheta, pr.work)
	for j := range pr.stheta {
		pr.stheta[j] = -pr.stheta[j]
	}
	i += o.sq
	if o.constant {
		return pr.center + pr.scale*raw[i]
	}
	return 0
}

func arimaNeg(v []float64) []float64 {
	out := make([]float64, len(v))
	for i, x := range v {
		out[i] = -x
	}
	return out
}

// arimaCoef is a point in the natural parameters.
type arimaCoef struct {
	phi, theta, sphi, stheta []float64
	mu                       float64 // mean of the differenced series
}

func (pr *arimaProblem) coef(raw []float64) arimaCoef {
	mu := pr.decode(raw)
	return arimaCoef{
		phi:    append([]float64(nil), pr.phi...),
		theta:  append([]float64(nil), pr.theta...),
		sphi:   append([]float64(nil), pr.sphi...),
		stheta: append([]float64(nil), pr.stheta...),
		mu:     mu,
	}
}

// arimaPenalty is the criterion of a point that cannot be evaluated; it is
// finite so that line searches back off from it.
const arimaPenalty = 1e10

// deviations fills pr.x with w − μ.
func (pr *arimaProblem) deviations(mu float64) []float64 {
	for t, v := range pr.w {
		pr.x[t] = v - mu
	}
	return pr.x
}

// css is the conditional-sum-of-squares criterion ½·log(Σe²/n_e) at raw.
func (pr *arimaProblem) css(raw []float64) float64 {
	mu := pr.decode(raw)
	pr.a = arimaExpandAR(pr.phi, pr.sphi, pr.o.m, pr.a)
	pr.b = arimaExpandMA(pr.theta, pr.stheta, pr.o.m, pr.b)
	ssq, nu := cssResiduals(pr.deviations(mu), pr.a, pr.b, pr.e)
	if nu == 0 || !(ssq > 0) || math.IsInf(ssq, 0) {
		return arimaPenalty
	}
	return 0.5 * math.Log(ssq/float64(nu))
}

// setCoef loads the state-space form at the natural coefficients c.
func (pr *arimaProblem) setCoef(c arimaCoef) error {
	pr.a = arimaExpandAR(c.phi, c.sphi, pr.o.m, pr.a)
	pr.b = arimaExpandMA(c.theta, c.stheta, pr.o.m, pr.b)
	return pr.ss.set(pr.a, pr.b)
}

// exact is the exact Gaussian criterion ½·(log σ̂² + Σ log F_t / n) at raw
// (σ² concentrated out, σ̂² = Σ v_t²/F_t / n); the log-likelihood is
// −½·n·(2·criterion + 1 + log 2π).
func (pr *arimaProblem) exact(raw []float64) float64 {
	mu := pr.decode(raw)
	pr.a = arimaExpandAR(pr.phi, pr.sphi, pr.o.m, pr.a)
	pr.b = arimaExpandMA(pr.theta, pr.stheta, pr.o.m, pr.b)
	if err := pr.ss.set(pr.a, pr.b); err != nil {
		return arimaPenalty
	}
	res, ok := pr.sums(mu)
	if !ok || res.nobs == 0 || !(res.ssq > 0) || math.IsInf(res.ssq, 0) {
		return arimaPenalty
	}
	n := float64(res.nobs)
	v := 0.5 * (math.Log(res.ssq/n) + res.sumLog/n)
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return arimaPenalty
	}
	return v
}

// sums runs the filter at the loaded coefficients with mean mu: the
// Chandrasekhar recursions when w has no missing values, the filter over y
// with the differencing in the state when y has gaps and is differenced
// (see useLevels), else the full filter over w.
func (pr *arimaProblem) sums(mu float64) (arimaSums, bool) {
	if pr.y != nil {
		return pr.ss.filterIntegrated(pr.y, pr.yStart, pr.diff, mu, &pr.kw, nil, nil, true)
	}
	if pr.gaps {
		return pr.ss.filter(pr.deviations(mu), &pr.kw, nil, nil)
	}
	return pr.ss.filterChandrasekhar(pr.deviations(mu), &pr.kw)
}

// useLevels makes the likelihood that of y (filterIntegrated) when w has
// gaps and the model differences, so that a missing value costs one
// observation.
func (pr *arimaProblem) useLevels(y []float64) {
	if !pr.gaps || pr.o.lost() == 0 {
		return
	}
	pr.y = y
	pr.diff = pr.o.diffPoly()
	pr.yStart = arimaFillStart(y, pr.o.lost())
}

// arimaLoglik converts the exact criterion over n observations.
func arimaLoglik(crit float64, n int) float64 {
	fn := float64(n)
	return -0.5 * fn * (2*crit + 1 + math.Log(2*math.Pi))
}

// arimaTolerance is when arimaMinimise stops: the gradient's largest
// element below grad, or no decrease of the value by more than
// f·(1 + |value|) over iter iterations. The gradient is by central
// differences (step 1e-5·max(1, |x|)), or forward ones (step 1e-7·max(1, |x|)).
type arimaTolerance struct {
	grad, f float64
	iter    int
	forward bool // forward differences (half the evaluations, less accurate)
}

var (
	// arimaTolReference: fixed orders, converged far enough for the 1e-4
	// agreement with R's coefficients on weakly identified ones.
	arimaTolReference = arimaTolerance{grad: 1e-9, f: 1e-13, iter: 4}
	// arimaTolSearch: the final fit of the automatic choice, about R's
	// optim(reltol = 1e-8), which stops a fit that runs to a unit root
	// long before the value stops changing in the last digits.
	arimaTolSearch = arimaTolerance{grad: 1e-6, f: 1e-10, iter: 2}
	// arimaTolStart: CSS start values.
	arimaTolStart = arimaTolerance{grad: 1e-4, f: 1e-7, iter: 2, forward: true}
)

// arimaMinimise minimises f from x0 with gonum's BFGS and a central
// difference gradient. It returns the best point seen and its value; it
// never fails (a method that stops early still returns its best point).
//
// BFGS rather than Nelder–Mead: the criteria are smooth in the
// transformed parameters, and with up to 15 parameters a quasi-Newton
// method needs several times fewer evaluations than the simplex for the
// tight convergence the reference checks ask (1e-4 relative on the
// coefficients).
func arimaMinimise(f func([]float64) float64, x0 []float64, maxIter int, tol arimaTolerance) ([]float64, float64) {
	f0 := f(x0)
	if len(x0) == 0 {
		return x0, f0
	}
	buf := make([]float64, len(x0))
	grad := func(g, x []float64) {
		copy(buf, x)
		var f0 float64
		if tol.forward {
			f0 = f(x)
		}
		for i := range x {
			if tol.forward {
				h := 1e-7 * math.Max(1, math.Abs(x[i]))
				buf[i] = x[i] + h
				g[i] = (f(buf) - f0) / h
			} else {
				h := 1e-5 * math.Max(1, math.Abs(x[i]))
				buf[i] = x[i] + h
				fp := f(buf)
				buf[i] = x[i] - h
				fm := f(buf)
				g[i] = (fp - fm) / (2 * h)
			}
			buf[i] = x[i]
			if math.IsNaN(g[i]) || math.IsInf(g[i], 0) {
				g[i] = 0
			}
		}
	}
	settings := &optimize.Settings{
		GradientThreshold: tol.grad,
		Converger:         &optimize.FunctionConverge{Absolute: tol.f, Relative: tol.f, Iterations: tol.iter},
		MajorIterations:   maxIter,
	}
	res, _ := optimize.Minimize(optimize.Problem{Func: f, Grad: grad}, x0, settings, &optimize.BFGS{})
	if res == nil || math.IsNaN(res.F) || !(res.F < f0) {
		return append([]float64(nil), x0...), f0
	}
	return res.X, res.F
}

// arimaEstimate is one fitted form.
type arimaEstimate struct {
	o      arimaOrders
	coef   arimaCoef
	raw    []float64
	crit   float64 // exact criterion
	loglik float64
	sigma2 float64
	nobs   int
	aicc   float64
}

// aicc is −2ℓ + 2k + 2k(k+1)/(n−k−1) with k the coefficients plus σ².
func arimaAICcOf(loglik float64, nCoef, n int) float64 {
	k := float64(nCoef + 1)
	fn := float64(n)
	if fn-k-1 <= 0 {
		return math.Inf(1)
	}
	return -2*loglik + 2*k + 2*k*(k+1)/(fn-k-1)
}

// startCSS returns CSS estimates of the form (from zero coefficients and
// the mean of w), or the zero start when the CSS criterion cannot be formed.
func (pr *arimaProblem) startCSS(maxIter int) []float64 {
	x0 := make([]float64, pr.o.nCoef())
	ncond := pr.o.p + pr.o.m*pr.o.sp
	if len(pr.w)-ncond < pr.o.nCoef()+1 {
		return x0
	}
	x, _ := arimaMinimise(pr.css, x0, maxIter, arimaTolStart)
	return x
}

// evaluate computes the exact likelihood and the quantities derived from it
// at raw.
func (pr *arimaProblem) evaluate(raw []float64) (arimaEstimate, error) {
	e, err := pr.evaluateCoef(pr.coef(raw))
	e.raw = append([]float64(nil), raw...)
	return e, err
}

// evaluateCoef computes the exact likelihood at the natural coefficients c.
func (pr *arimaProblem) evaluateCoef(c arimaCoef) (arimaEstimate, error) {
	if err := pr.setCoef(c); err != nil {
		return arimaEstimate{}, fmt.Errorf("arima: %s: %w", pr.o, err)
	}
	res, ok := pr.sums(c.mu)
	if !ok || res.nobs == 0 || !(res.ssq > 0) || math.IsInf(res.ssq, 0) {
		return arimaEstimate{}, fmt.Errorf("arima: %s: the likelihood cannot be evaluated", pr.o)
	}
	n := float64(res.nobs)
	e := arimaEstimate{
		o: pr.o, coef: c,
		crit: 0.5 * (math.Log(res.ssq/n) + res.sumLog/n),
		nobs: res.nobs, sigma2: res.ssq / n,
	}
	e.loglik = arimaLoglik(e.crit, res.nobs)
	e.aicc = arimaAICcOf(e.loglik, pr.o.nCoef(), res.nobs)
	if math.IsNaN(e.loglik) || math.IsInf(e.loglik, 0) {
		return arimaEstimate{}, fmt.Errorf("arima: %s: the likelihood cannot be evaluated", pr.o)
	}
	return e, nil
}

// fitML fits the form by exact maximum likelihood from CSS start values.
func (pr *arimaProblem) fitML() (arimaEstimate, error) {
	return pr.fitMLFrom(pr.startCSS(200), arimaTolReference)
}

// fitMLFrom fits the form by exact maximum likelihood from start.
// When the optimum cannot be evaluated to the end (an autocovariance that
// overflows at the edge of the stationary region), the start point is
// taken if it can be.
func (pr *arimaProblem) fitMLFrom(start []float64, tol arimaTolerance) (arimaEstimate, error) {
	x, _ := arimaMinimise(pr.exact, start, 500, tol)
	e, err := pr.evaluate(x)
	if err != nil {
		if e0, err0 := pr.evaluate(start); err0 == nil {
			return e0, nil
		}
	}
	return e, err
}

// fitApprox gives the search's estimate of the form: CSS coefficients,
// scored by the exact likelihood at those coefficients.
func (pr *arimaProblem) fitApprox() (arimaEstimate, error) {
	return pr.evaluate(pr.startCSS(100))
}
