package rundiff

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"sort"
	"strings"
	"testing"

	"almanac/pipeline"
	"almanac/pipeline/runfolder"
	"almanac/spec"
)

// An invented monthly panel, 2021-01 … 2024-12, keyed by region and item.
// Trending series are where an added drift method should win; the
// seasonal and flat ones should keep their choice.
type fakeSeries struct {
	region, item string
	value        func(i, month int) float64
}

var panel = []fakeSeries{
	{"north", "rakes", func(i, m int) float64 { return 60 + 4*float64(i) + 3*math.Sin(1.7*float64(i)) }},
	{"north", "seeds", func(i, m int) float64 { return 120 + 45*math.Sin(2*math.Pi*float64(m)/12) + 2*math.Sin(2.3*float64(i)) }},
	{"south", "hoses", func(i, m int) float64 { return 400 - 5*float64(i) + 4*math.Cos(1.3*float64(i)) }},
	{"south", "pots", func(i, m int) float64 { return 80 + 6*math.Sin(2.9*float64(i)) + 3*math.Cos(0.7*float64(i)) }},
	{"west", "mulch", func(i, m int) float64 {
		return (90 + 1.5*float64(i)) * (1 + 0.3*math.Sin(2*math.Pi*float64(m)/12))
	}},
}

func writePanel(t *testing.T, dir string, series []fakeSeries) {
	t.Helper()
	var b strings.Builder
	b.WriteString("month,region,item,units\n")
	for _, s := range series {
		for i := 0; i < 48; i++ {
			y, m := 2021+i/12, i%12+1
			fmt.Fprintf(&b, "%04d-%02d-01,%s,%s,%.2f\n", y, m, s.region, s.item, s.value(i, m))
		}
	}
	if err := os.MkdirAll(filepath.Join(dir, "data"), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "data", "sales.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}

const specHead = `version: 1
name: rundiff-fixture
sources: [data/sales.csv]
columns: {time: month, value: units, keys: [region, item]}
calendar: {frequency: month}
horizon: 6
output: out
`

const backtestTail = `backtest: {folds: 3}
selection: {metric: mase}
`

func specText(methods []string, backtest bool) string {
	s := specHead + "methods: [" + strings.Join(methods, ", ") + "]\n"
	if backtest {
		s += backtestTail
	}
	return s
}

var (
	baseMethods = []string{"naive", "seasonal_naive", "mean"}
	headMethods = []string{"naive", "seasonal_naive", "mean", "drift"}
)

// sharedDir holds the pipeline runs several tests compare.
var sharedDir string

func TestMain(m *testing.M) {
	var err error
	if sharedDir, err = os.MkdirTemp("", "rundiff-test-"); err != nil {
		fmt.Fprintln(os.Stderr, err)
		os.Exit(2)
	}
	code := m.Run()
	os.RemoveAll(sharedDir)
	os.Exit(code)
}

// runPipeline writes the panel and the spec into dir, runs the real
// pipeline and returns the run folder.
func runPipeline(t *testing.T, dir, text string, series []fakeSeries) string {
	t.Helper()
	writePanel(t, dir, series)
	p := filepath.Join(dir, "spec.yaml")
	if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	s, err := spec.Load(p)
	if err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "run")
	if _, err := pipeline.Run(context.Background(), s, pipeline.Options{Out: out, Workers: 2}); err != nil {
		t.Fatal(err)
	}
	return out
}

// runs are the shared runs made so far, by name.
var runs = map[string]string{}

// sharedRun runs a spec once per test binary under a name.
func sharedRun(t *testing.T, name, text string, series []fakeSeries) string {
	t.Helper()
	if d, ok := runs[name]; ok {
		return d
	}
	dir := filepath.Join(sharedDir, name)
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	runs[name] = runPipeline(t, dir, text, series)
	return runs[name]
}

// truth is what the test reads straight from a run's tables, without the
// package: per series, the chosen label (choices.parquet), its score, and
// the total of the forecast rows flagged chosen=true (forecasts.parquet).
type truth struct {
	label string
	score float64
	total float64
}

func readTruth(t *testing.T, run string) map[[2]string]truth {
	t.Helper()
	ch, err := runfolder.ReadTable(filepath.Join(run, "choices.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	out := map[[2]string]truth{}
	for i := 0; i < ch.Rows; i++ {
		r, _ := ch.Str("region", i)
		it, _ := ch.Str("item", i)
		l, _ := ch.Str("chosen", i)
		out[[2]string{r, it}] = truth{label: l, score: ch.Float("score", i)}
	}
	fc, err := runfolder.ReadTable(filepath.Join(run, "forecasts.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	seen := map[[2]string]int{}
	for i := 0; i < fc.Rows; i++ {
		if !fc.Bool("chosen", i) {
			continue
		}
		r, _ := fc.Str("region", i)
		it, _ := fc.Str("item", i)
		k := [2]string{r, it}
		x := out[k]
		x.total += fc.Float("value", i)
		out[k] = x
		seen[k]++
	}
	for k, n := range seen {
		if n != 6 {
			t.Fatalf("%v: %d chosen forecast rows, want the horizon 6", k, n)
		}
	}
	return out
}

// expectedRow is a diff row computed by the test.
type expectedRow struct {
	key                  [2]string
	baseLabel, headLabel string
	baseTotal, headTotal float64
	abs, rel             float64
	baseScore, headScore float64
	scoreChange          float64
	switched             bool
	status               string
}

func expectChosen(t *testing.T, base, head string) []expectedRow {
	t.Helper()
	b, h := readTruth(t, base), readTruth(t, head)
	var keys [][2]string
	for k := range b {
		keys = append(keys, k)
	}
	for k := range h {
		if _, ok := b[k]; !ok {
			keys = append(keys, k)
		}
	}
	sort.Slice(keys, func(i, j int) bool {
		if keys[i][0] != keys[j][0] {
			return keys[i][0] < keys[j][0]
		}
		return keys[i][1] < keys[j][1]
	})
	var out []expectedRow
	for _, k := range keys {
		bt, inB := b[k]
		ht, inH := h[k]
		e := expectedRow{key: k, baseLabel: bt.label, headLabel: ht.label, baseTotal: bt.total, headTotal: ht.total,
			baseScore: bt.score, headScore: ht.score}
		switch {
		case !inB:
			e.status = "added"
			e.baseTotal, e.baseScore = math.NaN(), math.NaN()
		case !inH:
			e.status = "removed"
			e.headTotal, e.headScore = math.NaN(), math.NaN()
		default:
			e.abs = ht.total - bt.total
			e.rel = e.abs / math.Abs(bt.total)
			e.scoreChange = ht.score - bt.score
			e.switched = bt.label != ht.label
			sameScore := bt.score == ht.score || (math.IsNaN(bt.score) && math.IsNaN(ht.score))
			if e.switched || e.abs != 0 || !sameScore {
				e.status = "changed"
			} else {
				e.status = "unchanged"
			}
		}
		out = append(out, e)
	}
	return out
}

func near(a, b float64) bool {
	if math.IsNaN(a) || math.IsNaN(b) {
		return math.IsNaN(a) && math.IsNaN(b)
	}
	return math.Abs(a-b) <= 1e-9*math.Max(1, math.Abs(b))
}

// checkParquet reads the diff's Parquet file back and compares every row
// with the expected ones.
func checkParquet(t *testing.T, path string, want []expectedRow) {
	t.Helper()
	tb, err := runfolder.ReadTable(path)
	if err != nil {
		t.Fatal(err)
	}
	if tb.Rows != len(want) {
		t.Fatalf("diff parquet has %d rows, want %d", tb.Rows, len(want))
	}
	wantCols := append([]string{"region", "item"}, ParquetColumns...)
	var got []string
	for _, f := range tb.Schema.Fields() {
		got = append(got, f.Name)
	}
	if !slices.Equal(got, wantCols) {
		t.Fatalf("columns %v, want %v", got, wantCols)
	}
	if tb.Meta["almanac.rundiff.mode"] != "chosen" {
		t.Errorf("mode metadata %q", tb.Meta["almanac.rundiff.mode"])
	}
	for i, e := range want {
		r, _ := tb.Str("region", i)
		it, _ := tb.Str("item", i)
		bm, _ := tb.Str("base_method", i)
		hm, _ := tb.Str("head_method", i)
		st, _ := tb.Str("status", i)
		if _, ok := tb.Str("method", i); ok {
			t.Errorf("row %d: method is set in chosen mode", i)
		}
		if [2]string{r, it} != e.key || bm != e.baseLabel || hm != e.headLabel || st != e.status || tb.Bool("switched", i) != e.switched {
			t.Errorf("row %d: %s/%s %s→%s %s switched=%v; want %v %s→%s %s switched=%v", i, r, it, bm, hm, st, tb.Bool("switched", i),
				e.key, e.baseLabel, e.headLabel, e.status, e.switched)
		}
		abs, rel, sc := e.abs, e.rel, e.scoreChange
		if e.status == "added" || e.status == "removed" {
			abs, rel, sc = math.NaN(), math.NaN(), math.NaN()
		}
		for _, c := range []struct {
			col  string
			want float64
		}{{"base_total", e.baseTotal}, {"head_total", e.headTotal}, {"abs_change", abs}, {"rel_change", rel},
			{"base_score", e.baseScore}, {"head_score", e.headScore}, {"score_change", sc}} {
			if g := tb.Float(c.col, i); !near(g, c.want) {
				t.Errorf("row %d (%v) %s = %v, want %v", i, e.key, c.col, g, c.want)
			}
		}
	}
}

// section returns the Markdown between "#### title" and the next heading.
func section(md, title string) string {
	i := strings.Index(md, "#### "+title+"\n")
	if i < 0 {
		return ""
	}
	s := md[i+len("#### "+title+"\n"):]
	if j := strings.Index(s, "\n#### "); j >= 0 {
		s = s[:j]
	}
	return s
}

// tables splits a section into its Markdown tables, body rows only.
func tables(s string) [][]string {
	var out [][]string
	var cur []string
	inTable := false
	for _, l := range strings.Split(s, "\n") {
		if strings.HasPrefix(l, "|") {
			if !inTable {
				cur = nil
				inTable = true
			}
			cur = append(cur, l)
			continue
		}
		if inTable {
			out = append(out, cur[2:]) // drop header and rule
			inTable = false
		}
	}
	if inTable {
		out = append(out, cur[2:])
	}
	return out
}

func pctf(v float64) string { return fmt.Sprintf("%+.1f%%", 100*v) }

func TestSwitchesAndDeltasWithAnAddedMethod(t *testing.T) {
	base := sharedRun(t, "base", specText(baseMethods, true), panel)
	head := sharedRun(t, "head", specText(headMethods, true), panel)
	want := expectChosen(t, base, head)

	// The fixture must exercise both paths: some series switch to the new
	// method, some keep their choice.
	var switched, kept int
	for _, e := range want {
		if e.switched {
			switched++
			if e.headLabel != "drift" {
				t.Errorf("%v switched to %s; only the added drift can win", e.key, e.headLabel)
			}
		} else {
			kept++
		}
	}
	if switched == 0 || kept == 0 {
		t.Fatalf("fixture: %d switched, %d kept; want both", switched, kept)
	}

	d, err := Compare(base, head, Options{Top: 3})
	if err != nil {
		t.Fatal(err)
	}
	if d.Mode != ModeChosen || len(d.Rows) != len(panel) || d.Counts.Switched != switched {
		t.Fatalf("mode %s, %d rows, %d switched", d.Mode, len(d.Rows), d.Counts.Switched)
	}

	// Parquet: every row, every value.
	pq := filepath.Join(t.TempDir(), "diff.parquet")
	if err := d.WriteParquet(pq); err != nil {
		t.Fatal(err)
	}
	checkParquet(t, pq, want)

	var buf bytes.Buffer
	d.WriteMarkdown(&buf)
	md := buf.String()

	// Switches: the transition counts and exactly the switched series.
	var wantSwitchRows []string
	trans := map[string]int{}
	for _, e := range want {
		if !e.switched {
			continue
		}
		trans[e.baseLabel+" | "+e.headLabel]++
		wantSwitchRows = append(wantSwitchRows, fmt.Sprintf("| %s | %s | %s | %s | %.4f | %.4f | %+.4f | %s |",
			e.key[0], e.key[1], e.baseLabel, e.headLabel, e.baseScore, e.headScore, e.scoreChange, pctf(e.rel)))
	}
	sw := tables(section(md, "Method switches"))
	if len(sw) != 2 {
		t.Fatalf("switches section has %d tables, want 2:\n%s", len(sw), md)
	}
	if !slices.Equal(sw[1], wantSwitchRows) {
		t.Errorf("switch rows:\n%s\nwant:\n%s", strings.Join(sw[1], "\n"), strings.Join(wantSwitchRows, "\n"))
	}
	var wantTrans []string
	for k, n := range trans {
		wantTrans = append(wantTrans, fmt.Sprintf("%d\x00| %s | %d |", 1000-n, k, n))
	}
	sort.Strings(wantTrans)
	for i := range wantTrans {
		wantTrans[i] = wantTrans[i][strings.IndexByte(wantTrans[i], 0)+1:]
	}
	if !slices.Equal(sw[0], wantTrans) {
		t.Errorf("transitions:\n%s\nwant:\n%s", strings.Join(sw[0], "\n"), strings.Join(wantTrans, "\n"))
	}

	// Movers: the top 3 changed series by |relative change|, ties by key.
	var movers []expectedRow
	for _, e := range want {
		if e.status == "changed" && e.abs != 0 {
			movers = append(movers, e)
		}
	}
	sort.SliceStable(movers, func(i, j int) bool { return math.Abs(movers[i].rel) > math.Abs(movers[j].rel) })
	if len(movers) > 3 {
		movers = movers[:3]
	}
	var wantMovers []string
	for _, e := range movers {
		m := e.baseLabel
		if e.switched {
			m = e.baseLabel + " → " + e.headLabel
		}
		wantMovers = append(wantMovers, fmt.Sprintf("| %s | %s | %s | %.2f | %.2f | %+.2f | %s | %+.4f |",
			e.key[0], e.key[1], m, e.baseTotal, e.headTotal, e.abs, pctf(e.rel), e.scoreChange))
	}
	mv := tables(section(md, "Largest movers"))
	if len(mv) != 1 || !slices.Equal(mv[0], wantMovers) {
		t.Errorf("movers:\n%v\nwant:\n%s", mv, strings.Join(wantMovers, "\n"))
	}

	// Counts and the spec change.
	var changed, unchanged int
	var scoreSum float64
	for _, e := range want {
		if e.status == "changed" {
			changed++
		} else {
			unchanged++
		}
		scoreSum += e.scoreChange
	}
	for _, line := range []string{
		fmt.Sprintf("**%d of %d series in both runs changed, %d switched method; 0 series added, 0 removed.**", changed, len(want), switched),
		fmt.Sprintf("| switched method | %d |", switched),
		fmt.Sprintf("| changed | %d |", changed),
		fmt.Sprintf("| unchanged | %d |", unchanged),
		"| methods | 3 | 4 |",
		fmt.Sprintf("Mean change of the chosen entry's mase over %d scored series: %+.4f", len(want), scoreSum/float64(len(want))),
		"- spec `methods`: added drift\n",
	} {
		if !strings.Contains(md, line) {
			t.Errorf("markdown lacks %q:\n%s", line, md)
		}
	}
	if strings.Contains(md, "Same spec, same inputs.") {
		t.Errorf("markdown says the spec is the same")
	}
	if !d.SpecChanged || len(d.SpecFields) != 1 || d.SpecFields[0].Field != "methods" || len(d.Inputs) != 0 {
		t.Errorf("spec changes %v %+v, inputs %+v", d.SpecChanged, d.SpecFields, d.Inputs)
	}

	// The text report carries the same rows.
	buf.Reset()
	d.WriteText(&buf)
	txt := buf.String()
	for _, e := range want {
		if e.switched && !strings.Contains(txt, fmt.Sprintf("%.4f", e.headScore)) {
			t.Errorf("text report lacks the head score of %v:\n%s", e.key, txt)
		}
	}
	if !strings.Contains(txt, fmt.Sprintf("Method switches (%d)", switched)) {
		t.Errorf("text report:\n%s", txt)
	}
}

func TestIdenticalRunsHaveNoChanges(t *testing.T) {
	a := sharedRun(t, "base", specText(baseMethods, true), panel)
	b := sharedRun(t, "base-again", specText(baseMethods, true), panel)
	d, err := Compare(a, b, Options{})
	if err != nil {
		t.Fatal(err)
	}
	c := d.Counts
	if c.Changed != 0 || c.Unchanged != len(panel) || c.Added != 0 || c.Removed != 0 || c.Switched != 0 || c.TotalsChanged != 0 ||
		len(d.Movers) != 0 || len(d.Switches) != 0 || d.SpecChanged || len(d.SpecFields) != 0 || len(d.Inputs) != 0 {
		t.Fatalf("identical runs differ: %+v movers %d switches %d spec %v %v inputs %v", c, len(d.Movers), len(d.Switches), d.SpecChanged, d.SpecFields, d.Inputs)
	}
	if c.MeanScoreChange != 0 || c.ScoresCompared != len(panel) {
		t.Errorf("mean score change %v over %d", c.MeanScoreChange, c.ScoresCompared)
	}
	// The strictest thresholds (the zero value) are not exceeded.
	if r := d.Exceeds(Thresholds{}); len(r) != 0 {
		t.Errorf("Exceeds = %q, want none", r)
	}
	var buf bytes.Buffer
	d.WriteMarkdown(&buf)
	md := buf.String()
	for _, s := range []string{"No forecast total changed.", "No series switched method.", "Same spec, same inputs.",
		fmt.Sprintf("**0 of %d series in both runs changed, 0 switched method; 0 series added, 0 removed.**", len(panel))} {
		if !strings.Contains(md, s) {
			t.Errorf("markdown lacks %q:\n%s", s, md)
		}
	}
	// Parquet: all unchanged with zero changes, and the same bytes twice.
	dir := t.TempDir()
	p1, p2 := filepath.Join(dir, "a.parquet"), filepath.Join(dir, "b.parquet")
	if err := d.WriteParquet(p1); err != nil {
		t.Fatal(err)
	}
	d2, err := Compare(a, b, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if err := d2.WriteParquet(p2); err != nil {
		t.Fatal(err)
	}
	b1, _ := os.ReadFile(p1)
	b2, _ := os.ReadFile(p2)
	if len(b1) == 0 || !bytes.Equal(b1, b2) {
		t.Errorf("WriteParquet is not deterministic (%d vs %d bytes)", len(b1), len(b2))
	}
	tb, err := runfolder.ReadTable(p1)
	if err != nil {
		t.Fatal(err)
	}
	for i := 0; i < tb.Rows; i++ {
		st, _ := tb.Str("status", i)
		if st != "unchanged" || tb.Float("abs_change", i) != 0 || tb.Float("rel_change", i) != 0 || tb.Float("score_change", i) != 0 || tb.Bool("switched", i) {
			t.Errorf("row %d: status %s abs %v rel %v score %v", i, st, tb.Float("abs_change", i), tb.Float("rel_change", i), tb.Float("score_change", i))
		}
	}
	if tb.Rows != len(panel) {
		t.Errorf("%d rows, want %d", tb.Rows, len(panel))
	}
}

func TestThresholdsTrip(t *testing.T) {
	base := sharedRun(t, "base", specText(baseMethods, true), panel)
	head := sharedRun(t, "head", specText(headMethods, true), panel)
	want := expectChosen(t, base, head)
	var switched int
	maxRel, meanScore := 0.0, 0.0
	worst := want[0]
	for _, e := range want {
		if e.switched {
			switched++
		}
		if math.Abs(e.rel) > maxRel {
			maxRel, worst = math.Abs(e.rel), e
		}
		meanScore += e.scoreChange / float64(len(want))
	}
	share := float64(switched) / float64(len(want))
	if meanScore >= 0 {
		t.Fatalf("fixture: adding a method should improve the mean score, change %v", meanScore)
	}

	d, err := Compare(base, head, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if r := d.Exceeds(NoLimits()); len(r) != 0 {
		t.Errorf("NoLimits: %q", r)
	}
	// Exactly at the observed values: within.
	at := NoLimits()
	at.MaxRelChange, at.MaxSwitchShare, at.MaxMeanScoreWorsening, at.MaxAdded, at.MaxRemoved = maxRel, share, 0, 0, 0
	if r := d.Exceeds(at); len(r) != 0 {
		t.Errorf("at the observed values: %q", r)
	}
	// Just below: both trip, in order, naming the worst series.
	below := at
	below.MaxRelChange, below.MaxSwitchShare = maxRel*0.999, share-0.01
	r := d.Exceeds(below)
	if len(r) != 2 {
		t.Fatalf("below the observed values: %q", r)
	}
	if !strings.Contains(r[0], "region="+worst.key[0]+" / item="+worst.key[1]) || !strings.Contains(r[0], pctf(worst.rel)) {
		t.Errorf("relative-change reason %q; want it to name %v and %s", r[0], worst.key, pctf(worst.rel))
	}
	if wantS := fmt.Sprintf("%d of %d series switched method", switched, len(want)); !strings.Contains(r[1], wantS) {
		t.Errorf("switch reason %q, want %q", r[1], wantS)
	}
	// The other way round the scores worsen by the same mean.
	rev, err := Compare(head, base, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if !near(rev.Counts.MeanScoreChange, -meanScore) {
		t.Errorf("reversed mean score change %v, want %v", rev.Counts.MeanScoreChange, -meanScore)
	}
	th := NoLimits()
	th.MaxMeanScoreWorsening = 0
	r = rev.Exceeds(th)
	if len(r) != 1 || !strings.Contains(r[0], fmt.Sprintf("worsened by %+.4f", -meanScore)) {
		t.Errorf("score reason %q", r)
	}
	th.MaxMeanScoreWorsening = -meanScore + 1e-6
	if r := rev.Exceeds(th); len(r) != 0 {
		t.Errorf("score above the worsening: %q", r)
	}
}

func TestAddedAndRemovedSeries(t *testing.T) {
	// Head's data drops south/pots and adds east/trowels; same spec.
	other := append(slices.Clone(panel[:3]), panel[4], fakeSeries{"east", "trowels", func(i, m int) float64 { return 30 + float64(i%5) }})
	base := sharedRun(t, "base", specText(baseMethods, true), panel)
	head := runPipeline(t, t.TempDir(), specText(baseMethods, true), other)
	want := expectChosen(t, base, head)
	d, err := Compare(base, head, Options{})
	if err != nil {
		t.Fatal(err)
	}
	c := d.Counts
	if c.AddedSeries != 1 || c.RemovedSeries != 1 || c.Added != 1 || c.Removed != 1 || c.CommonSeries != 4 || c.Changed != 0 || c.Unchanged != 4 {
		t.Errorf("counts %+v", c)
	}
	pq := filepath.Join(t.TempDir(), "d.parquet")
	if err := d.WriteParquet(pq); err != nil {
		t.Fatal(err)
	}
	checkParquet(t, pq, want)
	if len(d.Inputs) != 1 || d.Inputs[0].Path != "data/sales.csv" || d.Inputs[0].Change != "changed" ||
		d.Inputs[0].BaseRows != 5*48 || d.Inputs[0].HeadRows != 5*48 {
		t.Errorf("inputs %+v", d.Inputs)
	}
	if d.SpecChanged {
		t.Errorf("same spec reported as changed: %+v", d.SpecFields)
	}
	th := NoLimits()
	th.MaxAdded, th.MaxRemoved = 0, 1
	if r := d.Exceeds(th); len(r) != 1 || r[0] != "1 series added, more than 0" {
		t.Errorf("Exceeds = %q", r)
	}
	var buf bytes.Buffer
	d.WriteMarkdown(&buf)
	if !strings.Contains(buf.String(), "- input `data/sales.csv` changed:") {
		t.Errorf("markdown lacks the input change:\n%s", buf.String())
	}
}

func TestPerMethodRowsWithoutBacktest(t *testing.T) {
	base := sharedRun(t, "plain-base", specText(baseMethods, false), panel)
	head := sharedRun(t, "plain-head", specText(headMethods, false), panel)
	d, err := Compare(base, head, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if d.Mode != ModePerMethod {
		t.Fatalf("mode %s", d.Mode)
	}
	// Independently: the per-method totals from each forecasts.parquet.
	totals := func(run string) map[string]float64 {
		fc, err := runfolder.ReadTable(filepath.Join(run, "forecasts.parquet"))
		if err != nil {
			t.Fatal(err)
		}
		m := map[string]float64{}
		for i := 0; i < fc.Rows; i++ {
			r, _ := fc.Str("region", i)
			it, _ := fc.Str("item", i)
			me, _ := fc.Str("method", i)
			m[r+"/"+it+"/"+me] += fc.Float("value", i)
		}
		return m
	}
	bt, ht := totals(base), totals(head)
	if len(d.Rows) != len(ht) || len(bt) != 3*len(panel) {
		t.Fatalf("%d rows, head has %d series × method", len(d.Rows), len(ht))
	}
	i := 0
	for _, s := range panel { // panel is in key order
		for _, m := range headMethods {
			r := d.Rows[i]
			i++
			k := s.region + "/" + s.item + "/" + m
			if r.Key[0]+"/"+r.Key[1]+"/"+r.Method != k {
				t.Fatalf("row %d is %v %s, want %s", i-1, r.Key, r.Method, k)
			}
			wantStatus := Unchanged
			if m == "drift" {
				wantStatus = Added
			}
			if r.Status != wantStatus || r.Switched || !near(r.HeadTotal, ht[k]) {
				t.Errorf("%s: status %s switched %v head %v want %s %v", k, r.Status, r.Switched, r.HeadTotal, wantStatus, ht[k])
			}
			if wantStatus == Unchanged && (!near(r.BaseTotal, bt[k]) || r.AbsChange != 0) {
				t.Errorf("%s: base %v abs %v, want %v 0", k, r.BaseTotal, r.AbsChange, bt[k])
			}
		}
	}
	if r := d.Exceeds(Thresholds{MaxAdded: -1, MaxRemoved: -1}); len(r) != 0 {
		t.Errorf("Exceeds = %q", r)
	}
	// Parquet: the method column names each row; added rows have no base.
	pq := filepath.Join(t.TempDir(), "m.parquet")
	if err := d.WriteParquet(pq); err != nil {
		t.Fatal(err)
	}
	tb, err := runfolder.ReadTable(pq)
	if err != nil {
		t.Fatal(err)
	}
	if tb.Rows != len(d.Rows) || tb.Meta["almanac.rundiff.mode"] != "per_method" {
		t.Fatalf("%d rows, mode %q", tb.Rows, tb.Meta["almanac.rundiff.mode"])
	}
	for i := 0; i < tb.Rows; i++ {
		r, _ := tb.Str("region", i)
		it, _ := tb.Str("item", i)
		m, _ := tb.Str("method", i)
		st, _ := tb.Str("status", i)
		_, hasBase := tb.Str("base_method", i)
		k := r + "/" + it + "/" + m
		if !near(tb.Float("head_total", i), ht[k]) || !math.IsNaN(tb.Float("base_score", i)) {
			t.Errorf("parquet row %d (%s): head_total %v want %v, base_score %v", i, k, tb.Float("head_total", i), ht[k], tb.Float("base_score", i))
		}
		if m == "drift" {
			if st != "added" || hasBase || !math.IsNaN(tb.Float("base_total", i)) || !math.IsNaN(tb.Float("rel_change", i)) {
				t.Errorf("parquet row %d (%s): status %s, base method set %v", i, k, st, hasBase)
			}
		} else if st != "unchanged" || !near(tb.Float("base_total", i), bt[k]) || tb.Float("rel_change", i) != 0 {
			t.Errorf("parquet row %d (%s): status %s base %v rel %v", i, k, st, tb.Float("base_total", i), tb.Float("rel_change", i))
		}
	}

	// A backtest on one side only: still per method, and said so.
	withBT := sharedRun(t, "base", specText(baseMethods, true), panel)
	mixed, err := Compare(withBT, head, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if mixed.Mode != ModePerMethod || mixed.Counts.Unchanged != 15 || mixed.Counts.Added != 5 || mixed.Counts.Switched != 0 ||
		!strings.Contains(strings.Join(mixed.Notes, "\n"), "head has no backtest") {
		t.Errorf("mixed: mode %s counts %+v notes %q", mixed.Mode, mixed.Counts, mixed.Notes)
	}

	var buf bytes.Buffer
	d.WriteMarkdown(&buf)
	if md := buf.String(); strings.Contains(md, "#### Method switches") || !strings.Contains(md, "| added | 5 |") {
		t.Errorf("per-method markdown:\n%s", md)
	}
}

func TestBadFolders(t *testing.T) {
	base := sharedRun(t, "base", specText(baseMethods, true), panel)
	if _, err := Compare(base, t.TempDir(), Options{}); err == nil || !strings.Contains(err.Error(), "not an almanac run folder") {
		t.Errorf("Compare with a plain folder: %v", err)
	}
	// Different key columns cannot be compared.
	dir := t.TempDir()
	writePanel(t, dir, panel)
	p := filepath.Join(dir, "spec.yaml")
	text := strings.Replace(specText(baseMethods, true), "keys: [region, item]", "keys: [item, region]", 1)
	if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	s, err := spec.Load(p)
	if err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "run")
	if _, err := pipeline.Run(context.Background(), s, pipeline.Options{Out: out, Workers: 2}); err != nil {
		t.Fatal(err)
	}
	if _, err := Compare(base, out, Options{}); err == nil || !strings.Contains(err.Error(), "different key columns") {
		t.Errorf("Compare across key columns: %v", err)
	}
}

// The movers order on rows made by hand: a change from zero first, then by
// |relative change|, ties in key order; unchanged and undefined rows are
// never movers.
func TestMoversOrder(t *testing.T) {
	row := func(k string, base, head float64) Row {
		r := Row{Key: []string{k}, BaseTotal: base, HeadTotal: head, BaseScore: math.NaN(), HeadScore: math.NaN()}
		inB, inH := true, k != "gone"
		(&Diff{}).finishRow(&r, inB, inH, true)
		return r
	}
	d := &Diff{Keys: []string{"k"}, Mode: ModeChosen, Rows: []Row{
		row("a", 100, 150),      // +50%
		row("b", 10, 5),         // -50%, ties with a
		row("c", 0, 3),          // from zero
		row("d", 40, 40),        // unchanged
		row("e", 200, 201),      // +0.5%
		row("f", 8, math.NaN()), // undefined head total
		row("g", -20, -10),      // +50% of |base|
		row("gone", 5, math.NaN()),
	}}
	if d.Rows[3].Status != Unchanged || d.Rows[5].Status != Changed || d.Rows[7].Status != Removed {
		t.Fatalf("statuses %s %s %s", d.Rows[3].Status, d.Rows[5].Status, d.Rows[7].Status)
	}
	if !math.IsInf(d.Rows[2].RelChange, 1) || d.Rows[6].RelChange != 0.5 || d.Rows[1].RelChange != -0.5 {
		t.Fatalf("relative changes %v %v %v", d.Rows[2].RelChange, d.Rows[6].RelChange, d.Rows[1].RelChange)
	}
	d.movers(4)
	var got []string
	for _, r := range d.Movers {
		got = append(got, r.Key[0])
	}
	if want := []string{"c", "a", "b", "g"}; !slices.Equal(got, want) {
		t.Errorf("movers %v, want %v", got, want)
	}
	th := NoLimits()
	th.MaxRelChange = 0.5
	if r := d.Exceeds(th); len(r) != 1 || !strings.HasPrefix(r[0], "1 series changed the forecast total by more than 50.0%; largest from 0 on k=c") {
		t.Errorf("Exceeds = %q", r)
	}
}

// The same data read from another path is a moved input, not an added and
// a removed one; the forecasts do not change.
func TestMovedInput(t *testing.T) {
	base := sharedRun(t, "base", specText(baseMethods, true), panel)
	data := filepath.Join(filepath.Dir(base), "data", "sales.csv")
	text := strings.Replace(specText(baseMethods, true), "sources: [data/sales.csv]", "sources: ['"+data+"']", 1)
	head := runPipeline(t, t.TempDir(), text, panel[:1]) // its own data folder is not read
	d, err := Compare(base, head, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if len(d.Inputs) != 1 || d.Inputs[0].Change != "moved" || d.Inputs[0].From != "data/sales.csv" || d.Inputs[0].Path != data {
		t.Fatalf("inputs %+v", d.Inputs)
	}
	if d.Counts.Unchanged != len(panel) || len(d.SpecFields) != 1 || d.SpecFields[0].Field != "sources" {
		t.Errorf("counts %+v, spec fields %+v", d.Counts, d.SpecFields)
	}
	var buf bytes.Buffer
	d.WriteMarkdown(&buf)
	if want := "- input `data/sales.csv` is now read from `" + data + "` (same content)\n"; !strings.Contains(buf.String(), want) {
		t.Errorf("markdown lacks %q:\n%s", want, buf.String())
	}
}
