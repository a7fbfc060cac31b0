package main

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"

	"almanac/pipeline/ingest/ingesttest"
)

const eventsParquetSpec = `version: 1
name: corpus-events-parquet
sources: [data.csv]
columns: {time: day, value: qty, keys: [store]}
calendar: {frequency: day}
events:
  - path: drivers.parquet
    kind: driver
    columns: {date: first, until: last, name: event, value: value, keys: [store]}
methods: [naive]
horizon: 7
output: out
`

// writeEventsParquet writes a daily data.csv (two stores, 2024-01-01 …
// 2024-02-29) and drivers.parquet with the rows given, into a new folder.
type parquetEvent struct {
	first, last string // "" last: NULL
	name        string
	value       float64 // NaN: NULL
	store       string
}

func writeEventsParquet(t *testing.T, rows []parquetEvent) string {
	t.Helper()
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("day,store,qty\n")
	for _, st := range []string{"North", "South"} {
		for d := time.Date(2024, 1, 1, 0, 0, 0, 0, time.UTC); d.Month() < 3; d = d.AddDate(0, 0, 1) {
			fmt.Fprintf(&b, "%s,%s,%d\n", d.Format("2006-01-02"), st, 10+d.Day()%7)
		}
	}
	os.WriteFile(filepath.Join(dir, "data.csv"), []byte(b.String()), 0o644)
	os.WriteFile(filepath.Join(dir, "spec.yaml"), []byte(eventsParquetSpec), 0o644)
	fields := []arrow.Field{
		{Name: "first", Type: arrow.FixedWidthTypes.Date32}, {Name: "last", Type: arrow.FixedWidthTypes.Date32, Nullable: true},
		{Name: "event", Type: arrow.BinaryTypes.String}, {Name: "value", Type: arrow.PrimitiveTypes.Float64, Nullable: true},
		{Name: "store", Type: arrow.BinaryTypes.String, Nullable: true}}
	day := func(s string) arrow.Date32 {
		d, err := time.Parse("2006-01-02", s)
		if err != nil {
			t.Fatal(err)
		}
		return arrow.Date32FromTime(d)
	}
	ingesttest.WriteParquet(t, filepath.Join(dir, "drivers.parquet"), fields, len(rows), func(rb *array.RecordBuilder, i int) {
		r := rows[i]
		rb.Field(0).(*array.Date32Builder).Append(day(r.first))
		if r.last == "" {
			rb.Field(1).AppendNull()
		} else {
			rb.Field(1).(*array.Date32Builder).Append(day(r.last))
		}
		rb.Field(2).(*array.StringBuilder).Append(r.name)
		if math.IsNaN(r.value) {
			rb.Field(3).AppendNull()
		} else {
			rb.Field(3).(*array.Float64Builder).Append(r.value)
		}
		if r.store == "" {
			rb.Field(4).AppendNull()
		} else {
			rb.Field(4).(*array.StringBuilder).Append(r.store)
		}
	})
	return dir
}

// Parquet event sources through the binary: a good one runs; each bad one
// fails with exit 1, names the file and row, and writes nothing.
func TestEventsParquet(t *testing.T) {
	good := []parquetEvent{
		{"2024-01-10", "2024-01-12", "promo", 2, "North"},
		{"2024-03-01", "2024-03-07", "holiday", 1, ""},
		{"2024-03-02", "", "promo", 1, "South"},
	}
	t.Run("good", func(t *testing.T) {
		checkCase(t, writeEventsParquet(t, good), expectation{Exit: 0, Series: 2})
	})
	t.Run("plan", func(t *testing.T) {
		checkCase(t, writeEventsParquet(t, good), expectation{Command: []string{"plan", "spec.yaml"}, Exit: 0,
			Stdout: []string{"drivers.parquet  (driver, 3 row(s), drivers holiday, promo, known until 2024-03-07)"}})
	})
	bad := []struct {
		name   string
		change func(rows []parquetEvent)
		stderr string
	}{
		{"null-value", func(r []parquetEvent) { r[1].value = math.NaN() }, `drivers.parquet: row 2: column "value": NaN is not a finite number`},
		{"infinite-value", func(r []parquetEvent) { r[2].value = math.Inf(1) }, `drivers.parquet: row 3: column "value"`},
		{"until-before-date", func(r []parquetEvent) { r[0].last = "2024-01-09" }, `drivers.parquet: row 1: column "last": the last day 2024-01-09 is before the first day 2024-01-10`},
		{"empty-name", func(r []parquetEvent) { r[2].name = " " }, `drivers.parquet: row 3: column "event": the driver's name is empty`},
		{"unknown-key", func(r []parquetEvent) { r[0].store = "West" }, `drivers.parquet: row 1: "West" is not a value of the key column "store"`},
		{"short-of-horizon", func(r []parquetEvent) { r[1].last = "2024-03-06" }, `drivers.parquet: the driver(s) holiday, promo are known only until 2024-03-06 (its last date), but the forecast horizon runs to 2024-03-07`},
	}
	for _, c := range bad {
		t.Run(c.name, func(t *testing.T) {
			rows := append([]parquetEvent(nil), good...)
			c.change(rows)
			checkCase(t, writeEventsParquet(t, rows), expectation{Exit: 1, Stderr: []string{c.stderr}})
		})
	}
}
