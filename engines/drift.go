package engines

import "fmt"

// Drift extends the line through the first and last observed values:
//
//	ŷ_{n+h} = y_L + (n + h − L)·(y_L − y_F)/(L − F)
//
// where F and L are the first and last t with y_t observed. With no missing
// values at the ends (F = 1, L = n) this is the textbook
// ŷ_{n+h} = y_n + h·(y_n − y_1)/(n − 1).
//
// It takes no options and ignores the season length. It needs two observed
// values.
//
// References:
//   - R. J. Hyndman and G. Athanasopoulos (2021), Forecasting: Principles
//     and Practice, 3rd ed., OTexts, section 5.2 (drift method).
type Drift struct{}

var (
	_ Method = Drift{}
	_ Fitted = driftFit{}
)

func init() {
	Register("drift", func(o Options) (Method, error) {
		if err := baselineNoOptions("drift", o); err != nil {
			return nil, err
		}
		return Drift{}, nil
	})
}

// Name returns "drift".
func (Drift) Name() string { return "drift" }

// Fit finds the first and last observed values of y.
func (Drift) Fit(y []float64, season int) (Fitted, error) {
	first, last := -1, -1
	for i, v := range y {
		if v == v {
			first = i
			break
		}
	}
	for i := len(y) - 1; i > first; i-- {
		if y[i] == y[i] {
			last = i
			break
		}
	}
	if last < 0 {
		last = first
	}
	switch {
	case len(y) == 0:
		return nil, fmt.Errorf("drift: empty series; needs 2 values: %w", ErrTooShort)
	case first < 0:
		return nil, fmt.Errorf("drift: %w", ErrAllMissing)
	case first == last:
		return nil, fmt.Errorf("drift: 1 observed value; needs 2: %w", ErrTooShort)
	}
	return driftFit{
		last:  y[last],
		slope: (y[last] - y[first]) / float64(last-first),
		gap:   len(y) - 1 - last,
	}, nil
}

type driftFit struct {
	last, slope float64
	gap         int // periods from the last observed value to the end of y
}

// Forecast returns the drift line over the h periods after the history. It
// panics if h < 0.
func (f driftFit) Forecast(h int) []float64 {
	if h < 0 {
		panic(fmt.Sprintf("engines: drift: negative horizon %d", h))
	}
	out := make([]float64, h)
	for i := range out {
		out[i] = f.last + float64(f.gap+i+1)*f.slope
	}
	return out
}
