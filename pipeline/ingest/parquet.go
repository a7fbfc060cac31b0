package ingest

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"

	"almanac/pipeline/calendar"
	"almanac/pipeline/runfolder"
	"almanac/spec"
)

// parquetBatchRows is how many rows are decoded at a time.
const parquetBatchRows = 64 * 1024

func readParquet(ctx context.Context, s *spec.Spec, f *InputFile, fileIdx int32, cal calendar.Calendar, rs *Rows) (err error) {
	defer func() {
		// The Parquet decoder can panic on some corrupt files; a corrupt
		// input is a data error, not a crash.
		if r := recover(); r != nil {
			err = fmt.Errorf("%s: not a readable Parquet file: %v", f.Path, r)
		}
	}()
	sum, err := hashFile(ctx, f.Abs)
	if err != nil {
		if ctx.Err() != nil {
			return ctx.Err()
		}
		return fmt.Errorf("%s: %v", f.Path, err)
	}
	pf, err := file.OpenParquetFile(f.Abs, false)
	if err != nil {
		return fmt.Errorf("%s: not a readable Parquet file: %v", f.Path, err)
	}
	defer pf.Close()
	mem := memory.DefaultAllocator
	fr, err := pqarrow.NewFileReader(pf, pqarrow.ArrowReadProperties{BatchSize: parquetBatchRows, Parallel: true}, mem)
	if err != nil {
		return fmt.Errorf("%s: not a readable Parquet file: %v", f.Path, err)
	}
	cols, err := parquetColumns(pf, f.Path, s)
	if err != nil {
		return err
	}
	rr, err := fr.GetRecordReader(ctx, cols, nil)
	if err != nil {
		return fmt.Errorf("%s: %v", f.Path, err)
	}
	defer rr.Release()
	pr := convertBatches(rr, func(rec arrow.RecordBatch, base int64) *parquetChunk {
		return convertParquet(rec, base, f.Path, s, cal)
	})
	defer pr.Release()
	// While the first batches decode.
	rs.reserve(pf.NumRows())

	nk := len(s.Columns.Keys)
	var row int64
	var errs []string
	for c := pr.Next(); c != nil; c = pr.Next() {
		if err := ctx.Err(); err != nil {
			return err
		}
		if c.panic != nil {
			panic(c.panic)
		}
		errs = append(errs, c.errs...)
		if len(errs) > 0 {
			break
		}
		var prev []byte
		var prevID int32
		for i := 0; i < c.badRow; i++ {
			if !rs.Times.observe(cal, c.times[i], fileIdx, row+int64(i)+1) {
				continue
			}
			// Rows of one series usually follow each other.
			k := c.key(i)
			if prev == nil || !bytes.Equal(k, prev) {
				prev, prevID = k, rs.internJoined(k, nk)
			}
			rs.add(prevID, c.times[i].Period, c.values[i], fileIdx, row+int64(i)+1)
		}
		rs.KeyBlanks += c.blanks
		if c.bad != nil {
			return c.bad
		}
		row += int64(c.n)
	}
	if len(errs) > 0 {
		if len(errs) > MaxDataErrors {
			errs = append(errs[:MaxDataErrors], fmt.Sprintf("%s: stopped after %d errors", f.Path, MaxDataErrors))
		}
		return &DataError{Msgs: errs}
	}
	if err := pr.Err(); err != nil {
		return fmt.Errorf("%s: not a readable Parquet file: %v", f.Path, err)
	}
	f.Rows = row
	f.SHA256 = sum
	if row == 0 {
		rs.Notes = append(rs.Notes, runfolder.Problem{Stage: "read", Severity: "warning", Code: runfolder.CodeNoRows, Message: fmt.Sprintf("%s has no rows", f.Path)})
	}
	return nil
}

// parquetColumns finds the spec's columns (time, value, keys) in a Parquet
// file's schema.
func parquetColumns(pf *file.Reader, path string, s *spec.Spec) ([]int, error) {
	sch := pf.MetaData().Schema
	var cols []int
	var missing []string
	for _, name := range wantedColumns(s) {
		i := sch.ColumnIndexByName(name)
		if i < 0 {
			missing = append(missing, fmt.Sprintf("%q", name))
			continue
		}
		cols = append(cols, i)
	}
	if len(missing) > 0 {
		present := make([]string, sch.NumColumns())
		for i := range present {
			present[i] = sch.Column(i).Name()
		}
		return nil, missingColumns(path, missing, present)
	}
	return cols, nil
}

func parquetPeriods(path, name string, col arrow.Array, cal calendar.Calendar, base int64) ([]calendar.RowTime, []string) {
	n := col.Len()
	out := make([]calendar.RowTime, n)
	var errs []string
	nullErr := func(i int) {
		errs = append(errs, fmt.Sprintf("%s: row %d: column %q: the time is NULL", path, base+int64(i)+1, name))
	}
	switch c := col.(type) {
	case *array.Date32:
		for i := 0; i < n; i++ {
			if c.IsNull(i) {
				nullErr(i)
				continue
			}
			t, err := cal.DayTime(int64(c.Value(i)))
			if err != nil {
				errs = append(errs, fmt.Sprintf("%s: row %d: column %q: %v", path, base+int64(i)+1, name, err))
				continue
			}
			out[i] = t
		}
	case *array.Date64:
		for i := 0; i < n; i++ {
			if c.IsNull(i) {
				nullErr(i)
				continue
			}
			t, err := cal.DayTime(calendar.FloorDiv(int64(c.Value(i)), 86400000))
			if err != nil {
				errs = append(errs, fmt.Sprintf("%s: row %d: column %q: %v", path, base+int64(i)+1, name, err))
				continue
			}
			out[i] = t
		}
	case *array.Timestamp:
		unit := c.DataType().(*arrow.TimestampType).Unit
		perDay := int64(86400) * [...]int64{1, 1e3, 1e6, 1e9}[unit]
		for i := 0; i < n; i++ {
			if c.IsNull(i) {
				nullErr(i)
				continue
			}
			t, err := cal.DayTime(calendar.FloorDiv(int64(c.Value(i)), perDay))
			if err != nil {
				errs = append(errs, fmt.Sprintf("%s: row %d: column %q: %v", path, base+int64(i)+1, name, err))
				continue
			}
			out[i] = t
		}
	case array.StringLike:
		for i := 0; i < n; i++ {
			if c.IsNull(i) {
				nullErr(i)
				continue
			}
			p, err := cal.ParseSpan(strings.TrimSpace(c.ValueStr(i)))
			if err != nil {
				errs = append(errs, fmt.Sprintf("%s: row %d: column %q: %v", path, base+int64(i)+1, name, err))
				continue
			}
			out[i] = p
		}
	default:
		errs = append(errs, fmt.Sprintf("%s: column %q has type %s; a time column must be DATE, TIMESTAMP or text", path, name, col.DataType()))
	}
	if len(errs) > MaxDataErrors {
		errs = errs[:MaxDataErrors]
	}
	return out, errs
}

func parquetValues(path, name string, col arrow.Array, base int64) ([]float64, error) {
	n := col.Len()
	out := make([]float64, n)
	var get func(i int) float64
	switch c := col.(type) {
	case *array.Float64:
		get = func(i int) float64 { return c.Value(i) }
	case *array.Float32:
		get = func(i int) float64 { return float64(c.Value(i)) }
	case *array.Int64:
		get = func(i int) float64 { return float64(c.Value(i)) }
	case *array.Int32:
		get = func(i int) float64 { return float64(c.Value(i)) }
	case *array.Int16:
		get = func(i int) float64 { return float64(c.Value(i)) }
	case *array.Int8:
		get = func(i int) float64 { return float64(c.Value(i)) }
	case *array.Uint64:
		get = func(i int) float64 { return float64(c.Value(i)) }
	case *array.Uint32:
		get = func(i int) float64 { return float64(c.Value(i)) }
	case *array.Uint16:
		get = func(i int) float64 { return float64(c.Value(i)) }
	case *array.Uint8:
		get = func(i int) float64 { return float64(c.Value(i)) }
	case *array.Decimal128:
		scale := c.DataType().(*arrow.Decimal128Type).Scale
		get = func(i int) float64 { return c.Value(i).ToFloat64(scale) }
	default:
		return nil, fmt.Errorf("%s: column %q has type %s; the value column must be numeric", path, name, col.DataType())
	}
	for i := 0; i < n; i++ {
		if col.IsNull(i) {
			out[i] = math.NaN()
			continue
		}
		v := get(i)
		if math.IsInf(v, 0) {
			return nil, fmt.Errorf("%s: row %d: column %q: %v: infinite values are not accepted; write NULL for a missing value", path, base+int64(i)+1, name, v)
		}
		out[i] = v
	}
	return out, nil
}

func parquetKeys(path, name string, col arrow.Array) (func(int) (string, error), error) {
	switch c := col.(type) {
	case array.StringLike:
		return func(i int) (string, error) {
			if c.IsNull(i) {
				return "", nil
			}
			return c.ValueStr(i), nil
		}, nil
	case *array.Dictionary:
		dict, ok := c.Dictionary().(array.StringLike)
		if !ok {
			break
		}
		return func(i int) (string, error) {
			if c.IsNull(i) {
				return "", nil
			}
			return dict.ValueStr(c.GetValueIndex(i)), nil
		}, nil
	case *array.Int64:
		return func(i int) (string, error) {
			if c.IsNull(i) {
				return "", nil
			}
			return strconv.FormatInt(c.Value(i), 10), nil
		}, nil
	case *array.Int32:
		return func(i int) (string, error) {
			if c.IsNull(i) {
				return "", nil
			}
			return strconv.FormatInt(int64(c.Value(i)), 10), nil
		}, nil
	}
	return nil, fmt.Errorf("%s: key column %q has type %s; key columns must be text or integers", path, name, col.DataType())
}

// hashFile is the hex SHA-256 of a file, read in pieces that each look at
// ctx first, so that a signal stops the hashing of a large file too.
func hashFile(ctx context.Context, path string) (string, error) {
	fh, err := os.Open(path)
	if err != nil {
		return "", err
	}
	defer fh.Close()
	h := sha256.New()
	buf := make([]byte, 1<<20)
	for {
		if err := ctx.Err(); err != nil {
			return "", err
		}
		n, err := fh.Read(buf)
		h.Write(buf[:n])
		if err == io.EOF {
			return hex.EncodeToString(h.Sum(nil)), nil
		}
		if err != nil {
			return "", err
		}
	}
}

// parquetKeyColumns gives a reader for each key column of rec, which holds
// the time and value columns first, then the keys.
func parquetKeyColumns(path string, keys []string, rec arrow.RecordBatch) ([]func(int) (string, error), error) {
	keyCols := make([]func(int) (string, error), len(keys))
	for j := range keyCols {
		kc, kerr := parquetKeys(path, keys[j], rec.Column(2+j))
		if kerr != nil {
			return nil, kerr
		}
		keyCols[j] = kc
	}
	return keyCols, nil
}
