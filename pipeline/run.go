// Package pipeline compiles an almanac spec into stages and runs them:
// read → shape → split → decompose → forecast → write. It owns Arrow,
// dates, keys and files; the numerics live in package engines.
package pipeline

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"runtime/debug"
	"strings"
	"sync"
	"time"

	"github.com/apache/arrow-go/v18/arrow/memory"

	"almanac/engines"
	"almanac/spec"
)

// Progress receives the count of series written. Implementations must be
// safe to call from the goroutine that runs the pipeline.
type Progress interface {
	Start(total int)
	Add(n int)
	Finish()
}

// Options are the run's settings that are not part of the spec: they may
// change how fast a run goes, never what it writes.
type Options struct {
	Out      string           // run folder; overrides the spec's output (relative to the working directory)
	Workers  int              // parallel series workers; 0 means runtime.NumCPU()
	Progress Progress         // may be nil
	Log      io.Writer        // plain progress lines; may be nil
	Mem      memory.Allocator // nil means memory.DefaultAllocator
	// BatchRows bounds the input rows held in memory at once (0 means
	// DefaultBatchRows); larger inputs are spilled to a temporary folder
	// and processed in key-range batches.
	BatchRows int64
	// Shard, when Count > 1, runs only this shard's series and writes its
	// part files into the dataset folder (see commitShard and Combine).
	Shard Shard

	// Finish, when set, runs once the tables, manifest and lineage are
	// staged and before the run folder is committed, with the staging
	// folder and the target (which still holds the previous run, if any);
	// an error fails the run. The CLI writes the HTML report here.
	Finish func(staging, target string) error

	// beforeCommit, when set, runs after every table is written and before
	// the run folder is committed; tests use it to inject a failure.
	beforeCommit func(staging string) error
	// wrapMethod, when set, wraps each method; tests use it to inject faults.
	wrapMethod func(engines.Method) engines.Method
}

// Summary is what a run reports when it finishes.
type Summary struct {
	Dir      string
	Manifest *Manifest
}

// methodRun is a compiled method of the spec.
type methodRun struct {
	spec   spec.MethodSpec
	method engines.Method
}

// problem is one row of the problems table.
type problem struct {
	key      []string // nil for run-level problems
	stage    string
	severity string
	method   string
	message  string
}

// seriesResult is everything one series contributes to the tables.
type seriesResult struct {
	series    *Series
	decomp    *engines.Decomposition
	forecasts []methodForecast
	problems  []problem
}

type methodForecast struct {
	label    string
	model    string
	values   []float64
	variance []float64
	// filled by the evaluation: whether this is the series' chosen entry,
	// and its interval bounds per level (nil when none)
	chosen         bool
	lower, upper   [][]float64
	intervalSource string
}

// OutputDir is where a run of s with opts writes.
func OutputDir(s *spec.Spec, opts Options) (string, error) {
	if opts.Out != "" {
		return filepath.Abs(opts.Out)
	}
	if filepath.IsAbs(s.Output) {
		return filepath.Clean(s.Output), nil
	}
	return filepath.Join(s.Dir, s.Output), nil
}

func compileMethods(s *spec.Spec) ([]methodRun, engines.Decomposer, error) {
	var runs []methodRun
	for i, m := range s.Methods {
		em, err := engines.New(m.Method, engines.Options(m.Options))
		if err != nil {
			return nil, nil, fmt.Errorf("%s: methods[%d]: %v", s.File, i, err)
		}
		runs = append(runs, methodRun{spec: m, method: em})
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

type stageClock struct {
	stages []StageTiming
	last   time.Time
}

func (c *stageClock) lap(name string) {
	now := time.Now()
	c.stages = append(c.stages, StageTiming{Stage: name, Seconds: math.Round(now.Sub(c.last).Seconds()*1e6) / 1e6})
	c.last = now
}

// Run executes the spec and commits the run folder. On any error nothing
// is left at the target except what was there before.
func Run(ctx context.Context, s *spec.Spec, opts Options) (*Summary, error) {
	started := time.Now()
	clock := &stageClock{last: started}
	workers := opts.Workers
	if workers <= 0 {
		workers = runtime.NumCPU()
	}
	mem := opts.Mem
	if mem == nil {
		mem = memory.DefaultAllocator
	}
	logf := func(format string, args ...any) {
		if opts.Log != nil {
			fmt.Fprintf(opts.Log, format+"\n", args...)
		}
	}
	target, err := OutputDir(s, opts)
	if err != nil {
		return nil, err
	}
	cal := calendar{freq: s.Calendar.Frequency, season: s.Calendar.SeasonLength}
	methods, decomposer, err := compileMethods(s)
	if err != nil {
		return nil, err
	}
	files, err := resolveSources(s)
	if err != nil {
		return nil, err
	}
	sharded := opts.Shard.Count > 1
	if sharded {
		if opts.Shard.Index < 0 || opts.Shard.Index >= opts.Shard.Count {
			return nil, fmt.Errorf("shard index %d is outside 0…%d", opts.Shard.Index, opts.Shard.Count-1)
		}
		if err := prepareDataset(target, files); err != nil {
			return nil, err
		}
	} else if err := checkTarget(target, files); err != nil {
		return nil, err
	}
	clock.lap("plan")

	rs, src, err := openBatches(ctx, s, files, cal, opts)
	if err != nil {
		return nil, err
	}
	logf("read %d rows from %d file(s)", rs.rowCount, len(files))
	clock.lap("read")
	stallPoint("read")
	defer src.close()
	nSeries := len(rs.keys)
	rowsRead, missing, keyBlanks, notes := rs.rowCount, rs.missing, rs.keyBlanks, rs.notes
	if src.batches() > 1 {
		logf("%d series in %d batches", nSeries, src.batches())
	}
	// forEachSeries runs one pass over every series, batch by batch, with
	// global series indexes.
	forEachSeries := func(work func(i int, s *Series) any, emit func(i int, r any) error) error {
		offset := 0
		for b := 0; b < src.batches(); b++ {
			series, err := src.series(b)
			if err != nil {
				return err
			}
			base := offset
			if err := forEachOrdered(ctx, len(series), workers, func(i int) any {
				return work(base+i, series[i])
			}, func(i int, r any) error {
				return emit(base+i, r)
			}); err != nil {
				return err
			}
			offset += len(series)
		}
		return nil
	}
	clock.lap("shape")

	var staging string
	if sharded {
		// A killed earlier run of this shard may have left its staging.
		stale, _ := filepath.Glob(filepath.Join(target, tmpPrefix+shardName(opts.Shard.Index)+"-*"))
		for _, d := range stale {
			os.RemoveAll(d)
		}
		staging, err = os.MkdirTemp(target, tmpPrefix+shardName(opts.Shard.Index)+"-")
	} else {
		staging, err = makeStaging(target)
	}
	if err != nil {
		return nil, err
	}
	committed := false
	defer func() {
		if !committed {
			os.RemoveAll(staging)
		}
	}()
	runID := RunID(s, files)
	meta := map[string]string{
		"almanac.spec_sha256": s.Hash(),
		"almanac.version":     Version,
		"almanac.spec_name":   s.Name,
		"almanac.run_id":      runID,
	}
	w, err := openTables(staging, s, meta, mem)
	if err != nil {
		return nil, err
	}
	defer w.abort()

	// Run-level problems come first in the problems table.
	for _, p := range notes {
		w.problem(p)
	}
	if keyBlanks > 0 {
		w.problem(problem{stage: "read", severity: "warning",
			message: fmt.Sprintf("%d rows have an empty key value; they form series whose key holds an empty string", keyBlanks)})
	}
	if missing > 0 {
		w.problem(problem{stage: "read", severity: "warning",
			message: fmt.Sprintf("%d rows have an empty or NaN value; they count as missing", missing)})
	}

	work := &seriesWork{spec: s, cal: cal, methods: methods, decomposer: decomposer, wrap: opts.wrapMethod,
		wantVariance: s.Intervals.Source == "model" && len(s.Intervals.Levels) > 0,
		eval:         newEvaluation(s, nSeries)}
	w.startSinks(cal, work.eval)
	if e := work.eval; e != nil {
		// Pass 1: backtest every series; write accuracy and choices.
		if opts.Progress != nil {
			opts.Progress.Start(nSeries)
		}
		err = forEachSeries(func(i int, se *Series) any {
			return work.backtest(se)
		}, func(i int, res any) error {
			r := res.(*backtestResult)
			if opts.Progress != nil {
				opts.Progress.Add(1)
			}
			e.record(i, r)
			e.choices[i].problems = r.problems
			return w.writeBacktest(r)
		})
		if opts.Progress != nil {
			opts.Progress.Finish()
		}
		if err != nil {
			return nil, err
		}
		e.finishPass1()
		clock.lap("backtest")
		logf("backtested %d series", nSeries)
	}

	if opts.Progress != nil {
		opts.Progress.Start(nSeries)
	}
	err = forEachSeries(func(i int, se *Series) any {
		return work.process(i, se)
	}, func(i int, res any) error {
		if opts.Progress != nil {
			opts.Progress.Add(1)
		}
		if i == nSeries/2 {
			stallPoint("forecast")
			if midRunHook != nil {
				midRunHook()
			}
		}
		return w.write(res.(*seriesResult), cal)
	})
	if opts.Progress != nil {
		opts.Progress.Finish()
	}
	if err != nil {
		return nil, err
	}
	clock.lap("forecast")
	if err := w.close(); err != nil {
		return nil, err
	}
	clock.lap("write")
	stallPoint("tables")

	man := &Manifest{
		Almanac:   Version,
		GoVersion: runtime.Version(),
		RunID:     runID,
		Spec: ManifestSpec{
			Name: s.Name, File: s.File, Dir: s.Dir, SHA256: s.Hash(), Canonical: json.RawMessage(s.Canonical()),
		},
		Inputs:        files,
		RowsRead:      rowsRead,
		MissingValues: missing,
		Series:        w.series,
		Workers:       workers,
		Problems:      ProblemCounts{Errors: w.errors, Warnings: w.warnings},
		StartedAt:     started.UTC().Format(time.RFC3339Nano),
	}
	if work.eval != nil {
		man.Leaderboard = work.eval.leaderboard(w.series)
	}
	if sharded {
		man.Shard = &ShardInfo{Index: opts.Shard.Index, Count: opts.Shard.Count}
	}
	for _, m := range methods {
		man.Methods = append(man.Methods, ManifestMethod{Label: m.spec.Label, Method: m.spec.Method, Options: m.spec.Options,
			Series: w.methodSeries[m.spec.Label]})
	}
	for _, t := range w.tables() {
		sum, err := hashFile(t.path)
		if err != nil {
			return nil, err
		}
		st, _ := os.Stat(t.path)
		man.Tables = append(man.Tables, TableInfo{Name: t.name, File: t.name + ".parquet", Rows: t.rows, Bytes: st.Size(), SHA256: sum})
	}
	if opts.beforeCommit != nil {
		if err := opts.beforeCommit(staging); err != nil {
			return nil, err
		}
	}
	clock.lap("commit")
	man.Stages = clock.stages
	man.FinishedAt = time.Now().UTC().Format(time.RFC3339Nano)
	man.Seconds = math.Round(time.Since(started).Seconds()*1e6) / 1e6
	if err := writeManifest(filepath.Join(staging, "manifest.json"), man); err != nil {
		return nil, err
	}
	if sharded {
		var names []string
		for _, t := range man.Tables {
			names = append(names, t.Name)
		}
		if err := commitShard(staging, target, opts.Shard, names); err != nil {
			return nil, err
		}
		committed = true
		return &Summary{Dir: target, Manifest: man}, nil
	}
	if err := writeLineage(filepath.Join(staging, LineageFile), man, target); err != nil {
		return nil, err
	}
	if opts.Finish != nil {
		if err := opts.Finish(staging, target); err != nil {
			return nil, err
		}
	}
	stallPoint("commit")
	if err := commitStaging(staging, target); err != nil {
		return nil, err
	}
	committed = true
	return &Summary{Dir: target, Manifest: man}, nil
}

// StallEnv names the environment variable of the crash-safety tests: when
// it holds a stage name (read, forecast, tables, commit), the run says
// "almanac: stalled at <stage>" on stderr at that point and blocks, so that
// a test can kill the process there. Not for production use.
const StallEnv = "ALMANAC_TEST_STALL_AT"

func stallPoint(name string) {
	if os.Getenv(StallEnv) != name {
		return
	}
	fmt.Fprintf(os.Stderr, "almanac: stalled at %s\n", name)
	select {}
}

// openBatches reads the inputs (spilling past the batch size), checks the
// series limit and lays out the key-range batches that plan and run walk.
func openBatches(ctx context.Context, s *spec.Spec, files []InputFile, cal calendar, opts Options) (*rowSet, *batchSource, error) {
	batchRows := opts.BatchRows
	if batchRows <= 0 {
		batchRows = DefaultBatchRows
	}
	rs, err := readInputs(ctx, s, files, cal, batchRows, opts.Shard)
	if err != nil {
		return nil, nil, err
	}
	if n := len(rs.keys); n > s.Limits.MaxSeries {
		rs.spill.close()
		return nil, nil, fmt.Errorf("the input holds %d series; limits.max_series is %d (raise it in the spec if this is right)", n, s.Limits.MaxSeries)
	}
	src, err := newBatchSource(rs, batchRows, func(b *rowSet) ([]*Series, error) {
		return shapeRows(b, s.Shaping, s.Limits, cal, s.Columns.Keys)
	})
	if err != nil {
		rs.spill.close()
		return nil, nil, err
	}
	return rs, src, nil
}

// midRunHook, when set (by tests), runs halfway through the final pass.
var midRunHook func()

// forEachOrdered runs work(i) for i in [0, n) on the given number of
// goroutines and calls emit(i, result) in index order from the calling
// goroutine. At most a few results per worker wait to be emitted, so memory
// stays bounded however large n is.
func forEachOrdered[R any](ctx context.Context, n, workers int, work func(int) R, emit func(int, R) error) error {
	if n == 0 {
		return nil
	}
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	window := workers * 4
	tokens := make(chan struct{}, window)
	jobs := make(chan int)
	type done struct {
		i int
		r R
	}
	results := make(chan done, window)
	var wg sync.WaitGroup
	go func() {
		defer close(jobs)
		for i := 0; i < n; i++ {
			select {
			case tokens <- struct{}{}:
			case <-ctx.Done():
				return
			}
			select {
			case jobs <- i:
			case <-ctx.Done():
				return
			}
		}
	}()
	for k := 0; k < workers; k++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range jobs {
				results <- done{i, work(i)}
			}
		}()
	}
	go func() { wg.Wait(); close(results) }()
	pending := make(map[int]R, window)
	next := 0
	var err error
	for d := range results {
		if err != nil {
			continue // drain
		}
		pending[d.i] = d.r
		for {
			r, ok := pending[next]
			if !ok {
				break
			}
			delete(pending, next)
			if e := emit(next, r); e != nil {
				err = e
				cancel()
				break
			}
			next++
			<-tokens
		}
	}
	if err == nil && next < n {
		if cerr := ctx.Err(); cerr != nil {
			return cerr
		}
		return fmt.Errorf("pipeline: %d of %d series were not processed", n-next, n)
	}
	return err
}

// seriesWork processes one series through decomposition and every method.
type seriesWork struct {
	spec       *spec.Spec
	cal        calendar
	methods    []methodRun
	decomposer engines.Decomposer
	wrap       func(engines.Method) engines.Method

	wantVariance bool        // model-based intervals asked for
	eval         *evaluation // nil without a backtest
}

func allMissing(y []float64) bool {
	for _, v := range y {
		if !math.IsNaN(v) {
			return false
		}
	}
	return true
}

func (w *seriesWork) process(i int, s *Series) *seriesResult {
	r := &seriesResult{series: s}
	add := func(stage, severity, method, msg string) {
		r.problems = append(r.problems, problem{key: s.Key, stage: stage, severity: severity, method: method, message: msg})
	}
	defer w.finish(i, r)
	if s.Skip != "" {
		add("shape", "error", "", s.Skip)
		return r
	}
	if allMissing(s.Values) {
		add("shape", "error", "", fmt.Sprintf("all %d values are missing; no decomposition or forecast", len(s.Values)))
		return r
	}
	m := w.spec.Calendar.SeasonLength
	if w.decomposer != nil {
		d, err := safeDecompose(w.decomposer, s.Values, m)
		if err != nil {
			add("decompose", "error", "", err.Error())
		} else {
			r.decomp = d
			for _, msg := range d.Warnings {
				add("decompose", "warning", "", msg)
			}
		}
	}
	h := w.spec.Horizon
	for _, mr := range w.methods {
		method := mr.method
		if w.wrap != nil {
			method = w.wrap(method)
		}
		label := mr.spec.Label
		res, err := safeForecast(method, s.Values, m, h, w.wantVariance)
		if err != nil {
			add("forecast", "error", label, trimName(err.Error(), mr.spec.Method))
			continue
		}
		for _, msg := range res.warnings {
			add("forecast", "warning", label, trimName(msg, mr.spec.Method))
		}
		r.forecasts = append(r.forecasts, methodForecast{label: label, model: res.model, values: res.fc, variance: res.variance})
	}
	return r
}

// finish adds what the evaluation decided to one series' final forecasts:
// the combination entry, the chosen flag, and prediction intervals.
func (w *seriesWork) finish(i int, r *seriesResult) {
	e := w.eval
	levels := w.spec.Intervals.Levels
	var choice seriesChoice
	if e != nil {
		choice = e.choices[i]
		r.problems = append(choice.problems, r.problems...)
		if e.combo != nil && len(choice.members) > 0 {
			var fcs [][]float64
			for _, m := range choice.members {
				for _, f := range r.forecasts {
					if f.label == m {
						fcs = append(fcs, f.values)
					}
				}
			}
			if len(fcs) == len(choice.members) {
				r.forecasts = append(r.forecasts, methodForecast{label: e.combo.Label,
					model:  fmt.Sprintf("combination(%s of %s)", e.combo.Kind, strings.Join(choice.members, ", ")),
					values: combineForecasts(e.combo.Kind, fcs)})
			} else {
				r.problems = append(r.problems, problem{key: r.series.Key, stage: "forecast", severity: "error", method: e.combo.Label,
					message: "a member of the combination failed on the full history; no combination forecast"})
			}
		}
	}
	if len(levels) == 0 && e == nil {
		return
	}
	scale := math.NaN()
	if len(levels) > 0 && r.series.Skip == "" {
		sc, _ := engines.PointScores(nil, nil, r.series.Values, w.spec.Calendar.SeasonLength)
		scale = sc.MASEScale
	}
	for k := range r.forecasts {
		f := &r.forecasts[k]
		f.chosen = e != nil && f.label == choice.chosen
		if len(levels) > 0 && (e == nil || f.chosen || w.spec.Intervals.AllMethods) {
			e.intervals(f, scale, levels, w.spec.Intervals.Source)
		}
	}
}

// trimName drops a leading "name: " from an engine's message: the method
// column of the problems table already says which method spoke.
func trimName(msg, name string) string {
	return strings.TrimPrefix(msg, name+": ")
}

func safeDecompose(d engines.Decomposer, y []float64, m int) (out *engines.Decomposition, err error) {
	defer func() {
		if p := recover(); p != nil {
			out, err = nil, panicError(p)
		}
	}()
	return d.Decompose(y, m)
}

// fitResult is one method fitted on one stretch of history.
type fitResult struct {
	fc       []float64
	model    string
	warnings []string
	variance []float64 // h-step forecast variance, when the method has one
}

// forecastVariancer is implemented by fitted models with a model-based
// forecast variance (see engines' optional interfaces).
type forecastVariancer interface {
	ForecastVariance(h int) []float64
}

// safeForecast fits and forecasts one method on one series. A panic inside
// the method is caught and becomes an error for this series and method only.
func safeForecast(m engines.Method, y []float64, season, h int, wantVariance bool) (res fitResult, err error) {
	defer func() {
		if p := recover(); p != nil {
			res, err = fitResult{}, panicError(p)
		}
	}()
	fitted, err := m.Fit(y, season)
	if err != nil {
		return fitResult{}, err
	}
	res.fc = fitted.Forecast(h)
	if len(res.fc) != h {
		return fitResult{}, fmt.Errorf("internal error: %s returned %d forecasts for a horizon of %d", m.Name(), len(res.fc), h)
	}
	res.model = m.Name()
	if d, ok := fitted.(engines.Described); ok {
		res.model = d.Describe()
	}
	if wr, ok := fitted.(engines.Warner); ok {
		res.warnings = wr.Warnings()
	}
	if fv, ok := fitted.(forecastVariancer); ok && wantVariance {
		if v := fv.ForecastVariance(h); len(v) == h {
			res.variance = v
		}
	}
	return res, nil
}

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

// runTables holds the open table writers of a run.
type runTables struct {
	forecasts, components, factors, problems *tableWriter
	accuracy, choices                        *tableWriter // nil without a backtest
	series                                   int
	errors, warnings                         int
	methodSeries                             map[string]int
	withChosen                               bool
	levels                                   int
	decomposition                            string // the decomposition's method name
	sinks1, sinks2                           []*sink
}

func openTables(dir string, s *spec.Spec, meta map[string]string, mem memory.Allocator) (*runTables, error) {
	keys := s.Columns.Keys
	rt := &runTables{methodSeries: map[string]int{}, withChosen: s.Backtest.Folds > 0, levels: len(s.Intervals.Levels), decomposition: s.Decomposition.Method}
	var err error
	open := func(name string, cols []column) *tableWriter {
		if err != nil {
			return nil
		}
		var t *tableWriter
		t, err = newTableWriter(dir, name, keys, cols, meta, mem)
		return t
	}
	rt.forecasts = open(TableForecasts, forecastColumns(s))
	if s.Backtest.Folds > 0 {
		rt.accuracy = open(TableAccuracy, accuracyCols)
		rt.choices = open(TableChoices, choiceCols)
	}
	rt.components = open(TableComponents, componentCols)
	rt.factors = open(TableSeasonalFactors, factorCols)
	rt.problems = open(TableProblems, problemCols)
	if err != nil {
		rt.abort()
		return nil, err
	}
	return rt, nil
}

func (rt *runTables) tables() []*tableWriter {
	out := []*tableWriter{rt.forecasts, rt.components, rt.factors, rt.problems}
	if rt.accuracy != nil {
		out = append(out, rt.accuracy, rt.choices)
	}
	return out
}

func (rt *runTables) abort() {
	rt.drain()
	for _, t := range rt.tables() {
		if t != nil {
			t.abort()
		}
	}
}

func (rt *runTables) close() error {
	if err := rt.drain(); err != nil {
		return err
	}
	for _, t := range rt.tables() {
		if err := t.close(); err != nil {
			return err
		}
	}
	return nil
}

func (rt *runTables) problem(p problem) error {
	t := rt.problems
	t.key(p.key)
	t.str(0, p.stage)
	t.str(1, p.severity)
	t.strOrNull(2, p.method)
	t.str(3, p.message)
	if p.severity == "error" {
		rt.errors++
	} else {
		rt.warnings++
	}
	return t.endRow()
}

// write hands one series' rows to the table writers, which encode them on
// goroutines of their own (see sinks); rows keep their order per table.
func (rt *runTables) write(r *seriesResult, cal calendar) error {
	rt.series++
	return rt.send(r)
}

func (rt *runTables) writeForecasts(r *seriesResult, cal calendar) error {
	s := r.series
	last := s.Start + int64(len(s.Values)) - 1
	for _, f := range r.forecasts {
		rt.methodSeries[f.label]++
		for k, v := range f.values {
			t := rt.forecasts
			t.key(s.Key)
			t.str(0, f.label)
			t.str(1, f.model)
			t.date(2, cal.startDays(last+int64(k)+1))
			t.int32(3, k+1)
			t.float(4, v)
			col := 5
			if rt.withChosen {
				t.boolean(col, f.chosen)
				col++
			}
			if rt.levels > 0 {
				t.strOrNull(col, f.intervalSource)
				col++
				for l := 0; l < rt.levels; l++ {
					lo, hi := math.NaN(), math.NaN()
					if f.lower != nil {
						lo, hi = f.lower[l][k], f.upper[l][k]
					}
					t.float(col, lo)
					t.float(col+1, hi)
					col += 2
				}
			}
			if err := t.endRow(); err != nil {
				return err
			}
		}
	}
	return nil
}

func (rt *runTables) writeComponents(r *seriesResult, cal calendar) error {
	s, d := r.series, r.decomp
	if d == nil {
		return nil
	}
	for i, obs := range s.Values {
		t := rt.components
		t.key(s.Key)
		t.str(0, rt.decomposition)
		t.str(1, d.Form)
		t.date(2, cal.startDays(s.Start+int64(i)))
		t.float(3, obs)
		t.float(4, d.Trend[i])
		t.float(5, d.Seasonal[i])
		t.float(6, d.Remainder[i])
		t.float(7, d.Adjusted[i])
		if err := t.endRow(); err != nil {
			return err
		}
	}
	return nil
}

func (rt *runTables) writeFactors(r *seriesResult, cal calendar) error {
	s, d := r.series, r.decomp
	if d == nil {
		return nil
	}
	m := len(d.Factors)
	byPos := make([]int, m) // calendar position-1 → factor index
	for j := 0; j < m; j++ {
		byPos[cal.position(s.Start+int64(j))-1] = j
	}
	for pos, j := range byPos {
		t := rt.factors
		t.key(s.Key)
		t.str(0, rt.decomposition)
		t.str(1, d.Form)
		t.int32(2, pos+1)
		t.float(3, d.Factors[j])
		t.int32(4, d.Counts[j])
		if err := t.endRow(); err != nil {
			return err
		}
	}
	return nil
}

func (rt *runTables) writeProblems(r *seriesResult) error {
	for _, p := range r.problems {
		if err := rt.problem(p); err != nil {
			return err
		}
	}
	return nil
}

// ProblemCounts counts problems rows by severity.
type ProblemCounts struct {
	Errors   int `json:"errors"`
	Warnings int `json:"warnings"`
}

// Manifest is manifest.json: what ran, on which inputs, and how long it took.
// Unlike the tables it holds wall-clock times, so it differs between reruns.
type Manifest struct {
	Almanac       string           `json:"almanac_version"`
	RunID         string           `json:"run_id"`
	GoVersion     string           `json:"go_version"`
	Spec          ManifestSpec     `json:"spec"`
	Inputs        []InputFile      `json:"inputs"`
	RowsRead      int64            `json:"rows_read"`
	MissingValues int64            `json:"missing_values"`
	Series        int              `json:"series"`
	Methods       []ManifestMethod `json:"methods"`
	Tables        []TableInfo      `json:"tables"`
	Problems      ProblemCounts    `json:"problems"`
	Leaderboard   *Leaderboard     `json:"leaderboard,omitempty"`
	Shard         *ShardInfo       `json:"shard,omitempty"`
	Workers       int              `json:"workers"`
	Stages        []StageTiming    `json:"stages"`
	StartedAt     string           `json:"started_at"`
	FinishedAt    string           `json:"finished_at"`
	Seconds       float64          `json:"seconds"`
}

// ManifestSpec identifies the spec of a run.
type ManifestSpec struct {
	Name      string          `json:"name"`
	File      string          `json:"file"`
	Dir       string          `json:"dir"` // absolute folder of the spec: input paths are relative to it
	SHA256    string          `json:"sha256"`
	Canonical json.RawMessage `json:"canonical"`
}

// ManifestMethod is one method of the run and how many series it forecast.
type ManifestMethod struct {
	Label   string         `json:"label"`
	Method  string         `json:"method"`
	Options map[string]any `json:"options"`
	Series  int            `json:"series_forecast"`
}

// TableInfo describes one table file of the run folder.
type TableInfo struct {
	Name   string `json:"name"`
	File   string `json:"file"`
	Rows   int64  `json:"rows"`
	Bytes  int64  `json:"bytes"`
	SHA256 string `json:"sha256"`
}

// StageTiming is the wall time of one stage.
type StageTiming struct {
	Stage   string  `json:"stage"`
	Seconds float64 `json:"seconds"`
}

func writeManifest(path string, m *Manifest) error {
	b, err := json.MarshalIndent(m, "", "  ")
	if err != nil {
		return err
	}
	b = append(b, '\n')
	if err := os.WriteFile(path, b, 0o644); err != nil {
		return err
	}
	return fsyncPath(path)
}

// ReadManifest reads a run folder's manifest.json.
func ReadManifest(dir string) (*Manifest, error) {
	b, err := os.ReadFile(filepath.Join(dir, "manifest.json"))
	if err != nil {
		return nil, err
	}
	var m Manifest
	if err := json.Unmarshal(b, &m); err != nil {
		return nil, fmt.Errorf("%s: %v", filepath.Join(dir, "manifest.json"), err)
	}
	return &m, nil
}
