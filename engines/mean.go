package engines

import "fmt"

// Mean forecasts every period ahead with the mean of the observed values:
//
//	ŷ_{n+h} = (1/k)·Σ y_t over the k observed y_t
//
// It takes no options and ignores the season length. It needs one observed
// value.
//
// References:
//   - R. J. Hyndman and G. Athanasopoulos (2021), Forecasting: Principles
//     and Practice, 3rd ed., OTexts, section 5.2 (mean method).
type Mean struct{}

var (
	_ Method = Mean{}
	_ Fitted = meanFit{}
)

func init() {
	Register("mean", func(o Options) (Method, error) {
		if err := baselineNoOptions("mean", o); err != nil {
			return nil, err
		}
		return Mean{}, nil
	})
}

// Name returns "mean".
func (Mean) Name() string { return "mean" }

// Fit averages the observed values of y.
func (Mean) Fit(y []float64, season int) (Fitted, error) {
	if len(y) == 0 {
		return nil, fmt.Errorf("mean: empty series; needs 1 value: %w", ErrTooShort)
	}
	var s float64
	k := 0
	for _, v := range y {
		if v == v {
			s += v
			k++
		}
	}
	if k == 0 {
		return nil, fmt.Errorf("mean: %w", ErrAllMissing)
	}
	mu := s / float64(k)
	// One correction pass, as R's mean does, for sums that lost digits.
	var c float64
	for _, v := range y {
		if v == v {
			c += v - mu
		}
	}
	return meanFit{mu + c/float64(k)}, nil
}

type meanFit struct{ mean float64 }

// Forecast returns h copies of the mean. It panics if h < 0.
func (f meanFit) Forecast(h int) []float64 {
	if h < 0 {
		panic(fmt.Sprintf("engines: mean: negative horizon %d", h))
	}
	out := make([]float64, h)
	for i := range out {
		out[i] = f.mean
	}
	return out
}
