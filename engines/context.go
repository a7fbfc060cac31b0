package engines

// Context is what a method may know about a series beyond its values: every
// season length of the calendar and the drivers (known-in-advance
// regressors such as holidays, promotions or price changes).
//
// The pipeline builds it from the spec's calendar and event sources; an
// engine never sees dates or files, only aligned numbers.
type Context struct {
	// Seasons lists every season length of the calendar in ascending order
	// (for example 7 and 365 for daily data with a weekly and a yearly
	// cycle). Seasons[0] equals the season passed to Fit. Nil or of length
	// one when the calendar has a single cycle.
	Seasons []int

	// Drivers holds one column per driver, in DriverNames order. Each
	// column has len(y)+H values: the driver over the training history,
	// then over the H steps to be forecast. A driver that is zero over the
	// whole history cannot be estimated; a method leaves it out.
	Drivers     [][]float64
	DriverNames []string

	// H is the number of future steps the driver columns cover; Forecast
	// must not be asked for more.
	H int
}

// Empty reports whether c adds nothing to a plain Fit: one season at most
// and no drivers.
func (c Context) Empty() bool {
	return len(c.Seasons) <= 1 && len(c.Drivers) == 0
}

// A ContextFitter is a method that can use a Context: further season
// lengths, drivers, or both. The pipeline calls FitContext instead of Fit
// whenever the Context is not empty; a method without the interface is
// fitted with Fit and ignores the context.
type ContextFitter interface {
	FitContext(y []float64, season int, c Context) (Fitted, error)
}
