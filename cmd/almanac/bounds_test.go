package main

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"testing"
	"time"

	"gopkg.in/yaml.v3"

	"almanac/pipeline/runfolder"
)

// boundLevels are asked of every example in the coherence test: more
// levels than any example uses, so that nesting is tested on four.
var boundLevels = []int{50, 80, 95, 99}

// exampleWithBounds writes a copy of an example spec into dir with
// intervals for every method at boundLevels and a totals section, source
// paths made absolute, and returns the copy's path.
func exampleWithBounds(t *testing.T, specPath, dir string, allowNegative bool) string {
	t.Helper()
	raw, err := os.ReadFile(specPath)
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := yaml.Unmarshal(raw, &m); err != nil {
		t.Fatal(err)
	}
	base, _ := filepath.Abs(filepath.Dir(specPath))
	events, _ := m["events"].([]any)
	for _, s := range append(m["sources"].([]any), events...) {
		if src, ok := s.(map[string]any); ok {
			src["path"] = filepath.Join(base, src["path"].(string))
			// yaml reads an unquoted day as a timestamp; write it back as a day.
			if d, ok := src["known_until"].(time.Time); ok {
				src["known_until"] = d.Format(time.DateOnly)
			}
		}
	}
	horizon := m["horizon"].(int)
	if m["backtest"] == nil {
		m["backtest"] = map[string]any{"folds": 2}
	}
	m["intervals"] = map[string]any{"levels": boundLevels, "all_methods": true, "allow_negative": allowNegative}
	m["totals"] = map[string]any{"lead_times": []int{1, (horizon + 1) / 2, horizon}, "levels": []int{50, 90, 99}}
	delete(m, "report")
	out, err := yaml.Marshal(m)
	if err != nil {
		t.Fatal(err)
	}
	p := filepath.Join(dir, "spec.yaml")
	if err := os.WriteFile(p, out, 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// minObserved returns the smallest observed value of the run's series,
// from its components table (every example has a decomposition).
func minObserved(t *testing.T, run string) float64 {
	t.Helper()
	c, err := runfolder.ReadTable(filepath.Join(run, "components.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	lo := math.Inf(1)
	for i := 0; i < c.Rows; i++ {
		if v := c.Float("observed", i); !math.IsNaN(v) {
			lo = math.Min(lo, v)
		}
	}
	if c.Rows == 0 {
		t.Fatal("no components rows")
	}
	return lo
}

// Every shipped example, through the built binary, with bounds at four
// levels for every method and quantiles of totals: no bound on the wrong
// side of its forecast, levels nested, no negative bound (every example's
// data are non-negative), total quantiles rising with the level.
func TestExampleBoundsCoherent(t *testing.T) {
	if runtime.GOOS != "linux" {
		t.Skip("the atomic swap uses Linux renameat2")
	}
	specs, _ := filepath.Glob("../../examples/*/spec.yaml")
	if len(specs) < 2 {
		t.Fatalf("found %d example specs", len(specs))
	}
	for _, sp := range specs {
		t.Run(filepath.Base(filepath.Dir(sp)), func(t *testing.T) {
			dir := t.TempDir()
			p := exampleWithBounds(t, sp, dir, false)
			if _, stderr, code := almanac(t, dir, "run", p, "--out", filepath.Join(dir, "run"), "-q"); code != 0 {
				t.Fatalf("exit %d\n%s", code, stderr)
			}
			if lo := minObserved(t, filepath.Join(dir, "run")); lo < 0 {
				t.Fatalf("example data has a negative value %g; the test assumes none", lo)
			}
			fc, err := runfolder.ReadTable(filepath.Join(dir, "run", "forecasts.parquet"))
			if err != nil {
				t.Fatal(err)
			}
			withBounds := 0
			for i := 0; i < fc.Rows; i++ {
				if _, ok := fc.Str("interval_source", i); !ok {
					continue
				}
				withBounds++
				v := fc.Float("value", i)
				prevLo, prevHi := v, v
				for _, l := range boundLevels {
					lo, hi := fc.Float(fmt.Sprintf("lower_%d", l), i), fc.Float(fmt.Sprintf("upper_%d", l), i)
					switch {
					case math.IsNaN(lo) || math.IsNaN(hi):
						t.Fatalf("row %d: level %d has no bound although interval_source is set", i, l)
					case lo > v || hi < v:
						t.Fatalf("row %d: %d%% band [%g, %g] misses the forecast %g", i, l, lo, hi, v)
					case lo > prevLo || hi < prevHi:
						t.Fatalf("row %d: %d%% band [%g, %g] does not contain the narrower one [%g, %g]", i, l, lo, hi, prevLo, prevHi)
					case lo < 0 || v < 0:
						t.Fatalf("row %d: negative forecast or bound (%g, %d%% lower %g) for non-negative data", i, v, l, lo)
					}
					prevLo, prevHi = lo, hi
				}
			}
			if withBounds == 0 {
				t.Fatal("no row has bounds")
			}
			tt, err := runfolder.ReadTable(filepath.Join(dir, "run", "totals.parquet"))
			if err != nil {
				t.Fatal(err)
			}
			withQ := 0
			for i := 0; i < tt.Rows; i++ {
				if _, ok := tt.Str("total_source", i); !ok {
					continue
				}
				withQ++
				prev := 0.0
				if tot := tt.Float("total", i); tot < 0 {
					t.Fatalf("totals row %d: negative total %g", i, tot)
				}
				for _, l := range []int{50, 90, 99} {
					q := tt.Float(fmt.Sprintf("quantile_%d", l), i)
					if math.IsNaN(q) || q < prev {
						t.Fatalf("totals row %d: quantile_%d = %g after %g", i, l, q, prev)
					}
					prev = q
				}
			}
			if withQ == 0 {
				t.Fatal("no totals row has quantiles")
			}
		})
	}
}

// With intervals.allow_negative the same example gets lower bounds below
// zero where its errors reach that far (the garden example's slow movers).
func TestAllowNegativeBounds(t *testing.T) {
	if runtime.GOOS != "linux" {
		t.Skip("the atomic swap uses Linux renameat2")
	}
	dir := t.TempDir()
	p := exampleWithBounds(t, "../../examples/garden-supply/spec.yaml", dir, true)
	if _, stderr, code := almanac(t, dir, "run", p, "--out", filepath.Join(dir, "run"), "-q"); code != 0 {
		t.Fatalf("exit %d\n%s", code, stderr)
	}
	fc, err := runfolder.ReadTable(filepath.Join(dir, "run", "forecasts.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	neg := 0
	for i := 0; i < fc.Rows; i++ {
		if fc.Float("lower_99", i) < 0 {
			neg++
		}
	}
	if neg == 0 {
		t.Error("allow_negative: no lower bound below zero on the garden example")
	}
}
