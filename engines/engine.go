// Package engines holds almanac's forecasting and decomposition methods.
//
// Engines are pure numerics: a method sees a []float64 in time order (NaN
// marks a missing value) and a season length. It never sees Arrow, dates,
// keys or files; the pipeline package owns those.
//
// Every method lives in a file of its own, registers itself by name in that
// file's init function, and documents its formula, defaults, valid ranges and
// a References: list in its doc comment.
package engines

import (
	"errors"
	"fmt"
	"sort"
)

// A Method fits one series. y is in time order; NaN marks a missing value.
// Fit must not modify y.
type Method interface {
	Name() string
	Fit(y []float64, season int) (Fitted, error)
}

// A Fitted model forecasts h steps ahead of the end of its training data.
type Fitted interface {
	Forecast(h int) []float64
}

// Described is implemented by fitted models that can name the exact form
// they fitted, for example "classical(additive, trend=adjusted_line)". The
// pipeline writes this into the model column of the forecasts table.
type Described interface {
	Describe() string
}

// Warner is implemented by fitted models that had to change course while
// fitting (for example a multiplicative decomposition that fell back to the
// additive form). Each warning becomes a problems row with severity warning.
type Warner interface {
	Warnings() []string
}

// Options carries a method's settings, already validated and defaulted by
// the spec package. Values are string, int, float64 or bool.
type Options map[string]any

// String returns the option k as a string, or def when it is absent.
func (o Options) String(k, def string) string {
	if v, ok := o[k].(string); ok {
		return v
	}
	return def
}

// Int returns the option k as an int, or def when it is absent.
func (o Options) Int(k string, def int) int {
	switch v := o[k].(type) {
	case int:
		return v
	case int64:
		return int(v)
	case float64:
		return int(v)
	}
	return def
}

// Float returns the option k as a float64, or def when it is absent.
func (o Options) Float(k string, def float64) float64 {
	switch v := o[k].(type) {
	case float64:
		return v
	case int:
		return float64(v)
	case int64:
		return float64(v)
	}
	return def
}

// Bool returns the option k as a bool, or def when it is absent.
func (o Options) Bool(k string, def bool) bool {
	if v, ok := o[k].(bool); ok {
		return v
	}
	return def
}

// A Factory builds a Method from its options.
type Factory func(Options) (Method, error)

var registry = map[string]Factory{}

// Register makes a method available by name. It panics if the name is taken;
// it is meant to be called from init functions.
func Register(name string, f Factory) {
	if _, dup := registry[name]; dup {
		panic("engines: method registered twice: " + name)
	}
	registry[name] = f
}

// New builds the method registered under name.
func New(name string, opts Options) (Method, error) {
	f, ok := registry[name]
	if !ok {
		return nil, fmt.Errorf("engines: unknown method %q", name)
	}
	return f(opts)
}

// Names lists the registered methods in sorted order.
func Names() []string {
	out := make([]string, 0, len(registry))
	for n := range registry {
		out = append(out, n)
	}
	sort.Strings(out)
	return out
}

// Errors a method returns for data it cannot fit. The pipeline turns them
// into problems rows; they are not programmer errors.
var (
	// ErrTooShort means the series has fewer usable values than the method needs.
	ErrTooShort = errors.New("series too short")
	// ErrAllMissing means every value of the series is missing.
	ErrAllMissing = errors.New("all values missing")
)
