package pipeline

import (
	"almanac/pipeline/runfolder"
	"bytes"
	"context"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"

	"almanac/engines"
	"almanac/spec"
)

// table is a Parquet file read back: its schema, metadata and rows.
type table struct {
	schema *arrow.Schema
	meta   map[string]string
	cols   map[string]arrow.Array
	rows   int
}

func readTable(t *testing.T, path string) *table {
	t.Helper()
	pf, err := file.OpenParquetFile(path, false)
	if err != nil {
		t.Fatalf("open %s: %v", path, err)
	}
	defer pf.Close()
	fr, err := pqarrow.NewFileReader(pf, pqarrow.ArrowReadProperties{}, memory.DefaultAllocator)
	if err != nil {
		t.Fatal(err)
	}
	tbl, err := fr.ReadTable(context.Background())
	if err != nil {
		t.Fatal(err)
	}
	out := &table{schema: tbl.Schema(), meta: map[string]string{}, cols: map[string]arrow.Array{}, rows: int(tbl.NumRows())}
	kv := pf.MetaData().KeyValueMetadata()
	for i, k := range kv.Keys() {
		out.meta[k] = kv.Values()[i]
	}
	for i, f := range tbl.Schema().Fields() {
		chunks := tbl.Column(i).Data().Chunks()
		if len(chunks) == 0 {
			out.cols[f.Name] = array.MakeArrayOfNull(memory.DefaultAllocator, f.Type, 0)
			continue
		}
		arr, err := array.Concatenate(chunks, memory.DefaultAllocator)
		if err != nil {
			t.Fatal(err)
		}
		out.cols[f.Name] = arr
	}
	return out
}

func (tb *table) str(col string, i int) string {
	c := tb.cols[col].(*array.String)
	if c.IsNull(i) {
		return "<null>"
	}
	return c.Value(i)
}

func (tb *table) f64(col string, i int) float64 {
	c := tb.cols[col].(*array.Float64)
	if c.IsNull(i) {
		return math.NaN()
	}
	return c.Value(i)
}

func (tb *table) i32(col string, i int) int { return int(tb.cols[col].(*array.Int32).Value(i)) }

func (tb *table) date(col string, i int) string {
	d := int64(tb.cols[col].(*array.Date32).Value(i))
	return time.Unix(d*86400, 0).UTC().Format(time.DateOnly)
}

// writeFixture writes a small invented panel as CSV: two stores × two
// items, monthly, with one short series and one that has zeros.
func writeFixture(t *testing.T, dir string) {
	t.Helper()
	var b strings.Builder
	b.WriteString("month,store,item,qty\n")
	// Rows deliberately out of order, with two rows in one period.
	// S2/A was launched late: 18 months of history, ending with the rest.
	for _, s := range []struct {
		store, item string
		from, n     int
		zeros       bool
	}{{"S2", "B", 0, 36, false}, {"S1", "A", 0, 36, false}, {"S1", "B", 0, 30, true}, {"S2", "A", 18, 36, false}} {
		for i := s.n - 1; i >= s.from; i-- {
			y, m := 2021+i/12, i%12+1
			v := 100 + 2*float64(i) + 30*math.Sin(2*math.Pi*float64(m)/12)
			if s.zeros && i%7 == 0 {
				v = 0
			}
			fmt.Fprintf(&b, "%04d-%02d-15,%s,%s,%.1f\n", y, m, s.store, s.item, v)
		}
	}
	b.WriteString("2021-01-20,S1,A,5\n") // a second row in January 2021
	if err := os.MkdirAll(filepath.Join(dir, "data"), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "data", "sales.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}

const fixtureSpec = `version: 1
name: fixture
sources: [data/sales.csv]
columns: {time: month, value: qty, keys: [store, item]}
calendar: {frequency: month}
methods:
  - naive
  - seasonal_naive
  - drift
  - mean
  - {method: classical, form: multiplicative, label: classical_mult}
  - {method: classical, form: additive, trend: trend_step, label: classical_add}
horizon: 6
output: out/run
`

func loadFixture(t *testing.T, dir, specText string) *spec.Spec {
	t.Helper()
	p := filepath.Join(dir, "spec.yaml")
	if err := os.WriteFile(p, []byte(specText), 0o644); err != nil {
		t.Fatal(err)
	}
	s, err := spec.Load(p)
	if err != nil {
		t.Fatal(err)
	}
	return s
}

func TestRunWritesTypedTables(t *testing.T) {
	dir := t.TempDir()
	writeFixture(t, dir)
	s := loadFixture(t, dir, fixtureSpec)
	mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
	sum, err := Run(context.Background(), s, Options{Workers: 2, Mem: mem})
	if err != nil {
		t.Fatal(err)
	}
	mem.AssertSize(t, 0)
	out := filepath.Join(dir, "out", "run")
	if sum.Dir != out {
		t.Errorf("run folder %s, want %s", sum.Dir, out)
	}
	wantTypes := map[string]map[string]arrow.DataType{
		runfolder.TableForecasts: {"store": arrow.BinaryTypes.String, "item": arrow.BinaryTypes.String, "method": arrow.BinaryTypes.String,
			"model": arrow.BinaryTypes.String, "period": arrow.FixedWidthTypes.Date32, "step": arrow.PrimitiveTypes.Int32, "value": arrow.PrimitiveTypes.Float64},
		runfolder.TableComponents: {"store": arrow.BinaryTypes.String, "decomposition": arrow.BinaryTypes.String, "form": arrow.BinaryTypes.String,
			"period": arrow.FixedWidthTypes.Date32, "observed": arrow.PrimitiveTypes.Float64, "trend": arrow.PrimitiveTypes.Float64,
			"seasonal": arrow.PrimitiveTypes.Float64, "remainder": arrow.PrimitiveTypes.Float64, "adjusted": arrow.PrimitiveTypes.Float64},
		runfolder.TableSeasonalFactors: {"position": arrow.PrimitiveTypes.Int32, "factor": arrow.PrimitiveTypes.Float64, "count": arrow.PrimitiveTypes.Int32},
		runfolder.TableProblems:        {"stage": arrow.BinaryTypes.String, "severity": arrow.BinaryTypes.String, "method": arrow.BinaryTypes.String, "message": arrow.BinaryTypes.String},
	}
	tables := map[string]*table{}
	for name, cols := range wantTypes {
		tb := readTable(t, filepath.Join(out, name+".parquet"))
		tables[name] = tb
		for col, typ := range cols {
			fs, ok := tb.schema.FieldsByName(col)
			if !ok {
				t.Errorf("%s: no column %s", name, col)
				continue
			}
			if !arrow.TypeEqual(fs[0].Type, typ) {
				t.Errorf("%s.%s: type %s, want %s", name, col, fs[0].Type, typ)
			}
		}
		if tb.meta["almanac.spec_sha256"] != s.Hash() {
			t.Errorf("%s: metadata spec hash %q, want %q", name, tb.meta["almanac.spec_sha256"], s.Hash())
		}
	}

	// Forecasts: 4 series × 6 methods × 6 steps, less the classical
	// methods on the short S2/A series (18 < 24 periods).
	fc := tables[runfolder.TableForecasts]
	if want := (4*6 - 2) * 6; fc.rows != want {
		t.Errorf("forecasts rows = %d, want %d", fc.rows, want)
	}
	// Sorted key order, then spec method order, then step; S1/A first.
	if fc.str("store", 0) != "S1" || fc.str("item", 0) != "A" || fc.str("method", 0) != "naive" || fc.i32("step", 0) != 1 {
		t.Errorf("first forecast row: %s/%s %s step %d", fc.str("store", 0), fc.str("item", 0), fc.str("method", 0), fc.i32("step", 0))
	}
	// S1/A ends 2023-12; the first forecast period is 2024-01-01.
	if got := fc.date("period", 0); got != "2024-01-01" {
		t.Errorf("first forecast period %s", got)
	}
	// naive repeats the last value: S1/A's December 2023 value.
	wantLast := 100 + 2*35 + 30*math.Sin(2*math.Pi*12/12)
	if got := fc.f64("value", 0); math.Abs(got-math.Round(wantLast*10)/10) > 1e-9 {
		t.Errorf("naive forecast %g, want %g", got, math.Round(wantLast*10)/10)
	}
	prevKey := ""
	for i := 0; i < fc.rows; i++ {
		k := fc.str("store", i) + "/" + fc.str("item", i)
		if k < prevKey {
			t.Fatalf("forecasts out of key order at row %d: %s after %s", i, k, prevKey)
		}
		prevKey = k
	}

	// Problems: the short series is too short for classical (decompose and
	// both classical methods); S1/B has zeros, so multiplicative falls back:
	// the default decomposition's warning is one run-level summary row,
	// last; the method's own stays per series.
	pr := tables[runfolder.TableProblems]
	var got []string
	for i := 0; i < pr.rows; i++ {
		got = append(got, strings.Join([]string{pr.str("store", i), pr.str("item", i), pr.str("stage", i), pr.str("severity", i), pr.str("code", i), pr.str("method", i)}, " "))
	}
	want := []string{
		"S1 B forecast warning nonpositive_for_multiplicative classical_mult",
		"S2 A decompose error short_history <null>",
		"S2 A forecast error short_history classical_mult",
		"S2 A forecast error short_history classical_add",
		"<null> <null> decompose warning nonpositive_for_multiplicative <null>",
	}
	if strings.Join(got, "\n") != strings.Join(want, "\n") {
		t.Errorf("problems:\n%s\nwant:\n%s", strings.Join(got, "\n"), strings.Join(want, "\n"))
	}
	// The fallback is said in the output: the model column and the form.
	for i := 0; i < fc.rows; i++ {
		if fc.str("store", i) == "S1" && fc.str("item", i) == "B" && fc.str("method", i) == "classical_mult" {
			if m := fc.str("model", i); !strings.Contains(m, "additive") {
				t.Errorf("model for the fallback = %q; want it to name the additive form", m)
			}
			break
		}
	}
	comp := tables[runfolder.TableComponents]
	for i := 0; i < comp.rows; i++ {
		if comp.str("store", i) == "S1" && comp.str("item", i) == "B" && comp.str("form", i) != "additive" {
			t.Fatalf("S1/B components form %q, want additive (fallback)", comp.str("form", i))
		}
	}
	// Components: 3 series long enough, each running to the panel's end
	// (S1/B's last six months are zero-filled).
	if want := 36 + 36 + 36; comp.rows != want {
		t.Errorf("components rows = %d, want %d", comp.rows, want)
	}
	// January 2021 of S1/A holds two rows, summed.
	v := 100 + 30*math.Sin(2*math.Pi/12)
	if got := comp.f64("observed", 0); math.Abs(got-(math.Round(v*10)/10+5)) > 1e-9 {
		t.Errorf("S1/A 2021-01 observed %g, want %g (two rows summed)", got, math.Round(v*10)/10+5)
	}
	sf := tables[runfolder.TableSeasonalFactors]
	if sf.rows != 3*12 || sf.i32("position", 0) != 1 || sf.i32("position", 11) != 12 {
		t.Errorf("seasonal_factors rows %d, positions %d…%d", sf.rows, sf.i32("position", 0), sf.i32("position", 11))
	}
	// Calendar position 1 is January. S1/A runs 2021-01…2023-12; the 2×12
	// moving average is undefined for the first and last six months, so
	// January has detrended values in 2022 and 2023 only: a count of 2.
	if c := sf.i32("count", 0); c != 2 {
		t.Errorf("January factor averaged from %d values, want 2", c)
	}

	m, err := runfolder.ReadManifest(out)
	if err != nil {
		t.Fatal(err)
	}
	if m.Series != 4 || m.RowsRead != 36+36+30+18+1 || len(m.Inputs) != 1 || len(m.Inputs[0].SHA256) != 64 || m.Spec.SHA256 != s.Hash() {
		t.Errorf("manifest: %+v", m)
	}
	if _, err := os.Stat(filepath.Join(out, runfolder.MarkerFile)); err != nil {
		t.Errorf("marker missing: %v", err)
	}
}

func runBytes(t *testing.T, s *spec.Spec, out string, workers int) map[string][]byte {
	t.Helper()
	if _, err := Run(context.Background(), s, Options{Out: out, Workers: workers}); err != nil {
		t.Fatal(err)
	}
	files := map[string][]byte{}
	for _, name := range []string{runfolder.TableForecasts, runfolder.TableComponents, runfolder.TableSeasonalFactors, runfolder.TableProblems, runfolder.TableAccuracy, runfolder.TableChoices, runfolder.TableTotals} {
		if _, err := os.Stat(filepath.Join(out, name+".parquet")); os.IsNotExist(err) && (name == runfolder.TableAccuracy || name == runfolder.TableChoices || name == runfolder.TableTotals) {
			continue
		}
		b, err := os.ReadFile(filepath.Join(out, name+".parquet"))
		if err != nil {
			t.Fatal(err)
		}
		files[name] = b
	}
	return files
}

func TestSameBytesAtAnyWorkerCount(t *testing.T) {
	dir := t.TempDir()
	// 2,000 series, so that workers really interleave; with a backtest,
	// selection, a combination, pooled intervals and totals. Every tenth
	// series is a slow mover (demand in about one month of four), so its
	// bounds come from resampled paths on a stream seeded by its key.
	var b strings.Builder
	b.WriteString("month,store,item,qty\n")
	for k := 0; k < 2000; k++ {
		for i := 0; i < 40; i++ {
			v := 50 + float64(k%17) + float64(i) + 20*math.Sin(float64(i+k))
			if k%10 == 3 {
				v = 0
				if (i*7+k)%4 == 0 {
					v = float64(1 + (i+k)%3)
				}
			}
			fmt.Fprintf(&b, "%04d-%02d,S%04d,I%d,%.2f\n", 2020+i/12, i%12+1, k%500, k/500, v)
		}
	}
	os.MkdirAll(filepath.Join(dir, "data"), 0o755)
	os.WriteFile(filepath.Join(dir, "data", "sales.csv"), []byte(b.String()), 0o644)
	s := loadFixture(t, dir, fixtureSpec+"backtest: {folds: 2}\nselection: {combine: {kind: mean, top: 2}}\nintervals: {levels: [90]}\ntotals: {lead_times: [3, 6], levels: [50, 95]}\n")
	one := runBytes(t, s, filepath.Join(dir, "w1"), 1)
	two := runBytes(t, s, filepath.Join(dir, "w2"), 2)
	four := runBytes(t, s, filepath.Join(dir, "w4"), 4)
	checkTableHashes(t, "determinism-2000", one)
	for name := range one {
		if !bytes.Equal(one[name], two[name]) || !bytes.Equal(one[name], four[name]) {
			t.Errorf("%s differs between 1, 2 and 4 workers", name)
		}
	}
	// And a rerun into the same folder replaces it with the same bytes.
	again := runBytes(t, s, filepath.Join(dir, "w1"), 2)
	for name := range one {
		if !bytes.Equal(one[name], again[name]) {
			t.Errorf("%s differs on rerun", name)
		}
	}
}

func TestFailedRunLeavesNothing(t *testing.T) {
	dir := t.TempDir()
	writeFixture(t, dir)
	s := loadFixture(t, dir, fixtureSpec)
	out := filepath.Join(dir, "out", "run")
	boom := errors.New("injected failure before commit")
	var sawTables bool
	// Finish is the run's last step before the commit (the CLI writes the
	// report there); its error fails the run.
	_, err := Run(context.Background(), s, Options{Finish: func(staging, _ string) error {
		_, statErr := os.Stat(filepath.Join(staging, "forecasts.parquet"))
		sawTables = statErr == nil
		return boom
	}})
	if !errors.Is(err, boom) {
		t.Fatalf("got %v", err)
	}
	if !sawTables {
		t.Error("the failure was not injected mid-run: no tables were staged yet")
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Errorf("run folder exists after a failed run: %v", err)
	}
	leftovers, _ := filepath.Glob(filepath.Join(dir, "out", ".almanac-tmp-*"))
	if len(leftovers) != 0 {
		t.Errorf("staging left behind: %v", leftovers)
	}

	// A failing rerun over an existing run keeps the old run intact.
	if _, err := Run(context.Background(), s, Options{}); err != nil {
		t.Fatal(err)
	}
	before, _ := os.ReadFile(filepath.Join(out, "forecasts.parquet"))
	_, err = Run(context.Background(), s, Options{Finish: func(string, string) error { return boom }})
	if !errors.Is(err, boom) {
		t.Fatalf("got %v", err)
	}
	after, _ := os.ReadFile(filepath.Join(out, "forecasts.parquet"))
	if !bytes.Equal(before, after) || len(after) == 0 {
		t.Error("a failed rerun changed the previous run")
	}
}

func TestRefusesForeignFolders(t *testing.T) {
	dir := t.TempDir()
	writeFixture(t, dir)
	s := loadFixture(t, dir, fixtureSpec)
	foreign := filepath.Join(dir, "precious")
	os.MkdirAll(foreign, 0o755)
	os.WriteFile(filepath.Join(foreign, "notes.txt"), []byte("keep me"), 0o644)
	_, err := Run(context.Background(), s, Options{Out: foreign})
	if err == nil || !strings.Contains(err.Error(), "is not an almanac run folder") {
		t.Fatalf("got %v", err)
	}
	if b, _ := os.ReadFile(filepath.Join(foreign, "notes.txt")); string(b) != "keep me" {
		t.Error("foreign folder touched")
	}
	_, err = Run(context.Background(), s, Options{Out: filepath.Join(dir, "data")})
	if err == nil || !strings.Contains(err.Error(), "holds the input data/sales.csv") {
		t.Fatalf("output into the input folder: got %v", err)
	}
}

// Each bad input fails the run with a message naming the file and line (or
// the spec field) and writes nothing.
func TestBadInputs(t *testing.T) {
	cases := []struct {
		name  string
		csv   string
		edit  func(string) string
		wants []string
	}{
		{"source file missing", "", func(s string) string { return strings.Replace(s, "data/sales.csv", "data/nope.csv", 1) },
			[]string{"spec.yaml: sources[0]: source file \"data/nope.csv\" does not exist"}},
		{"glob matching nothing", "", func(s string) string { return strings.Replace(s, "data/sales.csv", "data/*.parquet", 1) },
			[]string{"spec.yaml: sources[0]: the pattern \"data/*.parquet\" matches no files"}},
		{"glob matching a folder", "", func(s string) string {
			return strings.Replace(s, "[data/sales.csv]", "[{path: \"dat*\", format: csv}]", 1)
		},
			[]string{"matches the folder data; sources must be files"}},
		{"named column absent", "month,shop,item,qty\n2021-01,S1,A,1\n", nil,
			[]string{`data/sales.csv: column "store" named in the spec is not in the file; columns present: "month", "shop", "item", "qty"`}},
		{"value not a number", "month,store,item,qty\n2021-01,S1,A,1\n2021-02,S1,A,1,5\n2021-03,S1,A,lots\n", nil,
			[]string{`data/sales.csv:3: this line has a different number of fields from the header`}},
		{"value not a number (text)", "month,store,item,qty\n2021-01,S1,A,1\n2021-03,S1,A,lots\n", nil,
			[]string{`data/sales.csv:3: column "qty": "lots" is not a number`}},
		{"comma decimal", "month,store,item,qty\n2021-01,S1,A,\"1,5\"\n", nil,
			[]string{`data/sales.csv:2: column "qty": "1,5" is not a number (a comma is not read as a decimal point`}},
		{"unparseable time", "month,store,item,qty\n2021-01,S1,A,1\n\n2021/02,S1,A,1\n", nil,
			[]string{`data/sales.csv:4: column "month": "2021/02" is not a time value: expected a date (2024-07-15)`}},
		{"duplicates under reject", "month,store,item,qty\n2021-01,S1,A,1\n2021-02,S1,A,1\n2021-01-31,S1,A,2\n", func(s string) string { return s + "shaping: {combine: reject}\n" },
			[]string{`data/sales.csv:4: 2 rows for series store=S1, item=A in period 2021-01 (also data/sales.csv:2); shaping.combine is reject`}},
		{"gaps under reject", "month,store,item,qty\n2021-01,S1,A,1\n2021-04,S1,A,1\n", func(s string) string { return s + "shaping: {gaps: reject}\n" },
			[]string{`series store=S1, item=A has no rows for 2 of its periods (first gap: 2021-02); shaping.gaps is reject`}},
		{"empty file", "", func(s string) string { return s }, []string{`data/sales.csv: the file is empty; expected a header line naming the columns month, qty, store, item`}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			dir := t.TempDir()
			writeFixture(t, dir)
			if c.csv != "" || c.name == "empty file" {
				os.WriteFile(filepath.Join(dir, "data", "sales.csv"), []byte(c.csv), 0o644)
			}
			text := fixtureSpec
			if c.edit != nil {
				text = c.edit(text)
			}
			s := loadFixture(t, dir, text)
			_, err := Run(context.Background(), s, Options{})
			if err == nil {
				t.Fatal("run succeeded")
			}
			for _, w := range c.wants {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("error\n%v\ndoes not contain\n%s", err, w)
				}
			}
			if _, err := os.Stat(filepath.Join(dir, "out")); !os.IsNotExist(err) {
				entries, _ := os.ReadDir(filepath.Join(dir, "out"))
				if len(entries) > 0 {
					t.Errorf("a failed run left %v", entries)
				}
			}
		})
	}
}

// panicky panics on one series, to prove a broken method costs only that
// series and method.
type panicky struct{ engines.Method }

func (p panicky) Fit(y []float64, m int) (engines.Fitted, error) {
	if y[0] == 0 { // S1/B, the only series that starts with a zero
		var boom []float64
		_ = boom[len(y)]
	}
	return p.Method.Fit(y, m)
}

func TestPanicInOneMethodIsIsolated(t *testing.T) {
	dir := t.TempDir()
	writeFixture(t, dir)
	s := loadFixture(t, dir, fixtureSpec)
	// The compiled plan's methods are what the run calls: swap drift for a
	// panicking wrapper.
	p, err := Compile(s, Options{})
	if err != nil {
		t.Fatal(err)
	}
	for i, m := range p.Methods {
		if m.Engine.Name() == "drift" {
			p.Methods[i].Engine = panicky{m.Engine}
		}
	}
	if _, err := p.Run(context.Background(), Options{}, time.Now()); err != nil {
		t.Fatal(err)
	}
	pr := readTable(t, filepath.Join(dir, "out", "run", "problems.parquet"))
	found := false
	for i := 0; i < pr.rows; i++ {
		if pr.str("method", i) == "drift" {
			found = true
			if pr.str("store", i) != "S1" || pr.str("item", i) != "B" || pr.str("severity", i) != "error" ||
				!strings.Contains(pr.str("message", i), "internal error (panic: runtime error: index out of range") {
				t.Errorf("panic row: %s %s %s %q", pr.str("store", i), pr.str("item", i), pr.str("severity", i), pr.str("message", i))
			}
		}
	}
	if !found {
		t.Fatal("no problems row for the panicking method")
	}
	fc := readTable(t, filepath.Join(dir, "out", "run", "forecasts.parquet"))
	drift := 0
	for i := 0; i < fc.rows; i++ {
		if fc.str("method", i) == "drift" {
			drift++
		}
	}
	if drift != 3*6 {
		t.Errorf("drift forecast rows = %d, want 18 (three series)", drift)
	}
}

func TestAllMissingSeriesIsAProblem(t *testing.T) {
	dir := t.TempDir()
	writeFixture(t, dir)
	f, _ := os.OpenFile(filepath.Join(dir, "data", "sales.csv"), os.O_APPEND|os.O_WRONLY, 0)
	f.WriteString("2021-01,S9,Z,\n2021-02,S9,Z,NaN\n")
	f.Close()
	s := loadFixture(t, dir, strings.Replace(fixtureSpec, "horizon: 6", "horizon: 6\nshaping: {gaps: missing}", 1))
	if _, err := Run(context.Background(), s, Options{}); err != nil {
		t.Fatal(err)
	}
	pr := readTable(t, filepath.Join(dir, "out", "run", "problems.parquet"))
	var msgs []string
	for i := 0; i < pr.rows; i++ {
		msgs = append(msgs, pr.str("store", i)+" "+pr.str("message", i))
	}
	joined := strings.Join(msgs, "\n")
	if !strings.Contains(joined, "<null> 2 rows have an empty or NaN value; they count as missing") ||
		!strings.Contains(joined, "S9 all 36 values are missing; no decomposition or forecast") {
		t.Errorf("problems:\n%s", joined)
	}
}
