package runfolder

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"hash"
	"io"
	"math"
	"os"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/compress"
)

// flushRows is how many rows a table buffers in one record batch;
// rowGroupRows is the largest row group written (four batches). The batch
// size does not change the bytes (the column writers cut every write into
// the same mini-batches), only how much a table holds in flight.
const (
	flushRows    = 32 * 1024
	rowGroupRows = 128 * 1024
)

// colKind is the type of a fixed (non-key) Column.
type colKind int

const (
	colString colKind = iota
	colDate
	colInt
	colFloat
	colBool
)

type Column struct {
	name     string
	kind     colKind
	nullable bool
}

// TableWriter streams rows of one table into a Parquet file.
type TableWriter struct {
	strs    []*array.StringBuilder // by field index; nil where the field is not a string
	floats  []*array.Float64Builder
	ints    []*array.Int32Builder
	dates   []*array.Date32Builder
	bools   []*array.BooleanBuilder
	name    string
	path    string
	file    *os.File
	hash    hash.Hash // of every byte written to file
	size    int64
	sum     string // hex SHA-256, once closed
	enc     *groupEncoder
	rb      *array.RecordBuilder
	recycle *recycler // rb's allocator: the released batches' buffers, reused
	nkeys   int
	cols    []Column
	rows    int64
	buffer  int
	// strData is each string column's data bytes in the last full batch.
	strData []int
}

func tableSchema(keyNames []string, cols []Column) *arrow.Schema {
	fields := make([]arrow.Field, 0, len(keyNames)+len(cols))
	for _, k := range keyNames {
		fields = append(fields, arrow.Field{Name: k, Type: arrow.BinaryTypes.String, Nullable: true})
	}
	for _, c := range cols {
		var t arrow.DataType
		switch c.kind {
		case colString:
			t = arrow.BinaryTypes.String
		case colDate:
			t = arrow.FixedWidthTypes.Date32
		case colInt:
			t = arrow.PrimitiveTypes.Int32
		case colFloat:
			t = arrow.PrimitiveTypes.Float64
		case colBool:
			t = arrow.FixedWidthTypes.Boolean
		}
		fields = append(fields, arrow.Field{Name: c.name, Type: t, Nullable: c.nullable})
	}
	return arrow.NewSchema(fields, nil)
}

// writerProps are the Parquet properties of every table: zstd, dictionary
// encoding, statistics, a fixed created-by so files do not change with the
// library's build.
func writerProps(sch *arrow.Schema) *parquet.WriterProperties {
	opts := []parquet.WriterProperty{
		parquet.WithCompression(compress.Codecs.Zstd),
		parquet.WithCompressionLevel(1), // zstd "fastest": most of the gain, a third of the cost of level 3
		// Dictionary encoding for the string columns (keys, method, model,
		// form …: few distinct values); numbers are mostly distinct, so a
		// dictionary would cost time and save nothing.
		parquet.WithDictionaryDefault(false),
		parquet.WithStats(true),
		parquet.WithMaxRowGroupLength(rowGroupRows),
		parquet.WithCreatedBy("almanac " + Version),
		parquet.WithVersion(parquet.V2_6),
	}
	for _, f := range sch.Fields() {
		if f.Type.ID() == arrow.STRING {
			opts = append(opts, parquet.WithDictionaryFor(f.Name, true))
		}
	}
	return parquet.NewWriterProperties(opts...)
}

func NewTableWriter(dir, name string, keyNames []string, cols []Column, meta map[string]string, mem memory.Allocator) (*TableWriter, error) {
	sch := tableSchema(keyNames, cols)
	path := dir + string(os.PathSeparator) + name + ".parquet"
	f, err := os.OpenFile(path, os.O_CREATE|os.O_EXCL|os.O_WRONLY, 0o644)
	if err != nil {
		return nil, err
	}
	keys := make([]string, 0, len(meta))
	vals := make([]string, 0, len(meta))
	for _, k := range sortedKeys(meta) {
		keys = append(keys, k)
		vals = append(vals, meta[k])
	}
	md := arrow.NewMetadata(keys, vals)
	sch = arrow.NewSchema(sch.Fields(), &md)
	// The bytes are hashed as they are written, for the manifest.
	h := sha256.New()
	rc := newRecycler(mem)
	t := &TableWriter{name: name, path: path, file: f, hash: h, rb: array.NewRecordBuilder(rc, sch), recycle: rc, nkeys: len(keyNames), cols: cols}
	enc, err := newGroupEncoder(sch, &countingWriter{w: io.MultiWriter(f, h), n: &t.size}, writerProps(sch), mem)
	if err != nil {
		t.rb.Release()
		rc.release()
		f.Close() // the open failed; the staging folder is removed with the file
		return nil, err
	}
	t.enc = enc
	n := len(sch.Fields())
	t.strs, t.floats, t.ints = make([]*array.StringBuilder, n), make([]*array.Float64Builder, n), make([]*array.Int32Builder, n)
	t.dates, t.bools = make([]*array.Date32Builder, n), make([]*array.BooleanBuilder, n)
	for i := 0; i < n; i++ {
		switch b := t.rb.Field(i).(type) {
		case *array.StringBuilder:
			t.strs[i] = b
		case *array.Float64Builder:
			t.floats[i] = b
		case *array.Int32Builder:
			t.ints[i] = b
		case *array.Date32Builder:
			t.dates[i] = b
		case *array.BooleanBuilder:
			t.bools[i] = b
		}
	}
	return t, nil
}

// key appends the key columns of a row; key nil writes NULLs.
func (t *TableWriter) Key(key []string) {
	for i := 0; i < t.nkeys; i++ {
		b := t.strs[i]
		if key == nil {
			b.AppendNull()
		} else {
			b.Append(key[i])
		}
	}
}

func (t *TableWriter) Str(col int, v string) {
	t.strs[t.nkeys+col].Append(v)
}

func (t *TableWriter) StrOrNull(col int, v string) {
	b := t.strs[t.nkeys+col]
	if v == "" {
		b.AppendNull()
	} else {
		b.Append(v)
	}
}

func (t *TableWriter) Date(col int, days int64) {
	t.dates[t.nkeys+col].Append(arrow.Date32(days))
}

func (t *TableWriter) Int32(col int, v int) {
	t.ints[t.nkeys+col].Append(int32(v))
}

func (t *TableWriter) Boolean(col int, v bool) {
	t.bools[t.nkeys+col].Append(v)
}

// float appends v, or NULL when v is NaN or infinite.
func (t *TableWriter) Float(col int, v float64) {
	b := t.floats[t.nkeys+col]
	if math.IsNaN(v) || math.IsInf(v, 0) {
		b.AppendNull()
	} else {
		b.Append(v)
	}
}

// endRow counts a finished row and flushes a full buffer.
func (t *TableWriter) EndRow() error {
	t.rows++
	t.buffer++
	if t.buffer >= flushRows {
		return t.flush()
	}
	return nil
}

// flush hands the record batch being built to the encoder.
func (t *TableWriter) flush() error {
	if t.buffer == 0 {
		return nil
	}
	full := t.buffer >= flushRows
	if full && t.strData == nil {
		t.strData = make([]int, len(t.strs))
	}
	if full {
		for i, b := range t.strs {
			if b != nil {
				t.strData[i] = b.DataLen()
			}
		}
	}
	t.enc.write(t.rb.NewRecordBatch())
	t.buffer = 0
	if full {
		// A table that filled one batch will likely fill the next: size
		// the builders for it at once rather than by doubling (which
		// allocates and copies twice the batch per column).
		t.rb.Reserve(flushRows)
		for i, b := range t.strs {
			if b != nil {
				b.ReserveData(t.strData[i] + t.strData[i]/4)
			}
		}
	}
	return nil
}

// Close flushes, waits for the encoder, writes the Parquet footer, and
// fsyncs and closes the file.
func (t *TableWriter) Close() error {
	if t.enc == nil {
		return nil
	}
	err := t.flush()
	if cerr := t.enc.close(); err == nil && cerr != nil {
		err = fmt.Errorf("writing %s: %w", t.name, cerr)
	}
	t.enc = nil
	t.rb.Release()
	t.recycle.release()
	if err == nil {
		err = t.file.Sync()
		t.sum = hex.EncodeToString(t.hash.Sum(nil))
	}
	return errors.Join(err, t.file.Close())
}

// SHA256 is the hex SHA-256 of the table's file; Size its length in bytes.
// Both are known once Close has succeeded.
func (t *TableWriter) SHA256() string { return t.sum }

// Size is the length of the table's file in bytes.
func (t *TableWriter) Size() int64 { return t.size }

// countingWriter counts the bytes written through it. The encoder sees
// the file only through it, so that it cannot close the file: the table
// writer syncs and closes it.
type countingWriter struct {
	w io.Writer
	n *int64
}

func (c *countingWriter) Write(p []byte) (int, error) {
	n, err := c.w.Write(p)
	*c.n += int64(n)
	return n, err
}

// Abort releases the writer without caring about the file, which the
// failed run's staging folder takes with it.
func (t *TableWriter) Abort() {
	if t.enc != nil {
		t.enc.close() // only to stop its goroutine: the file is discarded
		t.enc = nil
		t.rb.Release()
		t.recycle.release()
		t.file.Close() // discarded with the staging folder
	}
}

// fsyncPath opens path (a file or a folder) and fsyncs it.
func fsyncPath(path string) error {
	f, err := os.Open(path)
	if err != nil {
		return err
	}
	syncErr := f.Sync()
	return errors.Join(syncErr, f.Close())
}
