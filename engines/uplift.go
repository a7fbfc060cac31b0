package engines

import (
	"fmt"
	"math"
)

// Driver uplifts for short series: a multiplicative effect per driver
// (holiday, promotion, price change) estimated on the history against a
// local baseline, for series too short for a regression with ARIMA errors.
//
// Model: y_t = b_t · Π_j (1 + (u_j − 1)·x_{j,t}) + noise, with b_t the
// demand the series would have had without any driver and x_{j,t} the
// value of driver j (0 = off; 1 = on, the usual case; other values scale
// the effect linearly, so a half-strength promotion gets half the uplift).
//
// Baseline: for each period t where some driver is on, b_t is the mean of
// the observed values at the same season position (t ± m, t ± 2m, …, up to
// UpliftBaselineSeasons seasons each way) in periods where no driver is on;
// without a season (m < 2), or when fewer than two such values exist, the
// mean of the nearest UpliftBaselineNeighbours observed driver-free periods
// on each side. Comparing like with like (the same weekday, say) keeps the
// seasonal pattern out of the uplift; the local window keeps the level's
// drift out.
//
// Estimate: u_j − 1 is the least-squares slope of y_t − b_t on x_{j,t}·b_t
// over the periods where driver j is on alone (no other driver on), which
// for an on/off driver is the ratio of sums
//
//	u_j = Σ y_t / Σ b_t  over the periods with driver j on,
//
// robust to zero sales (a ratio of means rather than a mean of ratios).
// A driver that is never on alone is estimated over the periods it shares
// with others, with the others' estimates divided out (one pass, in driver
// order), and a warning. A driver never on (or whose periods have no
// baseline) gets u_j = 1 and a warning. u_j is kept ≥ 0.
//
// Scope: short events (days or weeks on, then off). A driver that stays on
// for a long stretch (a permanent price change) finds its baseline far
// away in time, where the level may differ; such drivers belong in the
// regression with ARIMA errors.
//
// Use: divide the history by the fitted factors (Adjusted) to get a
// driver-free series for any method, forecast it, and multiply the
// forecast by the factors of the future driver values (Apply).
//
// References: common practice in demand planning (a "lift factor" per
// promotion against a baseline of comparable unpromoted periods); the
// ratio-of-sums form is the ratio estimator of survey sampling
// (Cochran, W. G. (1977). Sampling Techniques, 3rd ed., Wiley, ch. 6).
type UpliftFit struct {
	uplift   []float64
	periods  []int // periods each uplift was estimated on
	factors  []float64
	adjusted []float64
	warn     []string
	names    []string
}

// UpliftBaselineSeasons is how many seasons on each side the baseline of a
// driver period looks; UpliftBaselineNeighbours how many driver-free
// periods on each side it takes without a season.
const (
	UpliftBaselineSeasons    = 4
	UpliftBaselineNeighbours = 4
)

// FitUplifts estimates one multiplicative uplift per driver (see
// UpliftFit). x holds one column per driver, each as long as y, finite and
// ≥ 0; names (optional) name them in errors and warnings. NaN in y marks a
// missing value.
func FitUplifts(y []float64, x [][]float64, season int, names []string) (*UpliftFit, error) {
	if len(names) == 0 {
		names = make([]string, len(x))
		for j := range names {
			names[j] = fmt.Sprintf("x%d", j+1)
		}
	}
	if len(names) != len(x) {
		return nil, fmt.Errorf("uplift: %d names for %d drivers", len(names), len(x))
	}
	if err := upliftCheck(x, len(y), names, "driver"); err != nil {
		return nil, err
	}
	if arimaCountObserved(y) == 0 {
		return nil, ErrAllMissing
	}
	n := len(y)
	base := upliftBaselines(y, x, season)
	f := &UpliftFit{uplift: make([]float64, len(x)), periods: make([]int, len(x)), names: names}
	for j := range x {
		f.uplift[j] = 1
	}
	// Pass 1: periods where driver j is on alone. Pass 2: drivers never on
	// alone, over shared periods with the earlier estimates divided out.
	var needShared []int
	for j := range x {
		if !f.estimate(y, x, base, j, false) {
			needShared = append(needShared, j)
		}
	}
	for _, j := range needShared {
		if f.estimate(y, x, base, j, true) {
			f.warn = append(f.warn, fmt.Sprintf("uplift: driver %s is never on alone; estimated over periods shared with other drivers", names[j]))
		} else {
			f.warn = append(f.warn, fmt.Sprintf("uplift: driver %s has no period with a baseline to estimate from; uplift 1", names[j]))
		}
	}
	f.factors = f.factorsOf(x, n)
	f.adjusted = make([]float64, n)
	for t, v := range y {
		switch {
		case math.IsNaN(v):
			f.adjusted[t] = math.NaN()
		case f.factors[t] > 0:
			f.adjusted[t] = v / f.factors[t]
		default:
			// A driver that removes all demand (u = 0): nothing to learn
			// about the baseline from this period.
			f.adjusted[t] = math.NaN()
		}
	}
	return f, nil
}

func upliftCheck(x [][]float64, n int, names []string, what string) error {
	for j, c := range x {
		if len(c) != n {
			return fmt.Errorf("uplift: %s %s has %d values, want %d", what, names[j], len(c), n)
		}
		for t, v := range c {
			if math.IsNaN(v) || math.IsInf(v, 0) || v < 0 {
				return fmt.Errorf("uplift: %s %s has value %v at position %d (want finite, ≥ 0)", what, names[j], v, t)
			}
		}
	}
	return nil
}

// upliftBaseline is b_t (see UpliftFit), NaN when no baseline exists.
func upliftBaseline(y []float64, anyOn []bool, t, m int) float64 {
	n := len(y)
	usable := func(s int) bool { return s >= 0 && s < n && !anyOn[s] && !math.IsNaN(y[s]) }
	if m >= 2 {
		sum, c := 0.0, 0
		for k := 1; k <= UpliftBaselineSeasons; k++ {
			for _, s := range []int{t - k*m, t + k*m} {
				if usable(s) {
					sum += y[s]
					c++
				}
			}
		}
		if c >= 2 {
			return sum / float64(c)
		}
	}
	sum, c := 0.0, 0
	for dir := -1; dir <= 1; dir += 2 {
		got := 0
		for s := t + dir; s >= 0 && s < n && got < UpliftBaselineNeighbours; s += dir {
			if usable(s) {
				sum += y[s]
				c++
				got++
			}
		}
	}
	if c == 0 {
		return math.NaN()
	}
	return sum / float64(c)
}

func (f *UpliftFit) factorsOf(x [][]float64, n int) []float64 {
	out := make([]float64, n)
	for t := range out {
		v := 1.0
		for j, c := range x {
			if c[t] != 0 {
				v *= math.Max(0, 1+(f.uplift[j]-1)*c[t])
			}
		}
		out[t] = v
	}
	return out
}

// Uplifts returns u_j per driver (1 = no effect, 1.5 = +50%).
func (f *UpliftFit) Uplifts() []float64 { return append([]float64(nil), f.uplift...) }

// Periods returns how many periods each uplift was estimated on.
func (f *UpliftFit) Periods() []int { return append([]int(nil), f.periods...) }

// Factors returns the fitted multiplicative factor of each history period.
func (f *UpliftFit) Factors() []float64 { return append([]float64(nil), f.factors...) }

// Adjusted returns the history divided by its factors: the driver-free
// series to fit a base method on (NaN where y is missing or a factor is 0).
func (f *UpliftFit) Adjusted() []float64 { return append([]float64(nil), f.adjusted...) }

// Warnings lists drivers estimated with less than the usual evidence.
func (f *UpliftFit) Warnings() []string { return f.warn }

// Apply multiplies a base forecast by the factors of the future driver
// values: xFuture[j] holds len(base) values of driver j.
func (f *UpliftFit) Apply(base []float64, xFuture [][]float64) ([]float64, error) {
	if len(xFuture) != len(f.uplift) {
		return nil, fmt.Errorf("uplift: %d future drivers for %d fitted", len(xFuture), len(f.uplift))
	}
	if err := upliftCheck(xFuture, len(base), f.names, "future driver"); err != nil {
		return nil, err
	}
	fac := f.factorsOf(xFuture, len(base))
	out := make([]float64, len(base))
	for t, v := range base {
		out[t] = v * fac[t]
	}
	return out, nil
}

// UpliftModel is a base method fitted on the driver-free history, with
// the drivers' uplifts laid on its forecasts: the simple driver-aware
// forecaster for short series.
type UpliftModel struct {
	Uplift *UpliftFit
	Base   Fitted
	warn   []string
}

// FitUpliftModel estimates the uplifts of the drivers x on y (FitUplifts),
// divides them out of the history, fills what is then missing (missing y,
// and periods a driver empties) by SeasonalInterpolate when base needs a
// complete series — it always does so when anything is missing, which the
// warnings record — and fits base on the result with the season length
// season.
func FitUpliftModel(y []float64, x [][]float64, season int, names []string, base Method) (*UpliftModel, error) {
	u, err := FitUplifts(y, x, season, names)
	if err != nil {
		return nil, err
	}
	adj := u.Adjusted()
	m := &UpliftModel{Uplift: u, warn: append([]string(nil), u.Warnings()...)}
	filled, how, err := SeasonalInterpolate(adj, []int{season})
	if err != nil {
		return nil, err
	}
	if how != FillNone {
		missing := 0
		for _, v := range adj {
			if math.IsNaN(v) {
				missing++
			}
		}
		m.warn = append(m.warn, fmt.Sprintf("uplift: %d missing values of the adjusted history filled (%s) for %s", missing, how, base.Name()))
	}
	if m.Base, err = base.Fit(filled, season); err != nil {
		return nil, err
	}
	return m, nil
}

// Forecast forecasts len(xFuture[0]) steps (h when there are no drivers
// is not defined: use the base method directly) with the drivers' future
// values.
func (m *UpliftModel) Forecast(xFuture [][]float64) ([]float64, error) {
	if len(xFuture) == 0 {
		return nil, fmt.Errorf("uplift: no future driver values")
	}
	return m.Uplift.Apply(m.Base.Forecast(len(xFuture[0])), xFuture)
}

// Warnings lists the uplift warnings and the fill, if any.
func (m *UpliftModel) Warnings() []string { return m.warn }

// upliftBaselines gives the baseline of each observed period where some
// driver is on (NaN elsewhere).
func upliftBaselines(y []float64, x [][]float64, season int) []float64 {
	n := len(y)
	anyOn := make([]bool, n)
	for _, c := range x {
		for t, v := range c {
			if v != 0 {
				anyOn[t] = true
			}
		}
	}
	base := make([]float64, n)
	for t := range base {
		base[t] = math.NaN()
		if anyOn[t] && !math.IsNaN(y[t]) {
			base[t] = upliftBaseline(y, anyOn, t, season)
		}
	}
	return base
}

// upliftAlone reports whether driver j is the only one on at t.
func upliftAlone(x [][]float64, t, j int) bool {
	for k, c := range x {
		if k != j && c[t] != 0 {
			return false
		}
	}
	return true
}

// estimate fits the uplift of driver j by least squares of y on the
// baseline base: over the periods where j is on alone, or when shared
// over every period j is on, with the other drivers' uplifts so far
// divided out. It reports whether any period had a baseline.
func (f *UpliftFit) estimate(y []float64, x [][]float64, base []float64, j int, shared bool) bool {
	num, den, cnt := 0.0, 0.0, 0
	for t := 0; t < len(y); t++ {
		v := x[j][t]
		if v == 0 || math.IsNaN(base[t]) {
			continue
		}
		if !shared && !upliftAlone(x, t, j) {
			continue
		}
		b := base[t]
		if shared {
			for k, c := range x {
				if k != j && c[t] != 0 {
					b *= math.Max(0, 1+(f.uplift[k]-1)*c[t])
				}
			}
		}
		num += v * b * (y[t] - b)
		den += v * v * b * b
		cnt++
	}
	if cnt == 0 || !(den > 0) {
		return false
	}
	f.uplift[j] = math.Max(0, 1+num/den)
	f.periods[j] = cnt
	return true
}
