// Command almanac runs declarative forecast specs: it reads the tables a
// spec names, shapes them into series, decomposes and forecasts each, and
// writes Parquet tables into a run folder.
//
// Exit codes are in exitcodes.go.
package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"os/signal"
	"runtime"
	"runtime/debug"
	"runtime/pprof"
	"strconv"
	"strings"
	"syscall"

	"github.com/urfave/cli/v2"
	"golang.org/x/term"

	"almanac/pipeline"
	"almanac/pipeline/review/report"
	"almanac/pipeline/runfolder"
	"almanac/spec"
)

// exitError carries an exit code through urfave/cli.
type exitError struct {
	code int
	err  error
}

func (e *exitError) Error() string { return e.err.Error() }
func (e *exitError) Unwrap() error { return e.err }

func main() {
	ctx, cancel := context.WithCancel(context.Background())
	stop := onSignals(cancel, os.Stderr, func() {
		runfolder.RemoveLive() // the abandoned run's staging and spill folders
		os.Exit(exitInterrupted)
	})
	code := run(ctx, os.Args, os.Stdout, os.Stderr)
	stop()
	os.Exit(code)
}

// onSignals cancels the work on the first SIGINT or SIGTERM (the run stops
// and removes its staging; the target is untouched, since a run only
// appears by its atomic commit) and calls exit on the second, for a person
// who does not want to wait. It returns a function that stops listening.
func onSignals(cancel context.CancelFunc, stderr io.Writer, exit func()) func() {
	sigs := make(chan os.Signal, 2)
	signal.Notify(sigs, os.Interrupt, syscall.SIGTERM)
	done := make(chan struct{})
	go func() {
		select {
		case s := <-sigs:
			fmt.Fprintf(stderr, "almanac: %v: stopping (send it again to exit at once)\n", s)
			cancel()
		case <-done:
			return
		}
		select {
		case s := <-sigs:
			fmt.Fprintf(stderr, "almanac: %v again: exiting now\n", s)
			exit()
		case <-done:
		}
	}()
	return func() {
		signal.Stop(sigs)
		close(done)
	}
}

// run is the whole program: it parses args, does the work, and maps any
// error to an exit code.
func run(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	app := newApp(stdout, stderr)
	err := app.RunContext(ctx, flagsFirst(app, args))
	if err == nil {
		return exitOK
	}
	if ctx.Err() != nil {
		// Only a signal cancels ctx: whatever error the work ended with
		// follows from the interruption.
		fmt.Fprintln(stderr, "almanac: interrupted; the target was left as it was")
		return exitInterrupted
	}
	var ee *exitError
	if errors.As(err, &ee) {
		if ee.err != nil && ee.err.Error() != "" {
			fmt.Fprintln(stderr, ee.err)
		}
		return ee.code
	}
	// urfave/cli reports flag and command mistakes as plain errors.
	fmt.Fprintln(stderr, "almanac:", err)
	return exitSpec
}

// flagsFirst moves a command's flags in front of its arguments, so that
// "almanac run spec.yaml --workers 2" works as people type it (urfave/cli
// stops reading flags at the first argument). Which flags take a value is
// read from the command's own flag definitions: a flag written without "="
// takes the next argument as its value unless it is a boolean flag.
func flagsFirst(app *cli.App, args []string) []string {
	if len(args) < 3 {
		return args
	}
	cmd := app.Command(args[1])
	if cmd == nil {
		return args
	}
	noValue := map[string]bool{}
	for _, f := range append([]cli.Flag{cli.HelpFlag}, cmd.Flags...) {
		if df, ok := f.(cli.DocGenerationFlag); ok && !df.TakesValue() {
			for _, n := range f.Names() {
				noValue[n] = true
			}
		}
	}
	out := append([]string{}, args[:2]...)
	var rest []string
	for i := 2; i < len(args); i++ {
		a := args[i]
		switch {
		case a == "--":
			rest = append(rest, args[i:]...)
			i = len(args)
		case strings.HasPrefix(a, "-") && len(a) > 1:
			out = append(out, a)
			name := strings.TrimLeft(a, "-")
			if !noValue[name] && !strings.Contains(a, "=") && i+1 < len(args) {
				out = append(out, args[i+1])
				i++
			}
		default:
			rest = append(rest, a)
		}
	}
	return append(out, rest...)
}

func newApp(stdout, stderr io.Writer) *cli.App {
	return &cli.App{
		Name:            "almanac",
		Usage:           "run declarative forecast specs: CSV/Parquet in, forecasts as Parquet out",
		Version:         pipeline.Version,
		Writer:          stdout,
		ErrWriter:       stderr,
		HideHelpCommand: true,
		ExitErrHandler:  func(*cli.Context, error) {}, // run maps errors to exit codes
		Commands: []*cli.Command{
			{
				Name:      "check",
				Usage:     "validate specs (every error with file:line:col) and that their sources exist and name the spec's columns (headers only)",
				ArgsUsage: "SPEC...",
				Action:    checkCmd,
			},
			{
				Name:      "plan",
				Usage:     "print the compiled stages, inputs, series count and methods; fits nothing, writes nothing",
				ArgsUsage: "SPEC",
				Flags:     []cli.Flag{outFlag(), asOfFlag()},
				Action:    planCmd,
			},
			diffCommand(),
			explainCommand(),
			panelCommand(),
			{
				Name:      "combine",
				Usage:     "check that every shard of a sharded run is present and complete, and write the dataset's combined manifest",
				ArgsUsage: "DATASET_DIR",
				Action:    combineCmd,
			},
			{
				Name:      "verify",
				Usage:     "rerun a stored run from its manifest and compare every table byte for byte (exit 0 identical, 1 differs, 3 inputs changed or missing, 4 unusable run folder or manifest)",
				ArgsUsage: "RUN_DIR",
				Flags: []cli.Flag{
					&cli.StringFlag{Name: "input-root", Usage: "resolve the run's input paths against this folder instead of the spec's folder"},
					&cli.IntFlag{Name: "workers", Aliases: []string{"w"}, Value: runtime.NumCPU(), Usage: "series processed in parallel"},
				},
				Action: verifyCmd,
			},
			{
				Name:      "run",
				Usage:     "run a spec and write its run folder",
				ArgsUsage: "SPEC",
				Flags: []cli.Flag{
					outFlag(),
					asOfFlag(),
					&cli.IntFlag{Name: "workers", Aliases: []string{"w"}, Value: runtime.NumCPU(), Usage: "series processed in parallel"},
					&cli.BoolFlag{Name: "quiet", Aliases: []string{"q"}, Usage: "no progress output"},
					&cli.IntFlag{Name: "shard-count", Usage: "split the run into this many shards by a stable hash of each series' key; this process does one"},
					&cli.BoolFlag{Name: "clean-shards", Usage: "remove the parts and manifests a run with another shard count left in the dataset folder"},
					&cli.IntFlag{Name: "shard-index", Value: -1, Usage: "the shard this process does, 0-based (default: $JOB_COMPLETION_INDEX, as Kubernetes Indexed Jobs set it)"},
					&cli.Int64Flag{Name: "batch-rows", Value: pipeline.DefaultBatchRows, Usage: "input rows held in memory at once; larger inputs are spilled to a temporary folder and processed in key-range batches"},
					&cli.StringFlag{Name: "memory-limit", Value: "3GiB", Usage: "soft memory limit for the Go runtime (e.g. 3GiB, 800MiB; 0 for none); the environment's GOMEMLIMIT wins when set"},
					&cli.StringFlag{Name: "cpuprofile", Usage: "write a CPU profile (pprof) of the run to this file"},
					&cli.StringFlag{Name: "memprofile", Usage: "write an allocation profile (pprof) of the run to this file when it ends"},
				},
				Action: runCmd,
			},
		},
	}
}

func asOfFlag() cli.Flag {
	return &cli.StringFlag{Name: "as-of", Usage: "ignore rows dated after this day (YYYY-MM-DD); overrides the spec's shaping.until and is recorded in the manifest"}
}

// applyAsOf sets the spec's cut-off from --as-of.
func applyAsOf(c *cli.Context, s *spec.Spec) error {
	v := c.String("as-of")
	if v == "" {
		return nil
	}
	if msg := spec.CheckDay(v); msg != "" {
		return &exitError{exitSpec, fmt.Errorf("almanac %s: --as-of: %s", c.Command.Name, msg)}
	}
	s.Shaping.Until = v
	return nil
}

func outFlag() cli.Flag {
	return &cli.StringFlag{Name: "out", Aliases: []string{"o"}, Usage: "run folder, instead of the spec's output"}
}

// loadSpec is the one loader check, plan and run share.
func loadSpec(path string, stderr io.Writer) (*spec.Spec, error) {
	s, err := spec.Load(path)
	if err == nil {
		return s, nil
	}
	var list spec.ErrorList
	if errors.As(err, &list) {
		fmt.Fprint(stderr, list.Pretty(readBounded(path)))
		noun := "errors"
		if len(list) == 1 {
			noun = "error"
		}
		return nil, &exitError{exitSpec, fmt.Errorf("%s: %d %s", path, len(list), noun)}
	}
	return nil, &exitError{exitSpec, err}
}

// readBounded reads at most the spec size limit from path, for showing the
// lines an error points at (a device such as /dev/zero never ends).
func readBounded(path string) []byte {
	f, err := os.Open(path)
	if err != nil {
		return nil
	}
	defer f.Close()
	b, _ := io.ReadAll(io.LimitReader(f, spec.MaxSpecBytes))
	return b
}

func oneSpec(c *cli.Context) (string, error) {
	if c.NArg() != 1 {
		return "", &exitError{exitSpec, fmt.Errorf("almanac %s: expected one SPEC argument, got %d", c.Command.Name, c.NArg())}
	}
	return c.Args().First(), nil
}

func checkCmd(c *cli.Context) error {
	if c.NArg() == 0 {
		return &exitError{exitSpec, errors.New("almanac check: expected at least one SPEC argument")}
	}
	bad := 0
	for _, path := range c.Args().Slice() {
		s, err := loadSpec(path, c.App.ErrWriter)
		if err != nil {
			var ee *exitError
			if errors.As(err, &ee) {
				fmt.Fprintln(c.App.ErrWriter, ee.err)
			}
			bad++
			continue
		}
		if err := pipeline.CheckSources(s); err != nil {
			fmt.Fprintln(c.App.ErrWriter, err)
			fmt.Fprintf(c.App.ErrWriter, "%s: the inputs do not match the spec\n", path)
			bad++
			continue
		}
		ev, err := pipeline.CheckEvents(c.Context, s)
		if err != nil {
			fmt.Fprintln(c.App.ErrWriter, err)
			fmt.Fprintf(c.App.ErrWriter, "%s: the event sources are not valid\n", path)
			bad++
			continue
		}
		fmt.Fprintf(c.App.Writer, "%s: ok (%s, %d method(s), sha256 %s; inputs name its columns)\n", path, s.Name, len(s.Methods), s.Hash()[:16])
		if ev != nil {
			names := strings.Join(ev.Names, ", ")
			if names == "" {
				names = "(none)"
			}
			fmt.Fprintf(c.App.Writer, "%s: events: %d closure row(s), %d driver row(s), drivers %s (key values and the horizon are checked by plan and run)\n",
				path, len(ev.Closures), len(ev.Drivers), names)
		}
	}
	if bad > 0 {
		return &exitError{exitSpec, nil}
	}
	return nil
}

func planCmd(c *cli.Context) error {
	path, err := oneSpec(c)
	if err != nil {
		return err
	}
	s, err := loadSpec(path, c.App.ErrWriter)
	if err != nil {
		return err
	}
	if err := applyAsOf(c, s); err != nil {
		return err
	}
	p, err := pipeline.MakePlan(c.Context, s, pipeline.Options{Out: c.String("out")})
	if err != nil {
		return &exitError{exitRun, err}
	}
	p.Print(c.App.Writer)
	return nil
}

func runCmd(c *cli.Context) error {
	path, err := oneSpec(c)
	if err != nil {
		return err
	}
	s, err := loadSpec(path, c.App.ErrWriter)
	if err != nil {
		return err
	}
	if err := applyAsOf(c, s); err != nil {
		return err
	}
	workers := c.Int("workers")
	if workers < 1 {
		return &exitError{exitSpec, fmt.Errorf("almanac run: --workers must be at least 1, got %d", workers)}
	}
	opts := pipeline.Options{Out: c.String("out"), Workers: workers, BatchRows: c.Int64("batch-rows"), CleanShards: c.Bool("clean-shards")}
	if n := c.Int("shard-count"); n < 0 || n > pipeline.MaxShards {
		return &exitError{exitSpec, fmt.Errorf("almanac run: --shard-count %d is outside 1…%d", n, pipeline.MaxShards)}
	}
	if n := c.Int("shard-count"); n > 1 {
		idx := c.Int("shard-index")
		if idx < 0 {
			env := os.Getenv("JOB_COMPLETION_INDEX")
			v, err := strconv.Atoi(env)
			if err != nil {
				return &exitError{exitSpec, fmt.Errorf("almanac run: --shard-count %d needs --shard-index or JOB_COMPLETION_INDEX (found %q)", n, env)}
			}
			idx = v
		}
		if idx < 0 || idx >= n {
			return &exitError{exitSpec, fmt.Errorf("almanac run: shard index %d is outside 0…%d", idx, n-1)}
		}
		opts.Shard = pipeline.Shard{Index: idx, Count: n}
	}
	if !c.Bool("quiet") {
		if f, ok := c.App.ErrWriter.(*os.File); ok && term.IsTerminal(int(f.Fd())) {
			opts.Progress = &barProgress{out: f}
		} else {
			opts.Progress = &lineProgress{out: c.App.ErrWriter}
			opts.Log = c.App.ErrWriter
		}
	}
	if r := s.Report; r != nil {
		opts.Finish = report.ForRun(r.Series, r.Picks)
	}
	if os.Getenv("GOMEMLIMIT") == "" {
		limit, err := parseBytes(c.String("memory-limit"))
		if err != nil {
			return &exitError{exitSpec, fmt.Errorf("almanac run: --memory-limit: %v", err)}
		}
		if limit > 0 {
			// A soft limit: the garbage collector works harder as the heap
			// nears it, instead of letting the heap double past what is live.
			debug.SetMemoryLimit(limit)
		}
	}
	if p := c.String("cpuprofile"); p != "" {
		f, err := os.Create(p)
		if err != nil {
			return &exitError{exitSpec, err}
		}
		defer f.Close()
		if err := pprof.StartCPUProfile(f); err != nil {
			return &exitError{exitSpec, err}
		}
		defer pprof.StopCPUProfile()
	}
	sum, err := pipeline.Run(c.Context, s, opts)
	if p := c.String("memprofile"); p != "" {
		if perr := writeAllocs(p); perr != nil && err == nil {
			return &exitError{exitRun, perr}
		}
	}
	if err != nil {
		return &exitError{exitRun, fmt.Errorf("almanac run %s: %v", path, err)}
	}
	printSummary(c.App.Writer, sum)
	return nil
}

func printSummary(w io.Writer, sum *pipeline.Summary) {
	m := sum.Manifest
	var fc int64
	for _, t := range m.Tables {
		if t.Name == runfolder.TableForecasts {
			fc = t.Rows
		}
	}
	fmt.Fprintf(w, "%s: %d series, %d method(s), %d forecast rows in %.2fs\n", m.Spec.Name, m.Series, len(m.Methods), fc, m.Seconds)
	for _, mm := range m.Methods {
		fmt.Fprintf(w, "  %-28s forecast %d of %d series\n", mm.Label, mm.Series, m.Series)
	}
	if lb := m.Leaderboard; lb != nil {
		fmt.Fprintf(w, "\nbacktest leaderboard (mean MASE per series over the folds; chosen by %s):\n", lb.Metric)
		fmt.Fprintf(w, "  %-28s %8s %10s %12s %8s\n", "method", "series", "mean MASE", "median MASE", "won")
		for _, r := range lb.Entries {
			fmt.Fprintf(w, "  %-28s %8d %10s %12s %7.1f%%\n", r.Method, r.Series, num(float64(r.MeanMASE)), num(float64(r.MedianMASE)), 100*r.WinShare)
		}
		if lb.NoScore > 0 {
			fmt.Fprintf(w, "  %d series could not be backtested and fell back to %s (see choices.parquet)\n", lb.NoScore, lb.Fallback)
		}
		fmt.Fprintln(w)
	}
	fmt.Fprintf(w, "problems: %d error(s), %d warning(s)", m.Problems.Errors, m.Problems.Warnings)
	if m.Problems.Errors+m.Problems.Warnings > 0 {
		fmt.Fprintf(w, " — see problems.parquet")
	}
	fmt.Fprintf(w, "\ntables:   %s\n", sum.Dir)
}

// parseBytes reads sizes such as 3GiB, 800MiB, 512MB or a plain byte count.
func parseBytes(s string) (int64, error) {
	s = strings.TrimSpace(s)
	units := []struct {
		suffix string
		mult   int64
	}{{"GiB", 1 << 30}, {"MiB", 1 << 20}, {"KiB", 1 << 10}, {"GB", 1e9}, {"MB", 1e6}, {"KB", 1e3}, {"B", 1}}
	for _, u := range units {
		if strings.HasSuffix(s, u.suffix) {
			v, err := strconv.ParseFloat(strings.TrimSpace(strings.TrimSuffix(s, u.suffix)), 64)
			if err != nil || v < 0 {
				return 0, fmt.Errorf("%q is not a size such as 3GiB", s)
			}
			return int64(v * float64(u.mult)), nil
		}
	}
	v, err := strconv.ParseInt(s, 10, 64)
	if err != nil || v < 0 {
		return 0, fmt.Errorf("%q is not a size such as 3GiB", s)
	}
	return v, nil
}

func num(v float64) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "—"
	}
	return fmt.Sprintf("%.3f", v)
}

// panelCommand writes an invented panel.
func panelCommand() *cli.Command {
	return &cli.Command{
		Name:      "panel",
		Usage:     "write a synthetic panel (invented data) to size runs: series with trend, seasonality, noise and intermittent demand",
		ArgsUsage: "FILE.parquet|FILE.csv",
		Flags: []cli.Flag{
			&cli.IntFlag{Name: "series", Value: 1000, Usage: "number of series"},
			&cli.IntFlag{Name: "length", Value: 156, Usage: "periods per series"},
			&cli.StringFlag{Name: "frequency", Value: "week", Usage: "day, week, month, quarter or year"},
			&cli.IntFlag{Name: "season", Usage: "season length (default by frequency)"},
			&cli.StringFlag{Name: "form", Value: "multiplicative", Usage: "seasonality: multiplicative, additive or none"},
			&cli.Float64Flag{Name: "noise", Value: 0.1, Usage: "noise as a share of the level"},
			&cli.Float64Flag{Name: "intermittent", Value: 0.1, Usage: "share of intermittent series"},
			&cli.StringFlag{Name: "start", Value: "2023-01-02", Usage: "first period (ISO date)"},
			&cli.Uint64Flag{Name: "rng", Value: 1, Usage: "random stream: the same options and stream give the same bytes"},
		},
		Action: panelCmd,
	}
}

// writeAllocs writes the allocation profile (`go tool pprof -sample_index=alloc_space`).
func writeAllocs(path string) error {
	f, err := os.Create(path)
	if err != nil {
		return fmt.Errorf("almanac run: --memprofile: %v", err)
	}
	if err := pprof.Lookup("allocs").WriteTo(f, 0); err != nil {
		f.Close()
		return fmt.Errorf("almanac run: --memprofile: %v", err)
	}
	return f.Close()
}
