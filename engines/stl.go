package engines

import (
	"fmt"
	"math"
	"slices"
	"strconv"
)

// STL is seasonal-trend decomposition by loess, and the forecast built on
// it: the seasonally adjusted series forecast by drift or by simple
// exponential smoothing, plus the seasonal component of the last cycle.
//
// # Decomposition
//
// STL splits y_v, v = 1…N, with season length m (n_p in the paper), into
// y_v = T_v + S_v + R_v by two nested loops. Start with T ≡ 0 and
// robustness weights ρ ≡ 1. One pass of the inner loop:
//
//  1. Detrending: D_v = y_v − T_v.
//  2. Cycle-subseries smoothing: each cycle-subseries of D (the values at
//     one season position, in time order) is smoothed by loess with
//     window n_s and degree d_s, with weights ρ, and the fit is extended
//     one period before its first and one after its last value. Put back
//     in time order this gives C, of length N + 2m (C_{1−m} … C_{N+m}).
//  3. Low-pass filtering of C: a moving average of length m, another of
//     length m, one of length 3, then loess with window n_l and degree
//     d_l (weights 1): L, of length N.
//  4. Detrending of the smoothed cycle-subseries: S_v = C_v − L_v.
//  5. Deseasonalising: y_v − S_v.
//  6. Trend smoothing: T is the loess of y − S with window n_t and degree
//     d_t, with weights ρ.
//
// Each pass of the outer loop runs the inner loop `inner` times; the first
// pass uses ρ ≡ 1, and each of the `outer` passes after it first sets the
// robustness weights from the current fit,
//
//	R_v = y_v − T_v − S_v,  h = 6·median|R|  (for even N the mean of the
//	                                           two middle |R_v|),
//	ρ_v = B(|R_v| / h),     B(u) = 1 for u ≤ 0.001, (1 − u²)² for u ≤ 0.999,
//	                               0 beyond,
//
// (ρ_v = 1 where R_v = 0, and 0 elsewhere, when h = 0). The trend is
// carried from one pass to the next. The remainder is R = y − T − S and the
// adjusted series y − S.
//
// Loess at x from the values y_j at the positions j = 1…k of a series:
// with q the window, the neighbourhood is the q positions nearest x (all k
// when q ≥ k), λ the largest distance |j − x| in it, plus ⌊(q − k)/2⌋ when
// q > k; the weights are v_j = ρ_j·W(|j − x|/λ), W(u) = 1 for u ≤ 0.001,
// (1 − u³)³ for u ≤ 0.999, 0 beyond. Degree 0 fits the weighted mean,
// degree 1 the weighted least-squares line (the weighted mean when the
// positions' weighted standard deviation is at most 0.001·(k − 1)),
// evaluated at x. A loess with jump J > 1 is computed at positions 1, 1+J,
// 1+2J, … and at k, and interpolated linearly in between. Where every
// weight is 0 the fit is the value itself (at the two extension points:
// the nearest fitted value). The cut-offs at 0.001 and 0.999, in W and B,
// are those of Cleveland's lowess program and of R's stl; the rule for λ
// when q > k is R's.
//
// Seasonal window "periodic" (the default) means n_s = 10N + 1 and d_s = 0:
// cycle-subseries are smoothed to nearly their weighted means, as if the
// seasonal did not change. After the loops the seasonal is replaced by its
// mean at each season position, and the remainder and adjusted series are
// computed from that seasonal; the trend is the one from the loops. This
// reproduces R's stats::stl with s.window = "periodic".
//
// Defaults as in the paper and R's stats::stl: d_s = 0,
// n_t = nextodd(⌈1.5m / (1 − 1.5/n_s)⌉), d_t = 1, n_l = nextodd(m),
// d_l = d_t, jumps ⌈n_s/10⌉, ⌈n_t/10⌉ and ⌈n_l/10⌉, where nextodd(x) is x
// rounded, plus 1 if even. Not robust: inner = 2, outer = 0; robust:
// inner = 1, outer = 15.
//
// Factors[j] is the mean of S over the season position j (S_v with
// (v−1) mod m = j), shifted so the factors average exactly 0; Counts[j] is
// the number of values averaged. For the periodic window the means are the
// seasonal itself (the shift is tiny: below 1e-6 of the seasonal range on
// the reference data); for a numeric window, where the seasonal evolves,
// they summarise it over the whole series as classical decomposition's
// factors do, which keeps Counts meaningful. The forecast does not use
// Factors: it uses the last cycle of S, which a changing seasonal makes
// the better guess.
//
// Agreement with R's stats::stl: to about 1e-10 without robustness. With
// robustness passes R computes "6·median|R|" from a partial sort that does
// not always leave the two middle order statistics in place, so on some
// series (7 of the 11 robust reference fits) its weights, and from then
// on its components, differ; STL keeps the paper's median and agrees with
// statsmodels' STL to about 1e-10 on all of them (see stl_test.go).
//
// The series must be complete (no NaN and no infinity; STL here does not
// fill gaps), at least two full seasons long (N ≥ 2m; R demands N > 2m),
// with m ≥ 2.
//
// # Forecast
//
// With A = y − S the adjusted series and the horizon h ≥ 1, the forecast
// of y_{N+h} is Â_{N+h} + S_{N+h−km}, k the smallest integer with
// N + h − km ≤ N (the seasonal of the same position in the last cycle).
// Â depends on adjusted_method:
//
//	drift  Â_{N+h} = A_N + h·(A_N − A_1)/(N − 1)
//	ses    Â_{N+h} = ℓ_N, from ℓ_1 = A_1, ℓ_v = ℓ_{v−1} + α(A_v − ℓ_{v−1}),
//	       with α ∈ [0, 1] minimising Σ_{v=2}^{N} (A_v − ℓ_{v−1})²
//	       (the start of R's HoltWinters(beta = FALSE, gamma = FALSE)).
//
// α is found by the level-only fit of the exponential smoothing core
// (esLevelFit, shared with theta): a grid over [0, 1] in steps of 0.05,
// then Brent's search between the grid points around the best one, and
// the bounds compared when that bracket reaches them.
// The fitted model also implements Described and Decomposed.
//
// # Options (registered name "stl")
//
//	seasonal_window  odd int ≥ 7, or "periodic" (default "periodic")
//	seasonal_degree  0 or 1 (default 0); must be 0 with "periodic"
//	trend_window     odd int ≥ 3 (default n_t above)
//	trend_degree     0 or 1 (default 1); also the low-pass degree d_l
//	lowpass_window   odd int ≥ 3 (default nextodd(m))
//	robust           bool (default false); with true, the robustness passes
//	inner            int 1…100 (default 2, or 1 when robust)
//	outer            int; 0 when not robust, 1…100 when robust (default
//	                 0, or 15 when robust): the number of robustness passes
//	adjusted_method  drift or ses (default ses)
//	seasonal         auto (default): when AutoSeasonal (the lag-m
//	                 autocorrelation test at 90%, or the seasonal strength
//	                 backed by an F test) finds no season, the
//	                 forecast drops the seasonal component (S ≡ 0, the
//	                 adjusted series is y itself, forecast by drift or
//	                 SES) and Describe says "stl(no season; seasonality
//	                 test; adjusted=…)"; always: the seasonal form
//	                 without testing. Decompose never tests.
//
// References:
//   - R. B. Cleveland, W. S. Cleveland, J. E. McRae and I. Terpenning
//     (1990), STL: A Seasonal-Trend Decomposition Procedure Based on
//     Loess, Journal of Official Statistics 6(1), 3–73.
//   - W. S. Cleveland (1979), Robust Locally Weighted Regression and
//     Smoothing Scatterplots, Journal of the American Statistical
//     Association 74(368), 829–836.
//   - W. S. Cleveland (1981), LOWESS: A Program for Smoothing Scatterplots
//     by Robust Locally Weighted Regression, The American Statistician
//     35(1), 54.
//   - R Core Team, R documentation of stats::stl and stats::HoltWinters,
//     the reference implementations checked in stl_test.go.
type STL struct {
	periodic bool
	sWindow  int // 0 when periodic
	sDegree  int
	tWindow  int // 0: default from the formula
	tDegree  int
	lWindow  int // 0: nextodd(m)
	robust   bool
	inner    int
	outer    int
	adjusted stlAdjusted
	swDescr  string // "periodic" or the window
	always   bool   // seasonal: always (false: auto)
}

var (
	_ Method     = (*STL)(nil)
	_ Decomposer = (*STL)(nil)
	_ Fitted     = (*stlFit)(nil)
	_ Described  = (*stlFit)(nil)
	_ Decomposed = (*stlFit)(nil)
)

type stlAdjusted uint8

const (
	stlAdjustedSES stlAdjusted = iota
	stlAdjustedDrift
)

var stlAdjustedNames = []string{"ses", "drift"}

// stlOptionNames lists the options NewSTL accepts.
var stlOptionNames = []string{
	"seasonal_window", "seasonal_degree", "trend_window", "trend_degree",
	"lowpass_window", "robust", "inner", "outer", "adjusted_method", "seasonal",
}

func init() {
	Register("stl", func(o Options) (Method, error) { return NewSTL(o) })
}

// NewSTL returns the STL method with the given options (see STL); an
// absent option takes its default.
func NewSTL(o Options) (*STL, error) {
	for k := range o {
		if !slices.Contains(stlOptionNames, k) {
			return nil, fmt.Errorf("stl: unknown option %q (want one of seasonal_window, seasonal_degree, trend_window, trend_degree, lowpass_window, robust, inner, outer, adjusted_method, seasonal)", k)
		}
	}
	s := &STL{periodic: true, tDegree: 1, swDescr: "periodic"}

	if v, ok := o["seasonal_window"]; ok {
		if str, isStr := v.(string); isStr {
			if str != "periodic" {
				return nil, fmt.Errorf("stl: seasonal_window %q: want \"periodic\" or an odd integer ≥ 7", str)
			}
		} else {
			w, err := stlInt("seasonal_window", v)
			if err != nil {
				return nil, err
			}
			if w < 7 || w%2 == 0 {
				return nil, fmt.Errorf("stl: seasonal_window %d: want \"periodic\" or an odd integer ≥ 7", w)
			}
			s.periodic, s.sWindow, s.swDescr = false, w, strconv.Itoa(w)
		}
	}
	var err error
	if s.sDegree, err = stlDegree(o, "seasonal_degree", 0); err != nil {
		return nil, err
	}
	if s.periodic && s.sDegree != 0 {
		return nil, fmt.Errorf("stl: seasonal_degree 1 needs a numeric seasonal_window; \"periodic\" uses degree 0")
	}
	if s.tDegree, err = stlDegree(o, "trend_degree", 1); err != nil {
		return nil, err
	}
	for _, w := range []struct {
		name string
		dst  *int
	}{{"trend_window", &s.tWindow}, {"lowpass_window", &s.lWindow}} {
		v, ok := o[w.name]
		if !ok {
			continue
		}
		n, err := stlInt(w.name, v)
		if err != nil {
			return nil, err
		}
		if n < 3 || n%2 == 0 {
			return nil, fmt.Errorf("stl: %s %d: want an odd integer ≥ 3", w.name, n)
		}
		*w.dst = n
	}
	if v, ok := o["robust"]; ok {
		b, isBool := v.(bool)
		if !isBool {
			return nil, fmt.Errorf("stl: option robust must be true or false, got %T", v)
		}
		s.robust = b
	}
	s.inner, s.outer = 2, 0
	if s.robust {
		s.inner, s.outer = 1, 15
	}
	if v, ok := o["inner"]; ok {
		if s.inner, err = stlInt("inner", v); err != nil {
			return nil, err
		}
		if s.inner < 1 || s.inner > 100 {
			return nil, fmt.Errorf("stl: inner %d: want an integer from 1 to 100", s.inner)
		}
	}
	if v, ok := o["outer"]; ok {
		if s.outer, err = stlInt("outer", v); err != nil {
			return nil, err
		}
		switch {
		case !s.robust && s.outer != 0:
			return nil, fmt.Errorf("stl: outer %d: robustness passes need robust: true (want outer 0 when not robust)", s.outer)
		case s.robust && (s.outer < 1 || s.outer > 100):
			return nil, fmt.Errorf("stl: outer %d: want an integer from 1 to 100 when robust", s.outer)
		}
	}
	if s.always, err = seasonalMode("stl", o); err != nil {
		return nil, err
	}
	if v, ok := o["adjusted_method"]; ok {
		str, isStr := v.(string)
		i := slices.Index(stlAdjustedNames, str)
		if !isStr || i < 0 {
			return nil, fmt.Errorf("stl: adjusted_method %v: want ses or drift", v)
		}
		s.adjusted = stlAdjusted(i)
	}
	return s, nil
}

func (s *STL) Name() string { return "stl" }

// NeedsComplete reports true: the pipeline fills gaps before fitting (see
// CompleteNeeder).
func (s *STL) NeedsComplete() bool { return true }

// stlParams are the settings of one decomposition, resolved for a series.
type stlParams struct {
	m                      int
	sWindow, tWindow, lWin int
	sDegree, tDegree       int
	sJump, tJump, lJump    int
	inner, outer           int
	periodic               bool
}

// resolve fills in the defaults that depend on the series.
func (s *STL) resolve(n, m int) stlParams {
	p := stlParams{
		m: m, sWindow: s.sWindow, tWindow: s.tWindow, lWin: s.lWindow,
		sDegree: s.sDegree, tDegree: s.tDegree,
		inner: s.inner, outer: s.outer, periodic: s.periodic,
	}
	if p.periodic {
		p.sWindow, p.sDegree = 10*n+1, 0
	}
	if p.tWindow == 0 {
		p.tWindow = stlNextOdd(math.Ceil(1.5 * float64(m) / (1 - 1.5/float64(p.sWindow))))
	}
	if p.lWin == 0 {
		p.lWin = stlNextOdd(float64(m))
	}
	jump := func(w int) int { return (w + 9) / 10 }
	p.sJump, p.tJump, p.lJump = jump(p.sWindow), jump(p.tWindow), jump(p.lWin)
	return p
}

// stlNextOdd rounds x and adds 1 if the result is even.
func stlNextOdd(x float64) int {
	k := int(math.Round(x))
	if k%2 == 0 {
		k++
	}
	return k
}

// stlCheck returns an error for a series STL cannot decompose.
func stlCheck(y []float64, m int) error {
	n := len(y)
	if m < 2 {
		return fmt.Errorf("stl: season length %d; needs a season of at least 2", m)
	}
	missing := 0
	for _, v := range y {
		if v != v {
			missing++
		} else if math.IsInf(v, 0) {
			return fmt.Errorf("stl: series holds an infinite value")
		}
	}
	switch {
	case n == 0:
		return fmt.Errorf("stl: empty series; needs at least %d values (2 seasons of %d): %w", 2*m, m, ErrTooShort)
	case missing == n:
		return fmt.Errorf("stl: %w", ErrAllMissing)
	case missing > 0:
		return fmt.Errorf("stl: %d missing values; STL needs a complete series", missing)
	case n < 2*m:
		return fmt.Errorf("stl: %d values; needs at least %d (2 seasons of %d): %w", n, 2*m, m, ErrTooShort)
	}
	return nil
}

// Decompose returns the STL decomposition of y (see STL).
func (s *STL) Decompose(y []float64, season int) (*Decomposition, error) {
	if err := stlCheck(y, season); err != nil {
		return nil, err
	}
	d := new(Decomposition)
	stlDecompose(d, y, s.resolve(len(y), season), nil)
	return d, nil
}

// Fit decomposes y and fits the forecast of its adjusted series (see STL).
func (s *STL) Fit(y []float64, season int) (Fitted, error) {
	if err := stlCheck(y, season); err != nil {
		return nil, err
	}
	p := s.resolve(len(y), season)
	f := &stlFit{}
	stlDecompose(&f.d, y, p, nil)
	season0 := ""
	if !s.always && noSeason(y, season) {
		dropSeason(&f.d, y)
		season0 = "no season; "
	}
	a := f.d.Adjusted
	n := len(a)
	var adj string
	switch s.adjusted {
	case stlAdjustedDrift:
		f.level, f.slope = a[n-1], (a[n-1]-a[0])/float64(n-1)
		adj = "drift"
	case stlAdjustedSES:
		var alpha float64
		alpha, f.level = stlSES(a)
		adj = "ses(alpha=" + strconv.FormatFloat(alpha, 'g', 4, 64) + ")"
	default:
		panic(fmt.Sprintf("engines: stl: unknown adjusted method %d", s.adjusted))
	}
	if season0 != "" {
		f.describe = "stl(no season; seasonality test; adjusted=" + adj + ")"
		return f, nil
	}
	f.describe = fmt.Sprintf("stl(seasonal_window=%s, seasonal_degree=%d, trend_window=%d, trend_degree=%d, lowpass_window=%d, robust=%t, inner=%d, outer=%d; adjusted=%s)",
		s.swDescr, p.sDegree, p.tWindow, p.tDegree, p.lWin, s.robust, p.inner, p.outer, adj)
	return f, nil
}

// stlDecompose fills d from the complete series y. If weights is not nil
// (len(y)), it receives the robustness weights of the last pass (all 1
// without robustness passes). It allocates the outputs as one block and
// the scratch space as another.
func stlDecompose(d *Decomposition, y []float64, p stlParams, weights []float64) {
	n, m := len(y), p.m
	out := make([]float64, 4*n+m)
	trend := out[0:n:n]
	seasonal := out[n : 2*n : 2*n]
	remainder := out[2*n : 3*n : 3*n]
	adjusted := out[3*n : 4*n : 4*n]
	factors := out[4*n : 4*n+m : 4*n+m]
	counts := make([]int, m)
	*d = Decomposition{
		Form:  FormAdditive,
		Trend: trend, Seasonal: seasonal, Remainder: remainder, Adjusted: adjusted,
		Factors: factors, Counts: counts,
	}

	// Scratch. remainder and adjusted serve as scratch during the loops.
	kmax := (n + m - 1) / m
	scratch := make([]float64, 5*n+3*m+3+3*(kmax+2))
	take := func(k int) []float64 {
		b := scratch[:k:k]
		scratch = scratch[k:]
		return b
	}
	rw := take(n)            // robustness weights
	c := take(n + 2*m)       // smoothed cycle-subseries, C_{1−m} … C_{N+m}
	ma := take(n + m + 1)    // moving averages of c, then of ma2
	ma2 := take(n + 2)       // moving averages of ma
	low := take(n)           // low-pass filtered C
	sub := take(kmax + 2)    // one cycle-subseries
	subW := take(kmax + 2)   // its robustness weights
	subFit := take(kmax + 2) // its smooth, extended by one at each end
	detr := adjusted         // y − T, then y − S
	sortBuf := remainder

	for i := range trend {
		trend[i] = 0
	}
	var useRW []float64 // nil: unit weights
	for pass := 0; pass <= p.outer; pass++ {
		if pass > 0 {
			stlRobustnessWeights(y, trend, seasonal, rw, sortBuf)
			useRW = rw
		}
		for it := 0; it < p.inner; it++ {
			for i, v := range y {
				detr[i] = v - trend[i]
			}
			// Cycle-subseries smoothing into c.
			for j := 0; j < m; j++ {
				k := 0
				for i := j; i < n; i += m {
					sub[k] = detr[i]
					if useRW != nil {
						subW[k] = useRW[i]
					}
					k++
				}
				var sw []float64
				if useRW != nil {
					sw = subW[:k]
				}
				stlSubseries(sub[:k], sw, p.sWindow, p.sDegree, p.sJump, subFit[:k+2])
				for t := 0; t < k+2; t++ {
					c[j+t*m] = subFit[t]
				}
			}
			// Low-pass filter of c.
			stlMovingAverage(c, m, ma)
			stlMovingAverage(ma, m, ma2)
			stlMovingAverage(ma2, 3, ma[:n])
			stlLoessSmooth(ma[:n], nil, p.lWin, p.tDegree, p.lJump, low)
			// Seasonal, deseasonalised series and trend.
			for i := range seasonal {
				seasonal[i] = c[m+i] - low[i]
				detr[i] = y[i] - seasonal[i]
			}
			stlLoessSmooth(detr, useRW, p.tWindow, p.tDegree, p.tJump, trend)
		}
	}
	if weights != nil {
		if useRW == nil {
			for i := range weights {
				weights[i] = 1
			}
		} else {
			copy(weights, useRW)
		}
	}

	// Factors: per-position means of the seasonal.
	for j := 0; j < m; j++ {
		var sum float64
		k := 0
		for i := j; i < n; i += m {
			sum += seasonal[i]
			k++
		}
		factors[j], counts[j] = sum/float64(k), k
	}
	if p.periodic {
		for i := range seasonal {
			seasonal[i] = factors[i%m]
		}
	}
	var total float64
	for _, f := range factors {
		total += f
	}
	mean := total / float64(m)
	for j := range factors {
		factors[j] -= mean
	}
	for i, v := range y {
		remainder[i] = v - trend[i] - seasonal[i]
		adjusted[i] = v - seasonal[i]
	}
}

// stlSES fits simple exponential smoothing to y (len ≥ 2; see STL) with
// the level-only fit of the smoothing core (esLevelFit, α ∈ [0, 1]) and
// returns α and the final level ℓ_N.
func stlSES(y []float64) (alpha, level float64) {
	alpha, level, _ = esLevelFit(y, 0, 1, stlSESIterations)
	return alpha, level
}

// stlSESIterations caps Brent's search in stlSES; on the smooth sum of
// squares of an adjusted series it converges in a few dozen.
const stlSESIterations = 200

// stlFit is a fitted STL forecast.
type stlFit struct {
	d            Decomposition
	level, slope float64 // Â_{N+h} = level + h·slope
	describe     string
}

// Forecast returns the forecasts for the h periods after the training data.
// It panics if h < 0.
func (f *stlFit) Forecast(h int) []float64 {
	if h < 0 {
		panic(fmt.Sprintf("engines: stl: negative horizon %d", h))
	}
	s := f.d.Seasonal
	n, m := len(s), len(f.d.Factors)
	out := make([]float64, h)
	j := n - m // index of the seasonal for period N+1
	for k := range out {
		out[k] = f.level + float64(k+1)*f.slope + s[j]
		if j++; j == n {
			j = n - m
		}
	}
	return out
}

// Components returns the decomposition the model was fitted on. The caller
// must not modify it.
func (f *stlFit) Components() *Decomposition { return &f.d }

// Describe names the fitted settings, for example
// "stl(seasonal_window=periodic, seasonal_degree=0, trend_window=19,
// trend_degree=1, lowpass_window=13, robust=false, inner=2, outer=0;
// adjusted=ses(alpha=0.4321))".
func (f *stlFit) Describe() string { return f.describe }
