package pipeline

import (
	"errors"
	"fmt"
	"slices"
	"strings"
	"sync"

	"github.com/apache/arrow-go/v18/arrow/memory"

	"almanac/pipeline/calendar"
	"almanac/pipeline/evaluate"
	"almanac/pipeline/forecast"
	"almanac/pipeline/runfolder"
	"almanac/spec"
)

// runTables holds the open table writers of a run and the sinks that feed
// them: pass 1's backtests go to accuracy and choices, pass 2's results to
// forecasts, components, seasonal_factors and problems. Each table encodes
// on a goroutine of its own; rows keep their order per table.
type runTables struct {
	forecasts, components, factors, problems *runfolder.TableWriter
	accuracy, choices                        *runfolder.TableWriter // nil without a backtest
	totals                                   *runfolder.TableWriter // nil without spec totals
	totalLevels                              int
	series                                   int
	errors, warnings                         int
	methodSeries                             map[string]int
	layout                                   forecast.Layout
	backtests                                []*runfolder.Sink[*evaluate.Backtest]
	results                                  []*runfolder.Sink[*forecast.Result]

	// With problems.detail: summary, the decomposition's per-series
	// warnings (the decompose stage runs whether or not the spec asks for
	// it) become one run-level row per code, written last.
	summarise bool
	keyNames  []string
	summary   map[string]*codeSummary
	codes     []string // summary codes in order of first appearance
}

type codeSummary struct {
	series  int
	key     []string
	message string
}

func openTables(dir string, s *spec.Spec, meta map[string]string, mem memory.Allocator) (*runTables, error) {
	keys := s.Columns.Keys
	rt := &runTables{methodSeries: map[string]int{},
		summarise: s.Problems != spec.DetailSeries, keyNames: keys, summary: map[string]*codeSummary{},
		layout: forecast.Layout{WithChosen: s.Backtest.Folds > 0, Levels: len(s.Intervals.Levels), Decomposition: s.Decomposition.Method, Seasons: s.Calendar.Seasons}}
	if s.Calendar.SeveralCycles() {
		rt.layout.Decomposition = forecast.DecompositionSeveral
	}
	var err error
	open := func(name string, cols []runfolder.Column) *runfolder.TableWriter {
		if err != nil {
			return nil
		}
		var t *runfolder.TableWriter
		t, err = runfolder.NewTableWriter(dir, name, keys, cols, meta, mem)
		return t
	}
	rt.forecasts = open(runfolder.TableForecasts, runfolder.ForecastColumns(s))
	if s.Backtest.Folds > 0 {
		rt.accuracy = open(runfolder.TableAccuracy, runfolder.AccuracyColumns())
		rt.choices = open(runfolder.TableChoices, runfolder.ChoiceColumns())
	}
	if len(s.Totals.LeadTimes) > 0 {
		rt.totals = open(runfolder.TableTotals, runfolder.TotalsColumns(s))
		rt.totalLevels = len(s.Totals.Levels)
	}
	rt.components = open(runfolder.TableComponents, runfolder.ComponentColumns(s))
	rt.factors = open(runfolder.TableSeasonalFactors, runfolder.FactorColumns(s))
	rt.problems = open(runfolder.TableProblems, runfolder.ProblemColumns())
	if err != nil {
		rt.abort()
		return nil, err
	}
	return rt, nil
}

// startSinks starts the writers of both passes.
func (rt *runTables) startSinks(cal calendar.Calendar, e *evaluate.Evaluation) {
	if rt.accuracy != nil {
		rt.backtests = []*runfolder.Sink[*evaluate.Backtest]{
			runfolder.NewSink(func(r *evaluate.Backtest) error { return evaluate.WriteAccuracy(rt.accuracy, r, cal) }),
			runfolder.NewSink(func(r *evaluate.Backtest) error { return e.WriteChoice(rt.choices, r) }),
		}
	}
	l := rt.layout
	rt.results = []*runfolder.Sink[*forecast.Result]{
		runfolder.NewSink(func(r *forecast.Result) error { return l.WriteForecasts(rt.forecasts, r, cal, rt.methodSeries) }),
		runfolder.NewSink(func(r *forecast.Result) error { return l.WriteComponents(rt.components, r, cal) }),
		runfolder.NewSink(func(r *forecast.Result) error { return l.WriteFactors(rt.factors, r, cal) }),
		runfolder.NewSink(rt.writeProblems),
	}
	if rt.totals != nil {
		n := rt.totalLevels
		rt.results = append(rt.results, runfolder.NewSink(func(r *forecast.Result) error { return evaluate.WriteTotals(rt.totals, r, cal, n) }))
	}
}

// send hands x to every sink and reports the first error any of them has
// met so far.
func send[R any](sinks []*runfolder.Sink[R], x R) error {
	for _, k := range sinks {
		k.Send(x)
	}
	for _, k := range sinks {
		if err := k.Err(); err != nil {
			return err
		}
	}
	return nil
}

// writeBacktest hands one series' backtest to the accuracy and choices writers.
func (rt *runTables) writeBacktest(r *evaluate.Backtest) error { return send(rt.backtests, r) }

// write hands one series' final result to its writers.
func (rt *runTables) write(r *forecast.Result) error {
	rt.series++
	return send(rt.results, r)
}

// drain closes the sinks, waits for them and returns their first error.
func (rt *runTables) drain() error {
	var errs []error
	for _, k := range rt.backtests {
		errs = append(errs, k.Close())
	}
	for _, k := range rt.results {
		errs = append(errs, k.Close())
	}
	rt.backtests, rt.results = nil, nil
	return errors.Join(errs...)
}

func (rt *runTables) tables() []*runfolder.TableWriter {
	out := []*runfolder.TableWriter{rt.forecasts, rt.components, rt.factors, rt.problems}
	if rt.accuracy != nil {
		out = append(out, rt.accuracy, rt.choices)
	}
	if rt.totals != nil {
		out = append(out, rt.totals)
	}
	return out
}

func (rt *runTables) abort() {
	rt.drain()
	for _, t := range rt.tables() {
		if t != nil {
			t.Abort()
		}
	}
}

// writeProblems writes one series' problems rows, or counts those the
// summary stands for.
func (rt *runTables) writeProblems(r *forecast.Result) error {
	var counted []string
	for _, p := range r.Problems {
		if rt.summarise && p.Key != nil && p.Stage == "decompose" && p.Severity == "warning" {
			cs := rt.summary[p.Code]
			if cs == nil {
				cs = &codeSummary{key: p.Key, message: p.Message}
				rt.summary[p.Code] = cs
				rt.codes = append(rt.codes, p.Code)
			}
			if !slices.Contains(counted, p.Code) {
				cs.series++
				counted = append(counted, p.Code)
			}
			continue
		}
		if err := rt.problem(p); err != nil {
			return err
		}
	}
	return nil
}

// close drains the sinks and closes the tables at once: each finishes its
// last row group, footer and fsync beside the others.
func (rt *runTables) close() error {
	if err := rt.drain(); err != nil {
		return err
	}
	for _, code := range rt.codes {
		cs := rt.summary[code]
		if err := rt.problem(runfolder.Problem{Stage: "decompose", Severity: "warning", Code: code,
			Message: fmt.Sprintf("%d series: %s (first: %s); one row per series with problems: {detail: series}",
				cs.series, cs.message, keyLabel(rt.keyNames, cs.key))}); err != nil {
			return err
		}
	}
	ts := rt.tables()
	errs := make([]error, len(ts))
	var wg sync.WaitGroup
	for i, t := range ts {
		wg.Add(1)
		go func() {
			defer wg.Done()
			errs[i] = t.Close()
		}()
	}
	wg.Wait()
	return errors.Join(errs...)
}

// problem writes one problems row and counts it by severity. Run-level
// problems are written before the sinks start; per-series ones by the
// problems sink only, so the counters have one writer at a time.
func (rt *runTables) problem(p runfolder.Problem) error {
	if p.Severity == "error" {
		rt.errors++
	} else {
		rt.warnings++
	}
	return runfolder.WriteProblem(rt.problems, p)
}

// keyLabel renders a key for messages: depot=North, sku=A-100.
func keyLabel(names, key []string) string {
	if len(names) == 0 {
		return "(the only series)"
	}
	parts := make([]string, len(names))
	for i := range names {
		parts[i] = names[i] + "=" + key[i]
	}
	return strings.Join(parts, ", ")
}
