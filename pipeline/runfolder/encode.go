package runfolder

import (
	"bytes"
	"context"
	"encoding/base64"
	"errors"
	"fmt"
	"io"
	"sync"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/metadata"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// groupEncoder writes the record batches of one table in order, on a
// goroutine of its own, into buffered row groups of at most maxRows rows,
// and encodes the columns in parallel: one goroutine per column, each
// feeding only its own column-chunk writer of the row group, batch after
// batch; the columns wait for each other only when a row group ends. A column chunk's bytes depend only on the values and
// the sequence of writes into it, which is the same at any worker count, so
// the file is byte-identical to one written column after column.
//
// The calls reproduce what pqarrow.FileWriter.WriteBuffered does for flat
// columns (the same schema conversion, key-value metadata, definition
// levels and write boundaries: every record batch is written whole into
// the current row group, a new row group once it holds maxRows), which the
// table-hash pins check. One batch is encoded while the next is built: the
// hand-over is unbuffered, so memory holds at most two batches per table.
type groupEncoder struct {
	wr      *file.Writer
	fields  []arrow.Field
	props   pqarrow.ArrowWriterProperties
	maxRows int64
	rgw     file.BufferedRowGroupWriter
	rgRows  int64
	def     [][]int16 // definition levels, one buffer per column
	cols    []chan columnTask
	pending sync.WaitGroup // column tasks handed out and not yet done
	colErr  []error        // by column: set by its goroutine, read after pending.Wait
	recs    chan arrow.RecordBatch
	done    chan struct{}
	err     error // set by the goroutine; read after done is closed
}

// columnTask is one batch's column for a column goroutine to write; the
// task holds a reference to the batch.
type columnTask struct {
	cw  file.ColumnChunkWriter
	rec arrow.RecordBatch
}

// newGroupEncoder starts the file: the Parquet schema of sch, its metadata
// followed by the serialized Arrow schema, as pqarrow stores it.
func newGroupEncoder(sch *arrow.Schema, w io.Writer, props *parquet.WriterProperties, mem memory.Allocator) (*groupEncoder, error) {
	arrProps := pqarrow.NewArrowWriterProperties(pqarrow.WithStoreSchema(), pqarrow.WithAllocator(mem))
	pqschema, err := pqarrow.ToParquet(sch, props, arrProps)
	if err != nil {
		return nil, err
	}
	meta := make(metadata.KeyValueMetadata, 0, sch.Metadata().Len()+1)
	for i := 0; i < sch.Metadata().Len(); i++ {
		meta.Append(sch.Metadata().Keys()[i], sch.Metadata().Values()[i])
	}
	var buf bytes.Buffer
	iw := ipc.NewWriter(&buf, ipc.WithSchema(sch), ipc.WithAllocator(mem))
	if err := iw.Close(); err != nil {
		return nil, err
	}
	meta.Append("ARROW:schema", base64.StdEncoding.EncodeToString(buf.Bytes()))
	wr, err := file.NewParquetWriterWithError(w, pqschema.Root(), file.WithWriterProps(props), file.WithWriteMetadata(meta))
	if err != nil {
		return nil, err
	}
	e := &groupEncoder{wr: wr, fields: sch.Fields(), props: arrProps, maxRows: props.MaxRowGroupLength(),
		def: make([][]int16, len(sch.Fields())), recs: make(chan arrow.RecordBatch), done: make(chan struct{})}
	n := len(e.fields)
	e.cols, e.colErr = make([]chan columnTask, n), make([]error, n)
	for c := range e.cols {
		e.cols[c] = make(chan columnTask)
		go e.column(c)
	}
	go e.loop()
	return e, nil
}

// column writes column c of every batch handed to it, in order; after its
// first error it only releases them.
func (e *groupEncoder) column(c int) {
	for t := range e.cols[c] {
		if e.colErr[c] == nil {
			e.colErr[c] = e.writeColumn(t.cw, c, t.rec)
		}
		t.rec.Release()
		e.pending.Done()
	}
}

// settle waits for every column task handed out and returns the first
// column error.
func (e *groupEncoder) settle() error {
	e.pending.Wait()
	return errors.Join(e.colErr...)
}

// loop writes the batches as they come; after the first error it only
// releases them.
func (e *groupEncoder) loop() {
	defer close(e.done)
	for rec := range e.recs {
		if e.err == nil {
			e.err = e.writeBatch(rec)
		}
		rec.Release()
	}
	if err := e.settle(); e.err == nil {
		e.err = err
	}
	for _, ch := range e.cols {
		close(ch)
	}
}

// write hands one record batch to the encoder, which takes it over; it
// blocks until the encoder has finished the previous one.
func (e *groupEncoder) write(rec arrow.RecordBatch) { e.recs <- rec }

// writeBatch hands rec's columns to the column goroutines, into the
// current row group, first starting a new one when there is none or it is
// full: then every column must have finished the previous one, which
// starting the next closes. Batches never straddle row groups: the
// table's batches are at most maxRows rows and divide it.
func (e *groupEncoder) writeBatch(rec arrow.RecordBatch) error {
	if e.rgw == nil || e.rgRows+rec.NumRows() > e.maxRows {
		if err := e.settle(); err != nil {
			return err
		}
		rgw, err := e.wr.AppendBufferedRowGroupChecked()
		if err != nil {
			return err
		}
		e.rgw, e.rgRows = rgw, 0
	}
	e.rgRows += rec.NumRows()
	for c := range e.fields {
		cw, err := e.rgw.Column(c)
		if err != nil {
			return err
		}
		rec.Retain()
		e.pending.Add(1)
		e.cols[c] <- columnTask{cw, rec}
	}
	return nil
}

// writeColumn writes column c of rec into cw, with the definition levels
// pqarrow's path builder gives a flat column: none for a required field;
// for a nullable one 1 where a value is present and 0 where it is null, the
// leaf counting as nullable unless the batch holds no null.
func (e *groupEncoder) writeColumn(cw file.ColumnChunkWriter, c int, rec arrow.RecordBatch) error {
	arr := rec.Column(c)
	if arr.Len() == 0 {
		return nil
	}
	ctx := pqarrow.NewArrowWriteContext(context.Background(), &e.props)
	var def []int16
	leafNullable := false
	if e.fields[c].Nullable {
		if cap(e.def[c]) < arr.Len() {
			e.def[c] = make([]int16, arr.Len())
		}
		def = e.def[c][:arr.Len()]
		for i := range def {
			def[i] = 0
			if arr.IsValid(i) {
				def[i] = 1
			}
		}
		leafNullable = arr.NullN() > 0
	}
	return pqarrow.WriteArrowToColumn(ctx, cw, arr, def, nil, leafNullable)
}

// close waits for the queued row groups and writes the footer (closing the
// last row group). It does not close the underlying file.
func (e *groupEncoder) close() error {
	close(e.recs)
	<-e.done
	if e.err != nil {
		e.wr.Close() // already failed: the file is discarded, this only releases
		return e.err
	}
	if err := e.wr.Close(); err != nil {
		return fmt.Errorf("closing the Parquet footer: %w", err)
	}
	return nil
}
