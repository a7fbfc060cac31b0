package pipeline_test

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"time"

	"almanac/pipeline"
	"almanac/pipeline/review/explain"
	"almanac/pipeline/review/report"
	"almanac/pipeline/review/rundiff"
	"almanac/pipeline/runfolder"
	"almanac/spec"
)

const cyclesSpec = `version: 1
name: cycles
sources: [data.csv]
columns: {time: day, value: qty, keys: [shop]}
calendar: {frequency: day}
shaping: {gaps: missing}
methods: [naive, stl, holt_winters]
horizon: 14
backtest: {folds: 2}
`

// cyclesWeek is the invented weekday pattern (Monday first) of the run
// below, as factors.
var cyclesWeek = []float64{0.8, 0.9, 0.95, 1.0, 1.1, 1.35, 0.9}

// A daily run with two season lengths (7 and 28, set on the spec by hand)
// on invented data with missing days: the components table has a column
// per cycle whose product is the seasonal column, seasonal_factors has
// each cycle's factors under season_length (the weekly ones the pattern
// the data were made with), stl and holt_winters forecast after a fill
// recorded in problems, and report, explain and rundiff read the run.
func TestRunSeveralSeasons(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("day,shop,qty\n")
	missing := map[int]bool{9: true, 40: true, 41: true, 77: true, 150: true}
	for k, shop := range []string{"north", "south"} {
		for i := 0; i < 168; i++ { // 2026-01-05 is a Monday; 24 weeks
			if missing[i] && k == 0 {
				continue
			}
			v := (100 + 0.2*float64(i) + 10*float64(k)) * cyclesWeek[i%7] * (1 + 0.1*math.Sin(2*math.Pi*float64(i)/28))
			day := 20458 + i // days since 1970-01-01 of 2026-01-05
			fmt.Fprintf(&b, "%s,%s,%.4f\n", civilDate(day), shop, v)
		}
	}
	os.WriteFile(filepath.Join(dir, "data.csv"), []byte(b.String()), 0o644)
	os.WriteFile(filepath.Join(dir, "spec.yaml"), []byte(cyclesSpec), 0o644)
	s, err := spec.Load(filepath.Join(dir, "spec.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	s.Calendar.Seasons = []int{7, 28}
	plan, err := pipeline.Compile(s, pipeline.Options{Out: filepath.Join(dir, "run")})
	if err != nil {
		t.Fatal(err)
	}
	detail := ""
	for _, st := range plan.Stages() {
		if st.Name == "decompose" {
			detail = st.Detail
		}
	}
	if detail != "mstl, season lengths 7, 28, multiplicative" {
		t.Errorf("plan: decompose %q", detail)
	}
	sum, err := pipeline.Run(context.Background(), s, pipeline.Options{Out: filepath.Join(dir, "run"), Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	run, err := runfolder.Open(sum.Dir)
	if err != nil {
		t.Fatal(err)
	}
	comp, err := run.Table(runfolder.TableComponents)
	if err != nil {
		t.Fatal(err)
	}
	wantCols := []string{"shop", "decomposition", "form", "period", "observed", "trend", "seasonal", "remainder", "adjusted", "seasonal_7", "seasonal_28"}
	if !slices.Equal(comp.Columns(), wantCols) || comp.Rows != 2*168 {
		t.Fatalf("components: %v, %d rows", comp.Columns(), comp.Rows)
	}
	nullObserved := 0
	for i := 0; i < comp.Rows; i++ {
		d, _ := comp.Str(runfolder.ColDecomposition, i)
		f, _ := comp.Str(runfolder.ColForm, i)
		s7, s28, s := comp.Float("seasonal_7", i), comp.Float("seasonal_28", i), comp.Float(runfolder.ColSeasonal, i)
		if d != "mstl" || f != "multiplicative" || math.Abs(s7*s28-s) > 1e-12 {
			t.Fatalf("row %d: %s %s, %v × %v ≠ %v", i, d, f, s7, s28, s)
		}
		if math.IsNaN(comp.Float(runfolder.ColObserved, i)) {
			nullObserved++
			if !math.IsNaN(comp.Float(runfolder.ColRemainder, i)) || math.IsNaN(comp.Float(runfolder.ColTrend, i)) {
				t.Errorf("row %d: missing observation with remainder %v, trend %v", i, comp.Float(runfolder.ColRemainder, i), comp.Float(runfolder.ColTrend, i))
			}
		}
	}
	if nullObserved != len(missing) {
		t.Errorf("%d missing observations, want %d", nullObserved, len(missing))
	}
	fac, err := run.Table(runfolder.TableSeasonalFactors)
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(fac.Columns(), []string{"shop", "decomposition", "form", "season_length", "position", "factor", "count"}) || fac.Rows != 2*(7+28) {
		t.Fatalf("seasonal_factors: %v, %d rows", fac.Columns(), fac.Rows)
	}
	for i := 0; i < fac.Rows; i++ {
		sl, _ := fac.Int(runfolder.ColSeasonLength, i)
		pos, _ := fac.Int(runfolder.ColPosition, i)
		if want := []int{7, 28}[min(i%35/7, 1)]; sl != want {
			t.Fatalf("row %d: season_length %d, want %d", i, sl, want)
		}
		// Weekly factors: the pattern normalised to mean 1, to 1%
		// (the 28-day wave and the trend share the weeks).
		if sl == 7 {
			want := cyclesWeek[pos-1] / weekMean()
			if got := fac.Float(runfolder.ColFactor, i); math.Abs(got-want) > 0.01 {
				t.Errorf("row %d: weekday %d factor %.4f, want %.4f", i, pos, got, want)
			}
		}
	}
	probs, err := run.Table(runfolder.TableProblems)
	if err != nil {
		t.Fatal(err)
	}
	imputed := map[string]bool{}
	for i := 0; i < probs.Rows; i++ {
		if c, _ := probs.Str(runfolder.ColCode, i); c == runfolder.CodeImputed {
			stage, _ := probs.Str(runfolder.ColStage, i)
			m, _ := probs.Str(runfolder.ColMethod, i)
			imputed[stage+"/"+m] = true
		}
	}
	for _, want := range []string{"decompose/", "forecast/stl", "forecast/holt_winters", "backtest/stl", "backtest/holt_winters"} {
		if !imputed[want] {
			t.Errorf("no imputed row for %s (have %v)", want, imputed)
		}
	}
	if imputed["forecast/naive"] || imputed["backtest/naive"] {
		t.Error("naive was filled")
	}
	fc, err := run.Table(runfolder.TableForecasts)
	if err != nil {
		t.Fatal(err)
	}
	got := 0
	for i := 0; i < fc.Rows; i++ {
		if m, _ := fc.Str(runfolder.ColMethod, i); m == "stl" && !math.IsNaN(fc.Float(runfolder.ColValue, i)) {
			got++
		}
	}
	if got != 2*14 {
		t.Errorf("stl forecast %d values, want 28", got)
	}
	if err := report.Write(sum.Dir, report.Options{Series: []string{"north"}}); err != nil {
		t.Fatalf("report: %v", err)
	}
	var out bytes.Buffer
	if err := explain.Explain(sum.Dir, []string{"north"}, &out, explain.Options{}); err != nil {
		t.Fatalf("explain: %v", err)
	}
	if !strings.Contains(out.String(), "1–7") || strings.Contains(out.String(), "8–") {
		t.Errorf("explain does not list the 7 weekly factors alone:\n%s", out.String())
	}
	if _, err := rundiff.Compare(sum.Dir, sum.Dir, rundiff.Options{}); err != nil {
		t.Errorf("rundiff: %v", err)
	}
}

// civilDate renders days since 1970-01-01 as YYYY-MM-DD.
func civilDate(days int) string {
	return time.Unix(int64(days)*86400, 0).UTC().Format("2006-01-02")
}

func weekMean() float64 {
	m := 0.0
	for _, v := range cyclesWeek {
		m += v / 7
	}
	return m
}
