package engines

// The forms a decomposition can take.
const (
	// FormAdditive: y = trend + seasonal + remainder.
	FormAdditive = "additive"
	// FormMultiplicative: y = trend × seasonal × remainder.
	FormMultiplicative = "multiplicative"
)

// A Decomposition splits a series into trend, seasonal and remainder parts.
//
// In the additive form y = Trend + Seasonal + Remainder and
// Adjusted = y − Seasonal; in the multiplicative form
// y = Trend × Seasonal × Remainder and Adjusted = y ÷ Seasonal.
type Decomposition struct {
	// Form is FormAdditive or FormMultiplicative: the form actually used,
	// which may differ from the one asked for (Warnings then says why).
	Form string

	// Trend, Seasonal, Remainder and Adjusted have one value per value of
	// the series, NaN where undefined: the trend at the ends of the series
	// and around missing values, and every part at a missing value.
	Trend, Seasonal, Remainder, Adjusted []float64

	// Factors has one value per season position: Factors[j] applies to
	// y[i] with i%season == j. Positions count from y[0], not from the
	// calendar; the caller, which knows the date of y[0], maps them.
	// Factors average 1 (multiplicative) or 0 (additive).
	Factors []float64

	// Counts[j] is the number of detrended values averaged into Factors[j].
	Counts []int

	// Warnings lists the caveats met while decomposing, if any.
	Warnings []string
}

// A Decomposer splits a series into components. y is in time order; NaN
// marks a missing value. Decompose must not modify y.
type Decomposer interface {
	Decompose(y []float64, season int) (*Decomposition, error)
}

// Decomposed is implemented by fitted models that rest on a decomposition
// of their training data.
type Decomposed interface {
	Components() *Decomposition
}
