package pipeline

import (
	"context"
	"fmt"
	"io"
	"math"
	"sort"
	"strings"

	"almanac/pipeline/runfolder"
	"almanac/spec"
)

// Plan is a compiled spec: the stages a run would execute, on which inputs,
// for how many series. Making a plan reads and shapes the input (to count
// series) but fits no method and writes nothing.
type Plan struct {
	Spec    *spec.Spec
	Out     string
	Inputs  []InputFile
	Rows    int64
	Series  int
	Periods struct{ Min, Max int }
	Batches int    // key-range batches the run would process
	First   string // earliest period in the data
	Last    string // latest period in the data
	cal     calendar
}

// MakePlan compiles s and counts what a run would process.
func MakePlan(ctx context.Context, s *spec.Spec, opts Options) (*Plan, error) {
	target, err := OutputDir(s, opts)
	if err != nil {
		return nil, err
	}
	if _, _, err := compileMethods(s); err != nil {
		return nil, err
	}
	files, err := resolveSources(s)
	if err != nil {
		return nil, err
	}
	if err := checkTarget(target, files); err != nil {
		return nil, err
	}
	cal := calendar{freq: s.Calendar.Frequency, season: s.Calendar.SeasonLength}
	rs, src, err := openBatches(ctx, s, files, cal, opts)
	if err != nil {
		return nil, err
	}
	defer src.close()
	p := &Plan{Spec: s, Out: target, Inputs: files, Rows: rs.rowCount, Series: len(rs.keys), cal: cal, Batches: src.batches()}
	p.Periods.Min = 1 << 62
	lo, hi := int64(math.MaxInt64), int64(math.MinInt64)
	for b := 0; b < src.batches(); b++ {
		series, err := src.series(b)
		if err != nil {
			return nil, err
		}
		for _, se := range series {
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
		p.First, p.Last = cal.label(lo), cal.label(hi)
	}
	return p, nil
}

// Print writes the plan for people.
func (p *Plan) Print(w io.Writer) {
	s := p.Spec
	fmt.Fprintf(w, "spec     %s (sha256 %s)\n", s.Name, s.Hash()[:16])
	fmt.Fprintf(w, "output   %s\n\n", p.Out)
	fmt.Fprintf(w, "1. read      %d file(s), %d rows\n", len(p.Inputs), p.Rows)
	for _, f := range p.Inputs {
		fmt.Fprintf(w, "               %s  (%s, %s)\n", f.Path, f.Format, runfolder.HumanBytes(f.Size))
	}
	fmt.Fprintf(w, "             columns: time %q, value %q, keys %s\n", s.Columns.Time, s.Columns.Value, listOrNone(s.Columns.Keys))
	fmt.Fprintf(w, "2. shape     %s periods, season length %d; rows in one period: %s; missing periods: %s; series end at the %s end\n",
		s.Calendar.Frequency, s.Calendar.SeasonLength, s.Shaping.Combine, s.Shaping.Gaps, s.Shaping.End)
	fmt.Fprintf(w, "3. split     %d series", p.Series)
	if p.Series > 0 {
		fmt.Fprintf(w, ", %d to %d periods each, %s … %s", p.Periods.Min, p.Periods.Max, p.First, p.Last)
	}
	if p.Batches > 1 {
		fmt.Fprintf(w, " — in %d batches", p.Batches)
	}
	fmt.Fprintln(w)
	if s.Calendar.SeasonLength >= 2 {
		fmt.Fprintf(w, "4. decompose %s %s  → components, seasonal_factors\n", s.Decomposition.Method, optionList(s.Decomposition.Options))
	} else {
		fmt.Fprintf(w, "4. decompose skipped (season length 1)\n")
	}
	fmt.Fprintf(w, "5. forecast  %d step(s) ahead with %d method(s)  → forecasts\n", s.Horizon, len(s.Methods))
	for _, m := range s.Methods {
		label := m.Label
		if label != m.Method {
			label += " (" + m.Method + ")"
		}
		fmt.Fprintf(w, "               %-28s %s\n", label, optionList(m.Options))
	}
	fmt.Fprintf(w, "6. write     forecasts, components, seasonal_factors, problems (.parquet), manifest.json\n")
}

func optionList(o map[string]any) string {
	opts := make([]string, 0, len(o))
	for _, k := range sortedKeysAny(o) {
		opts = append(opts, fmt.Sprintf("%s=%v", k, o[k]))
	}
	return strings.Join(opts, " ")
}

func sortedKeysAny(m map[string]any) []string {
	out := make([]string, 0, len(m))
	for k := range m {
		out = append(out, k)
	}
	sort.Strings(out)
	return out
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
