package engines

import (
	"fmt"
	"math"
	"slices"
	"strings"
)

// Classical is classical seasonal decomposition by centred moving averages,
// and the forecast built on it: the trend projected forward, recombined with
// the seasonal factor of each forecast period.
//
// With season length m and the series y_t, t = 1…n (y[0] is t = 1):
//
//	trend       T_t = (½y_{t−k} + y_{t−k+1} + … + y_{t+k−1} + ½y_{t+k}) / m   for even m = 2k
//	            T_t = (y_{t−k} + … + y_{t+k}) / m                             for odd m = 2k+1
//	            NaN for t ≤ k and t > n−k, and wherever the window holds a NaN
//	detrended   D_t = y_t / T_t (multiplicative)   or   y_t − T_t (additive)
//	raw factor  f_j = mean (or median) of the non-NaN D_t with (t−1) mod m = j
//	factor      F_j = f_j / mean(f)                or   f_j − mean(f)
//	seasonal    S_t = F_{(t−1) mod m}
//	remainder   R_t = y_t / S_t / T_t              or   y_t − S_t − T_t
//	adjusted    A_t = y_t / S_t                    or   y_t − S_t
//
// With mean averaging this is the computation of R's stats::decompose
// (the tests agree with it to about 1e-12), except that stats::decompose
// refuses internal missing values and Classical accepts them as above.
//
// The forecast for period t = n+1…n+h is P(t) × F_{(t−1) mod m} (or
// P(t) + F_{(t−1) mod m} in the additive form), where the projected trend
// P depends on the trend option:
//
//	adjusted_line  P(t) = a + b·t, the ordinary least-squares line through
//	               the non-NaN (t, A_t)
//	trend_line     P(t) = a + b·t, the ordinary least-squares line through
//	               the non-NaN (t, T_t)
//	trend_step     P(t) = T_L + (t − L)·(T_L − T_F)/(L − F), where F and L
//	               are the first and last t with T_t defined: the average
//	               change per period of the moving average, stepped forward
//	               from its last value (which sits k periods before the end)
//	trend_flat     P(t) = T_L
//
// The fitted model also implements Described, Warner and Decomposed.
//
// Options, as strings (registered name "classical"; for NewClassical an
// empty string means the default):
//
//	form     multiplicative (default) or additive. The multiplicative form
//	         needs every observed value > 0; given a value ≤ 0 Classical
//	         uses the additive form and says so in a warning and in
//	         Describe.
//	trend    adjusted_line (default), trend_line, trend_step or trend_flat
//	average  mean (default) or median
//	seasonal auto (default): when AutoSeasonal (the lag-m autocorrelation
//	         test at 90%, or the seasonal strength backed by an F test)
//	         finds no season, the forecast uses the
//	         non-seasonal form — factors 1 (multiplicative) or 0
//	         (additive), so the projected trend alone, through the series
//	         itself for adjusted_line — and Describe says so, e.g.
//	         "classical(no season by the seasonality test; multiplicative,
//	         trend=adjusted_line, average=mean)"; always:
//	         the seasonal form without testing. Decompose (the
//	         decomposition stage) never tests.
//
// The season length must be at least 2 and the series must hold at least
// two full seasons of observed values (as stats::decompose demands);
// missing values must leave at least one detrended value at every season
// position.
//
// References:
//   - M. Kendall and A. Stuart (1983), The Advanced Theory of Statistics,
//     vol. 3, Griffin, pp. 410–414.
//   - S. Makridakis, S. C. Wheelwright and R. J. Hyndman (1998),
//     Forecasting: Methods and Applications, 3rd ed., Wiley, chapter 3
//     (time series decomposition).
//   - R Core Team, R documentation of stats::decompose, the reference
//     implementation checked in classical_test.go.
type Classical struct {
	form    classicalForm
	trend   classicalTrend
	average classicalAverage

	// always: fit the seasonal form without the seasonality test
	// (seasonal: always); false is seasonal: auto.
	always bool

	// Precomputed Describe strings: as asked, and after falling back from
	// multiplicative to additive.
	describe, describeFallback string
}

var (
	_ Method     = (*Classical)(nil)
	_ Decomposer = (*Classical)(nil)
	_ Fitted     = (*classicalFit)(nil)
	_ Described  = (*classicalFit)(nil)
	_ Warner     = (*classicalFit)(nil)
	_ Decomposed = (*classicalFit)(nil)
)

type classicalForm uint8

const (
	classicalMultiplicative classicalForm = iota
	classicalAdditive
)

var classicalFormNames = []string{FormMultiplicative, FormAdditive}

type classicalTrend uint8

const (
	classicalAdjustedLine classicalTrend = iota
	classicalTrendLine
	classicalTrendStep
	classicalTrendFlat
)

var classicalTrendNames = []string{"adjusted_line", "trend_line", "trend_step", "trend_flat"}

type classicalAverage uint8

const (
	classicalMean classicalAverage = iota
	classicalMedian
)

var classicalAverageNames = []string{"mean", "median"}

func init() {
	Register("classical", func(o Options) (Method, error) {
		for k := range o {
			if k != "form" && k != "trend" && k != "average" && k != "seasonal" {
				return nil, fmt.Errorf("classical: unknown option %q (want form, trend, average or seasonal)", k)
			}
		}
		always, err := seasonalMode("classical", o)
		if err != nil {
			return nil, err
		}
		var opt [3]string
		for i, k := range []string{"form", "trend", "average"} {
			v, ok := o[k]
			if !ok {
				continue
			}
			s, ok := v.(string)
			if !ok {
				return nil, fmt.Errorf("classical: option %s must be a string, got %T", k, v)
			}
			opt[i] = s
		}
		c, err := NewClassical(opt[0], opt[1], opt[2])
		if err != nil {
			return nil, err
		}
		c.always = always // the registered method defaults to seasonal: auto
		return c, nil
	})
}

// NewClassical returns the classical method with the given form, trend
// projection and averaging (see Classical); an empty string selects the
// default. It always fits the seasonal form (seasonal: always); the method
// registered as "classical" defaults to seasonal: auto.
func NewClassical(form, trend, average string) (*Classical, error) {
	c := &Classical{always: true}
	var err error
	if c.form, err = classicalPick[classicalForm]("form", form, classicalFormNames); err != nil {
		return nil, err
	}
	if c.trend, err = classicalPick[classicalTrend]("trend", trend, classicalTrendNames); err != nil {
		return nil, err
	}
	if c.average, err = classicalPick[classicalAverage]("average", average, classicalAverageNames); err != nil {
		return nil, err
	}
	tail := ", trend=" + classicalTrendNames[c.trend] + ", average=" + classicalAverageNames[c.average]
	c.describe = "classical(" + classicalFormNames[c.form] + tail + ")"
	c.describeFallback = "classical(" + FormAdditive + tail + "; fell back from multiplicative)"
	return c, nil
}

// classicalPick returns the index of v in names; "" means names[0].
func classicalPick[T ~uint8](what, v string, names []string) (T, error) {
	if v == "" {
		return 0, nil
	}
	for i, n := range names {
		if v == n {
			return T(i), nil
		}
	}
	return 0, fmt.Errorf("classical: unknown %s %q (want %s)", what, v, strings.Join(names, ", "))
}

// Name returns "classical".
func (c *Classical) Name() string { return "classical" }

// NeedsComplete reports true: the pipeline fills gaps before fitting (see
// CompleteNeeder).
func (c *Classical) NeedsComplete() bool { return true }

// Decompose returns the classical decomposition of y (see Classical).
func (c *Classical) Decompose(y []float64, season int) (*Decomposition, error) {
	d := new(Decomposition)
	if err := c.decompose(d, y, season); err != nil {
		return nil, err
	}
	return d, nil
}

// Fit decomposes y and projects its trend (see Classical).
func (c *Classical) Fit(y []float64, season int) (Fitted, error) {
	f := &classicalFit{n: len(y), describe: c.describe}
	if err := c.decompose(&f.d, y, season); err != nil {
		return nil, err
	}
	f.mult = f.d.Form == FormMultiplicative
	if c.form == classicalMultiplicative && !f.mult {
		f.describe = c.describeFallback
	}
	if !c.always && noSeason(y, season) {
		dropSeason(&f.d, y)
		f.describe = "classical(no season by the seasonality test; " + strings.TrimPrefix(f.describe, "classical(")
	}
	f.project(c.trend)
	return f, nil
}

// decompose fills d. It allocates the four series and the factors as one
// block, and the counts.
func (c *Classical) decompose(d *Decomposition, y []float64, m int) error {
	n := len(y)
	if m < 2 {
		return fmt.Errorf("classical: season length %d; needs a season of at least 2", m)
	}
	observed, nonPositive := 0, 0
	for _, v := range y {
		if v == v {
			observed++
			if v <= 0 {
				nonPositive++
			}
		}
	}
	switch {
	case n == 0:
		return fmt.Errorf("classical: empty series; needs at least %d values (2 seasons of %d): %w", 2*m, m, ErrTooShort)
	case observed == 0:
		return fmt.Errorf("classical: %w", ErrAllMissing)
	case observed < 2*m:
		return fmt.Errorf("classical: %d observed values; needs at least %d (2 seasons of %d): %w", observed, 2*m, m, ErrTooShort)
	}

	mult := c.form == classicalMultiplicative
	d.Form = FormMultiplicative
	if mult && nonPositive > 0 {
		mult = false
		d.Warnings = []string{fmt.Sprintf("classical: multiplicative form needs strictly positive values; found %d values ≤ 0; used additive", nonPositive)}
	}
	if !mult {
		d.Form = FormAdditive
	}

	buf := make([]float64, 4*n+m)
	trend := buf[0:n:n]
	seasonal := buf[n : 2*n : 2*n]
	remainder := buf[2*n : 3*n : 3*n]
	adjusted := buf[3*n : 4*n : 4*n]
	factors := buf[4*n : 4*n+m : 4*n+m]
	counts := make([]int, m)
	d.Trend, d.Seasonal, d.Remainder, d.Adjusted = trend, seasonal, remainder, adjusted
	d.Factors, d.Counts = factors, counts

	classicalMovingAverage(y, m, trend)

	// Detrended values go into remainder for now; adjusted serves as
	// scratch for the median.
	detrended := remainder
	for i, v := range y {
		if mult {
			detrended[i] = v / trend[i]
		} else {
			detrended[i] = v - trend[i]
		}
	}
	var total float64
	for j := 0; j < m; j++ {
		var s float64
		k := 0
		for i := j; i < n; i += m {
			if v := detrended[i]; v == v {
				adjusted[k] = v
				s += v
				k++
			}
		}
		if k == 0 {
			return fmt.Errorf("classical: no detrended value at season position %d of %d (counted from the first value); missing values leave the moving average undefined there: %w", j+1, m, ErrTooShort)
		}
		counts[j] = k
		if c.average == classicalMedian {
			factors[j] = classicalMedianOf(adjusted[:k])
		} else {
			factors[j] = s / float64(k)
		}
		total += factors[j]
	}
	meanFactor := total / float64(m)
	for j := range factors {
		if mult {
			factors[j] /= meanFactor
		} else {
			factors[j] -= meanFactor
		}
	}

	// remainder still holds the detrended values: remainder = detrended ÷
	// factor (or − factor). Multiplying by the factor's reciprocal keeps
	// divisions to one per position.
	if mult {
		var invBuf [64]float64
		var invs []float64
		if m > len(invBuf) {
			invs = make([]float64, m)
		} else {
			invs = invBuf[:m]
		}
		for j, f := range factors {
			invs[j] = 1 / f
		}
		j := 0
		for i, v := range y {
			seasonal[i] = factors[j]
			remainder[i] *= invs[j]
			adjusted[i] = v * invs[j]
			if j++; j == m {
				j = 0
			}
		}
		return nil
	}
	j := 0
	for i, v := range y {
		s := factors[j]
		seasonal[i] = s
		remainder[i] -= s
		adjusted[i] = v - s
		if j++; j == m {
			j = 0
		}
	}
	return nil
}

// classicalMovingAverage writes the centred moving average of order m of y
// into out (len(y)): the 2×m average for even m, the plain m average for odd
// m; NaN where the window runs off the series or holds a NaN.
//
// The sum over the window's inner part is carried from one period to the
// next (one value in, one out) and summed afresh every m periods, so the
// cost is O(n) and rounding cannot build up; NaNs are counted rather than
// summed.
func classicalMovingAverage(y []float64, m int, out []float64) {
	n := len(y)
	k := m / 2
	nan := math.NaN()
	div := float64(m)
	even := m%2 == 0
	// The inner window of period i is y[i-k+lo : i+k+1-lo]: lo = 1 for
	// even m (the two ends enter with weight ½ separately), 0 for odd m.
	lo := 0
	if even {
		lo = 1
	}
	for i := 0; i < min(k, n); i++ {
		out[i] = nan
	}
	for i := max(n-k, k); i < n; i++ {
		out[i] = nan
	}
	var sum float64
	var nans int
	fresh := func(i int) {
		sum, nans = 0, 0
		for _, v := range y[i-k+lo : i+k+1-lo] {
			if v != v {
				nans++
			} else {
				sum += v
			}
		}
	}
	for i := k; i < n-k; i++ {
		if (i-k)%m == 0 {
			fresh(i)
		} else {
			if v := y[i-k+lo-1]; v != v {
				nans--
			} else {
				sum -= v
			}
			if v := y[i+k-lo]; v != v {
				nans++
			} else {
				sum += v
			}
		}
		s := sum
		if even {
			a, b := y[i-k], y[i+k]
			if a != a || b != b {
				out[i] = nan
				continue
			}
			s += 0.5*a + 0.5*b
		}
		if nans > 0 {
			out[i] = nan
			continue
		}
		out[i] = s / div
	}
}

// classicalMedianOf returns the median of v, reordering v.
func classicalMedianOf(v []float64) float64 {
	slices.Sort(v)
	k := len(v)
	if k%2 == 1 {
		return v[k/2]
	}
	return (v[k/2-1] + v[k/2]) / 2
}

// classicalFit is a fitted classical model.
type classicalFit struct {
	d        Decomposition
	n        int
	mult     bool
	describe string

	// Projected trend: P(t) = base + slope·(t − t0), t 1-based.
	base, slope, t0 float64
}

// project sets the trend projection from the decomposition.
func (f *classicalFit) project(how classicalTrend) {
	switch how {
	case classicalAdjustedLine:
		f.t0, f.base, f.slope = classicalLine(f.d.Adjusted)
	case classicalTrendLine:
		f.t0, f.base, f.slope = classicalLine(f.d.Trend)
	case classicalTrendStep, classicalTrendFlat:
		first, last := -1, -1
		for i, v := range f.d.Trend {
			if v == v {
				if first < 0 {
					first = i
				}
				last = i
			}
		}
		// decompose guarantees at least m ≥ 2 defined trend values.
		f.t0, f.base = float64(last+1), f.d.Trend[last]
		if how == classicalTrendStep && last > first {
			f.slope = (f.d.Trend[last] - f.d.Trend[first]) / float64(last-first)
		}
	default:
		panic(fmt.Sprintf("engines: classical: unknown trend projection %d", how))
	}
}

// classicalLine fits the ordinary least-squares line v = base + slope·(t − t0)
// through the non-NaN v[i], t = i+1, centred at the mean t0 of those t (so
// base is the mean of those v). With fewer than two distinct t the slope is 0.
func classicalLine(v []float64) (t0, base, slope float64) {
	var st, sv float64
	k := 0
	for i, x := range v {
		if x == x {
			st += float64(i + 1)
			sv += x
			k++
		}
	}
	if k == 0 {
		return 0, math.NaN(), 0
	}
	t0, base = st/float64(k), sv/float64(k)
	var sxx, sxy float64
	for i, x := range v {
		if x == x {
			dt := float64(i+1) - t0
			sxx += dt * dt
			sxy += dt * (x - base)
		}
	}
	if sxx > 0 {
		slope = sxy / sxx
	}
	return t0, base, slope
}

// Forecast returns the forecasts for the h periods after the training data.
// It panics if h < 0.
func (f *classicalFit) Forecast(h int) []float64 {
	if h < 0 {
		panic(fmt.Sprintf("engines: classical: negative horizon %d", h))
	}
	out := make([]float64, h)
	m := len(f.d.Factors)
	j := f.n % m // season position of t = n+1
	for s := range out {
		t := float64(f.n + 1 + s)
		p := f.base + f.slope*(t-f.t0)
		if f.mult {
			out[s] = p * f.d.Factors[j]
		} else {
			out[s] = p + f.d.Factors[j]
		}
		if j++; j == m {
			j = 0
		}
	}
	return out
}

// Components returns the decomposition the model was fitted on. The caller
// must not modify it.
func (f *classicalFit) Components() *Decomposition { return &f.d }

// Describe names the fitted form, for example
// "classical(multiplicative, trend=adjusted_line, average=mean)".
func (f *classicalFit) Describe() string { return f.describe }

// Warnings returns the caveats met while fitting, if any.
func (f *classicalFit) Warnings() []string { return f.d.Warnings }
