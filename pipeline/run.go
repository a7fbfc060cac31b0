// Package pipeline compiles an almanac spec into a Plan and runs it. The
// stages live in sub-packages named for them — ingest (files → rows),
// series (rows → series), forecast (one series × every method), evaluate
// (backtests, selection, intervals), runfolder (the output contract) — and
// this package only wires them together: Compile, Plan.Run, Verify.
package pipeline

import (
	"context"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"time"

	"github.com/apache/arrow-go/v18/arrow/memory"

	"almanac/pipeline/evaluate"
	"almanac/pipeline/forecast"
	"almanac/pipeline/ingest"
	"almanac/pipeline/runfolder"
	"almanac/pipeline/series"
	"almanac/spec"
)

// Version is almanac's version (see runfolder.Version).
const Version = runfolder.Version

// DefaultBatchRows is how many input rows a run holds in memory at once.
const DefaultBatchRows = ingest.DefaultBatchRows

// Shard selects the series one task of a sharded run processes.
type Shard = ingest.Shard

// Manifest is manifest.json (see runfolder.Manifest).
type Manifest = runfolder.Manifest

// DataError is bad input data, naming file and line.
type DataError = ingest.DataError

// MaxShards bounds a sharded run's shard count (see runfolder.MaxShards).
const MaxShards = runfolder.MaxShards

// CheckSources checks that a spec's sources exist and name its columns,
// reading headers and schemas only (see ingest.CheckSources).
func CheckSources(s *spec.Spec) error { return ingest.CheckSources(s) }

// CheckEvents reads and validates a spec's event sources row by row (see
// ingest.ReadEvents); the checks against the data (key values, the
// horizon) need a plan or a run. It returns nil, nil without events.
func CheckEvents(ctx context.Context, s *spec.Spec) (*ingest.Events, error) {
	if len(s.Events) == 0 {
		return nil, nil
	}
	files, err := ingest.ResolveEvents(s)
	if err != nil {
		return nil, err
	}
	return ingest.ReadEvents(ctx, s, files)
}

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
	// part files into the dataset folder (see runfolder.CommitShard and Combine).
	Shard Shard
	// CleanShards lets a shard run remove the parts and manifests that a
	// run with another shard count left in the dataset folder.
	CleanShards bool

	// Finish, when set, runs once the tables, manifest and lineage are
	// staged and before the run folder is committed, with the staging
	// folder and the target (which still holds the previous run, if any);
	// an error fails the run. The CLI writes the HTML report here.
	Finish func(staging, target string) error
}

// workerCount is Workers, or the number of CPUs when it is 0 or less.
func (o Options) workerCount() int {
	if o.Workers <= 0 {
		return runtime.NumCPU()
	}
	return o.Workers
}

// Summary is what a run reports when it finishes.
type Summary struct {
	Dir      string
	Manifest *Manifest
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

type stageClock struct {
	stages []runfolder.StageTiming
	last   time.Time
}

func (c *stageClock) lap(name string) {
	now := time.Now()
	c.stages = append(c.stages, runfolder.StageTiming{Stage: name, Seconds: math.Round(now.Sub(c.last).Seconds()*1e6) / 1e6})
	c.last = now
}

// Run compiles s and runs the plan. On any error nothing is left at the
// target except what was there before.
func Run(ctx context.Context, s *spec.Spec, opts Options) (*Summary, error) {
	started := time.Now()
	p, err := Compile(s, opts)
	if err != nil {
		return nil, err
	}
	return p.Run(ctx, opts, started)
}

// execution is the state of one run of a plan.
type execution struct {
	p         *Plan
	opts      Options
	workers   int
	started   time.Time
	clock     *stageClock
	rows      *ingest.Rows
	batches   *ingest.Batches[*series.Series]
	staging   string
	runID     string
	tables    *runTables
	eval      *evaluate.Evaluation
	work      *forecast.Work
	committed bool
}

// Run executes the plan and commits the run folder; started is when the
// run began (it is recorded in the manifest).
func (p *Plan) Run(ctx context.Context, opts Options, started time.Time) (*Summary, error) {
	x := &execution{p: p, opts: opts, workers: opts.workerCount(), started: started, clock: &stageClock{last: started}}
	shardIndex := -1
	if p.Shard.Count > 1 {
		shardIndex = p.Shard.Index
	}
	unlock, err := runfolder.LockTarget(p.Out, shardIndex)
	if err != nil {
		return nil, err
	}
	defer unlock()
	ingest.RemoveStaleSpills()
	if p.Shard.Count > 1 {
		if err := runfolder.PrepareDataset(p.Out, p.inputs(), p.Shard.Count, opts.CleanShards); err != nil {
			return nil, err
		}
	}
	x.clock.lap("plan")
	if err := x.read(ctx); err != nil {
		return nil, err
	}
	defer x.batches.Close()
	x.clock.lap("shape")
	if err := x.openStaging(); err != nil {
		return nil, err
	}
	defer runfolder.TrackLive(x.staging)()
	defer func() {
		if !x.committed {
			// The run failed and reports why; a staging folder that cannot
			// be removed is hidden, marked, and cleaned by the next run.
			_ = os.RemoveAll(x.staging)
		}
	}()
	if err := x.openTables(); err != nil {
		return nil, err
	}
	defer x.tables.abort()
	if err := x.backtest(ctx); err != nil {
		return nil, err
	}
	if err := x.forecast(ctx); err != nil {
		return nil, err
	}
	x.clock.lap("forecast")
	if err := x.tables.close(); err != nil {
		return nil, err
	}
	x.clock.lap("write")
	man, err := x.manifest()
	if err != nil {
		return nil, err
	}
	if err := x.commit(man); err != nil {
		return nil, err
	}
	return &Summary{Dir: p.Out, Manifest: man}, nil
}

func (x *execution) logf(format string, args ...any) {
	if x.opts.Log != nil {
		fmt.Fprintf(x.opts.Log, format+"\n", args...)
	}
}

// read reads the inputs and lays out the key-range batches.
func (x *execution) read(ctx context.Context) error {
	p := x.p
	rs, src, err := p.openBatches(ctx, x.opts)
	if err != nil {
		return err
	}
	x.rows, x.batches = rs, src
	x.logf("read %d rows from %d file(s)", rs.RowCount, len(p.Inputs))
	x.clock.lap("read")
	if src.Count() > 1 {
		x.logf("%d series in %d batches", len(rs.Keys), src.Count())
	}
	return nil
}

// openStaging makes the folder the run writes into before it commits.
func (x *execution) openStaging() error {
	var err error
	if x.p.Shard.Count > 1 {
		x.staging, err = runfolder.ShardStaging(x.p.Out, x.p.Shard.Index)
	} else {
		x.staging, err = runfolder.MakeStaging(x.p.Out)
	}
	return err
}

// openTables opens the table writers, writes the run-level problems and
// starts the writers' goroutines.
func (x *execution) openTables() error {
	p, s := x.p, x.p.Spec
	x.runID = runfolder.RunID(s, p.inputs())
	meta := map[string]string{
		"almanac.spec_sha256": s.Hash(),
		"almanac.version":     Version,
		"almanac.spec_name":   s.Name,
		"almanac.run_id":      x.runID,
	}
	mem := x.opts.Mem
	if mem == nil {
		mem = memory.DefaultAllocator
	}
	w, err := openTables(x.staging, s, meta, mem)
	if err != nil {
		return err
	}
	x.tables = w
	// Run-level problems come first in the problems table.
	for _, p := range x.rows.Notes {
		w.problem(p)
	}
	if n := x.rows.KeyBlanks; n > 0 {
		w.problem(runfolder.Problem{Stage: "read", Severity: "warning", Code: runfolder.CodeEmptyKey,
			Message: fmt.Sprintf("%d rows have an empty key value; they form series whose key holds an empty string", n)})
	}
	if n := x.rows.Missing; n > 0 {
		w.problem(runfolder.Problem{Stage: "read", Severity: "warning", Code: runfolder.CodeMissingValues,
			Message: fmt.Sprintf("%d rows have an empty or NaN value; they count as missing", n)})
	}
	x.work = &forecast.Work{Spec: s, Methods: p.Methods, Decomposer: p.Decomposer,
		WantVariance: s.Intervals.Source == "model" && len(s.Intervals.Levels) > 0}
	x.eval = evaluate.New(s, len(x.rows.Keys))
	w.startSinks(p.Cal, x.eval)
	return nil
}

// forEachSeries runs one pass over every series, batch by batch, with
// global series indexes, emitting results in series order.
func forEachSeries[R any](ctx context.Context, x *execution, work func(i int, s *series.Series) R, emit func(i int, r R) error) error {
	src := x.batches
	offset := 0
	for b := 0; b < src.Count(); b++ {
		batch, err := src.Batch(b)
		if err != nil {
			return err
		}
		base := offset
		if err := forEachOrdered(ctx, len(batch), x.workers, func(i int) R {
			return work(base+i, batch[i])
		}, func(i int, r R) error {
			return emit(base+i, r)
		}); err != nil {
			return err
		}
		offset += len(batch)
	}
	return nil
}

// pass runs one pass with progress reporting.
func pass[R any](ctx context.Context, x *execution, work func(i int, s *series.Series) R, emit func(i int, r R) error) error {
	pr := x.opts.Progress
	if pr != nil {
		pr.Start(len(x.rows.Keys))
	}
	err := forEachSeries(ctx, x, work, func(i int, r R) error {
		if pr != nil {
			pr.Add(1)
		}
		return emit(i, r)
	})
	if pr != nil {
		pr.Finish()
	}
	return err
}

// backtest is pass 1: backtest every series; write accuracy and choices.
func (x *execution) backtest(ctx context.Context) error {
	e := x.eval
	if e == nil {
		return nil
	}
	err := pass(ctx, x, func(i int, se *series.Series) *evaluate.Backtest {
		return e.Backtest(x.work, se)
	}, func(i int, r *evaluate.Backtest) error {
		e.Record(i, r)
		return x.tables.writeBacktest(r)
	})
	if err != nil {
		return err
	}
	e.FinishPass1()
	x.clock.lap("backtest")
	x.logf("backtested %d series", len(x.rows.Keys))
	return nil
}

// forecast is pass 2: the final forecasts, with what the evaluation chose.
func (x *execution) forecast(ctx context.Context) error {
	return pass(ctx, x, func(i int, se *series.Series) *forecast.Result {
		r := x.work.Run(se)
		x.eval.Finish(x.p.Spec, i, r)
		forecast.CloseBounds(r)
		return r
	}, func(i int, r *forecast.Result) error {
		return x.tables.write(r)
	})
}

// manifest builds the run's manifest once every table is written.
func (x *execution) manifest() (*Manifest, error) {
	p, s, w := x.p, x.p.Spec, x.tables
	man := &Manifest{
		Almanac:   Version,
		GoVersion: runtime.Version(),
		RunID:     x.runID,
		Spec: runfolder.ManifestSpec{
			Name: s.Name, File: s.File, Dir: s.Dir, DirFromRun: runfolder.DirFromRun(p.Out, s.Dir), SHA256: s.Hash(), Canonical: s.Canonical(),
		},
		Inputs:        p.inputs(),
		RowsRead:      x.rows.RowCount,
		MissingValues: x.rows.Missing,
		Series:        w.series,
		Workers:       x.workers,
		Problems:      runfolder.ProblemCounts{Errors: w.errors, Warnings: w.warnings},
		StartedAt:     x.started.UTC().Format(time.RFC3339Nano),
	}
	if x.eval != nil {
		man.Leaderboard = x.eval.Leaderboard(w.series)
	}
	if p.Shard.Count > 1 {
		man.Shard = &runfolder.ShardInfo{Index: p.Shard.Index, Count: p.Shard.Count}
	}
	for _, m := range p.Methods {
		man.Methods = append(man.Methods, runfolder.ManifestMethod{Label: m.Spec.Label, Method: m.Spec.Method, Options: m.Spec.Options,
			Series: w.methodSeries[m.Spec.Label]})
	}
	for _, t := range w.tables() {
		man.Tables = append(man.Tables, runfolder.TableInfo{Name: t.Name(), File: t.Name() + ".parquet", Rows: t.Rows(), Bytes: t.Size(), SHA256: t.SHA256()})
	}
	return man, nil
}

// commit writes the manifest (and lineage, and the report) into the
// staging folder and commits it: as the run folder, or as a shard's parts.
func (x *execution) commit(man *Manifest) error {
	staging, target := x.staging, x.p.Out
	x.clock.lap("commit")
	man.Stages = x.clock.stages
	man.FinishedAt = time.Now().UTC().Format(time.RFC3339Nano)
	man.Seconds = math.Round(time.Since(x.started).Seconds()*1e6) / 1e6
	if err := runfolder.WriteManifest(filepath.Join(staging, runfolder.ManifestFile), man); err != nil {
		return err
	}
	if x.p.Shard.Count > 1 {
		var names []string
		for _, t := range man.Tables {
			names = append(names, t.Name)
		}
		if err := runfolder.CommitShard(staging, target, x.p.Shard.Index, names); err != nil {
			return err
		}
		x.committed = true
		return nil
	}
	if err := runfolder.WriteLineage(filepath.Join(staging, runfolder.LineageFile), man, target); err != nil {
		return err
	}
	if x.opts.Finish != nil {
		if err := x.opts.Finish(staging, target); err != nil {
			return err
		}
		// The report depends on the previous run: the manifest records its
		// hash, so that verify can tell it was not altered.
		if sum, err := runfolder.HashFile(filepath.Join(staging, runfolder.ReportFile)); err == nil {
			st, _ := os.Stat(filepath.Join(staging, runfolder.ReportFile))
			man.Report = &runfolder.TableInfo{Name: "report", File: runfolder.ReportFile, Bytes: st.Size(), SHA256: sum}
			if err := runfolder.WriteManifest(filepath.Join(staging, runfolder.ManifestFile), man); err != nil {
				return err
			}
		}
	}
	if err := runfolder.CommitStaging(staging, target); err != nil {
		return err
	}
	x.committed = true
	return nil
}

// openBatches reads the inputs (spilling past the batch size), checks the
// series limit, reads and checks the event sources (p.Events) and lays out
// the key-range batches that plan and run walk; each batch's series get
// their events as they are shaped.
func (p *Plan) openBatches(ctx context.Context, opts Options) (*ingest.Rows, *ingest.Batches[*series.Series], error) {
	s, cal := p.Spec, p.Cal
	batchRows := opts.BatchRows
	if batchRows <= 0 {
		batchRows = DefaultBatchRows
	}
	rs, err := ingest.Read(ctx, s, p.Inputs, cal, batchRows, opts.Shard)
	if err != nil {
		return nil, nil, err
	}
	if err := ingest.Guard(rs, s, cal); err != nil {
		rs.Close()
		return nil, nil, err
	}
	if n := len(rs.Keys); n > s.Limits.MaxSeries {
		rs.Close()
		return nil, nil, fmt.Errorf("the input holds %d series; limits.max_series is %d (raise it in the spec if this is right)", n, s.Limits.MaxSeries)
	}
	var attach *series.Attacher
	if len(s.Events) > 0 {
		ev, err := ingest.ReadEvents(ctx, s, p.EventFiles)
		if err == nil {
			err = ev.Check(rs, s, cal)
		}
		if err != nil {
			rs.Close()
			return nil, nil, err
		}
		p.Events = ev
		attach = series.NewAttacher(ev, cal, s.Horizon)
	}
	workers := opts.workerCount()
	src, err := ingest.NewBatches(rs, batchRows, func(b *ingest.Rows) ([]*series.Series, error) {
		out, err := series.Shape(b, s.Shaping, s.Limits, cal, s.Columns.Keys, workers)
		if err == nil && attach != nil {
			for _, se := range out {
				attach.Attach(se)
			}
		}
		return out, err
	})
	if err != nil {
		rs.Close()
		return nil, nil, err
	}
	return rs, src, nil
}
