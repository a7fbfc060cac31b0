package pipeline

import (
	"context"
	"fmt"
	"io"
	"math"
	"sort"
	"strings"

	"almanac/engines"
	"almanac/pipeline/calendar"
	"almanac/pipeline/forecast"
	"almanac/pipeline/ingest"
	"almanac/pipeline/runfolder"
	"almanac/spec"
)

// Plan is a compiled spec: the inputs, the compiled methods and the output
// folder a run executes. Plan.Run runs it; Plan.Stages describes it, and
// `almanac plan` prints that description of the same value.
type Plan struct {
	Spec       *spec.Spec
	Out        string
	Inputs     []ingest.InputFile
	Cal        calendar.Calendar
	Methods    []forecast.Method
	Decomposer engines.Decomposer // nil with a season length below 2
	Shard      Shard
	// EventFiles are the files of the spec's event sources; Events is
	// what they hold, once read (by Count or Run).
	EventFiles []ingest.InputFile
	Events     *ingest.Events

	// Filled by Count, which reads and shapes the input (the plan command).
	Counted bool
	Rows    int64
	Series  int
	Periods struct{ Min, Max int }
	Batches int    // key-range batches the run would process
	First   string // earliest period in the data
	Last    string // latest period in the data
	// Guards are what the input guards decided (rows after until, stray
	// dates and an incomplete last period left out, keys spelled two ways).
	Guards []string
}

// Compile checks s against the files and the output folder and compiles
// its methods. It reads no data and writes nothing.
func Compile(s *spec.Spec, opts Options) (*Plan, error) {
	target, err := OutputDir(s, opts)
	if err != nil {
		return nil, err
	}
	methods, decomposer, err := forecast.Compile(s)
	if err != nil {
		return nil, err
	}
	files, err := ingest.ResolveSources(s)
	if err != nil {
		return nil, err
	}
	events, err := ingest.ResolveEvents(s)
	if err != nil {
		return nil, err
	}
	p := &Plan{Spec: s, Out: target, Inputs: files, EventFiles: events, Methods: methods, Decomposer: decomposer, Shard: opts.Shard,
		Cal: calendar.Calendar{Freq: s.Calendar.Frequency, Season: s.Calendar.SeasonLength}}
	if opts.Shard.Count > 1 {
		if err := runfolder.ValidateShard(opts.Shard.Index, opts.Shard.Count); err != nil {
			return nil, err
		}
	} else if err := runfolder.CheckTarget(target, p.inputs()); err != nil {
		return nil, err
	}
	return p, nil
}

// inputs is the plan's inputs as the manifest records them: the data
// files, then the event files.
func (p *Plan) inputs() []runfolder.Input {
	out := make([]runfolder.Input, 0, len(p.Inputs)+len(p.EventFiles))
	for _, f := range append(p.Inputs[:len(p.Inputs):len(p.Inputs)], p.EventFiles...) {
		out = append(out, runfolder.Input{Path: f.Path, Format: f.Format, Size: f.Size, SHA256: f.SHA256, Rows: f.Rows, Abs: f.Abs})
	}
	return out
}

// MakePlan compiles s and counts what a run would process.
func MakePlan(ctx context.Context, s *spec.Spec, opts Options) (*Plan, error) {
	p, err := Compile(s, opts)
	if err != nil {
		return nil, err
	}
	return p, p.Count(ctx, opts)
}

// Count reads and shapes the input to count rows, series and periods. It
// fits no method and writes nothing.
func (p *Plan) Count(ctx context.Context, opts Options) error {
	rs, src, err := p.openBatches(ctx, opts)
	if err != nil {
		return err
	}
	defer src.Close()
	p.Counted, p.Rows, p.Series, p.Batches = true, rs.RowCount, len(rs.Keys), src.Count()
	for _, n := range rs.Notes {
		switch n.Code {
		case runfolder.CodeAfterUntil, runfolder.CodeStrayPeriod, runfolder.CodePartialPeriod, runfolder.CodeKeyVariants:
			p.Guards = append(p.Guards, n.Code+": "+n.Message)
		}
	}
	p.Periods.Min = 1 << 62
	lo, hi := int64(math.MaxInt64), int64(math.MinInt64)
	for b := 0; b < src.Count(); b++ {
		batch, err := src.Batch(b)
		if err != nil {
			return err
		}
		for _, se := range batch {
			n := len(se.Values)
			if se.Skip != "" {
				continue
			}
			p.Periods.Min = min(p.Periods.Min, n)
			p.Periods.Max = max(p.Periods.Max, n)
			lo = min(lo, se.Start)
			hi = max(hi, se.Start+int64(n)-1)
		}
	}
	if lo <= hi {
		p.First, p.Last = p.Cal.Label(lo), p.Cal.Label(hi)
	}
	return nil
}

// Stage is one step of a plan, as `almanac plan` shows it.
type Stage struct {
	Name   string
	Detail string   // one line
	More   []string // further lines (inputs, methods)
	Tables []string // the tables the stage writes
}

// Stages lists what Run executes, in order, from the plan's own values.
func (p *Plan) Stages() []Stage {
	s := p.Spec
	var out []Stage
	read := Stage{Name: "read", Detail: fmt.Sprintf("%d file(s)", len(p.Inputs))}
	if p.Counted {
		read.Detail += fmt.Sprintf(", %d rows", p.Rows)
	}
	for _, f := range p.Inputs {
		read.More = append(read.More, fmt.Sprintf("%s  (%s, %s)", f.Path, f.Format, runfolder.HumanBytes(f.Size)))
	}
	read.More = append(read.More, fmt.Sprintf("columns: time %q, value %q, keys %s", s.Columns.Time, s.Columns.Value, listOrNone(s.Columns.Keys)))
	out = append(out, read)
	season := fmt.Sprintf("season length %d", s.Calendar.SeasonLength)
	if s.Calendar.SeveralCycles() {
		season = "season lengths " + joinInts(s.Calendar.Seasons)
	}
	out = append(out, Stage{Name: "shape", Detail: fmt.Sprintf("%s periods, %s; rows in one period: %s; missing periods: %s; series end at the %s end",
		s.Calendar.Frequency, season, s.Shaping.Combine, s.Shaping.Gaps, s.Shaping.End), More: p.Guards})
	split := Stage{Name: "split", Detail: "series by key"}
	if p.Counted {
		split.Detail = fmt.Sprintf("%d series", p.Series)
		if p.Series > 0 {
			split.Detail += fmt.Sprintf(", %d to %d periods each, %s … %s", p.Periods.Min, p.Periods.Max, p.First, p.Last)
		}
		if p.Batches > 1 {
			split.Detail += fmt.Sprintf(" — in %d batches", p.Batches)
		}
	}
	out = append(out, split)
	if len(s.Events) > 0 {
		out = append(out, p.eventStage())
	}
	if p.Decomposer != nil && s.Calendar.SeveralCycles() {
		out = append(out, Stage{Name: "decompose", Detail: fmt.Sprintf("%s, season lengths %s, %s", forecast.DecompositionSeveral, joinInts(s.Calendar.Seasons), decompositionForm(s)),
			Tables: []string{runfolder.TableComponents, runfolder.TableSeasonalFactors}})
	} else if p.Decomposer != nil {
		out = append(out, Stage{Name: "decompose", Detail: strings.TrimSpace(s.Decomposition.Method + " " + optionList(s.Decomposition.Options)),
			Tables: []string{runfolder.TableComponents, runfolder.TableSeasonalFactors}})
	} else {
		out = append(out, Stage{Name: "decompose", Detail: "skipped (season length 1)"})
	}
	if b := s.Backtest; b.Folds > 0 {
		out = append(out, Stage{Name: "backtest", Detail: fmt.Sprintf("%d fold(s) of %d step(s), %d apart, %s window, at least %d training periods",
			b.Folds, b.Horizon, b.Step, b.Window, b.MinTrain), Tables: []string{runfolder.TableAccuracy}})
		sel := s.Selection
		d := fmt.Sprintf("lowest mean %s per series; fallback %s", sel.Metric, sel.Fallback)
		if c := sel.Combine; c != nil {
			kind := c.Kind
			if kind == spec.CombineWeighted {
				kind = "mean weighted by 1/" + sel.Metric
			}
			d += fmt.Sprintf("; entry %q: %s of the top %d", c.Label, kind, c.Top)
			if sel.Choose == spec.ChooseCombination {
				d = fmt.Sprintf("%q for every series: %s of the top %d by mean %s (equal weights without a fold); fallback %s",
					c.Label, kind, c.Top, sel.Metric, sel.Fallback)
			}
		}
		for _, k := range sortedKeysAny(anyMap(sel.Route)) {
			d += fmt.Sprintf("; %s series: %s", k, strings.Join(sel.Route[k], ", "))
		}
		out = append(out, Stage{Name: "select", Detail: d, Tables: []string{runfolder.TableChoices}})
	}
	fc := Stage{Name: "forecast", Detail: fmt.Sprintf("%d step(s) ahead with %d method(s)", s.Horizon, len(s.Methods)), Tables: []string{runfolder.TableForecasts}}
	if s.Automatic {
		fc.Detail += " — almanac's default pool (the spec names no methods)"
	}
	fc.Detail += "; below-zero forecasts of strictly positive series floored at 0"
	for _, m := range s.Methods {
		label := m.Label
		if label != m.Method {
			label += " (" + m.Method + ")"
		}
		fc.More = append(fc.More, strings.TrimRight(fmt.Sprintf("%-28s %s", label, optionList(m.Options)), " "))
	}
	out = append(out, fc)
	if iv := s.Intervals; len(iv.Levels) > 0 {
		which := "the chosen entry"
		if iv.AllMethods || s.Backtest.Folds == 0 {
			which = "every entry"
		}
		out = append(out, Stage{Name: "intervals", Detail: fmt.Sprintf("%s bounds at %s%% for %s", iv.Source, joinInts(iv.Levels), which)})
	}
	if t := s.Totals; len(t.LeadTimes) > 0 {
		out = append(out, Stage{Name: "totals", Detail: fmt.Sprintf("totals over %s period(s) of the chosen entry, quantiles at %s%%", joinInts(t.LeadTimes), joinInts(t.Levels)),
			Tables: []string{runfolder.TableTotals}})
	}
	out = append(out, Stage{Name: "write", Detail: runfolder.ManifestFile + ", " + runfolder.LineageFile + "; committed atomically", Tables: []string{runfolder.TableProblems}})
	if r := s.Report; r != nil {
		out = append(out, Stage{Name: "report", Detail: fmt.Sprintf("report.html: %d named series and up to %d picked", len(r.Series), r.Picks)})
	}
	return out
}

// eventStage describes the event sources: what each holds once read.
func (p *Plan) eventStage() Stage {
	s := p.Spec
	st := Stage{Name: "events", Detail: fmt.Sprintf("%d source(s), %d file(s): closures → missing periods (forecast 0), drivers → regressors", len(s.Events), len(p.EventFiles))}
	ev := p.Events
	if ev != nil {
		st.Detail = fmt.Sprintf("%d source(s): %d closure row(s), %d driver row(s); drivers: %s", len(s.Events), len(ev.Closures), len(ev.Drivers), listOrEmpty(ev.Names))
	}
	for i, src := range s.Events {
		line := fmt.Sprintf("%s  (%s", src.Path, src.Kind)
		if ev != nil {
			info := ev.Sources[i]
			line += fmt.Sprintf(", %d row(s)", info.Rows)
			if src.Kind == spec.EventDriver {
				line += ", drivers " + listOrEmpty(info.Drivers)
				if info.KnownUntil != math.MinInt64 {
					line += ", known until " + calendar.LabelDay(info.KnownUntil)
				}
			}
			if info.Ignored > 0 {
				line += fmt.Sprintf(", %d outside the data and horizon, ignored", info.Ignored)
			}
			if i < len(ev.PartialClosures) && ev.PartialClosures[i] > 0 {
				line += fmt.Sprintf(", %d covering only part of a %s (left open)", ev.PartialClosures[i], s.Calendar.Frequency)
			}
		} else if src.KnownUntil != "" {
			line += ", known until " + src.KnownUntil
		}
		st.More = append(st.More, line+")")
	}
	return st
}

func listOrEmpty(xs []string) string {
	if len(xs) == 0 {
		return "(none)"
	}
	return strings.Join(xs, ", ")
}

// Print writes the plan for people.
func (p *Plan) Print(w io.Writer) {
	s := p.Spec
	fmt.Fprintf(w, "spec     %s (sha256 %s)\n", s.Name, s.Hash()[:16])
	fmt.Fprintf(w, "output   %s\n\n", p.Out)
	for i, st := range p.Stages() {
		line := fmt.Sprintf("%-13s%s", fmt.Sprintf("%d. %s", i+1, st.Name), st.Detail)
		if len(st.Tables) > 0 {
			line += "  → " + strings.Join(st.Tables, ", ")
		}
		fmt.Fprintln(w, line)
		for _, m := range st.More {
			fmt.Fprintf(w, "               %s\n", m)
		}
	}
}

func optionList(o map[string]any) string {
	opts := make([]string, 0, len(o))
	for _, k := range sortedKeysAny(o) {
		opts = append(opts, fmt.Sprintf("%s=%v", k, o[k]))
	}
	return strings.Join(opts, " ")
}

func anyMap(m map[string][]string) map[string]any {
	out := make(map[string]any, len(m))
	for k, v := range m {
		out[k] = v
	}
	return out
}

func sortedKeysAny(m map[string]any) []string {
	out := make([]string, 0, len(m))
	for k := range m {
		out = append(out, k)
	}
	sort.Strings(out)
	return out
}

func joinInts(xs []int) string {
	q := make([]string, len(xs))
	for i, x := range xs {
		q[i] = fmt.Sprint(x)
	}
	return strings.Join(q, ", ")
}

func listOrNone(xs []string) string {
	if len(xs) == 0 {
		return "(none: one series)"
	}
	q := make([]string, len(xs))
	for i, x := range xs {
		q[i] = fmt.Sprintf("%q", x)
	}
	return strings.Join(q, ", ")
}

// decompositionForm is the form MSTL is asked for: multiplicative (of
// log values, for series above zero) when the spec's decomposition says
// so, additive otherwise.
func decompositionForm(s *spec.Spec) string {
	if s.Decomposition.Form == spec.Multiplicative {
		return "multiplicative"
	}
	return "additive"
}
