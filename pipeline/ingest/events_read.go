package ingest

import (
	"context"
	"crypto/sha256"
	"encoding/csv"
	"encoding/hex"
	"fmt"
	"io"
	"math"
	"os"
	"strings"
	"unicode/utf8"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"

	"almanac/pipeline/calendar"
)

// eventColumnIndexes finds the event source's columns in a header (or a
// Parquet schema's names), in the order of EventColumns.Names.
func (r *eventReader) eventColumnIndexes(where string, header []string) ([]int, error) {
	var idx []int
	var missing []string
	for _, want := range r.src.Columns.Names() {
		i := -1
		for j, h := range header {
			if h == want {
				i = j
				break
			}
		}
		if i < 0 {
			missing = append(missing, fmt.Sprintf("%q", want))
			continue
		}
		idx = append(idx, i)
	}
	if len(missing) > 0 {
		return nil, &DataError{Msgs: []string{missingColumns(where, missing, header).Error()}}
	}
	return idx, nil
}

// slots returns, for each of date, until, name, value, its position in the
// index list of eventColumnIndexes (-1 when the source has no such
// column), and the position of the first key.
func (r *eventReader) slots() (date, until, name, value, keys int) {
	c := r.src.Columns
	next := 0
	take := func(col string) int {
		if col == "" {
			return -1
		}
		next++
		return next - 1
	}
	date, until, name, value = take(c.Date), take(c.Until), take(c.Name), take(c.Value)
	return date, until, name, value, next
}

func (r *eventReader) readCSV(ctx context.Context) error {
	fh, err := os.Open(r.f.Abs)
	if err != nil {
		return fmt.Errorf("%s: %v", r.f.Path, err)
	}
	defer fh.Close()
	hr := &hashingReader{r: fh, h: sha256.New()}
	cr := csv.NewReader(hr)
	cr.FieldsPerRecord = 0
	if r.src.Delimiter != "" {
		cr.Comma, _ = utf8.DecodeRuneInString(r.src.Delimiter)
	}
	header, err := cr.Read()
	if err == io.EOF {
		return &DataError{Msgs: []string{fmt.Sprintf("%s: the file is empty; expected a header line naming the columns %v", r.f.Path, r.src.Columns.Names())}}
	}
	if err != nil {
		return &DataError{Msgs: []string{csvError(r.f.Path, err).Error()}}
	}
	header = append([]string(nil), header...)
	if len(header) > 0 {
		header[0] = strings.TrimPrefix(header[0], "\ufeff")
	}
	for i := range header {
		header[i] = strings.TrimSpace(header[i])
	}
	idx, err := r.eventColumnIndexes(r.f.Path+":1", header)
	if err != nil {
		return err
	}
	date, until, name, value, keys := r.slots()
	get := func(rec []string, slot int) string {
		if slot < 0 {
			return ""
		}
		return rec[idx[slot]]
	}
	var n int64
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			r.errs = append(r.errs, csvError(r.f.Path, err).Error())
			break
		}
		if n++; n%ctxEvery == 0 {
			if err := ctx.Err(); err != nil {
				return err
			}
		}
		line, _ := cr.FieldPos(idx[date])
		c := &cells{where: fmt.Sprintf("%s:%d", r.f.Path, line), date: get(rec, date), until: get(rec, until), name: get(rec, name), value: get(rec, value)}
		for j := range r.src.Columns.Keys {
			c.keys = append(c.keys, rec[idx[keys+j]])
		}
		if !r.add(c) {
			r.errs = append(r.errs, fmt.Sprintf("%s: stopped after %d errors", r.f.Path, MaxDataErrors))
			break
		}
	}
	if len(r.errs) > 0 {
		return &DataError{Msgs: r.errs}
	}
	if _, err := io.Copy(io.Discard, hr); err != nil {
		return fmt.Errorf("%s: %v", r.f.Path, err)
	}
	r.f.Rows, r.f.SHA256 = n, hex.EncodeToString(hr.h.Sum(nil))
	return nil
}

func (r *eventReader) readParquet(ctx context.Context) (err error) {
	defer func() {
		if rec := recover(); rec != nil {
			err = fmt.Errorf("%s: not a readable Parquet file: %v", r.f.Path, rec)
		}
	}()
	sum, err := hashFile(ctx, r.f.Abs)
	if err != nil {
		return fmt.Errorf("%s: %v", r.f.Path, err)
	}
	pf, err := file.OpenParquetFile(r.f.Abs, false)
	if err != nil {
		return fmt.Errorf("%s: not a readable Parquet file: %v", r.f.Path, err)
	}
	defer pf.Close()
	sch := pf.MetaData().Schema
	names := make([]string, sch.NumColumns())
	for i := range names {
		names[i] = sch.Column(i).Name()
	}
	idx, err := r.eventColumnIndexes(r.f.Path, names)
	if err != nil {
		return err
	}
	fr, err := pqarrow.NewFileReader(pf, pqarrow.ArrowReadProperties{BatchSize: parquetBatchRows}, memory.DefaultAllocator)
	if err != nil {
		return fmt.Errorf("%s: not a readable Parquet file: %v", r.f.Path, err)
	}
	rr, err := fr.GetRecordReader(ctx, idx, nil)
	if err != nil {
		return fmt.Errorf("%s: %v", r.f.Path, err)
	}
	defer rr.Release()
	var row int64
	for rr.Next() {
		if err := ctx.Err(); err != nil {
			return err
		}
		if !r.parquetBatch(rr.RecordBatch(), row) {
			break
		}
		row += rr.RecordBatch().NumRows()
	}
	if len(r.errs) > 0 {
		return &DataError{Msgs: r.errs}
	}
	if err := rr.Err(); err != nil {
		return fmt.Errorf("%s: not a readable Parquet file: %v", r.f.Path, err)
	}
	r.f.Rows, r.f.SHA256 = row, sum
	return nil
}

// parquetBatch reads the rows of one record batch (columns in the order of
// EventColumns.Names); false once too many errors were found.
func (r *eventReader) parquetBatch(rec arrow.RecordBatch, base int64) bool {
	date, until, name, value, keys := r.slots()
	cols := r.src.Columns
	fail := func(msg string) bool {
		r.errs = append(r.errs, msg)
		return false
	}
	dayOf, err := parquetDays(r.f.Path, cols.Date, rec.Column(date))
	if err != nil {
		return fail(err.Error())
	}
	var untilOf func(int) (int64, bool, error)
	if until >= 0 {
		if untilOf, err = parquetDays(r.f.Path, cols.Until, rec.Column(until)); err != nil {
			return fail(err.Error())
		}
	}
	text := func(slot int, col string) func(int) (string, error) {
		if slot < 0 {
			return func(int) (string, error) { return "", nil }
		}
		f, err := parquetKeys(r.f.Path, col, rec.Column(slot))
		if err != nil {
			r.errs = append(r.errs, fmt.Sprintf("%s: column %q: driver names and key values must be text or integers", r.f.Path, col))
			return nil
		}
		return f
	}
	nameOf := text(name, cols.Name)
	keyOf := make([]func(int) (string, error), len(cols.Keys))
	for j, k := range cols.Keys {
		keyOf[j] = text(keys+j, k)
	}
	if len(r.errs) > 0 || nameOf == nil || containsNil(keyOf) {
		return false
	}
	var values []float64
	if value >= 0 {
		if values, err = parquetEventValues(r.f.Path, cols.Value, rec.Column(value), base); err != nil {
			return fail(err.Error())
		}
	}
	for i := 0; i < int(rec.NumRows()); i++ {
		c := &cells{where: fmt.Sprintf("%s: row %d", r.f.Path, base+int64(i)+1), typed: true}
		first, null, err := dayOf(i)
		if err == nil && null {
			err = fmt.Errorf("the date is NULL")
		}
		if err != nil {
			r.errs = append(r.errs, fmt.Sprintf("%s: column %q: %v", c.where, cols.Date, err))
			continue
		}
		c.first, c.last = first, first
		if untilOf != nil {
			last, null, err := untilOf(i)
			if err != nil {
				r.errs = append(r.errs, fmt.Sprintf("%s: column %q: %v", c.where, cols.Until, err))
				continue
			}
			if !null {
				c.last = last
			}
		}
		c.name, _ = nameOf(i)
		if values != nil {
			c.valueNum, c.valueTyped = values[i], true
		}
		for _, k := range keyOf {
			v, _ := k(i)
			c.keys = append(c.keys, v)
		}
		if !r.add(c) {
			return fail(fmt.Sprintf("%s: stopped after %d errors", r.f.Path, MaxDataErrors))
		}
	}
	return len(r.errs) < MaxDataErrors
}

func containsNil(fs []func(int) (string, error)) bool {
	for _, f := range fs {
		if f == nil {
			return true
		}
	}
	return false
}

// parquetDays reads a DATE, TIMESTAMP or text column as days; null is
// true for a NULL cell.
func parquetDays(path, name string, col arrow.Array) (func(int) (int64, bool, error), error) {
	inRange := func(d int64) (int64, bool, error) {
		if d < calendar.MinDay || d > calendar.MaxDay {
			return 0, false, fmt.Errorf("the date lies outside the years 1 to 9999")
		}
		return d, false, nil
	}
	switch c := col.(type) {
	case *array.Date32:
		return func(i int) (int64, bool, error) {
			if c.IsNull(i) {
				return 0, true, nil
			}
			return inRange(int64(c.Value(i)))
		}, nil
	case *array.Date64:
		return func(i int) (int64, bool, error) {
			if c.IsNull(i) {
				return 0, true, nil
			}
			return inRange(calendar.FloorDiv(int64(c.Value(i)), 86400000))
		}, nil
	case *array.Timestamp:
		unit := c.DataType().(*arrow.TimestampType).Unit
		perDay := int64(86400) * [...]int64{1, 1e3, 1e6, 1e9}[unit]
		return func(i int) (int64, bool, error) {
			if c.IsNull(i) {
				return 0, true, nil
			}
			return inRange(calendar.FloorDiv(int64(c.Value(i)), perDay))
		}, nil
	case array.StringLike:
		return func(i int) (int64, bool, error) {
			if c.IsNull(i) || strings.TrimSpace(c.ValueStr(i)) == "" {
				return 0, true, nil
			}
			d, err := eventDay(c.ValueStr(i))
			return d, false, err
		}, nil
	}
	return nil, fmt.Errorf("%s: column %q has type %s; an event date column must be DATE, TIMESTAMP or text", path, name, col.DataType())
}

// parquetEventValues reads a numeric driver value column; NULL is NaN (and
// then rejected as not finite).
func parquetEventValues(path, name string, col arrow.Array, base int64) ([]float64, error) {
	if _, ok := col.(array.StringLike); ok {
		return nil, fmt.Errorf("%s: column %q has type %s; a driver's value column must be numeric", path, name, col.DataType())
	}
	vals, err := parquetValues(path, name, col, base)
	if err != nil {
		return nil, err
	}
	for i := range vals {
		if col.IsNull(i) {
			vals[i] = math.NaN()
		}
	}
	return vals, nil
}
