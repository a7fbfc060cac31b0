package pipeline_test

// Fuzzing of the review commands (explain, diff, the HTML report) over
// corrupted run folders: columns dropped, duplicated, retyped or made NULL,
// extreme values (±1e308, ±Inf, NaN, the largest dates and ints), empty
// and truncated tables, broken manifests. Each may fail with an error; none
// may panic. Run one for minutes with, e.g.:
//
//	go test ./pipeline -run '^$' -fuzz FuzzExplainCorrupted -fuzztime 3m -parallel 1

import (
	"context"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"

	"almanac/pipeline"
	"almanac/pipeline/review/explain"
	"almanac/pipeline/review/report"
	"almanac/pipeline/review/rundiff"
	"almanac/spec"
)

const reviewSpec = `version: 1
name: review
sources: [data.csv]
columns: {time: month, value: qty, keys: [store, item]}
calendar: {frequency: month}
methods: [naive, seasonal_naive, {method: classical}, {method: classical, form: additive, label: add}]
horizon: 6
backtest: {folds: 2}
selection: {combine: {kind: mean, top: 2}}
intervals: {levels: [80, 95], source: model}
output: out
`

var (
	reviewOnce sync.Once
	reviewBase string // a complete run folder
	reviewHead string // a second run of slightly other data, for diff
	reviewErr  error
)

// reviewRuns makes the two run folders every fuzz input starts from
// (invented data).
func reviewRuns(t testing.TB) (string, string) {
	reviewOnce.Do(func() {
		root, err := os.MkdirTemp("", "almanac-review-fuzz-")
		if err != nil {
			reviewErr = err
			return
		}
		for n, shift := range map[string]float64{"base": 0, "head": 7} {
			dir := filepath.Join(root, n)
			os.MkdirAll(dir, 0o755)
			var b strings.Builder
			b.WriteString("month,store,item,qty\n")
			for k := 0; k < 6; k++ {
				for i := 0; i < 40; i++ {
					v := 50 + float64(k)*3 + float64(i)/2 + 10*math.Sin(float64(i)*math.Pi/6) + shift*float64(k%2)
					if k == 5 && i%3 != 0 {
						v = 0
					}
					fmt.Fprintf(&b, "%04d-%02d,S%d,I%d,%.2f\n", 2020+i/12, i%12+1, k%3, k/3, v)
				}
			}
			os.WriteFile(filepath.Join(dir, "data.csv"), []byte(b.String()), 0o644)
			os.WriteFile(filepath.Join(dir, "spec.yaml"), []byte(reviewSpec), 0o644)
			s, err := spec.Load(filepath.Join(dir, "spec.yaml"))
			if err != nil {
				reviewErr = err
				return
			}
			sum, err := pipeline.Run(context.Background(), s, pipeline.Options{Workers: 1})
			if err != nil {
				reviewErr = err
				return
			}
			if err := report.Write(sum.Dir, report.Options{Series: []string{"S0 / I0"}}); err != nil {
				reviewErr = err
				return
			}
			if n == "base" {
				reviewBase = sum.Dir
			} else {
				reviewHead = sum.Dir
			}
		}
	})
	if reviewErr != nil {
		t.Fatal(reviewErr)
	}
	return reviewBase, reviewHead
}

var reviewTables = []string{"forecasts", "components", "seasonal_factors", "problems", "accuracy", "choices"}

// corrupt copies run into a new folder and applies the operations ops
// encodes, three bytes each: what to do, to which table, to which column.
func corrupt(t testing.TB, run string, ops []byte) string {
	dir := filepath.Join(t.TempDir(), "run")
	if err := os.CopyFS(dir, os.DirFS(run)); err != nil {
		t.Fatal(err)
	}
	for len(ops) >= 3 {
		op, tb, col := ops[0]%12, reviewTables[int(ops[1])%len(reviewTables)], int(ops[2])
		ops = ops[3:]
		path := filepath.Join(dir, tb+".parquet")
		switch op {
		case 10: // truncate the file
			b, _ := os.ReadFile(path)
			os.WriteFile(path, b[:col*len(b)/256], 0o644)
			continue
		case 11: // a broken manifest
			b, _ := os.ReadFile(filepath.Join(dir, "manifest.json"))
			cut := col * len(b) / 256
			switch col % 3 {
			case 0:
				b = b[:cut]
			case 1:
				b = []byte(strings.Replace(string(b), `"keys":["store","item"]`, `"keys":["store","nope","item"]`, 1))
			case 2:
				b = []byte(strings.Replace(string(b), `"horizon":6`, `"horizon":-2147483648`, 1))
			}
			os.WriteFile(filepath.Join(dir, "manifest.json"), b, 0o644)
			continue
		}
		rewrite(t, path, func(fields []arrow.Field, cols []arrow.Array) ([]arrow.Field, []arrow.Array) {
			if len(fields) == 0 {
				return fields, cols
			}
			j := col % len(fields)
			n := cols[j].Len()
			switch op {
			case 0: // drop a column
				return append(fields[:j:j], fields[j+1:]...), append(cols[:j:j], cols[j+1:]...)
			case 1: // the same column twice
				return append(fields, fields[j]), append(cols, cols[j])
			case 2: // a column of NULLs
				fields[j].Nullable = true
				cols[j] = array.MakeArrayOfNull(memory.DefaultAllocator, fields[j].Type, n)
			case 3, 4, 5: // extreme values
				cols[j] = extreme(cols[j], col+int(op))
			case 6: // another type
				b := array.NewStringBuilder(memory.DefaultAllocator)
				for i := 0; i < n; i++ {
					b.Append(fmt.Sprint(i))
				}
				fields[j].Type = arrow.BinaryTypes.String
				cols[j] = b.NewArray()
			case 7: // no rows
				for i := range cols {
					cols[i] = array.MakeArrayOfNull(memory.DefaultAllocator, fields[i].Type, 0)
					fields[i].Nullable = true
				}
			case 8: // a renamed column
				fields[j].Name += "_x"
			case 9: // every row the same (duplicates of the first)
				for i := range cols {
					if cols[i].Len() > 0 {
						s := array.NewSlice(cols[i], 0, 1)
						arrs := make([]arrow.Array, n)
						for r := range arrs {
							arrs[r] = s
						}
						if n > 0 {
							c, err := array.Concatenate(arrs, memory.DefaultAllocator)
							if err == nil {
								cols[i] = c
							}
						}
					}
				}
			}
			return fields, cols
		})
	}
	return dir
}

// extreme replaces some cells of a numeric or date column with the most
// awkward values of its type.
func extreme(c arrow.Array, seed int) arrow.Array {
	n := c.Len()
	mem := memory.DefaultAllocator
	pick := func(i int) bool { return (i*7+seed)%3 == 0 }
	switch a := c.(type) {
	case *array.Float64:
		vals := []float64{1e308, -1e308, math.Inf(1), math.Inf(-1), math.NaN(), 5e-324, math.Copysign(0, -1), math.MaxFloat64}
		b := array.NewFloat64Builder(mem)
		for i := 0; i < n; i++ {
			if pick(i) {
				b.Append(vals[(i+seed)%len(vals)])
			} else if a.IsNull(i) {
				b.AppendNull()
			} else {
				b.Append(a.Value(i))
			}
		}
		return b.NewArray()
	case *array.Int32:
		vals := []int32{math.MaxInt32, math.MinInt32, 0, -1}
		b := array.NewInt32Builder(mem)
		for i := 0; i < n; i++ {
			if pick(i) {
				b.Append(vals[(i+seed)%len(vals)])
			} else if a.IsNull(i) {
				b.AppendNull()
			} else {
				b.Append(a.Value(i))
			}
		}
		return b.NewArray()
	case *array.Date32:
		vals := []arrow.Date32{math.MaxInt32, math.MinInt32, 0, -719162}
		b := array.NewDate32Builder(mem)
		for i := 0; i < n; i++ {
			if pick(i) {
				b.Append(vals[(i+seed)%len(vals)])
			} else if a.IsNull(i) {
				b.AppendNull()
			} else {
				b.Append(a.Value(i))
			}
		}
		return b.NewArray()
	case *array.String:
		vals := []string{"", "\x00", strings.Repeat("x", 300), "S0", "\xff"}
		b := array.NewStringBuilder(mem)
		for i := 0; i < n; i++ {
			if pick(i) {
				b.Append(vals[(i+seed)%len(vals)])
			} else if a.IsNull(i) {
				b.AppendNull()
			} else {
				b.Append(a.Value(i))
			}
		}
		return b.NewArray()
	}
	return c
}

// rewrite reads a Parquet file, lets edit change its columns, and writes it
// back (a file that cannot be read is left as it is).
func rewrite(t testing.TB, path string, edit func([]arrow.Field, []arrow.Array) ([]arrow.Field, []arrow.Array)) {
	pf, err := file.OpenParquetFile(path, false)
	if err != nil {
		return
	}
	fr, err := pqarrow.NewFileReader(pf, pqarrow.ArrowReadProperties{}, memory.DefaultAllocator)
	if err != nil {
		pf.Close()
		return
	}
	tbl, err := fr.ReadTable(context.Background())
	pf.Close()
	if err != nil {
		return
	}
	var fields []arrow.Field
	var cols []arrow.Array
	for i, f := range tbl.Schema().Fields() {
		c, err := array.Concatenate(tbl.Column(i).Data().Chunks(), memory.DefaultAllocator)
		if err != nil {
			if len(tbl.Column(i).Data().Chunks()) != 0 {
				return
			}
			c = array.MakeArrayOfNull(memory.DefaultAllocator, f.Type, 0)
		}
		fields = append(fields, f)
		cols = append(cols, c)
	}
	fields, cols = edit(fields, cols)
	rows := int64(0)
	if len(cols) > 0 {
		rows = int64(cols[0].Len())
		for _, c := range cols {
			rows = min(rows, int64(c.Len()))
		}
		for i := range cols {
			if int64(cols[i].Len()) != rows {
				cols[i] = array.NewSlice(cols[i], 0, rows)
			}
		}
	}
	rec := array.NewRecordBatch(arrow.NewSchema(fields, nil), cols, rows)
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	w, err := pqarrow.NewFileWriter(rec.Schema(), f, parquet.NewWriterProperties(), pqarrow.DefaultWriterProps())
	if err != nil {
		return
	}
	w.Write(rec)
	w.Close()
}

func reviewSeeds(f *testing.F) {
	for op := byte(0); op < 12; op++ {
		for tb := byte(0); tb < 6; tb++ {
			f.Add([]byte{op, tb, 3})
		}
	}
	f.Add([]byte{3, 0, 4, 4, 1, 3, 5, 5, 6})
	f.Add([]byte{1, 0, 0, 2, 2, 2})
}

// FuzzExplainCorrupted: explain over a corrupted run folder fails or
// explains; it never panics.
func FuzzExplainCorrupted(f *testing.F) {
	reviewSeeds(f)
	f.Fuzz(func(t *testing.T, ops []byte) {
		base, _ := reviewRuns(t)
		dir := corrupt(t, base, ops)
		for _, key := range [][]string{{"S0", "I0"}, {"S2", "I1"}} {
			explain.Explain(dir, key, io.Discard, explain.Options{AllForecasts: true, PNG: filepath.Join(t.TempDir(), "c.png")})
		}
	})
}

// FuzzDiffCorrupted: diff of a corrupted run folder against a good one (both
// ways) fails or reports; it never panics.
func FuzzDiffCorrupted(f *testing.F) {
	reviewSeeds(f)
	f.Fuzz(func(t *testing.T, ops []byte) {
		base, head := reviewRuns(t)
		dir := corrupt(t, head, ops)
		for _, pair := range [][2]string{{base, dir}, {dir, base}} {
			d, err := rundiff.Compare(pair[0], pair[1], rundiff.Options{})
			if err != nil {
				continue
			}
			d.WriteText(io.Discard)
			d.WriteMarkdown(io.Discard)
			d.Exceeds(rundiff.Thresholds{MaxRelChange: 0.1, MaxSwitchShare: 0.1, MaxMeanScoreWorsening: 0.1, MaxAdded: 0, MaxRemoved: 0})
			d.WriteParquet(filepath.Join(t.TempDir(), "diff.parquet"))
		}
	})
}

// FuzzReportCorrupted: the HTML report over a corrupted run folder (and with
// it as the previous run) fails or writes; it never panics.
func FuzzReportCorrupted(f *testing.F) {
	reviewSeeds(f)
	f.Fuzz(func(t *testing.T, ops []byte) {
		base, _ := reviewRuns(t)
		dir := corrupt(t, base, ops)
		report.Write(dir, report.Options{Series: []string{"S0 / I0", "S1 / I1"}})
		good := filepath.Join(t.TempDir(), "good")
		if err := os.CopyFS(good, os.DirFS(base)); err != nil {
			t.Fatal(err)
		}
		report.Write(good, report.Options{Previous: dir})
	})
}
