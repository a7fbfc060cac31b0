package engines

import (
	"fmt"
	"sort"
)

// Naive forecasts every period ahead with the last observed value:
//
//	ŷ_{n+h} = y_L,   L = the last t with y_t observed
//
// It takes no options and ignores the season length. It needs one observed
// value.
//
// References:
//   - R. J. Hyndman and G. Athanasopoulos (2021), Forecasting: Principles
//     and Practice, 3rd ed., OTexts, section 5.2 (naïve method).
type Naive struct{}

var (
	_ Method = Naive{}
	_ Fitted = naiveFit{}
)

func init() {
	Register("naive", func(o Options) (Method, error) {
		if err := baselineNoOptions("naive", o); err != nil {
			return nil, err
		}
		return Naive{}, nil
	})
}

// baselineNoOptions reports an error naming any option given to a method
// that takes none.
func baselineNoOptions(name string, o Options) error {
	if len(o) == 0 {
		return nil
	}
	keys := make([]string, 0, len(o))
	for k := range o {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	return fmt.Errorf("%s: takes no options, got %q", name, keys)
}

// Name returns "naive".
func (Naive) Name() string { return "naive" }

// Fit finds the last observed value of y.
func (Naive) Fit(y []float64, season int) (Fitted, error) {
	if len(y) == 0 {
		return nil, fmt.Errorf("naive: empty series; needs 1 value: %w", ErrTooShort)
	}
	for i := len(y) - 1; i >= 0; i-- {
		if v := y[i]; v == v {
			return naiveFit{v}, nil
		}
	}
	return nil, fmt.Errorf("naive: %w", ErrAllMissing)
}

type naiveFit struct{ last float64 }

// Forecast returns h copies of the last observed value. It panics if h < 0.
func (f naiveFit) Forecast(h int) []float64 {
	if h < 0 {
		panic(fmt.Sprintf("engines: naive: negative horizon %d", h))
	}
	out := make([]float64, h)
	for i := range out {
		out[i] = f.last
	}
	return out
}
