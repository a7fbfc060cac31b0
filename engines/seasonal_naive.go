package engines

import (
	"fmt"
	"math"
)

// SeasonalNaive forecasts each period with the value at the same season
// position in the last season of the history:
//
//	ŷ_{n+h} = y_{n−m+1+((h−1) mod m)}
//
// for season length m. Where that value is missing it takes the most
// recent earlier observed value at the same position (m, 2m, … periods
// further back); a position never observed gets a NaN forecast and a
// warning.
//
// It takes no options. The season length must be at least 2 and the series
// must hold at least one full season (n ≥ m).
//
// References:
//   - R. J. Hyndman and G. Athanasopoulos (2021), Forecasting: Principles
//     and Practice, 3rd ed., OTexts, section 5.2 (seasonal naïve method).
type SeasonalNaive struct{}

var (
	_ Method = SeasonalNaive{}
	_ Fitted = (*seasonalNaiveFit)(nil)
	_ Warner = (*seasonalNaiveFit)(nil)
)

func init() {
	Register("seasonal_naive", func(o Options) (Method, error) {
		if err := baselineNoOptions("seasonal_naive", o); err != nil {
			return nil, err
		}
		return SeasonalNaive{}, nil
	})
}

// Name returns "seasonal_naive".
func (SeasonalNaive) Name() string { return "seasonal_naive" }

// Fit takes the last season of y, filling its gaps from earlier seasons.
func (SeasonalNaive) Fit(y []float64, season int) (Fitted, error) {
	n, m := len(y), season
	if m < 2 {
		return nil, fmt.Errorf("seasonal_naive: season length %d; needs a season of at least 2", m)
	}
	if n < m {
		return nil, fmt.Errorf("seasonal_naive: %d values; needs at least %d (1 season): %w", n, m, ErrTooShort)
	}
	f := &seasonalNaiveFit{last: make([]float64, m)}
	missing := 0
	for j := range f.last {
		v := math.NaN()
		for i := n - m + j; i >= 0; i -= m {
			if y[i] == y[i] {
				v = y[i]
				break
			}
		}
		if v != v {
			missing++
		}
		f.last[j] = v
	}
	if missing == m {
		return nil, fmt.Errorf("seasonal_naive: %w", ErrAllMissing)
	}
	if missing > 0 {
		f.warnings = []string{fmt.Sprintf("seasonal_naive: %d of %d season positions have no observed value; their forecasts are missing", missing, m)}
	}
	return f, nil
}

type seasonalNaiveFit struct {
	last     []float64 // last[j]: forecast for step j+1, j+1+m, …
	warnings []string
}

// Forecast returns the last season repeated over h periods. It panics if
// h < 0.
func (f *seasonalNaiveFit) Forecast(h int) []float64 {
	if h < 0 {
		panic(fmt.Sprintf("engines: seasonal_naive: negative horizon %d", h))
	}
	out := make([]float64, h)
	for i := 0; i < h; i += len(f.last) {
		copy(out[i:], f.last)
	}
	return out
}

// Warnings returns the caveats met while fitting, if any.
func (f *seasonalNaiveFit) Warnings() []string { return f.warnings }
