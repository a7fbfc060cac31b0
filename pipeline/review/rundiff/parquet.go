package rundiff

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/compress"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// ParquetColumns are the fixed columns WriteParquet writes after the key
// columns:
//
//	method        string   per-method mode: the method label; NULL in chosen mode
//	base_method   string   chosen entry (chosen mode) or the method (per-method mode) on the base side; NULL when absent or nothing chosen
//	head_method   string   the same for head
//	base_total    float64  forecast total over the horizon; NULL when undefined
//	head_total    float64
//	abs_change    float64  head_total − base_total; NULL when either is NULL
//	rel_change    float64  abs_change / |base_total|; NULL when undefined or from a zero base
//	base_score    float64  chosen entry's backtest score (choices.score); NULL without one
//	head_score    float64
//	score_change  float64  head_score − base_score (positive is worse); NULL when not comparable
//	switched      bool     the chosen entry differs (always false in per-method mode)
//	status        string   added | removed | changed | unchanged
//
// One row per Diff row, in Diff order. Key-value metadata:
// almanac.rundiff.mode, almanac.rundiff.base_spec_sha256,
// almanac.rundiff.head_spec_sha256, almanac.rundiff.metric (head's
// selection metric, "" without a backtest).
var ParquetColumns = []string{"method", "base_method", "head_method", "base_total", "head_total", "abs_change", "rel_change",
	"base_score", "head_score", "score_change", "switched", "status"}

// WriteParquet writes one row per Diff row to path (zstd, dictionary
// encoded strings, statistics). The same Diff always gives the same bytes:
// the file holds no time, no folder path and no library build string. The
// file is written beside path and renamed into place.
func (d *Diff) WriteParquet(path string) error {
	for _, k := range d.Keys {
		if slices.Contains(ParquetColumns, k) {
			return fmt.Errorf("rundiff: key column %q clashes with a diff column", k)
		}
	}
	str := arrow.BinaryTypes.String
	f64 := arrow.PrimitiveTypes.Float64
	var fields []arrow.Field
	for _, k := range d.Keys {
		fields = append(fields, arrow.Field{Name: k, Type: str, Nullable: true})
	}
	types := []arrow.DataType{str, str, str, f64, f64, f64, f64, f64, f64, f64, arrow.FixedWidthTypes.Boolean, str}
	for i, c := range ParquetColumns {
		fields = append(fields, arrow.Field{Name: c, Type: types[i], Nullable: c != "switched" && c != "status"})
	}
	md := arrow.NewMetadata(
		[]string{"almanac.rundiff.base_spec_sha256", "almanac.rundiff.head_spec_sha256", "almanac.rundiff.metric", "almanac.rundiff.mode"},
		[]string{d.Base.SpecSHA256, d.Head.SpecSHA256, d.Head.Metric, string(d.Mode)})
	sch := arrow.NewSchema(fields, &md)

	mem := memory.DefaultAllocator
	rb := array.NewRecordBuilder(mem, sch)
	defer rb.Release()
	nk := len(d.Keys)
	strOrNull := func(col int, v string) {
		b := rb.Field(col).(*array.StringBuilder)
		if v == "" {
			b.AppendNull()
		} else {
			b.Append(v)
		}
	}
	float := func(col int, v float64) {
		b := rb.Field(col).(*array.Float64Builder)
		if math.IsNaN(v) || math.IsInf(v, 0) {
			b.AppendNull()
		} else {
			b.Append(v)
		}
	}
	for _, r := range d.Rows {
		for i := range nk {
			rb.Field(i).(*array.StringBuilder).Append(r.Key[i])
		}
		strOrNull(nk, r.Method)
		strOrNull(nk+1, r.BaseMethod)
		strOrNull(nk+2, r.HeadMethod)
		for j, v := range []float64{r.BaseTotal, r.HeadTotal, r.AbsChange, r.RelChange, r.BaseScore, r.HeadScore, r.ScoreChange} {
			float(nk+3+j, v)
		}
		rb.Field(nk + 10).(*array.BooleanBuilder).Append(r.Switched)
		rb.Field(nk + 11).(*array.StringBuilder).Append(string(r.Status))
	}
	rec := rb.NewRecordBatch()
	defer rec.Release()

	tmp, err := os.CreateTemp(filepath.Dir(path), "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return err
	}
	done := false
	if err := tmp.Chmod(0o644); err != nil {
		tmp.Close()
		os.Remove(tmp.Name())
		return err
	}
	defer func() {
		if !done {
			tmp.Close()
			os.Remove(tmp.Name())
		}
	}()
	props := parquet.NewWriterProperties(
		parquet.WithCompression(compress.Codecs.Zstd),
		parquet.WithCompressionLevel(3),
		parquet.WithDictionaryDefault(true),
		parquet.WithStats(true),
		parquet.WithCreatedBy("almanac rundiff"),
		parquet.WithVersion(parquet.V2_6),
	)
	fw, err := pqarrow.NewFileWriter(sch, tmp, props, pqarrow.NewArrowWriterProperties(pqarrow.WithStoreSchema(), pqarrow.WithAllocator(mem)))
	if err != nil {
		return err
	}
	if err := fw.Write(rec); err != nil {
		fw.Close()
		return err
	}
	// Close also closes tmp.
	if err := fw.Close(); err != nil {
		return err
	}
	if err := os.Rename(tmp.Name(), path); err != nil {
		return err
	}
	done = true
	return nil
}
