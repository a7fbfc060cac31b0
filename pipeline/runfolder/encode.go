package runfolder

import (
	"bytes"
	"context"
	"encoding/base64"
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

// groupEncoder writes the row groups of one table in order, on a goroutine
// of its own, and encodes the columns of each row group in parallel: one
// goroutine per column, each feeding only its own column-chunk writer of a
// buffered row group. A column chunk's bytes depend only on the values and
// the sequence of writes into it, which is the same at any worker count, so
// the file is byte-identical to one written column after column.
//
// The calls reproduce what pqarrow.FileWriter.WriteBuffered does for flat
// columns (the same schema conversion, key-value metadata, definition
// levels and write boundaries: every record batch is written whole into
// the current row group), which the table-hash pins check.
type groupEncoder struct {
	wr     *file.Writer
	fields []arrow.Field
	props  pqarrow.ArrowWriterProperties
	groups chan []arrow.RecordBatch
	done   chan struct{}
	err    error // set by the goroutine; read after done is closed
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
	e := &groupEncoder{wr: wr, fields: sch.Fields(), props: arrProps,
		groups: make(chan []arrow.RecordBatch, 1), done: make(chan struct{})}
	go e.loop()
	return e, nil
}

// loop writes the row groups as they come; after the first error it only
// releases them.
func (e *groupEncoder) loop() {
	defer close(e.done)
	for recs := range e.groups {
		if e.err == nil {
			e.err = e.writeGroup(recs)
		}
		for _, r := range recs {
			r.Release()
		}
	}
}

// write queues one row group (its record batches, in order); it blocks
// while another waits. The encoder takes over the records.
func (e *groupEncoder) write(recs []arrow.RecordBatch) { e.groups <- recs }

// writeGroup appends a buffered row group (closing the previous one) and
// encodes its columns in parallel.
func (e *groupEncoder) writeGroup(recs []arrow.RecordBatch) error {
	rgw, err := e.wr.AppendBufferedRowGroupChecked()
	if err != nil {
		return err
	}
	errs := make([]error, len(e.fields))
	var wg sync.WaitGroup
	for c := range e.fields {
		cw, err := rgw.Column(c)
		if err != nil {
			return err
		}
		wg.Add(1)
		go func() {
			defer wg.Done()
			errs[c] = e.writeColumn(cw, c, recs)
		}()
	}
	wg.Wait()
	for _, err := range errs {
		if err != nil {
			return err
		}
	}
	return nil
}

// writeColumn writes column c of every record into cw, with the definition
// levels pqarrow's path builder gives a flat column: none for a required
// field; for a nullable one 1 where a value is present and 0 where it is
// null, the leaf counting as nullable unless the batch holds no null.
func (e *groupEncoder) writeColumn(cw file.ColumnChunkWriter, c int, recs []arrow.RecordBatch) error {
	ctx := pqarrow.NewArrowWriteContext(context.Background(), &e.props)
	nullable := e.fields[c].Nullable
	for _, rec := range recs {
		arr := rec.Column(c)
		if arr.Len() == 0 {
			continue
		}
		var def []int16
		leafNullable := false
		if nullable {
			def = make([]int16, arr.Len())
			for i := range def {
				if arr.IsValid(i) {
					def[i] = 1
				}
			}
			leafNullable = arr.NullN() > 0
		}
		if err := pqarrow.WriteArrowToColumn(ctx, cw, arr, def, nil, leafNullable); err != nil {
			return err
		}
	}
	return nil
}

// close waits for the queued row groups and writes the footer (closing the
// last row group). It does not close the underlying file.
func (e *groupEncoder) close() error {
	close(e.groups)
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
