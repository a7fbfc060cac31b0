// Package forecast fits one series with every method of the spec, each in
// isolation: a panic or an error in one method becomes a problems row of
// that series and method, never a failed run.
package forecast

import (
	"errors"
	"fmt"
	"math"
	"runtime/debug"
	"strings"

	"almanac/engines"
	"almanac/pipeline/runfolder"
	"almanac/pipeline/series"
	"almanac/spec"
)

// Method is a compiled method of the spec.
type Method struct {
	Spec   spec.MethodSpec
	Engine engines.Method
}

// Result is everything one series contributes to the tables.
type Result struct {
	Series    *series.Series
	Decomp    *engines.Decomposition
	Cycles    []Cycle // with several season lengths: each cycle's part of Decomp
	Forecasts []Forecast
	Problems  []runfolder.Problem
	Totals    []Total // the chosen entry's lead-time totals (spec totals)
}

// Total is one lead time's line of the totals table: the chosen entry's
// forecast total over steps 1..Lead and the quantiles of that total.
type Total struct {
	Label     string
	Lead      int
	Total     float64
	Quantiles []float64 // one per totals level, in spec order; nil when none could be made
	Source    string    // total_source; "" with no quantiles
}

// Forecast is one method's (or the combination's) forecast of one series.
type Forecast struct {
	Label    string
	Model    string
	Values   []float64
	Variance []float64
	// filled by the evaluation: whether this is the series' chosen entry,
	// and its interval bounds per level (nil when none)
	Chosen         bool
	Lower, Upper   [][]float64
	IntervalSource string
}

// Compile makes the engines of the spec's methods and of its decomposition
// (nil with a season length below 2).
func Compile(s *spec.Spec) ([]Method, engines.Decomposer, error) {
	var runs []Method
	for i, m := range s.Methods {
		em, err := engines.New(m.Method, engines.Options(m.Options))
		if err != nil {
			return nil, nil, fmt.Errorf("%s: methods[%d]: %v", s.File, i, err)
		}
		runs = append(runs, Method{Spec: m, Engine: em})
	}
	if s.Calendar.SeasonLength < 2 {
		return runs, nil, nil
	}
	dm, err := engines.New(s.Decomposition.Method, engines.Options(s.Decomposition.Options))
	if err != nil {
		return nil, nil, err
	}
	dec, ok := dm.(engines.Decomposer)
	if !ok {
		return nil, nil, fmt.Errorf("pipeline: %s does not decompose", s.Decomposition.Method)
	}
	return runs, dec, nil
}

// Work processes one series through decomposition and every method.
type Work struct {
	Spec       *spec.Spec
	Methods    []Method
	Decomposer engines.Decomposer

	WantVariance bool // model-based intervals asked for
}

// AllMissing reports whether no value of y is present.
func AllMissing(y []float64) bool {
	for _, v := range y {
		if !math.IsNaN(v) {
			return false
		}
	}
	return true
}

// Run decomposes s and forecasts it with every method. Trouble becomes
// problems rows of the result, never an error.
func (w *Work) Run(s *series.Series) *Result {
	r := &Result{Series: s}
	add := func(stage, severity, code, method, msg string) {
		r.Problems = append(r.Problems, runfolder.Problem{Key: s.Key, Stage: stage, Severity: severity, Code: code, Method: method, Message: msg})
	}
	for _, n := range s.Notes {
		add("shape", n.Severity, n.Code, "", n.Message)
	}
	if s.Skip != "" {
		add("shape", "error", s.SkipCode, "", s.Skip)
		return r
	}
	if AllMissing(s.Values) {
		add("shape", "error", runfolder.CodeAllMissing, "", fmt.Sprintf("all %d values are missing; no decomposition or forecast", len(s.Values)))
		return r
	}
	if w.Decomposer != nil {
		w.decompose(r, add)
	}
	h := w.Spec.Horizon
	for _, mr := range w.Methods {
		method := mr.Engine
		label := mr.Spec.Label
		res, err := SafeForecastSeries(method, s, w.Spec.Calendar.AllSeasons(), 0, len(s.Values), h, w.WantVariance)
		if err != nil {
			add("forecast", "error", ErrorCode(err, runfolder.CodeMethodFailed), label, TrimName(err.Error(), mr.Spec.Method))
			continue
		}
		if res.Imputed > 0 {
			add("forecast", "warning", runfolder.CodeImputed, label, ImputedMessage(res.Imputed, len(s.Values), res.Fill, "fitting"))
		}
		CloseSteps(&res, s.FutureClosed)
		for _, msg := range res.Warnings {
			add("forecast", "warning", WarningCode(msg, runfolder.CodeMethodWarning), label, TrimName(msg, mr.Spec.Method))
		}
		r.Forecasts = append(r.Forecasts, Forecast{Label: label, Model: res.Model, Values: res.Values, Variance: res.Variance})
	}
	return r
}

// TrimName drops a leading "name: " from an engine's message: the method
// column of the problems table already says which method spoke.
func TrimName(msg, name string) string {
	return strings.TrimPrefix(msg, name+": ")
}

// safeDecompose decomposes y with d, turning a panic into an error. When
// that fails on a series with missing values and d needs a complete series
// (see Impute), it decomposes the filled series instead: STL always, a
// classical decomposition only when the gaps leave a season position
// without a detrended value (it decomposes around them otherwise).
func safeDecompose(d engines.Decomposer, y []float64, m int) (out *engines.Decomposition, filled int, how string, err error) {
	defer func() {
		if p := recover(); p != nil {
			out, err = nil, panicError(p)
		}
	}()
	out, err = d.Decompose(y, m)
	if err == nil {
		return out, 0, "", nil
	}
	train, filled, how, ierr := Impute(d, y, []int{m})
	if ierr != nil || filled == 0 {
		return nil, 0, "", err
	}
	out, err = d.Decompose(train, m)
	return out, filled, how, err
}

// Output is one method fitted on one stretch of history.
type Output struct {
	Values   []float64
	Model    string
	Warnings []string
	Variance []float64 // h-step forecast variance, when the method has one
	// Imputed is the number of missing values filled before fitting (a
	// method that needs a complete series; see Impute), Fill how.
	Imputed int
	Fill    string
}

// forecastVariancer is implemented by fitted models with a model-based
// forecast variance (see engines' optional interfaces).
type forecastVariancer interface {
	ForecastVariance(h int) []float64
}

// SafeForecast fits and forecasts one method on one series. A panic inside
// the method is caught and becomes an error for this series and method only.
func SafeForecast(m engines.Method, y []float64, season, h int, wantVariance bool) (res Output, err error) {
	return safeForecast(m, y, []int{season}, h, wantVariance)
}

// safeForecast is SafeForecast with every season length of the calendar
// (seasons[0] the one the method fits); a fill for a method that needs a
// complete series uses them all.
func safeForecast(m engines.Method, y []float64, seasons []int, h int, wantVariance bool) (res Output, err error) {
	defer func() {
		if p := recover(); p != nil {
			res, err = Output{}, panicError(p)
		}
	}()
	season := seasons[0]
	train, filled, how, err := Impute(m, y, seasons)
	if err != nil {
		return Output{}, err
	}
	fitted, err := m.Fit(train, season)
	if err != nil {
		return Output{}, err
	}
	res.Imputed, res.Fill = filled, how
	res.Values = fitted.Forecast(h)
	if len(res.Values) != h {
		return Output{}, fmt.Errorf("internal error: %s returned %d forecasts for a horizon of %d", m.Name(), len(res.Values), h)
	}
	res.Model = m.Name()
	if d, ok := fitted.(engines.Described); ok {
		res.Model = d.Describe()
	}
	if n := FloorAtZero(y, res.Values); n > 0 {
		res.Model += fmt.Sprintf(" floored at 0 (%d of %d steps)", n, h)
	}
	if wr, ok := fitted.(engines.Warner); ok {
		res.Warnings = wr.Warnings()
	}
	if fv, ok := fitted.(forecastVariancer); ok && wantVariance {
		if v := fv.ForecastVariance(h); len(v) == h {
			res.Variance = v
		}
	}
	return res, nil
}

// FloorAtZero sets to 0 the forecasts below zero of a series whose history
// is strictly positive (every observed value > 0, at least one observed),
// and returns how many it changed. A strictly positive quantity — sales,
// passengers, the M-competition series — has no negative future, but
// several methods extrapolate past zero (drift, trend lines, additive
// smoothing forms, theta's drift; see engines/positivity_test.go). A
// history with a zero or a negative value is left alone.
func FloorAtZero(y, fc []float64) int {
	observed := false
	for _, v := range y {
		if v != v {
			continue
		}
		if v <= 0 {
			return 0
		}
		observed = true
	}
	if !observed {
		return 0
	}
	n := 0
	for i, v := range fc {
		if v < 0 {
			fc[i] = 0
			n++
		}
	}
	return n
}

// panicError turns a recovered panic into the error of one series and method.
func panicError(p any) error {
	stack := string(debug.Stack())
	// Keep the first frame inside almanac to help a bug report.
	frame := ""
	for _, line := range strings.Split(stack, "\n") {
		line = strings.TrimSpace(line)
		if strings.Contains(line, "almanac/engines/") {
			frame = line
			break
		}
	}
	if frame != "" {
		if i := strings.LastIndex(frame, " +0x"); i > 0 {
			frame = frame[:i]
		}
		if i := strings.Index(frame, "almanac/"); i >= 0 {
			frame = frame[i:]
		}
		return fmt.Errorf("internal error (panic: %v at %s); the series was skipped for this method", p, frame)
	}
	return fmt.Errorf("internal error (panic: %v); the series was skipped for this method", p)
}

// SafeFit fits m on y (filled first when m needs a complete series, as in
// SafeForecast), turning a panic into an error. seasons is every season
// length of the calendar (spec.Calendar.AllSeasons); m fits seasons[0].
func SafeFit(m engines.Method, y []float64, seasons []int) (f engines.Fitted, err error) {
	defer func() {
		if p := recover(); p != nil {
			f, err = nil, panicError(p)
		}
	}()
	train, _, _, err := Impute(m, y, seasons)
	if err != nil {
		return nil, err
	}
	return m.Fit(train, seasons[0])
}

// Impute returns the series a method or decomposer x is fitted on: y
// itself, or, when x needs a complete series (engines.CompleteNeeder) and
// y has missing values, a copy filled by engines.SeasonalInterpolate with
// the given season lengths, with the number of values filled and how
// (engines.FillSeasonal or FillLinear). y must be a training slice (or the
// whole history): a test window is never passed here, so it is never
// filled. An all-missing y is returned as is, for x to refuse.
func Impute(x any, y []float64, seasons []int) (train []float64, filled int, how string, err error) {
	cn, ok := x.(engines.CompleteNeeder)
	if !ok || !cn.NeedsComplete() {
		return y, 0, "", nil
	}
	for _, v := range y {
		if math.IsNaN(v) {
			filled++
		}
	}
	if filled == 0 || filled == len(y) {
		return y, 0, "", nil
	}
	out, how, err := engines.SeasonalInterpolate(y, seasons)
	if err != nil {
		return nil, 0, "", err
	}
	return out, filled, how, nil
}

// ImputedMessage is the problems message of a fill of n of the total values.
func ImputedMessage(n, total int, how, what string) string {
	return fmt.Sprintf("%d of %d values missing; filled by %s interpolation before %s (the method needs a complete series)", n, total, how, what)
}

// ErrorCode classifies a method's or a decomposition's error for the
// problems table's code column.
func ErrorCode(err error, other string) string {
	switch {
	case errors.Is(err, engines.ErrTooShort):
		return runfolder.CodeShortHistory
	case errors.Is(err, engines.ErrAllMissing):
		return runfolder.CodeAllMissing
	}
	return other
}

// WarningCode classifies a method's or a decomposition's warning.
func WarningCode(msg, other string) string {
	if strings.Contains(msg, "needs strictly positive values") {
		return runfolder.CodeNonpositive
	}
	return other
}
