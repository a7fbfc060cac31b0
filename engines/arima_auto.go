package engines

import (
	"math"
	"sort"

	"gonum.org/v1/gonum/mat"
)

// The automatic order choice of the arima method (Hyndman & Khandakar
// 2008, §3.2): D from a seasonal-strength test, d from repeated KPSS tests,
// then a stepwise search over (p, q, P, Q) and the constant by AICc.

// arimaKPSSCritical5 is the 5% critical value of the KPSS level-stationarity
// statistic (Kwiatkowski, Phillips, Schmidt & Shin 1992, Table 1: 0.463).
const arimaKPSSCritical5 = 0.463

// arimaStrengthLimit: a series whose seasonal strength exceeds it is
// differenced seasonally once. The strength measure is that of Wang, Smith
// & Hyndman (2006); the limit 0.64 is common practice for this test (the
// value named in the issue that asked for it).
const arimaStrengthLimit = 0.64

// Search bounds of the stepwise search (Hyndman & Khandakar 2008, §3.2,
// from memory): 0 ≤ p, q ≤ 5, 0 ≤ P, Q ≤ 2, at most 94 forms tried.
const (
	arimaMaxP      = 5
	arimaMaxQ      = 5
	arimaMaxSP     = 2
	arimaMaxSQ     = 2
	arimaMaxModels = 94
	arimaMaxD      = 2
	// arimaRootMargin: forms with an AR or MA root of modulus below it are
	// refused during the search as near unit roots (common practice; 1.001
	// from memory).
	arimaRootMargin = 1.001
)

// arimaKPSS returns the KPSS statistic for level stationarity of the
// observed values of x (missing values are dropped):
//
//	η = Σ_t S_t² / (n² s²(ℓ)),  S_t = Σ_{i≤t} (x_i − x̄),
//	s²(ℓ) = (1/n) Σ e_t² + (2/n) Σ_{s=1}^{ℓ} (1 − s/(ℓ+1)) Σ_{t>s} e_t e_{t−s},
//
// with the Bartlett window and the lag ℓ = ⌊4 (n/100)^{1/4}⌋ (the ℓ4 of
// Kwiatkowski et al. 1992). ok is false for fewer than 3 values or a
// constant series.
func arimaKPSS(x []float64) (stat float64, ok bool) {
	e := make([]float64, 0, len(x))
	for _, v := range x {
		if !math.IsNaN(v) {
			e = append(e, v)
		}
	}
	n := len(e)
	if n < 3 {
		return 0, false
	}
	mean := 0.0
	for _, v := range e {
		mean += v
	}
	mean /= float64(n)
	for i := range e {
		e[i] -= mean
	}
	S, num, s2 := 0.0, 0.0, 0.0
	for _, v := range e {
		S += v
		num += S * S
		s2 += v * v
	}
	l := int(4 * math.Pow(float64(n)/100, 0.25))
	for s := 1; s <= l && s < n; s++ {
		acc := 0.0
		for t := s; t < n; t++ {
			acc += e[t] * e[t-s]
		}
		s2 += 2 * (1 - float64(s)/float64(l+1)) * acc
	}
	s2 /= float64(n)
	if !(s2 > 1e-300*float64(n)) {
		return 0, false
	}
	return num / (float64(n) * float64(n) * s2), true
}

// arimaKPSSDiffs returns how many first differences (0…arimaMaxD) the KPSS test
// at the 5% level asks for: difference while the statistic exceeds the
// critical value.
func arimaKPSSDiffs(x []float64) int {
	d := 0
	for d < arimaMaxD {
		stat, ok := arimaKPSS(x)
		if !ok || stat < arimaKPSSCritical5 {
			break
		}
		d++
		x = arimaDifference(x, []float64{1, -1})
	}
	return d
}

// arimaDecompose is the classical additive decomposition with season
// length m (the computation of R's stats::decompose): the trend is the
// centred moving average of order m (2×m when m is even), the seasonal
// figure the mean detrended value at each position (counted from the first
// value) centred to sum to zero, and the remainder what is left. Missing
// values make the trend missing wherever its window touches them and are
// left out of the position means. The three series and the scratch come
// from buf when it holds arimaDecomposeLen(n, m) values (one allocation
// for the caller instead of five here).
func arimaDecompose(y []float64, m int, buf []float64) (trend, seasonal, remainder []float64) {
	n := len(y)
	h := m / 2
	if len(buf) < arimaDecomposeLen(n, m) {
		buf = make([]float64, arimaDecomposeLen(n, m))
	}
	trend, seasonal, remainder = buf[0:n:n], buf[n:2*n:2*n], buf[2*n:3*n:3*n]
	wts := buf[3*n : 3*n+2*h+1 : 3*n+2*h+1]
	fig := buf[3*n+2*h+1 : 3*n+2*h+1+m : 3*n+2*h+1+m]
	if m%2 == 0 {
		for i := range wts {
			wts[i] = 1 / float64(m)
		}
		wts[0] /= 2
		wts[2*h] /= 2
	} else {
		for i := range wts {
			wts[i] = 1 / float64(m)
		}
	}
	for t := range trend {
		trend[t] = math.NaN()
		if t-h < 0 || t+h >= n {
			continue
		}
		v := 0.0
		for k, wk := range wts {
			v += wk * y[t-h+k]
		}
		trend[t] = v
	}
	for i := 0; i < m; i++ {
		s, c := 0.0, 0
		for t := i; t < n; t += m {
			if d := y[t] - trend[t]; !math.IsNaN(d) {
				s += d
				c++
			}
		}
		if c > 0 {
			fig[i] = s / float64(c)
		} else {
			fig[i] = math.NaN()
		}
	}
	mean := 0.0
	for _, v := range fig {
		mean += v
	}
	mean /= float64(m)
	for t := range y {
		seasonal[t] = fig[t%m] - mean
		remainder[t] = y[t] - trend[t] - seasonal[t]
	}
	return trend, seasonal, remainder
}

// arimaSeasonalStrength is max(0, 1 − Var(R)/Var(S + R)) over the points where
// the remainder R of the classical additive decomposition is known (Wang,
// Smith & Hyndman 2006). ok is false when it cannot be computed.
func arimaSeasonalStrength(y []float64, m int) (float64, bool) {
	s, _, _, ok := seasonalStrength(y, m)
	return s, ok
}

// seasonalStrength computes the strength of arimaSeasonalStrength and also
// returns the number of points it used (used) and the number of season
// positions among them (groups).
func seasonalStrength(y []float64, m int) (strength float64, used, groups int, ok bool) {
	_, s, r := arimaDecompose(y, m, make([]float64, arimaDecomposeLen(len(y), m)))
	// The variances of R and of S + R over the points where both are known,
	// summed in time order (the sample variance: mean, then squared
	// deviations over used − 1).
	known := func(t int) bool { return !math.IsNaN(r[t]) && !math.IsNaN(s[t]) }
	seen := make([]bool, m)
	sr, ssr := 0.0, 0.0
	for t := range r {
		if known(t) {
			sr += r[t]
			ssr += s[t] + r[t]
			used++
			if !seen[t%m] {
				seen[t%m] = true
				groups++
			}
		}
	}
	if used < 3 {
		return 0, 0, 0, false
	}
	mr, ms := sr/float64(used), ssr/float64(used)
	vr, vs := 0.0, 0.0
	for t := range r {
		if known(t) {
			vr += (r[t] - mr) * (r[t] - mr)
			d := s[t] + r[t]
			vs += (d - ms) * (d - ms)
		}
	}
	vr /= float64(used - 1)
	vs /= float64(used - 1)
	if !(vs > 0) {
		return 0, 0, 0, false
	}
	return math.Max(0, 1-vr/vs), used, groups, true
}

// arimaDecomposeLen is the length of the buffer arimaDecompose fills.
func arimaDecomposeLen(n, m int) int { return 3*n + 2*(m/2) + 1 + m }

// arimaMinRootModulus returns the smallest modulus of the roots of
// 1 − c_1 z − … − c_k z^k (+Inf when k = 0 or every c is zero): the
// reciprocal of the largest eigenvalue modulus of the companion matrix.
func arimaMinRootModulus(c []float64) float64 {
	k := len(c)
	for k > 0 && c[k-1] == 0 {
		k--
	}
	switch k {
	case 0:
		return math.Inf(1)
	case 1:
		return 1 / math.Abs(c[0])
	}
	A := mat.NewDense(k, k, nil)
	for j := 0; j < k; j++ {
		A.Set(0, j, c[j])
	}
	for i := 1; i < k; i++ {
		A.Set(i, i-1, 1)
	}
	var eig mat.Eigen
	if !eig.Factorize(A, mat.EigenNone) {
		return 0
	}
	big := 0.0
	for _, v := range eig.Values(nil) {
		big = math.Max(big, math.Hypot(real(v), imag(v)))
	}
	return 1 / big
}

// arimaNearUnitRoot reports whether a form has an AR or MA factor with a root of
// modulus below arimaRootMargin (seasonal factors in B^m: a root ρ of the
// factor in z = B^m gives roots of modulus |ρ|^{1/m} in B).
func arimaNearUnitRoot(c arimaCoef, m int) bool {
	mm := float64(max(m, 1))
	return arimaMinRootModulus(c.phi) < arimaRootMargin ||
		arimaMinRootModulus(arimaNeg(c.theta)) < arimaRootMargin ||
		math.Pow(arimaMinRootModulus(c.sphi), 1/mm) < arimaRootMargin ||
		math.Pow(arimaMinRootModulus(arimaNeg(c.stheta)), 1/mm) < arimaRootMargin
}

// arimaSeasonsNeeded: seasonal terms (and the seasonal difference) are
// considered only with at least this many full seasons of values (see the
// ARIMA doc comment for the evidence behind 2).
const arimaSeasonsNeeded = 2

// arimaAutoOrders chooses D and d for y with season length m (m < 2: none);
// fixedD and fixedd, when not arimaAutoOrder, are taken as given. seasonal
// reports whether seasonal terms are considered at all: m ≥ 2 and at least
// two full seasons of values.
func arimaAutoOrders(y []float64, m, fixedd, fixedD int) (d, D int, seasonal bool, strength float64) {
	strength = math.NaN()
	seasonal = m >= 2 && len(y) >= arimaSeasonsNeeded*m
	x := y
	switch {
	case fixedD >= 0:
		D = fixedD
	case seasonal:
		if s, ok := arimaSeasonalStrength(y, m); ok {
			strength = s
			if s > arimaStrengthLimit {
				D = 1
			}
		}
	}
	if D > 0 {
		x = arimaDifference(y, arimaOrders{sd: D, m: m}.diffPoly())
	}
	if fixedd >= 0 {
		return fixedd, D, seasonal, strength
	}
	return arimaKPSSDiffs(x), D, seasonal, strength
}

type arimaKey struct {
	p, q, sp, sq int
	c            bool
}

// arimaStepwise runs the stepwise search over (p, q, P, Q, constant) on the
// differenced series w. base carries d, D and m; allowConst whether a
// constant may be tried; the orders of fix that are not arimaAutoOrder are held
// at their values. It returns the scored forms, best first.
func arimaStepwise(base arimaOrders, w []float64, seasonal, allowConst bool, fix arimaKey) []arimaEstimate {
	seen := map[arimaKey]bool{}
	var scored []arimaEstimate
	best := math.Inf(1)
	var bestKey arimaKey
	haveBest := false
	constOK := allowConst && base.d+base.sd <= 1

	try := func(k arimaKey) bool {
		if fix.p >= 0 {
			k.p = fix.p
		}
		if fix.q >= 0 {
			k.q = fix.q
		}
		if fix.sp >= 0 {
			k.sp = fix.sp
		}
		if fix.sq >= 0 {
			k.sq = fix.sq
		}
		if k.p < 0 || k.q < 0 || k.sp < 0 || k.sq < 0 ||
			k.p > arimaMaxP || k.q > arimaMaxQ || k.sp > arimaMaxSP || k.sq > arimaMaxSQ {
			return false
		}
		if seen[k] || len(seen) >= arimaMaxModels {
			return false
		}
		seen[k] = true
		o := base
		o.p, o.q, o.sp, o.sq, o.constant = k.p, k.q, k.sp, k.sq, k.c
		pr := newArimaProblem(o, w)
		if pr.nobs < o.nCoef()+3 {
			return false
		}
		est, err := pr.fitApprox()
		if err != nil || math.IsInf(est.aicc, 0) || math.IsNaN(est.aicc) || arimaNearUnitRoot(est.coef, o.m) {
			return false
		}
		scored = append(scored, est)
		if est.aicc < best {
			best, bestKey, haveBest = est.aicc, k, true
			return true
		}
		return false
	}

	starts := []arimaKey{{2, 2, 1, 1, constOK}, {0, 0, 0, 0, constOK}, {1, 0, 1, 0, constOK}, {0, 1, 0, 1, constOK}}
	for _, k := range starts {
		if !seasonal {
			k.sp, k.sq = 0, 0
		}
		try(k)
	}
	if !haveBest {
		return scored
	}
	for {
		moved := false
		c := bestKey
		var moves []arimaKey
		for _, dp := range []int{-1, 1} {
			moves = append(moves,
				arimaKey{c.p + dp, c.q, c.sp, c.sq, c.c},
				arimaKey{c.p, c.q + dp, c.sp, c.sq, c.c})
		}
		if seasonal {
			for _, dp := range []int{-1, 1} {
				moves = append(moves,
					arimaKey{c.p, c.q, c.sp + dp, c.sq, c.c},
					arimaKey{c.p, c.q, c.sp, c.sq + dp, c.c})
			}
		}
		for _, dd := range [][2]int{{-1, -1}, {1, 1}, {-1, 1}, {1, -1}} {
			moves = append(moves, arimaKey{c.p + dd[0], c.q + dd[1], c.sp, c.sq, c.c})
		}
		if seasonal {
			for _, dd := range [][2]int{{-1, -1}, {1, 1}, {-1, 1}, {1, -1}} {
				moves = append(moves, arimaKey{c.p, c.q, c.sp + dd[0], c.sq + dd[1], c.c})
			}
		}
		if constOK {
			moves = append(moves, arimaKey{c.p, c.q, c.sp, c.sq, !c.c})
		}
		for _, k := range moves {
			if try(k) {
				moved = true
				break
			}
		}
		if !moved || len(seen) >= arimaMaxModels {
			break
		}
	}
	sort.SliceStable(scored, func(i, j int) bool { return scored[i].aicc < scored[j].aicc })
	return scored
}
