package explain

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"image"
	"image/png"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"sort"
	"strconv"
	"strings"
	"testing"

	"almanac/pipeline"
	"almanac/pipeline/runfolder"
	"almanac/spec"
)

// The fixture: an invented monthly panel of five regions × two products,
// 2020-01 … 2024-12, multiplicative season on a rising level with a
// deterministic wobble, values in half units. north/widget has one missing
// month in its last season; south/gizmo starts in 2023-11, too short to
// decompose or backtest.
func writePanel(t *testing.T, dir string) {
	t.Helper()
	var b strings.Builder
	b.WriteString("month,region,product,qty\n")
	type ser struct {
		region, product string
		from            int
		scale           float64
	}
	var all []ser
	for i, r := range []string{"north", "south", "east", "west", "central"} {
		all = append(all, ser{r, "widget", 0, 1 + 0.2*float64(i)}, ser{r, "gadget", 0, 0.5 + 0.15*float64(i)})
	}
	all = append(all, ser{"south", "gizmo", 46, 0.8})
	for k, s := range all {
		for tt := s.from; tt < 60; tt++ {
			y, m := 2020+tt/12, tt%12+1
			if s.region == "north" && s.product == "widget" && tt == 50 {
				fmt.Fprintf(&b, "%04d-%02d,%s,%s,NA\n", y, m, s.region, s.product)
				continue
			}
			v := s.scale*(200+1.5*float64(tt))*(1+0.3*math.Sin(2*math.Pi*float64(m)/12)) + float64((tt*37+k*11)%17-8)*1.5
			v = math.Round(v*2) / 2
			fmt.Fprintf(&b, "%04d-%02d,%s,%s,%s\n", y, m, s.region, s.product, strconv.FormatFloat(v, 'f', -1, 64))
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
name: explain-fixture
sources:
  - path: data/sales.csv
columns:
  time: month
  value: qty
  keys: [region, product]
calendar:
  frequency: month
shaping:
  gaps: missing
methods:
  - naive
  - seasonal_naive
  - method: classical
    form: multiplicative
    label: classical_mult
  - method: holt_winters
    seasonal: multiplicative
  - ses
horizon: 6
`

const specBacktest = specHead + `backtest:
  folds: 3
  horizon: 6
selection:
  metric: mase
  combine: {kind: mean, top: 2}
intervals:
  levels: [80, 95]
  source: empirical
`

const specNoBacktest = specHead + `intervals:
  levels: [80, 95]
  source: model
`

// makeRun runs the real pipeline on the fixture and returns the run folder.
func makeRun(t *testing.T, specText string) string {
	t.Helper()
	dir := t.TempDir()
	writePanel(t, dir)
	p := filepath.Join(dir, "spec.yaml")
	if err := os.WriteFile(p, []byte(specText), 0o644); err != nil {
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

// The output's number formats, restated here so that the tests hold the
// package to them.
func tv(v float64) string {
	switch {
	case math.IsNaN(v):
		return "·"
	case v == 0:
		return "0"
	case v == math.Trunc(v):
		return fmt.Sprintf("%.0f", v)
	}
	return fmt.Sprintf("%.2f", v)
}

func t3(v float64) string {
	if math.IsNaN(v) {
		return "·"
	}
	return fmt.Sprintf("%.3f", v)
}

func tp(v float64) string { return fmt.Sprintf("%.6g", v) }

// ---- reading the tables independently ----

type tables struct {
	keys                                                             []string
	forecasts, components, factors, accuracy, choices, problemsTable *runfolder.Table
}

func readTables(t *testing.T, dir string) *tables {
	t.Helper()
	r, err := runfolder.Open(dir)
	if err != nil {
		t.Fatal(err)
	}
	tb := &tables{keys: r.Keys()}
	get := func(name string) *runfolder.Table {
		if !r.HasTable(name) {
			return nil
		}
		x, err := r.Table(name)
		if err != nil {
			t.Fatal(err)
		}
		return x
	}
	tb.forecasts, tb.components, tb.factors = get("forecasts"), get("components"), get("seasonal_factors")
	tb.accuracy, tb.choices, tb.problemsTable = get("accuracy"), get("choices"), get("problems")
	return tb
}

// rowsFor scans a table for the rows of one series.
func rowsFor(tb *runfolder.Table, keys, key []string) []int {
	var out []int
	if tb == nil {
		return nil
	}
	for i := 0; i < tb.Rows; i++ {
		match := true
		for j, k := range keys {
			v, ok := tb.Str(k, i)
			if !ok || v != key[j] {
				match = false
				break
			}
		}
		if match {
			out = append(out, i)
		}
	}
	return out
}

func day(tb *runfolder.Table, col string, i int) string {
	d, ok := tb.Date(col, i)
	if !ok {
		return "·"
	}
	return d.Format("2006-01-02")
}

func str(tb *runfolder.Table, col string, i int) string {
	s, _ := tb.Str(col, i)
	return s
}

func integer(tb *runfolder.Table, col string, i int) int {
	v, _ := tb.Int(col, i)
	return v
}

// ---- parsing the output ----

type block struct {
	title string
	lines []string
}

func parse(out string) (head []string, blocks []block) {
	lines := strings.Split(strings.TrimRight(out, "\n"), "\n")
	isRule := func(s string) bool { return s != "" && strings.Trim(s, "─") == "" }
	for i := 0; i < len(lines); i++ {
		if i+1 < len(lines) && isRule(lines[i+1]) {
			blocks = append(blocks, block{title: lines[i]})
			i++
			continue
		}
		if len(blocks) == 0 {
			head = append(head, lines[i])
			continue
		}
		if strings.TrimSpace(lines[i]) != "" {
			b := &blocks[len(blocks)-1]
			b.lines = append(b.lines, lines[i])
		}
	}
	return head, blocks
}

func find(t *testing.T, blocks []block, prefix string) block {
	t.Helper()
	for _, b := range blocks {
		if b.title == prefix || strings.HasPrefix(b.title, prefix+" ") {
			return b
		}
	}
	t.Fatalf("no section %q in the output", prefix)
	return block{}
}

var colSep = regexp.MustCompile(`\s{2,}`)

func cols(line string) []string { return colSep.Split(strings.TrimSpace(line), -1) }

// checker collects every number and date the tests expect, so that a last
// pass can check that the output prints no other.
type checker struct {
	t        *testing.T
	numbers  map[string]bool
	dates    map[string]bool
	verbatim []string // table strings printed as they are (models, reasons, messages)
}

func newChecker(t *testing.T) *checker {
	return &checker{t: t, numbers: map[string]bool{}, dates: map[string]bool{}}
}

func (c *checker) eq(what, got, want string) {
	c.t.Helper()
	if got != want {
		c.t.Errorf("%s: printed %q, the tables say %q", what, got, want)
	}
	if regexp.MustCompile(`^\d{4}-\d\d-\d\d$`).MatchString(want) {
		c.dates[want] = true
	} else {
		c.numbers[want] = true
	}
}

func (c *checker) allow(xs ...string) {
	for _, x := range xs {
		c.numbers[x] = true
	}
}

func (c *checker) allowInt(xs ...int) {
	for _, x := range xs {
		c.numbers[strconv.Itoa(x)] = true
	}
}

var (
	dateRE   = regexp.MustCompile(`^\d{4}-\d\d-\d\d$`)
	numberRE = regexp.MustCompile(`^[-+]?\d+(\.\d+)?$`)
)

// strays checks that every number and date in out is one the tests
// expected.
func (c *checker) strays(out string) {
	c.t.Helper()
	for _, v := range c.verbatim {
		if v != "" {
			out = strings.ReplaceAll(out, v, " ")
		}
	}
	for _, tok := range strings.FieldsFunc(out, func(r rune) bool {
		return r == ' ' || r == '\n' || r == '–' || r == '=' || r == '│'
	}) {
		tok = strings.Trim(tok, "(),:;%")
		switch {
		case dateRE.MatchString(tok):
			if !c.dates[tok] {
				c.t.Errorf("the output prints the date %s, which the tables do not give", tok)
			}
		case numberRE.MatchString(tok):
			if !c.numbers[tok] {
				c.t.Errorf("the output prints the number %s, which no table value gives", tok)
			}
		}
	}
}

// ---- the checks ----

func TestExplainWithBacktest(t *testing.T) {
	dir := makeRun(t, specBacktest)
	tb := readTables(t, dir)
	key := []string{"north", "widget"}
	params := map[string]map[string]float64{
		"holt_winters": {"alpha": 0.31234567, "beta": 0.0001234567, "gamma": 0.2},
		"ses":          {"alpha": 0.999},
	}
	png := filepath.Join(t.TempDir(), "north-widget.png")
	var buf bytes.Buffer
	if err := Explain(dir, key, &buf, Options{Params: params, PNG: png, PNGWidth: 640, PNGHeight: 360}); err != nil {
		t.Fatal(err)
	}
	out := buf.String()
	t.Log("\n" + out)
	c := newChecker(t)
	c.verbatim = append(c.verbatim, dir, png)
	body, footer, _ := strings.Cut(out, "\nchart written to ")
	if footer != png+"\n" {
		t.Errorf("the output does not end saying where the chart went: %q", footer)
	}
	head, blocks := parse(body)
	if len(head) < 2 || !strings.Contains(head[0], "region=north product=widget") {
		t.Errorf("header %q does not name the series", head)
	}
	c.allowInt(12, 6) // season length and horizon in the header

	checkHistory(t, c, tb, key, find(t, blocks, "history"), 2, 1)
	checkDecomposition(t, c, tb, key, find(t, blocks, "decomposition"), 6, false)
	checkBacktest(t, c, tb, key, find(t, blocks, "backtest"), nil)
	chosen := checkChoice(t, c, tb, key, find(t, blocks, "choice"))
	checkModels(t, c, tb, key, find(t, blocks, "models fitted"), params, nil)

	// The forecast section shows the chosen entry only.
	var fcBlocks []block
	for _, b := range blocks {
		if strings.HasPrefix(b.title, "forecast ·") {
			fcBlocks = append(fcBlocks, b)
		}
	}
	if len(fcBlocks) != 1 || !strings.HasPrefix(fcBlocks[0].title, "forecast · "+chosen+" (chosen)") {
		t.Fatalf("forecast sections %v; want one, for the chosen %s", titles(fcBlocks), chosen)
	}
	checkForecast(t, c, tb, key, chosen, fcBlocks[0], true)
	if !strings.Contains(fcBlocks[0].title, "intervals: empirical") {
		t.Errorf("forecast title %q does not name the interval source", fcBlocks[0].title)
	}
	c.strays(out)

	// The chart.
	f, err := os.Open(png)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	img, err := decodePNG(f)
	if err != nil {
		t.Fatalf("chart is not a PNG: %v", err)
	}
	if b := img.Bounds(); b.Dx() != 640 || b.Dy() != 360 {
		t.Errorf("chart is %d × %d pixels, want 640 × 360", b.Dx(), b.Dy())
	}
	if n := distinctColours(img); n < 20 {
		t.Errorf("chart has %d distinct colours; it looks blank", n)
	}
}

func decodePNG(f *os.File) (image.Image, error) { return png.Decode(f) }

func distinctColours(img image.Image) int {
	seen := map[[4]uint32]bool{}
	b := img.Bounds()
	for y := b.Min.Y; y < b.Max.Y; y += 2 {
		for x := b.Min.X; x < b.Max.X; x += 2 {
			r, g, bb, a := img.At(x, y).RGBA()
			seen[[4]uint32{r, g, bb, a}] = true
		}
	}
	return len(seen)
}

func titles(bs []block) []string {
	var out []string
	for _, b := range bs {
		out = append(out, b.title)
	}
	return out
}

func checkHistory(t *testing.T, c *checker, tb *tables, key []string, b block, seasons, wantMissing int) {
	t.Helper()
	rows := rowsFor(tb.components, tb.keys, key)
	if len(rows) == 0 {
		t.Fatal("fixture: no components rows")
	}
	var obs []float64
	var periods []string
	for _, i := range rows {
		obs = append(obs, tb.components.Float("observed", i))
		periods = append(periods, day(tb.components, "period", i))
	}
	n := len(obs)
	wantTitle := fmt.Sprintf("history · %d months, %s … %s", n, periods[0], periods[n-1])
	c.allowInt(n)
	c.dates[periods[0]], c.dates[periods[n-1]] = true, true
	if b.title != wantTitle {
		t.Errorf("history title %q, want %q", b.title, wantTitle)
	}
	// Summary statistics, recomputed from the observed column.
	var vals []float64
	missing, zeros := 0, 0
	for _, v := range obs {
		if math.IsNaN(v) {
			missing++
			continue
		}
		if v == 0 {
			zeros++
		}
		vals = append(vals, v)
	}
	if missing != wantMissing {
		t.Fatalf("fixture: %v should have %d missing month(s), has %d", key, wantMissing, missing)
	}
	sum := 0.0
	for _, v := range vals {
		sum += v
	}
	mean := sum / float64(len(vals))
	ss := 0.0
	for _, v := range vals {
		ss += (v - mean) * (v - mean)
	}
	sorted := append([]float64(nil), vals...)
	sort.Float64s(sorted)
	median := sorted[len(sorted)/2]
	if len(sorted)%2 == 0 {
		median = (sorted[len(sorted)/2-1] + sorted[len(sorted)/2]) / 2
	}
	avg := func(xs []float64) float64 {
		s, k := 0.0, 0
		for _, x := range xs {
			if !math.IsNaN(x) {
				s += x
				k++
			}
		}
		return s / float64(k)
	}
	want := map[string]string{
		"values": strconv.Itoa(len(vals)), "missing": strconv.Itoa(missing), "zeros": strconv.Itoa(zeros),
		"min": tv(sorted[0]), "max": tv(sorted[len(sorted)-1]), "mean": tv(mean), "median": tv(median),
		"sd":   tv(math.Sqrt(ss / float64(len(vals)-1))),
		"last": tv(vals[len(vals)-1]), "last season mean": tv(avg(obs[n-12:])), "season before": tv(avg(obs[n-24 : n-12])),
	}
	got := map[string]string{}
	for _, line := range b.lines[:3] {
		for _, p := range strings.Split(strings.TrimSpace(line), " · ") {
			k := strings.LastIndex(p, " ")
			got[p[:k]] = p[k+1:]
		}
	}
	for name, w := range want {
		c.eq("history "+name, got[name], w)
	}
	if len(got) != len(want) {
		t.Errorf("history statistics %v; want exactly %v", got, want)
	}
	// The table of the last seasons: every value in order, each line
	// labelled with the period of its first value.
	start := n - seasons*12
	var cells []string
	lineStarts := 0
	for _, line := range b.lines {
		if !strings.Contains(line, "│") {
			continue
		}
		f := strings.Fields(line)
		idx := start + len(cells)
		c.eq("history line date", f[0], periods[idx])
		if f[1] != "│" {
			t.Errorf("history line %q: no separator", line)
		}
		cells = append(cells, f[2:]...)
		lineStarts++
	}
	if len(cells) != seasons*12 || lineStarts != seasons {
		t.Fatalf("history table has %d values on %d lines, want %d on %d", len(cells), lineStarts, seasons*12, seasons)
	}
	sawNull := false
	for k, cell := range cells {
		c.eq(fmt.Sprintf("history %s", periods[start+k]), cell, tv(obs[start+k]))
		sawNull = sawNull || cell == "·"
	}
	if sawNull != (wantMissing > 0) {
		t.Errorf("a missing month shows as ·: %v; the series has %d missing", sawNull, wantMissing)
	}
	c.allowInt(seasons)
	if !strings.Contains(strings.Join(b.lines, "\n"), "┊") {
		t.Error("no sparkline with the forecast")
	}
}

func checkDecomposition(t *testing.T, c *checker, tb *tables, key []string, b block, trendN int, wantUniform bool) {
	t.Helper()
	rows := rowsFor(tb.components, tb.keys, key)
	dec, form := str(tb.components, "decomposition", rows[0]), str(tb.components, "form", rows[0])
	if b.title != "decomposition · "+dec+", "+form {
		t.Errorf("decomposition title %q, want %s, %s", b.title, dec, form)
	}
	// The last defined trend values, oldest first.
	var want []int
	for k := len(rows) - 1; k >= 0 && len(want) < trendN; k-- {
		if !math.IsNaN(tb.components.Float("trend", rows[k])) {
			want = append([]int{rows[k]}, want...)
		}
	}
	undefined := rows[len(rows)-1] - want[len(want)-1]
	c.allowInt(len(want), undefined)
	var got [][]string
	for _, line := range b.lines {
		f := strings.Fields(line)
		if len(f) == 4 && f[2] == "adjusted" {
			got = append(got, f)
		}
	}
	if len(got) != len(want) {
		t.Fatalf("%d trend lines, want %d", len(got), len(want))
	}
	for k, i := range want {
		c.eq("trend period", got[k][0], day(tb.components, "period", i))
		c.eq("trend "+got[k][0], got[k][1], tv(tb.components.Float("trend", i)))
		c.eq("adjusted "+got[k][0], got[k][3], tv(tb.components.Float("adjusted", i)))
	}
	if !strings.Contains(strings.Join(b.lines, "\n"), fmt.Sprintf("none for the last %d months", undefined)) {
		t.Errorf("the trend note does not count the %d months without trend", undefined)
	}
	// Seasonal factors by position, and their counts.
	frows := rowsFor(tb.factors, tb.keys, key)
	format := tv
	if form == "multiplicative" {
		format = t3
	}
	var factors, counts []string
	for _, line := range b.lines {
		f := strings.Fields(line)
		if len(f) < 3 || f[1] != "│" {
			continue
		}
		if f[0] == "count" {
			counts = append(counts, f[2:]...)
			continue
		}
		ab := strings.Split(f[0], "–")
		from, _ := strconv.Atoi(ab[0])
		to, _ := strconv.Atoi(ab[1])
		if from != len(factors)+1 || to != len(factors)+len(f)-2 {
			t.Errorf("factor line %q: positions %s, want %d–%d", line, f[0], len(factors)+1, len(factors)+len(f)-2)
		}
		c.allowInt(from, to)
		factors = append(factors, f[2:]...)
	}
	if len(factors) != len(frows) {
		t.Fatalf("%d factors printed, the table has %d", len(factors), len(frows))
	}
	uniform := true
	for k, i := range frows {
		if p := integer(tb.factors, "position", i); p != k+1 {
			t.Fatalf("fixture: factor row %d has position %d", k, p)
		}
		c.eq(fmt.Sprintf("factor %d", k+1), factors[k], format(tb.factors.Float("factor", i)))
		if integer(tb.factors, "count", i) != integer(tb.factors, "count", frows[0]) {
			uniform = false
		}
	}
	if uniform != wantUniform {
		t.Fatalf("fixture: factor counts uniform %v, want %v", uniform, wantUniform)
	}
	if uniform {
		n := integer(tb.factors, "count", frows[0])
		c.allowInt(n)
		if len(counts) != 0 || !strings.Contains(strings.Join(b.lines, "\n"), fmt.Sprintf("each from %d detrended value(s)", n)) {
			t.Errorf("uniform counts: want one note of %d values and no count lines", n)
		}
		return
	}
	if len(counts) != len(frows) {
		t.Fatalf("%d counts printed, want %d", len(counts), len(frows))
	}
	for k, i := range frows {
		c.eq(fmt.Sprintf("count %d", k+1), counts[k], strconv.Itoa(integer(tb.factors, "count", i)))
	}
}

// checkBacktest checks the MASE table; only, when given, is the set of
// methods that must be listed.
func checkBacktest(t *testing.T, c *checker, tb *tables, key []string, b block, only []string) {
	t.Helper()
	rows := rowsFor(tb.accuracy, tb.keys, key)
	if len(rows) == 0 {
		t.Fatal("fixture: no accuracy rows")
	}
	type cell struct {
		mase float64
		ok   bool
	}
	byMethod := map[string]map[int]cell{}
	var order []string
	origins, trained := map[int]string{}, map[int]int{}
	scored, windows := map[int]int{}, map[int]int{}
	var folds []int
	for _, i := range rows {
		m := str(tb.accuracy, "method", i)
		f := integer(tb.accuracy, "fold", i)
		if byMethod[m] == nil {
			byMethod[m] = map[int]cell{}
			order = append(order, m)
		}
		byMethod[m][f] = cell{tb.accuracy.Float("mase", i), str(tb.accuracy, "status", i) == "ok"}
		if _, seen := origins[f]; !seen {
			folds = append(folds, f)
			origins[f] = day(tb.accuracy, "origin", i)
			trained[f] = integer(tb.accuracy, "train_periods", i)
			scored[f] = integer(tb.accuracy, "scored_periods", i)
			windows[f] = integer(tb.accuracy, "test_periods", i)
		}
	}
	sort.Ints(folds)
	c.allowInt(len(folds), 6) // "3 fold(s) of 6 months"
	c.allowInt(folds...)
	head := cols(b.lines[0])
	if head[0] != "method" || head[len(head)-1] != "mean" || len(head) != len(folds)+2 {
		t.Fatalf("backtest header %q", b.lines[0])
	}
	for k, f := range folds {
		if head[k+1] != fmt.Sprintf("fold %d", f) {
			t.Errorf("backtest column %d is %q, want fold %d", k+1, head[k+1], f)
		}
	}
	o := cols(b.lines[1])
	tr := cols(b.lines[2])
	if o[0] != "origin" || tr[0] != "trained on" {
		t.Fatalf("backtest origin/training rows %q, %q", b.lines[1], b.lines[2])
	}
	for k, f := range folds {
		c.eq(fmt.Sprintf("fold %d origin", f), o[k+1], origins[f])
		c.eq(fmt.Sprintf("fold %d training periods", f), tr[k+1], strconv.Itoa(trained[f]))
	}
	// The scored row is there exactly when a test window has periods
	// without an actual.
	methodLines := b.lines[3:]
	unscored := false
	for _, f := range folds {
		unscored = unscored || scored[f] < windows[f]
	}
	if sc := cols(b.lines[3]); sc[0] == "scored" {
		if !unscored {
			t.Errorf("a scored row %q, but every test period has an actual", b.lines[3])
		}
		for k, f := range folds {
			c.eq(fmt.Sprintf("fold %d scored periods", f), sc[k+1], fmt.Sprintf("%d of %d", scored[f], windows[f]))
			c.allowInt(scored[f], windows[f])
		}
		methodLines = b.lines[4:]
	} else if unscored {
		t.Errorf("no scored row, but a test window has periods without an actual")
	}
	crow := rowsFor(tb.choices, tb.keys, key)
	chosen, _ := tb.choices.Str("chosen", crow[0])
	runnerUp, _ := tb.choices.Str("runner_up", crow[0])
	var listed []string
	for _, line := range methodLines {
		f := cols(line)
		m := f[0]
		listed = append(listed, m)
		cellsByFold, ok := byMethod[m]
		if !ok {
			t.Errorf("backtest lists %q, which accuracy.parquet does not have", m)
			continue
		}
		sum, k := 0.0, 0
		for j, fo := range folds {
			want := "failed"
			if cl := cellsByFold[fo]; cl.ok {
				want = t3(cl.mase)
				if !math.IsNaN(cl.mase) {
					sum += cl.mase
					k++
				}
			}
			c.eq(fmt.Sprintf("%s fold %d MASE", m, fo), f[j+1], want)
		}
		mean := sum / float64(k)
		c.eq(m+" mean MASE", f[len(folds)+1], t3(mean))
		note := ""
		if len(f) > len(folds)+2 {
			note = f[len(folds)+2]
		}
		if (m == chosen) != strings.Contains(note, "chosen") || (m == runnerUp) != strings.Contains(note, "runner-up") {
			t.Errorf("backtest row %s: note %q (chosen %s, runner-up %s)", m, note, chosen, runnerUp)
		}
		// The mean of the folds is what the selection scored.
		if m == chosen {
			c.eq("chosen mean vs choices.score", t3(mean), t3(tb.choices.Float("score", crow[0])))
		}
		if m == runnerUp {
			c.eq("runner-up mean vs choices.runner_up_score", t3(mean), t3(tb.choices.Float("runner_up_score", crow[0])))
		}
	}
	want := order
	if only != nil {
		want = only
	}
	if strings.Join(listed, ",") != strings.Join(want, ",") {
		t.Errorf("backtest lists %v, want %v", listed, want)
	}
}

func checkChoice(t *testing.T, c *checker, tb *tables, key []string, b block) string {
	t.Helper()
	rows := rowsFor(tb.choices, tb.keys, key)
	if len(rows) != 1 {
		t.Fatalf("fixture: %d choices rows", len(rows))
	}
	i := rows[0]
	ch := tb.choices
	chosen := str(ch, "chosen", i)
	got := map[string]string{}
	for _, line := range b.lines {
		f := cols(line)
		got[f[0]] = strings.Join(f[1:], "  ")
	}
	want := map[string]string{
		"chosen":       fmt.Sprintf("%s (mean %s %s over %d fold(s))", chosen, str(ch, "metric", i), t3(ch.Float("score", i)), integer(ch, "folds", i)),
		"runner-up":    fmt.Sprintf("%s (%s)", str(ch, "runner_up", i), t3(ch.Float("runner_up_score", i))),
		"demand class": fmt.Sprintf("%s (ADI %s, CV² %s)", str(ch, "demand_class", i), t3(ch.Float("adi", i)), t3(ch.Float("cv2", i))),
		"reason":       str(ch, "reason", i),
	}
	for k, w := range want {
		if got[k] != w {
			t.Errorf("choice %s: printed %q, the table says %q", k, got[k], w)
		}
	}
	c.allow(t3(ch.Float("score", i)), t3(ch.Float("runner_up_score", i)), t3(ch.Float("adi", i)), t3(ch.Float("cv2", i)))
	c.allowInt(integer(ch, "folds", i))
	c.verbatim = append(c.verbatim, str(ch, "reason", i))
	return chosen
}

func checkModels(t *testing.T, c *checker, tb *tables, key []string, b block, params map[string]map[string]float64, only []string) {
	t.Helper()
	models := map[string]string{}
	var order []string
	for _, i := range rowsFor(tb.forecasts, tb.keys, key) {
		m := str(tb.forecasts, "method", i)
		if _, ok := models[m]; !ok {
			models[m] = str(tb.forecasts, "model", i)
			order = append(order, m)
		}
	}
	var listed []string
	last := ""
	for _, line := range b.lines {
		f := cols(line)
		if strings.HasPrefix(f[0], "parameters:") {
			ps := params[last]
			if ps == nil {
				t.Errorf("parameters printed for %s, which has none", last)
				continue
			}
			var names []string
			for n := range ps {
				names = append(names, n)
			}
			sort.Strings(names)
			var want []string
			for _, n := range names {
				want = append(want, n+"="+tp(ps[n]))
				c.allow(tp(ps[n]))
			}
			if w := "parameters: " + strings.Join(want, " "); f[0] != w {
				t.Errorf("%s parameters: printed %q, want %q", last, f[0], w)
			}
			delete(params, last)
			continue
		}
		last = f[0]
		listed = append(listed, last)
		if len(f) != 2 || f[1] != models[last] {
			t.Errorf("model of %s: printed %q, the table says %q", last, strings.Join(f[1:], "  "), models[last])
		}
		c.verbatim = append(c.verbatim, models[last])
	}
	want := order
	if only != nil {
		want = only
	}
	if strings.Join(listed, ",") != strings.Join(want, ",") {
		t.Errorf("models listed %v, want %v", listed, want)
	}
	for label := range params {
		if only == nil || contains(only, label) {
			t.Errorf("parameters of %s not printed", label)
		}
	}
}

// checkForecast checks one method's forecast table against the table's
// rows: step, period, value and every bound.
func checkForecast(t *testing.T, c *checker, tb *tables, key []string, label string, b block, wantBounds bool) {
	t.Helper()
	var rows []int
	for _, i := range rowsFor(tb.forecasts, tb.keys, key) {
		if str(tb.forecasts, "method", i) == label {
			rows = append(rows, i)
		}
	}
	head := strings.Fields(b.lines[0])
	bounded := strings.Join(head, " ") == "step period lower_95 lower_80 value upper_80 upper_95"
	if !bounded && strings.Join(head, " ") != "step period value" {
		t.Fatalf("%s forecast header %q", label, b.lines[0])
	}
	if bounded != wantBounds {
		t.Errorf("%s: bounds shown %v, want %v", label, bounded, wantBounds)
	}
	body := b.lines[1:]
	if len(body) != len(rows) {
		t.Fatalf("%s: %d forecast lines, the table has %d rows", label, len(body), len(rows))
	}
	fc := tb.forecasts
	for k, i := range rows {
		f := strings.Fields(body[k])
		step := integer(fc, "step", i)
		c.eq(label+" step", f[0], strconv.Itoa(step))
		c.eq(label+" period", f[1], day(fc, "period", i))
		what := fmt.Sprintf("%s step %d", label, step)
		if bounded {
			c.eq(what+" lower_95", f[2], tv(fc.Float("lower_95", i)))
			c.eq(what+" lower_80", f[3], tv(fc.Float("lower_80", i)))
			c.eq(what+" value", f[4], tv(fc.Float("value", i)))
			c.eq(what+" upper_80", f[5], tv(fc.Float("upper_80", i)))
			c.eq(what+" upper_95", f[6], tv(fc.Float("upper_95", i)))
		} else {
			c.eq(what+" value", f[2], tv(fc.Float("value", i)))
		}
	}
}

func TestExplainWithoutBacktest(t *testing.T) {
	dir := makeRun(t, specNoBacktest)
	tb := readTables(t, dir)
	key := []string{"east", "gadget"}
	var buf bytes.Buffer
	if err := Explain(dir, key, &buf, Options{}); err != nil {
		t.Fatal(err)
	}
	out := buf.String()
	t.Log("\n" + out)
	c := newChecker(t)
	c.verbatim = append(c.verbatim, dir)
	c.allowInt(12, 6)
	_, blocks := parse(out)
	if bt := find(t, blocks, "backtest"); len(bt.lines) != 1 || !strings.Contains(bt.lines[0], "no backtest") {
		t.Errorf("backtest section %q", bt.lines)
	}
	for _, b := range blocks {
		if b.title == "choice" {
			t.Error("a choice section without a backtest")
		}
	}
	checkHistory(t, c, tb, key, find(t, blocks, "history"), 2, 0)
	checkDecomposition(t, c, tb, key, find(t, blocks, "decomposition"), 6, true)
	checkModels(t, c, tb, key, find(t, blocks, "models fitted"), nil, nil)
	// Every method's forecast, in table order, each with the bounds its
	// rows carry.
	var labels []string
	withModel := 0
	bounded := map[string]string{} // method → interval_source
	for _, i := range rowsFor(tb.forecasts, tb.keys, key) {
		m := str(tb.forecasts, "method", i)
		if len(labels) == 0 || labels[len(labels)-1] != m {
			labels = append(labels, m)
		}
		if src, ok := tb.forecasts.Str("interval_source", i); ok {
			// Model bounds, read as censored at zero for this positive series.
			if src != "model, censored at 0" {
				t.Fatalf("fixture: interval source %q", src)
			}
			bounded[m] = src
		}
	}
	var fcBlocks []block
	for _, b := range blocks {
		if strings.HasPrefix(b.title, "forecast ·") {
			fcBlocks = append(fcBlocks, b)
		}
	}
	if len(fcBlocks) != len(labels) {
		t.Fatalf("forecast sections %v, want one per method %v", titles(fcBlocks), labels)
	}
	for k, m := range labels {
		b := fcBlocks[k]
		wantTitle := "forecast · " + m + " · no intervals"
		if bounded[m] != "" {
			wantTitle = "forecast · " + m + " · intervals: " + bounded[m]
			withModel++
		}
		if b.title != wantTitle {
			t.Errorf("forecast title %q, want %q", b.title, wantTitle)
		}
		checkForecast(t, c, tb, key, m, b, bounded[m] != "")
	}
	if withModel == 0 {
		t.Error("fixture: no method has model intervals")
	}
	c.strays(out)
}

func TestExplainMethodFilter(t *testing.T) {
	dir := makeRun(t, specBacktest)
	tb := readTables(t, dir)
	key := []string{"west", "widget"}
	only := []string{"naive", "holt_winters"}
	var buf bytes.Buffer
	params := map[string]map[string]float64{"holt_winters": {"alpha": 0.25}, "ses": {"alpha": 0.5}}
	if err := Explain(dir, key, &buf, Options{Methods: only, Params: params}); err != nil {
		t.Fatal(err)
	}
	out := buf.String()
	c := newChecker(t)
	_, blocks := parse(out)
	checkBacktest(t, c, tb, key, find(t, blocks, "backtest"), only)
	checkModels(t, c, tb, key, find(t, blocks, "models fitted"), params, only)
	var got []string
	for _, b := range blocks {
		if strings.HasPrefix(b.title, "forecast ·") {
			got = append(got, strings.Fields(b.title)[2])
			checkForecast(t, c, tb, key, strings.Fields(b.title)[2], b, strings.Contains(b.title, "intervals:"))
		}
	}
	if strings.Join(got, ",") != strings.Join(only, ",") {
		t.Errorf("forecasts shown for %v, want %v", got, only)
	}
	if err := Explain(dir, key, &bytes.Buffer{}, Options{Methods: []string{"arima"}}); err == nil || !strings.Contains(err.Error(), `unknown method "arima"`) {
		t.Errorf("unknown method: error %v", err)
	}
	if err := Explain(dir, key, &bytes.Buffer{}, Options{Params: map[string]map[string]float64{"arima": {"p": 1}}}); err == nil || !strings.Contains(err.Error(), `"arima"`) {
		t.Errorf("parameters for an unknown method: error %v", err)
	}
	// AllForecasts: every method that forecast the series, in table order.
	buf.Reset()
	if err := Explain(dir, key, &buf, Options{AllForecasts: true}); err != nil {
		t.Fatal(err)
	}
	_, blocks = parse(buf.String())
	var want []string
	for _, i := range rowsFor(tb.forecasts, tb.keys, key) {
		if m := str(tb.forecasts, "method", i); len(want) == 0 || want[len(want)-1] != m {
			want = append(want, m)
		}
	}
	got = nil
	for _, b := range blocks {
		if strings.HasPrefix(b.title, "forecast ·") {
			got = append(got, strings.Fields(b.title)[2])
		}
	}
	if strings.Join(got, ",") != strings.Join(want, ",") {
		t.Errorf("AllForecasts shows %v, want %v", got, want)
	}
}

func TestExplainShortSeries(t *testing.T) {
	dir := makeRun(t, specBacktest)
	tb := readTables(t, dir)
	key := []string{"south", "gizmo"}
	var buf bytes.Buffer
	if err := Explain(dir, key, &buf, Options{}); err != nil {
		t.Fatal(err)
	}
	_, blocks := parse(buf.String())
	if h := find(t, blocks, "history"); !strings.Contains(strings.Join(h.lines, " "), "no decomposition rows") {
		t.Errorf("history of a series without components: %q", h.lines)
	}
	ch := tb.choices
	i := rowsFor(ch, tb.keys, key)[0]
	choice := find(t, blocks, "choice")
	want := []string{
		"chosen  " + str(ch, "chosen", i) + " (no score: fallback)",
		"runner-up  none",
		"reason  " + str(ch, "reason", i),
	}
	text := map[string]bool{}
	for _, line := range choice.lines {
		text[strings.Join(cols(line), "  ")] = true
	}
	for _, w := range want {
		if !text[w] {
			t.Errorf("choice section %q lacks %q", choice.lines, w)
		}
	}
	c := newChecker(t)
	checkForecast(t, c, tb, key, str(ch, "chosen", i), find(t, blocks, "forecast"), true)
	// Every problem of the series is listed.
	probs := find(t, blocks, "problems")
	prow := rowsFor(tb.problemsTable, tb.keys, key)
	if len(prow) == 0 || len(probs.lines) != len(prow) {
		t.Fatalf("%d problem lines, the table has %d rows", len(probs.lines), len(prow))
	}
	for k, r := range prow {
		if !strings.HasSuffix(probs.lines[k], str(tb.problemsTable, "message", r)) {
			t.Errorf("problem line %q, want message %q", probs.lines[k], str(tb.problemsTable, "message", r))
		}
	}
}

func TestExplainUnknownKey(t *testing.T) {
	dir := makeRun(t, specBacktest)
	var nf *NotFoundError

	err := Explain(dir, []string{"north", "widgt"}, &bytes.Buffer{}, Options{})
	if !errors.As(err, &nf) {
		t.Fatalf("misspelt key: error %v, want a NotFoundError", err)
	}
	if len(nf.Suggestions) == 0 || strings.Join(nf.Suggestions[0], "/") != "north/widget" {
		t.Errorf("suggestions %v; want north/widget first", nf.Suggestions)
	}
	if nf.Series != 11 {
		t.Errorf("run has %d series, the error says %d", 11, nf.Series)
	}
	msg := err.Error()
	if !strings.Contains(msg, "did you mean") || !strings.Contains(msg, "region=north product=widget") {
		t.Errorf("message %q", msg)
	}

	// Wrong case in the region: still found as a suggestion.
	err = Explain(dir, []string{"East", "gadget"}, &bytes.Buffer{}, Options{})
	if !errors.As(err, &nf) || len(nf.Suggestions) == 0 || strings.Join(nf.Suggestions[0], "/") != "east/gadget" {
		t.Errorf("East/gadget: error %v", err)
	}

	// Nothing close: no suggestion, no "did you mean".
	err = Explain(dir, []string{"zzzzzzzz", "qqqqqqqq"}, &bytes.Buffer{}, Options{})
	if !errors.As(err, &nf) || len(nf.Suggestions) != 0 || strings.Contains(err.Error(), "did you mean") {
		t.Errorf("far key: error %v", err)
	}

	// A key of the wrong length names the key columns.
	err = Explain(dir, []string{"north"}, &bytes.Buffer{}, Options{})
	if err == nil || !strings.Contains(err.Error(), "region, product") || errors.As(err, &nf) {
		t.Errorf("short key: error %v", err)
	}

	// Not a run folder.
	if err := Explain(t.TempDir(), []string{"north", "widget"}, &bytes.Buffer{}, Options{}); err == nil {
		t.Error("a folder without a run: no error")
	}
}

// KeyRange (binary search) finds the same rows as a scan, for every series
// of every sorted table.
func TestKeyRange(t *testing.T) {
	dir := makeRun(t, specBacktest)
	tb := readTables(t, dir)
	for name, x := range map[string]*runfolder.Table{"forecasts": tb.forecasts, "components": tb.components, "seasonal_factors": tb.factors, "accuracy": tb.accuracy, "choices": tb.choices} {
		keys := x.SeriesKeys(tb.keys)
		if len(keys) == 0 {
			t.Fatalf("%s: no series", name)
		}
		for _, k := range append(keys, []string{"north", "zzz"}, []string{"", ""}) {
			lo, hi := x.KeyRange(tb.keys, k)
			scan := rowsFor(x, tb.keys, k)
			if len(scan) != hi-lo || (len(scan) > 0 && (scan[0] != lo || scan[len(scan)-1] != hi-1)) {
				t.Errorf("%s %v: KeyRange [%d, %d), scan %d rows from %v", name, k, lo, hi, len(scan), scan)
			}
		}
	}
	if got := len(tb.choices.SeriesKeys(tb.keys)); got != 11 {
		t.Errorf("choices holds %d series, want 11", got)
	}
}

func TestEditDistance(t *testing.T) {
	for _, c := range []struct {
		a, b string
		d    int
	}{{"", "", 0}, {"widget", "widgt", 1}, {"kitten", "sitting", 3}, {"ünï", "uni", 2}, {"abc", "", 3}} {
		if got := spec.EditDistance(c.a, c.b); got != c.d {
			t.Errorf("spec.EditDistance(%q, %q) = %d, want %d", c.a, c.b, got, c.d)
		}
	}
}

func TestSparkline(t *testing.T) {
	nan := math.NaN()
	for _, c := range []struct {
		hist, fc []float64
		width    int
		want     string
		bucket   int
	}{
		{[]float64{1, 2, 3, 4, 5, 6, 7, 8}, nil, 60, "▁▂▃▄▅▆▇█", 1},
		// Buckets of two, aligned to the end: (1), (2,3), (4,5); the
		// forecast (9) is on the same scale and tops it.
		{[]float64{1, 2, 3, 4, 5}, []float64{9}, 3, "▁▂▄ ┊ █", 2},
		{[]float64{5, nan, 5}, nil, 10, "▄ ▄", 1},
		{[]float64{0, 8}, []float64{4, 4, 8}, 2, "▁█ ┊ ▅▅█", 1},
	} {
		got, b := sparkline(c.hist, c.fc, c.width)
		if got != c.want || b != c.bucket {
			t.Errorf("sparkline(%v, %v, %d) = %q, %d; want %q, %d", c.hist, c.fc, c.width, got, b, c.want, c.bucket)
		}
	}
}

func TestPerLine(t *testing.T) {
	for m, want := range map[int]int{1: 10, 4: 4, 7: 7, 12: 12, 13: 13, 52: 13, 24: 12, 365: 10} {
		if got := perLine(m); got != want {
			t.Errorf("perLine(%d) = %d, want %d", m, got, want)
		}
	}
}

// Values near ±1e308 (hi − lo overflows) and infinities draw a sparkline;
// they used to index the marks with a NaN.
func TestSparklineExtremes(t *testing.T) {
	for _, hist := range [][]float64{
		{-1e308, 0, 1e308, 5},
		{math.MaxFloat64, -math.MaxFloat64},
		{math.Inf(1), 1, math.NaN(), math.Inf(-1)},
	} {
		s, _ := sparkline(hist, []float64{1e308, -1e308}, 60)
		if s == "" {
			t.Errorf("%v: empty sparkline", hist)
		}
	}
}
