// Package runfolder is the output contract of a run, written and read: the
// table schemas, the Parquet writer, the one manifest type, the atomic
// commit, shard parts and their combination, lineage — and the reader the
// review commands (report, diff, explain) and verify use. It imports nothing
// of almanac but the spec.
package runfolder

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// Run is an opened run folder.
type Run struct {
	Dir      string
	Manifest Manifest
	// Raw is manifest.json as it is on disk.
	Raw []byte
}

// CanonicalSpec is the subset of the canonical spec readers use.
type CanonicalSpec struct {
	Name    string `json:"name"`
	Columns struct {
		Time  string   `json:"time"`
		Value string   `json:"value"`
		Keys  []string `json:"keys"`
	} `json:"columns"`
	Calendar  CanonicalCalendar `json:"calendar"`
	Horizon   int               `json:"horizon"`
	Intervals *struct {
		Levels []int `json:"levels"`
	} `json:"intervals"`
}

// CanonicalCalendar is the calendar of a canonical spec. The canonical
// season_length is a number with one cycle and a list (ascending) with
// several; SeasonLength is then the shortest and Seasons holds them all.
type CanonicalCalendar struct {
	Frequency    string
	SeasonLength int
	Seasons      []int // nil with one cycle
}

// UnmarshalJSON reads season_length as a number or a list.
func (c *CanonicalCalendar) UnmarshalJSON(b []byte) error {
	var raw struct {
		Frequency    string          `json:"frequency"`
		SeasonLength json.RawMessage `json:"season_length"`
	}
	if err := json.Unmarshal(b, &raw); err != nil {
		return err
	}
	*c = CanonicalCalendar{Frequency: raw.Frequency}
	sl := bytes.TrimSpace(raw.SeasonLength)
	switch {
	case len(sl) == 0 || string(sl) == "null":
	case sl[0] == '[':
		if err := json.Unmarshal(sl, &c.Seasons); err != nil {
			return fmt.Errorf("calendar.season_length: %v", err)
		}
		if len(c.Seasons) > 0 {
			c.SeasonLength = slices.Min(c.Seasons)
		}
	default:
		if err := json.Unmarshal(sl, &c.SeasonLength); err != nil {
			return fmt.Errorf("calendar.season_length: %v", err)
		}
	}
	return nil
}

// Open reads a run folder's manifest. It fails on a folder that is not an
// almanac run folder.
func Open(dir string) (*Run, error) {
	if _, err := os.Stat(filepath.Join(dir, MarkerFile)); err != nil {
		return nil, fmt.Errorf("%s is not an almanac run folder (no %s)", dir, MarkerFile)
	}
	return readRun(dir)
}

// readRun reads dir's manifest.json into a Run.
func readRun(dir string) (*Run, error) {
	raw, err := os.ReadFile(filepath.Join(dir, ManifestFile))
	if err != nil {
		return nil, err
	}
	r := &Run{Dir: dir, Raw: raw}
	if err := json.Unmarshal(raw, &r.Manifest); err != nil {
		return nil, fmt.Errorf("%s: %v", filepath.Join(dir, ManifestFile), err)
	}
	return r, nil
}

// Spec decodes the canonical spec recorded in the manifest.
func (r *Run) Spec() (*CanonicalSpec, error) {
	var s CanonicalSpec
	if err := json.Unmarshal(r.Manifest.Spec.Canonical, &s); err != nil {
		return nil, fmt.Errorf("%s: canonical spec: %v", r.Dir, err)
	}
	return &s, nil
}

// Keys are the run's key columns, in spec order.
func (r *Run) Keys() []string {
	s, err := r.Spec()
	if err != nil {
		return nil
	}
	return s.Columns.Keys
}

// HasTable reports whether the run wrote the named table.
func (r *Run) HasTable(name string) bool {
	_, err := os.Stat(filepath.Join(r.Dir, name+".parquet"))
	return err == nil
}

// Table reads the named table (forecasts, accuracy, …) whole.
func (r *Run) Table(name string) (*Table, error) {
	return ReadTable(filepath.Join(r.Dir, name+".parquet"))
}

// Table is a Parquet table read into memory, column by column.
type Table struct {
	Path   string
	Schema *arrow.Schema
	Rows   int
	Meta   map[string]string
	cols   map[string]arrow.Array
	nulls  map[string]arrow.Array // stand-ins for missing columns, by name and type
	err    error                  // first missing or mistyped column read
}

// ReadTable reads a Parquet file.
func ReadTable(path string) (*Table, error) {
	pf, err := file.OpenParquetFile(path, false)
	if err != nil {
		return nil, fmt.Errorf("%s: %v", path, err)
	}
	defer pf.Close()
	fr, err := pqarrow.NewFileReader(pf, pqarrow.ArrowReadProperties{}, memory.DefaultAllocator)
	if err != nil {
		return nil, fmt.Errorf("%s: %v", path, err)
	}
	tbl, err := fr.ReadTable(context.Background())
	if err != nil {
		return nil, fmt.Errorf("%s: %v", path, err)
	}
	defer tbl.Release()
	if err := uniqueColumns(path, tbl.Schema()); err != nil {
		return nil, err
	}
	t := &Table{Path: path, Schema: tbl.Schema(), Rows: int(tbl.NumRows()), Meta: map[string]string{}, cols: map[string]arrow.Array{}}
	if kv := pf.MetaData().KeyValueMetadata(); kv != nil {
		for i, k := range kv.Keys() {
			t.Meta[k] = kv.Values()[i]
		}
	}
	for i, f := range tbl.Schema().Fields() {
		chunks := tbl.Column(i).Data().Chunks()
		var arr arrow.Array
		if len(chunks) == 0 {
			arr = array.MakeArrayOfNull(memory.DefaultAllocator, f.Type, 0)
		} else if arr, err = array.Concatenate(chunks, memory.DefaultAllocator); err != nil {
			return nil, err
		}
		t.cols[f.Name] = arr
	}
	return t, nil
}

// uniqueColumns refuses a table with two columns of one name (a key column
// named like an output column, or a table not written by almanac): a reader
// would see one of them and show wrong numbers.
func uniqueColumns(path string, sch *arrow.Schema) error {
	seen := map[string]bool{}
	for _, f := range sch.Fields() {
		if seen[f.Name] {
			return fmt.Errorf("%s: the column %q appears twice; the table is not one almanac wrote", filepath.Base(path), f.Name)
		}
		seen[f.Name] = true
	}
	return nil
}

// Has reports whether the table has the column.
func (t *Table) Has(col string) bool { _, ok := t.cols[col]; return ok }

// col returns the named column. A column that is missing or of another
// type than the caller reads does not panic: the table remembers the
// first such problem (see Err) and the caller gets NULLs of the type it
// asked for.
func (t *Table) col(name string, want arrow.DataType) arrow.Array {
	c, ok := t.cols[name]
	if ok && arrow.TypeEqual(c.DataType(), want) {
		return c
	}
	if t.err == nil {
		if !ok {
			t.err = fmt.Errorf("%s: no column %q", t.Path, name)
		} else {
			t.err = fmt.Errorf("%s: column %q is %s, expected %s", t.Path, name, c.DataType(), want)
		}
	}
	key := name + "\x00" + want.String()
	if n, ok := t.nulls[key]; ok {
		return n
	}
	if t.nulls == nil {
		t.nulls = map[string]arrow.Array{}
	}
	n := array.MakeArrayOfNull(memory.DefaultAllocator, want, t.Rows)
	t.nulls[key] = n
	return n
}

// Err is the first missing or mistyped column read from the table, naming
// the file and the column; nil when every read found its column.
func (t *Table) Err() error { return t.err }

// Str returns a string cell; ok is false for NULL.
func (t *Table) Str(col string, i int) (string, bool) {
	c := t.col(col, arrow.BinaryTypes.String).(*array.String)
	if c.IsNull(i) {
		return "", false
	}
	return c.Value(i), true
}

// Float returns a float64 cell, NaN for NULL.
func (t *Table) Float(col string, i int) float64 {
	c := t.col(col, arrow.PrimitiveTypes.Float64).(*array.Float64)
	if c.IsNull(i) {
		return math.NaN()
	}
	return c.Value(i)
}

// Int returns an int32 cell; ok is false for NULL.
func (t *Table) Int(col string, i int) (int, bool) {
	c := t.col(col, arrow.PrimitiveTypes.Int32).(*array.Int32)
	if c.IsNull(i) {
		return 0, false
	}
	return int(c.Value(i)), true
}

// Bool returns a boolean cell (false for NULL).
func (t *Table) Bool(col string, i int) bool {
	c := t.col(col, arrow.FixedWidthTypes.Boolean).(*array.Boolean)
	return !c.IsNull(i) && c.Value(i)
}

// Date returns a DATE cell as a UTC time; ok is false for NULL.
func (t *Table) Date(col string, i int) (time.Time, bool) {
	c := t.col(col, arrow.FixedWidthTypes.Date32).(*array.Date32)
	if c.IsNull(i) {
		return time.Time{}, false
	}
	return c.Value(i).ToTime(), true
}

// Key returns the key of row i as one string, the key columns joined by
// " / " in spec order ("" when there are no keys).
func (t *Table) Key(keys []string, i int) string {
	parts := make([]string, len(keys))
	for j, k := range keys {
		v, _ := t.Str(k, i)
		parts[j] = v
	}
	return strings.Join(parts, " / ")
}

// KeyParts returns the key of row i, column by column.
func (t *Table) KeyParts(keys []string, i int) []string {
	parts := make([]string, len(keys))
	for j, k := range keys {
		parts[j], _ = t.Str(k, i)
	}
	return parts
}

// HumanBytes renders a byte count for people: 3.7 MiB.
func HumanBytes(n int64) string {
	switch {
	case n >= 1<<30:
		return fmt.Sprintf("%.1f GiB", float64(n)/(1<<30))
	case n >= 1<<20:
		return fmt.Sprintf("%.1f MiB", float64(n)/(1<<20))
	case n >= 1<<10:
		return fmt.Sprintf("%.1f KiB", float64(n)/(1<<10))
	}
	return fmt.Sprintf("%d B", n)
}
