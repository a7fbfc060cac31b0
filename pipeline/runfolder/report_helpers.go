package runfolder

// Accessors the HTML report needs beyond Open and ReadTable: opening a run
// folder that is still being staged, and reading only some columns (and
// only the row groups that may hold some keys) of a large table, batch by
// batch.

import (
	"context"
	"fmt"
	"os"
	"path/filepath"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/metadata"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// StagingMarker is the marker of a run folder that is still being written
// (before it is committed under its final name).
const StagingMarker = MarkerFile + ".staging"

// OpenStaged reads the manifest of a run folder that is either committed
// (it holds MarkerFile) or still staged (it holds StagingMarker). A run calls
// it on its own staging folder once manifest.json is written.
func OpenStaged(dir string) (*Run, error) {
	_, err1 := os.Stat(filepath.Join(dir, MarkerFile))
	_, err2 := os.Stat(filepath.Join(dir, StagingMarker))
	if err1 != nil && err2 != nil {
		return nil, fmt.Errorf("%s is not an almanac run folder (no %s)", dir, MarkerFile)
	}
	return readRun(dir)
}

// Columns lists the named table's columns, in file order, reading only
// the file's footer.
func (r *Run) Columns(name string) ([]string, error) {
	path := filepath.Join(r.Dir, name+".parquet")
	pf, err := file.OpenParquetFile(path, false)
	if err != nil {
		return nil, fmt.Errorf("%s: %v", path, err)
	}
	defer pf.Close()
	sc := pf.MetaData().Schema
	out := make([]string, sc.NumColumns())
	for i := range out {
		out[i] = sc.Column(i).Name()
	}
	return out, nil
}

// ScanFilter narrows what Scan reads.
type ScanFilter struct {
	// Columns to read; nil reads every column. Unknown names are an error.
	Columns []string
	// KeyColumn and KeyValues, when both are set, skip the row groups whose
	// min/max statistics of KeyColumn show they hold none of KeyValues.
	// Rows of other values still come through from the row groups read:
	// the caller filters rows itself.
	KeyColumn string
	KeyValues map[string]bool
}

// scanBatchRows is the largest batch Scan hands over at once.
const scanBatchRows = 64 << 10

// Scan reads the named table batch by batch. Each batch arrives as a Table
// of its own (Rows is the batch's row count, row indexes start at 0 in each
// batch) holding the filter's columns; it is valid only during the call.
func (r *Run) Scan(name string, f ScanFilter, fn func(batch *Table) error) error {
	path := filepath.Join(r.Dir, name+".parquet")
	pf, err := file.OpenParquetFile(path, false)
	if err != nil {
		return fmt.Errorf("%s: %v", path, err)
	}
	defer pf.Close()
	md := pf.MetaData()
	meta := map[string]string{}
	if kv := md.KeyValueMetadata(); kv != nil {
		for i, k := range kv.Keys() {
			meta[k] = kv.Values()[i]
		}
	}
	var cols []int
	if f.Columns != nil {
		for _, c := range f.Columns {
			i := md.Schema.ColumnIndexByName(c)
			if i < 0 {
				return fmt.Errorf("%s: no column %q", path, c)
			}
			cols = append(cols, i)
		}
		if len(cols) == 0 {
			return fmt.Errorf("%s: no columns asked for", path)
		}
	}
	groups := make([]int, 0, md.NumRowGroups())
	keyCol := -1
	if f.KeyColumn != "" && f.KeyValues != nil {
		keyCol = md.Schema.ColumnIndexByName(f.KeyColumn)
		if keyCol < 0 {
			return fmt.Errorf("%s: no column %q", path, f.KeyColumn)
		}
	}
	for g := 0; g < md.NumRowGroups(); g++ {
		if keyCol >= 0 && !groupMayHold(md.RowGroup(g), keyCol, f.KeyValues) {
			continue
		}
		groups = append(groups, g)
	}
	if len(groups) == 0 {
		return nil
	}
	fr, err := pqarrow.NewFileReader(pf, pqarrow.ArrowReadProperties{BatchSize: scanBatchRows}, memory.DefaultAllocator)
	if err != nil {
		return fmt.Errorf("%s: %v", path, err)
	}
	rr, err := fr.GetRecordReader(context.Background(), cols, groups)
	if err != nil {
		return fmt.Errorf("%s: %v", path, err)
	}
	defer rr.Release()
	if err := uniqueColumns(path, rr.Schema()); err != nil {
		return err
	}
	for rr.Next() {
		rec := rr.RecordBatch()
		t := &Table{Path: path, Schema: rec.Schema(), Rows: int(rec.NumRows()), Meta: meta, cols: map[string]arrow.Array{}}
		for i, fld := range rec.Schema().Fields() {
			t.cols[fld.Name] = rec.Column(i)
		}
		if err := fn(t); err != nil {
			return err
		}
		if err := t.Err(); err != nil {
			return err
		}
	}
	if err := rr.Err(); err != nil {
		return fmt.Errorf("%s: %v", path, err)
	}
	return nil
}

// groupMayHold reports whether a row group may hold one of the values in
// the string column col: false only when its statistics rule them all out.
func groupMayHold(rg *metadata.RowGroupMetaData, col int, values map[string]bool) bool {
	cc, err := rg.ColumnChunk(col)
	if err != nil {
		return true
	}
	if ok, err := cc.StatsSet(); err != nil || !ok {
		return true
	}
	st, err := cc.Statistics()
	if err != nil || st == nil || !st.HasMinMax() {
		return true
	}
	bs, ok := st.(*metadata.ByteArrayStatistics)
	if !ok {
		return true
	}
	lo, hi := string(bs.Min()), string(bs.Max())
	for v := range values {
		if v >= lo && v <= hi {
			return true
		}
	}
	return false
}
