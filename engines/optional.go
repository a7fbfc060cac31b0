package engines

// Optional interfaces of a Fitted model. The pipeline discovers them with
// type assertions, so a simple method implements none of them and a richer
// one implements those it can honour.

// InSampler is implemented by fitted models that can give their in-sample
// one-step fitted values: InSample()[t] is the model's forecast of y[t]
// made from the data before t, one value per value of the training series
// (NaN where the model makes no such forecast, for example before its
// start-up period). The caller must not modify the returned slice.
type InSampler interface {
	InSample() []float64
}

// A Param is one named value of a fitted model, for explanation output.
type Param struct {
	Name  string
	Value float64
}

// Parameterized is implemented by fitted models that can list the values
// they estimated (smoothing weights, initial states and the like). The
// order is fixed for each model form, so output built from it is
// deterministic. The caller must not modify the returned slice.
type Parameterized interface {
	Params() []Param
}

// ForecastVariancer is implemented by fitted models that can state their
// forecast uncertainty, for prediction intervals.
//
// ResidualVariance is the estimated variance of the one-step errors
// (for the smoothing methods SSE/(n−k), see their doc comments); NaN when
// there are too few observations to estimate it.
//
// ForecastVariance returns the variance of the 1…h step forecast errors,
// one value per step, when the model has an analytic formula for it, and
// nil when it has none (for example a multiplicative seasonal form). It
// panics if h < 0.
type ForecastVariancer interface {
	ResidualVariance() float64
	ForecastVariance(h int) []float64
}

// CompleteNeeder is implemented by methods and decomposers that need a
// complete series: STL, classical decomposition and Holt-Winters. For
// them the pipeline fills the missing values of a training slice (never a
// test window) with SeasonalInterpolate before Fit (and before Decompose
// when it fails on the gaps), and records the fill. The method itself
// never fills: given a NaN it fails (STL) or copes as its doc comment
// says.
type CompleteNeeder interface {
	NeedsComplete() bool
}

var (
	_ CompleteNeeder = (*STL)(nil)
	_ CompleteNeeder = (*Classical)(nil)
	_ CompleteNeeder = (*HoltWinters)(nil)
)
