package main

import (
	"context"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
	"gopkg.in/yaml.v3"

	"almanac/pipeline/ingest/ingesttest"
)

// expectation is a corpus case's expect.yaml: the exit code, text that
// stderr (and stdout) must hold, and for runs that succeed the series count
// and the problems rows ("severity stage[ method]: message" prefixes). A
// case runs "almanac run spec.yaml" unless it names another command line.
type expectation struct {
	Command  []string `yaml:"command"`
	Exit     int      `yaml:"exit"`
	Stderr   []string `yaml:"stderr"`
	Stdout   []string `yaml:"stdout"`
	Series   int      `yaml:"series"`
	Problems []string `yaml:"problems"`
	Absent   []string `yaml:"absent"` // problems rows that must not appear (prefixes)
	Codes    []string `yaml:"codes"`  // values the problems table's code column must hold
}

// problemTable reads problems.parquet as rows ("severity stage[ method]:
// message") and codes.
func problemTable(t *testing.T, path string) ([]string, []string) {
	t.Helper()
	pf, err := file.OpenParquetFile(path, false)
	if err != nil {
		t.Fatal(err)
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
	defer tbl.Release()
	col := func(name string) []string {
		idx := tbl.Schema().FieldIndices(name)
		var out []string
		for _, c := range tbl.Column(idx[0]).Data().Chunks() {
			s := c.(*array.String)
			for i := 0; i < s.Len(); i++ {
				if s.IsNull(i) {
					out = append(out, "")
				} else {
					out = append(out, s.Value(i))
				}
			}
		}
		return out
	}
	sev, stage, method, msg := col("severity"), col("stage"), col("method"), col("message")
	rows := make([]string, len(sev))
	for i := range sev {
		head := sev[i] + " " + stage[i]
		if method[i] != "" {
			head += " " + method[i]
		}
		rows[i] = head + ": " + msg[i]
	}
	return rows, col("code")
}

func checkCase(t *testing.T, dir string, want expectation) {
	t.Helper()
	out := filepath.Join(t.TempDir(), "run")
	args := []string{"run", "spec.yaml", "--out", out, "-q"}
	if len(want.Command) > 0 {
		args = nil
		for _, a := range want.Command {
			args = append(args, strings.ReplaceAll(a, "{out}", out))
		}
	}
	stdout, stderr, code := almanac(t, dir, args...)
	if strings.Contains(stderr, "panic") || strings.Contains(stderr, "goroutine ") {
		t.Fatalf("almanac panicked:\n%s", stderr)
	}
	if code != want.Exit {
		t.Fatalf("exit %d, want %d\n%s", code, want.Exit, stderr)
	}
	for _, w := range want.Stderr {
		if !strings.Contains(stderr, w) {
			t.Errorf("stderr lacks %q:\n%s", w, stderr)
		}
	}
	for _, w := range want.Stdout {
		if !strings.Contains(stdout, w) {
			t.Errorf("stdout lacks %q:\n%s", w, stdout)
		}
	}
	if len(want.Command) > 0 {
		return
	}
	if code != 0 {
		if _, err := os.Stat(out); !os.IsNotExist(err) {
			t.Errorf("a failed run left %s", out)
		}
		return
	}
	b, err := os.ReadFile(filepath.Join(out, "manifest.json"))
	if err != nil {
		t.Fatal(err)
	}
	var m struct{ Series int }
	json.Unmarshal(b, &m)
	if want.Series != 0 && m.Series != want.Series {
		t.Errorf("series = %d, want %d", m.Series, want.Series)
	}
	rows, codes := problemTable(t, filepath.Join(out, "problems.parquet"))
	for _, c := range want.Codes {
		if !slices.Contains(codes, c) {
			t.Errorf("no problems row has code %q; codes: %v", c, codes)
		}
	}
	for _, a := range want.Absent {
		for _, r := range rows {
			if strings.HasPrefix(r, a) {
				t.Errorf("unexpected problems row %q", r)
			}
		}
	}
	for _, w := range want.Problems {
		found := false
		for _, r := range rows {
			if strings.HasPrefix(r, w) {
				found = true
				break
			}
		}
		if !found {
			t.Errorf("no problems row starts with %q; rows:\n%s", w, strings.Join(rows, "\n"))
		}
	}
}

// TestBadInputCorpus runs every case in pipeline/testdata/corpus through the
// real binary: each fails with its pinned message and exit code, or is
// accepted with its pinned problems rows. Never a panic, never a silent drop.
func TestBadInputCorpus(t *testing.T) {
	cases, _ := filepath.Glob("../../pipeline/testdata/corpus/*/expect.yaml")
	// With the generated cases below (8), the corpus holds at least 80.
	if len(cases) < 60 {
		t.Fatalf("found %d corpus cases, want at least 72", len(cases))
	}
	for _, c := range cases {
		dir := filepath.Dir(c)
		t.Run(filepath.Base(dir), func(t *testing.T) {
			var want expectation
			b, _ := os.ReadFile(c)
			if err := yaml.Unmarshal(b, &want); err != nil {
				t.Fatal(err)
			}
			checkCase(t, dir, want)
		})
	}
}

const parquetSpec = `version: 1
name: corpus-parquet
sources: [data.parquet]
columns: {time: month, value: qty, keys: [store]}
calendar: {frequency: month}
methods: [naive, seasonal_naive]
horizon: 3
output: out
`

// writeParquet writes one record batch built by fill to dir/data.parquet,
// and the corpus spec beside it.
func writeParquet(t *testing.T, dir string, fields []arrow.Field, n int, fill func(b *array.RecordBuilder, i int)) string {
	t.Helper()
	path := filepath.Join(dir, "data.parquet")
	ingesttest.WriteParquet(t, path, fields, n, fill)
	os.WriteFile(filepath.Join(dir, "spec.yaml"), []byte(parquetSpec), 0o644)
	return path
}

var (
	fTimeStr = arrow.Field{Name: "month", Type: arrow.BinaryTypes.String}
	fStore   = arrow.Field{Name: "store", Type: arrow.BinaryTypes.String}
	fQty     = arrow.Field{Name: "qty", Type: arrow.PrimitiveTypes.Float64, Nullable: true}
)

func monthText(i int) string {
	return []string{"2021", "2022", "2023"}[i/12] + "-" + []string{"01", "02", "03", "04", "05", "06", "07", "08", "09", "10", "11", "12"}[i%12]
}

// Cases that need files made on the fly: Parquet variants and a 50 MB spec.
func TestBadInputCorpusGenerated(t *testing.T) {
	t.Run("parquet-good-date32-int-keys", func(t *testing.T) {
		dir := t.TempDir()
		writeParquet(t, dir, []arrow.Field{{Name: "month", Type: arrow.FixedWidthTypes.Date32}, {Name: "store", Type: arrow.PrimitiveTypes.Int64}, {Name: "qty", Type: arrow.PrimitiveTypes.Int32}}, 36,
			func(b *array.RecordBuilder, i int) {
				d := arrow.Date32FromTime(mustMonth(monthText(i)))
				b.Field(0).(*array.Date32Builder).Append(d)
				b.Field(1).(*array.Int64Builder).Append(17)
				b.Field(2).(*array.Int32Builder).Append(int32(100 + i))
			})
		checkCase(t, dir, expectation{Exit: 0, Series: 1})
	})
	t.Run("parquet-timestamp", func(t *testing.T) {
		dir := t.TempDir()
		writeParquet(t, dir, []arrow.Field{{Name: "month", Type: &arrow.TimestampType{Unit: arrow.Microsecond, TimeZone: "UTC"}}, fStore, fQty}, 36,
			func(b *array.RecordBuilder, i int) {
				b.Field(0).(*array.TimestampBuilder).Append(arrow.Timestamp(mustMonth(monthText(i)).UnixMicro() + 3600e6))
				b.Field(1).(*array.StringBuilder).Append("A")
				b.Field(2).(*array.Float64Builder).Append(float64(i))
			})
		checkCase(t, dir, expectation{Exit: 0, Series: 1})
	})
	t.Run("parquet-value-column-wrong-type", func(t *testing.T) {
		dir := t.TempDir()
		writeParquet(t, dir, []arrow.Field{fTimeStr, fStore, {Name: "qty", Type: arrow.BinaryTypes.String}}, 3,
			func(b *array.RecordBuilder, i int) {
				b.Field(0).(*array.StringBuilder).Append(monthText(i))
				b.Field(1).(*array.StringBuilder).Append("A")
				b.Field(2).(*array.StringBuilder).Append("12")
			})
		checkCase(t, dir, expectation{Exit: 1, Stderr: []string{`data.parquet: column "qty" has type utf8; the value column must be numeric`}})
	})
	t.Run("parquet-time-column-wrong-type", func(t *testing.T) {
		dir := t.TempDir()
		writeParquet(t, dir, []arrow.Field{{Name: "month", Type: arrow.PrimitiveTypes.Float64}, fStore, fQty}, 3,
			func(b *array.RecordBuilder, i int) {
				b.Field(0).(*array.Float64Builder).Append(2021.5)
				b.Field(1).(*array.StringBuilder).Append("A")
				b.Field(2).(*array.Float64Builder).Append(1)
			})
		checkCase(t, dir, expectation{Exit: 1, Stderr: []string{`data.parquet: column "month" has type float64; a time column must be DATE, TIMESTAMP or text`}})
	})
	t.Run("parquet-null-time", func(t *testing.T) {
		dir := t.TempDir()
		writeParquet(t, dir, []arrow.Field{{Name: "month", Type: arrow.BinaryTypes.String, Nullable: true}, fStore, fQty}, 3,
			func(b *array.RecordBuilder, i int) {
				if i == 1 {
					b.Field(0).(*array.StringBuilder).AppendNull()
				} else {
					b.Field(0).(*array.StringBuilder).Append(monthText(i))
				}
				b.Field(1).(*array.StringBuilder).Append("A")
				b.Field(2).(*array.Float64Builder).Append(1)
			})
		checkCase(t, dir, expectation{Exit: 1, Stderr: []string{`data.parquet: row 2: column "month": the time is NULL`}})
	})
	t.Run("parquet-truncated", func(t *testing.T) {
		dir := t.TempDir()
		path := writeParquet(t, dir, []arrow.Field{fTimeStr, fStore, fQty}, 36, func(b *array.RecordBuilder, i int) {
			b.Field(0).(*array.StringBuilder).Append(monthText(i))
			b.Field(1).(*array.StringBuilder).Append("A")
			b.Field(2).(*array.Float64Builder).Append(float64(i))
		})
		full, _ := os.ReadFile(path)
		for _, keep := range []int{len(full) / 2, len(full) - 3, 4, 0} {
			os.WriteFile(path, full[:keep], 0o644)
			checkCase(t, dir, expectation{Exit: 1, Stderr: []string{"data.parquet: not a readable Parquet file"}})
		}
	})
	t.Run("parquet-inf-value", func(t *testing.T) {
		dir := t.TempDir()
		writeParquet(t, dir, []arrow.Field{fTimeStr, fStore, fQty}, 3, func(b *array.RecordBuilder, i int) {
			b.Field(0).(*array.StringBuilder).Append(monthText(i))
			b.Field(1).(*array.StringBuilder).Append("A")
			b.Field(2).(*array.Float64Builder).Append([]float64{1, math.Inf(1), 2}[i])
		})
		checkCase(t, dir, expectation{Exit: 1, Stderr: []string{`data.parquet: row 2: column "qty": +Inf: infinite values are not accepted`}})
	})
	t.Run("parquet-negative-inf-float32", func(t *testing.T) {
		dir := t.TempDir()
		writeParquet(t, dir, []arrow.Field{fTimeStr, fStore, {Name: "qty", Type: arrow.PrimitiveTypes.Float32}}, 3, func(b *array.RecordBuilder, i int) {
			b.Field(0).(*array.StringBuilder).Append(monthText(i))
			b.Field(1).(*array.StringBuilder).Append("A")
			b.Field(2).(*array.Float32Builder).Append([]float32{1, 2, float32(math.Inf(-1))}[i])
		})
		checkCase(t, dir, expectation{Exit: 1, Stderr: []string{`data.parquet: row 3: column "qty": -Inf: infinite values are not accepted`}})
	})
	t.Run("parquet-date32-year-10000", func(t *testing.T) {
		dir := t.TempDir()
		writeParquet(t, dir, []arrow.Field{{Name: "month", Type: arrow.FixedWidthTypes.Date32}, fStore, fQty}, 3, func(b *array.RecordBuilder, i int) {
			d := arrow.Date32FromTime(mustMonth(monthText(i)))
			if i == 2 {
				d = arrow.Date32(2932897 + 5) // 10000-01-06
			}
			b.Field(0).(*array.Date32Builder).Append(d)
			b.Field(1).(*array.StringBuilder).Append("A")
			b.Field(2).(*array.Float64Builder).Append(1)
		})
		checkCase(t, dir, expectation{Exit: 1, Stderr: []string{`data.parquet: row 3: column "month": the date lies in the year 10000, outside the years 1 to 9999`}})
	})
	t.Run("parquet-timestamp-before-year-1", func(t *testing.T) {
		dir := t.TempDir()
		writeParquet(t, dir, []arrow.Field{{Name: "month", Type: &arrow.TimestampType{Unit: arrow.Second, TimeZone: "UTC"}}, fStore, fQty}, 2, func(b *array.RecordBuilder, i int) {
			ts := arrow.Timestamp(mustMonth(monthText(i)).Unix())
			if i == 1 {
				ts = arrow.Timestamp(-62135596800 - 86400*400) // 400 days before 0001-01-01
			}
			b.Field(0).(*array.TimestampBuilder).Append(ts)
			b.Field(1).(*array.StringBuilder).Append("A")
			b.Field(2).(*array.Float64Builder).Append(1)
		})
		checkCase(t, dir, expectation{Exit: 1, Stderr: []string{`data.parquet: row 2: column "month": the date lies in the year -1, outside the years 1 to 9999`}})
	})
	// ("a\x00b","c") and ("a","b\x00c") would join to the same bytes
	// with a NUL separator: control characters in keys are refused.
	t.Run("parquet-keys-that-would-merge", func(t *testing.T) {
		dir := t.TempDir()
		fields := []arrow.Field{fTimeStr, fStore, {Name: "item", Type: arrow.BinaryTypes.String}, fQty}
		path := writeParquet(t, dir, fields, 4, func(b *array.RecordBuilder, i int) {
			b.Field(0).(*array.StringBuilder).Append(monthText(i / 2))
			b.Field(1).(*array.StringBuilder).Append([]string{"a\x00b", "a"}[i%2])
			b.Field(2).(*array.StringBuilder).Append([]string{"c", "b\x00c"}[i%2])
			b.Field(3).(*array.Float64Builder).Append(1)
		})
		_ = path
		os.WriteFile(filepath.Join(dir, "spec.yaml"), []byte(strings.Replace(parquetSpec, "keys: [store]", "keys: [store, item]", 1)), 0o644)
		checkCase(t, dir, expectation{Exit: 1, Stderr: []string{`data.parquet: row 1: column "store": "a\x00b" holds the control character U+0000; key values may not hold control characters`}})
	})
	t.Run("spec-50MB", func(t *testing.T) {
		dir := t.TempDir()
		f, _ := os.Create(filepath.Join(dir, "spec.yaml"))
		f.WriteString(parquetSpec)
		line := "# " + strings.Repeat("padding ", 12) + "\n"
		for written := 0; written < 50<<20; written += len(line) {
			f.WriteString(line)
		}
		f.Close()
		checkCase(t, dir, expectation{Exit: 2, Stderr: []string{"spec.yaml: spec file is larger than the limit of 1048576 bytes"}})
	})
}

func mustMonth(s string) time.Time {
	t, err := time.Parse("2006-01", s)
	if err != nil {
		panic(err)
	}
	return t
}
