package engines

import "fmt"

// Naive2 is the benchmark of the M forecasting competitions: the naive
// forecast of the seasonally adjusted series, re-seasonalised.
//
// With season length m and the series y_t, t = 1…n (y[0] is t = 1):
//
//  1. The series counts as seasonal when m ≥ 2, it holds at least three
//     seasons of observed values (3m), every observed value is > 0, and
//     SeasonalityTest (the lag-m autocorrelation test at 90%) says so.
//
//  2. Seasonal: F_j are the factors of the classical multiplicative
//     decomposition (Classical, form=multiplicative, average=mean; R's
//     stats::decompose), and with L the last t with y_t observed
//
//     ŷ_{n+h} = (y_L / F_{(L−1) mod m}) · F_{(n+h−1) mod m}
//
//  3. Otherwise it is the naive forecast ŷ_{n+h} = y_L.
//
// Describe says which: "naive2(seasonally adjusted)" or "naive2(no
// season)". It takes no options and needs one observed value. Its forecasts
// are positive whenever the history is.
//
// The three-season minimum and the 90% test follow the benchmark as the M3
// and M4 competitions computed it (common practice; from memory of the M4
// organisers' published benchmark code).
//
// References:
//   - S. Makridakis and M. Hibon (2000), The M3-Competition: results,
//     conclusions and implications, International Journal of Forecasting
//     16(4), 451–476 (Naive2 among the benchmarks).
//   - S. Makridakis, E. Spiliotis and V. Assimakopoulos (2020), The M4
//     Competition: 100,000 time series and 61 forecasting methods,
//     International Journal of Forecasting 36(1), 54–74.
type Naive2 struct{}

var (
	_ Method    = Naive2{}
	_ Fitted    = (*naive2Fit)(nil)
	_ Described = (*naive2Fit)(nil)
)

func init() {
	Register("naive2", func(o Options) (Method, error) {
		if err := baselineNoOptions("naive2", o); err != nil {
			return nil, err
		}
		return Naive2{}, nil
	})
}

// Name returns "naive2".
func (Naive2) Name() string { return "naive2" }

// Fit tests y for seasonality and, when seasonal, finds its classical
// multiplicative factors (see Naive2).
func (Naive2) Fit(y []float64, season int) (Fitted, error) {
	if len(y) == 0 {
		return nil, fmt.Errorf("naive2: empty series; needs 1 value: %w", ErrTooShort)
	}
	last := -1
	observed, positive := 0, true
	for i, v := range y {
		if v == v {
			last = i
			observed++
			positive = positive && v > 0
		}
	}
	if last < 0 {
		return nil, fmt.Errorf("naive2: %w", ErrAllMissing)
	}
	f := &naive2Fit{n: len(y), level: y[last]}
	if season < 2 || observed < 3*season || !positive {
		return f, nil
	}
	if _, seasonal := SeasonalityTest(y, season); !seasonal {
		return f, nil
	}
	c := &Classical{form: classicalMultiplicative, average: classicalMean, always: true}
	d, err := c.Decompose(y, season)
	if err != nil {
		// Missing values can leave a season position without a factor:
		// then the series is treated as not seasonal.
		return f, nil
	}
	f.factors = d.Factors
	f.level = y[last] / d.Factors[last%season]
	return f, nil
}

type naive2Fit struct {
	n       int
	level   float64   // the last observed value, seasonally adjusted when factors != nil
	factors []float64 // nil: no season
}

// Forecast returns the forecasts for the h periods after the training data.
// It panics if h < 0.
func (f *naive2Fit) Forecast(h int) []float64 {
	if h < 0 {
		panic(fmt.Sprintf("engines: naive2: negative horizon %d", h))
	}
	out := make([]float64, h)
	for i := range out {
		out[i] = f.level
		if f.factors != nil {
			out[i] *= f.factors[(f.n+i)%len(f.factors)]
		}
	}
	return out
}

// Describe says whether the series was seasonally adjusted.
func (f *naive2Fit) Describe() string {
	if f.factors != nil {
		return "naive2(seasonally adjusted)"
	}
	return "naive2(no season)"
}
