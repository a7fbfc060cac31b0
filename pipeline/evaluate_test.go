package pipeline

import (
	"almanac/pipeline/runfolder"
	"bytes"
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"
)

const backtestSpec = fixtureSpec + `backtest: {folds: 3, step: 3}
selection: {metric: mase, combine: {kind: mean, top: 2}}
intervals: {levels: [80, 95]}
`

// The choices table agrees with the accuracy table: for each series the
// chosen entry has the lowest mean MASE over its folds (recomputed here from
// the accuracy rows), ties to the earlier entry; the runner-up is second.
func TestChoicesFollowAccuracy(t *testing.T) {
	dir := t.TempDir()
	writeFixture(t, dir)
	s := loadFixture(t, dir, backtestSpec)
	if _, err := Run(context.Background(), s, Options{Workers: 2}); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out", "run")
	acc := readTable(t, filepath.Join(out, "accuracy.parquet"))
	ch := readTable(t, filepath.Join(out, "choices.parquet"))
	order := []string{"naive", "seasonal_naive", "drift", "mean", "classical_mult", "classical_add", "combination"}
	type agg struct {
		sum    float64
		n      int
		failed bool
	}
	means := map[string]map[string]*agg{}
	for i := 0; i < acc.rows; i++ {
		key := acc.str("store", i) + "/" + acc.str("item", i)
		if means[key] == nil {
			means[key] = map[string]*agg{}
		}
		m := acc.str("method", i)
		a := means[key][m]
		if a == nil {
			a = &agg{}
			means[key][m] = a
		}
		v := acc.f64("mase", i)
		if acc.str("status", i) != "ok" || math.IsNaN(v) {
			a.failed = true
			continue
		}
		a.sum += v
		a.n++
	}
	if ch.rows != 4 {
		t.Fatalf("choices rows = %d", ch.rows)
	}
	for i := 0; i < ch.rows; i++ {
		key := ch.str("store", i) + "/" + ch.str("item", i)
		type cand struct {
			label string
			score float64
		}
		var cands []cand
		for _, l := range order {
			if a := means[key][l]; a != nil && !a.failed && a.n > 0 {
				cands = append(cands, cand{l, a.sum / float64(a.n)})
			}
		}
		sort.SliceStable(cands, func(a, b int) bool { return cands[a].score < cands[b].score })
		if key == "S2/A" {
			// 18 periods of history: no fold leaves min_train = 24 to train on.
			if ch.str("chosen", i) != "seasonal_naive" || ch.i32("folds", i) != 0 || !strings.Contains(ch.str("reason", i), "too short for any backtest fold; fell back to seasonal_naive") {
				t.Errorf("S2/A: chosen %s, folds %d, reason %q", ch.str("chosen", i), ch.i32("folds", i), ch.str("reason", i))
			}
			continue
		}
		if len(cands) < 2 {
			t.Fatalf("%s: %d candidates", key, len(cands))
		}
		if got := ch.str("chosen", i); got != cands[0].label {
			t.Errorf("%s: chosen %s, want %s (scores %v)", key, got, cands[0].label, cands)
		}
		if got := ch.f64("score", i); math.Abs(got-cands[0].score) > 1e-12 {
			t.Errorf("%s: score %g, want %g", key, got, cands[0].score)
		}
		if got := ch.str("runner_up", i); got != cands[1].label {
			t.Errorf("%s: runner-up %s, want %s", key, got, cands[1].label)
		}
		if ch.i32("folds", i) != 3 {
			t.Errorf("%s: folds %d", key, ch.i32("folds", i))
		}
	}
	// Every method × fold × series that can be backtested has a row:
	// 3 series × 7 entries × 3 folds.
	if acc.rows != 3*7*3 {
		t.Errorf("accuracy rows = %d, want %d", acc.rows, 3*7*3)
	}
	// The forecasts of the chosen entry carry interval bounds that bracket
	// the forecast; the others have none.
	fc := readTable(t, filepath.Join(out, "forecasts.parquet"))
	chosenRows := 0
	for i := 0; i < fc.rows; i++ {
		chosen := fc.cols["chosen"].(interface{ Value(int) bool }).Value(i)
		lo80, hi80, lo95, hi95 := fc.f64("lower_80", i), fc.f64("upper_80", i), fc.f64("lower_95", i), fc.f64("upper_95", i)
		if !chosen {
			if !math.IsNaN(lo80) {
				t.Fatalf("row %d: bounds on a method that was not chosen", i)
			}
			continue
		}
		chosenRows++
		v := fc.f64("value", i)
		if !(lo95 <= lo80 && lo80 <= v && v <= hi80 && hi80 <= hi95) {
			t.Errorf("row %d: bounds %g %g [%g] %g %g out of order", i, lo95, lo80, v, hi80, hi95)
		}
		// Empirical bounds, read as censored at zero for a series that
		// never goes below zero; resampled demand for a slow mover.
		switch src := fc.str("interval_source", i); src {
		case "empirical", "empirical, censored at 0", "resampled demand":
		default:
			t.Errorf("row %d: interval source %q", i, src)
		}
	}
	if chosenRows != 4*6 {
		t.Errorf("chosen forecast rows = %d, want 24 (S2/A on its fallback)", chosenRows)
	}
}

// Empirical intervals on long simulated series with known noise cover
// close to their nominal share of held-out points: 80% ± 3%, 95% ± 2%.
// Each series is seasonal with white noise of its own size, so the pooled
// errors must be scaled to each series to come out right.
func TestEmpiricalIntervalCoverage(t *testing.T) {
	const (
		nSeries = 600
		n       = 96 // history given to almanac
		hold    = 6  // held out
		m       = 12
	)
	rng := rand.New(rand.NewPCG(20240917, 7))
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("month,store,item,qty\n")
	future := make([][]float64, nSeries)
	for k := 0; k < nSeries; k++ {
		sigma := 1 + 9*rng.Float64()
		level := 100 + 100*rng.Float64()
		pattern := make([]float64, m)
		for j := range pattern {
			pattern[j] = 20 * math.Sin(2*math.Pi*float64(j)/m+rng.Float64())
		}
		for i := 0; i < n+hold; i++ {
			v := level + pattern[i%m] + sigma*rng.NormFloat64()
			if i < n {
				fmt.Fprintf(&b, "%04d-%02d,S%03d,I,%.6f\n", 2010+i/12, i%12+1, k, v)
			} else {
				future[k] = append(future[k], v)
			}
		}
	}
	os.MkdirAll(filepath.Join(dir, "data"), 0o755)
	os.WriteFile(filepath.Join(dir, "data", "sales.csv"), []byte(b.String()), 0o644)
	spec := strings.Replace(backtestSpec, "horizon: 6", "horizon: 6\nbacktest: {folds: 8, step: 6}\nintervals: {levels: [80, 95], all_methods: true}\n", 1)
	spec = spec[:strings.Index(spec, "backtest: {folds: 3")]
	spec = strings.Replace(spec, "  - naive\n  - seasonal_naive\n  - drift\n  - mean\n", "  - seasonal_naive\n", 1)
	s := loadFixture(t, dir, spec)
	if _, err := Run(context.Background(), s, Options{}); err != nil {
		t.Fatal(err)
	}
	fc := readTable(t, filepath.Join(dir, "out", "run", "forecasts.parquet"))
	var in80, in95, total int
	for i := 0; i < fc.rows; i++ {
		if fc.str("method", i) != "seasonal_naive" {
			continue
		}
		var k int
		fmt.Sscanf(fc.str("store", i), "S%d", &k)
		y := future[k][fc.i32("step", i)-1]
		total++
		if fc.f64("lower_80", i) <= y && y <= fc.f64("upper_80", i) {
			in80++
		}
		if fc.f64("lower_95", i) <= y && y <= fc.f64("upper_95", i) {
			in95++
		}
	}
	if total != nSeries*hold {
		t.Fatalf("%d held-out points, want %d", total, nSeries*hold)
	}
	c80, c95 := float64(in80)/float64(total), float64(in95)/float64(total)
	t.Logf("coverage: 80%% interval %.3f, 95%% interval %.3f over %d held-out points", c80, c95, total)
	if math.Abs(c80-0.80) > 0.03 || math.Abs(c95-0.95) > 0.02 {
		t.Errorf("coverage 80%%: %.3f, 95%%: %.3f", c80, c95)
	}
}

// Selection is deterministic: same inputs, same bytes at any worker count.
func TestBacktestSameBytesAtAnyWorkerCount(t *testing.T) {
	dir := t.TempDir()
	writeFixture(t, dir)
	s := loadFixture(t, dir, backtestSpec)
	read := func(out string, workers int) map[string][]byte {
		if _, err := Run(context.Background(), s, Options{Out: out, Workers: workers}); err != nil {
			t.Fatal(err)
		}
		files := map[string][]byte{}
		for _, n := range []string{runfolder.TableForecasts, runfolder.TableAccuracy, runfolder.TableChoices, runfolder.TableProblems} {
			files[n], _ = os.ReadFile(filepath.Join(out, n+".parquet"))
		}
		return files
	}
	a, b := read(filepath.Join(dir, "a"), 1), read(filepath.Join(dir, "b"), 3)
	for n := range a {
		if len(a[n]) == 0 || !bytes.Equal(a[n], b[n]) {
			t.Errorf("%s differs between 1 and 3 workers", n)
		}
	}
}

// Routing: intermittent series may only get the methods the spec routes to
// them; the demand class is written to choices.
func TestRouteIntermittentSeries(t *testing.T) {
	dir := t.TempDir()
	writeFixture(t, dir)
	f, _ := os.OpenFile(filepath.Join(dir, "data", "sales.csv"), os.O_APPEND|os.O_WRONLY, 0)
	sizes := []int{4, 6, 5, 7, 4, 5, 6, 4, 7, 5, 6, 5}
	for i := 0; i < 36; i += 3 { // demand every third month, sizes 4 to 7: ADI 3, CV² small
		fmt.Fprintf(f, "%04d-%02d-10,S3,Z,%d\n", 2021+i/12, i%12+1, sizes[i/3])
	}
	f.Close()
	text := strings.Replace(fixtureSpec, "  - mean\n", "  - mean\n  - croston\n  - sba\n", 1) +
		"backtest: {folds: 2}\nselection: {route: {intermittent: [croston, sba]}}\n"
	s := loadFixture(t, dir, text)
	if _, err := Run(context.Background(), s, Options{}); err != nil {
		t.Fatal(err)
	}
	ch := readTable(t, filepath.Join(dir, "out", "run", "choices.parquet"))
	found := false
	for i := 0; i < ch.rows; i++ {
		if ch.str("store", i) != "S3" {
			if ch.str("store", i) == "S1" && ch.str("item", i) == "A" && ch.str("demand_class", i) != "smooth" {
				t.Errorf("S1/A classed %s, want smooth", ch.str("demand_class", i))
			}
			continue
		}
		found = true
		if ch.str("demand_class", i) != "intermittent" || math.Abs(ch.f64("adi", i)-3) > 1e-12 {
			t.Errorf("S3/Z: class %s, ADI %g", ch.str("demand_class", i), ch.f64("adi", i))
		}
		if c := ch.str("chosen", i); c != "croston" && c != "sba" {
			t.Errorf("S3/Z chose %s, want croston or sba", c)
		}
		if !strings.Contains(ch.str("reason", i), "routed to intermittent demand") {
			t.Errorf("reason %q", ch.str("reason", i))
		}
	}
	if !found {
		t.Fatal("no choices row for S3/Z")
	}
}

// Spilled, key-range batches write the same bytes as one batch in memory,
// with a backtest, selection and pooled intervals (two passes over the
// batches).
func TestBatchesWriteTheSameBytes(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("month,store,item,qty\n")
	for k := 0; k < 120; k++ {
		for i := 0; i < 40; i++ {
			v := 50 + float64(k%17) + float64(i) + 20*math.Sin(float64(i+k))
			fmt.Fprintf(&b, "%04d-%02d,S%03d,I%d,%.2f\n", 2020+i/12, i%12+1, (k*37)%120, k%3, v)
		}
	}
	os.MkdirAll(filepath.Join(dir, "data"), 0o755)
	os.WriteFile(filepath.Join(dir, "data", "sales.csv"), []byte(b.String()), 0o644)
	s := loadFixture(t, dir, backtestSpec)
	read := func(out string, batchRows int64) map[string][]byte {
		if _, err := Run(context.Background(), s, Options{Out: out, Workers: 2, BatchRows: batchRows}); err != nil {
			t.Fatal(err)
		}
		files := map[string][]byte{}
		for _, n := range []string{runfolder.TableForecasts, runfolder.TableComponents, runfolder.TableSeasonalFactors, runfolder.TableAccuracy, runfolder.TableChoices, runfolder.TableProblems} {
			files[n], _ = os.ReadFile(filepath.Join(out, n+".parquet"))
		}
		return files
	}
	whole := read(filepath.Join(dir, "whole"), 0)
	split := read(filepath.Join(dir, "split"), 500) // 4800 rows: about ten batches
	for n := range whole {
		if len(whole[n]) == 0 || !bytes.Equal(whole[n], split[n]) {
			t.Errorf("%s differs between one batch and many", n)
		}
	}
	p, err := MakePlan(context.Background(), s, Options{BatchRows: 500})
	if err != nil {
		t.Fatal(err)
	}
	if p.Batches < 8 || p.Series != 120 {
		t.Errorf("plan: %d batches, %d series", p.Batches, p.Series)
	}
}
