// Package ingesttest writes input files for tests of reading: the ingest
// package's own and the command's end-to-end tests.
package ingesttest

import (
	"os"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// WriteParquet writes one record batch of n rows of the given columns,
// each row built by fill, to a new Parquet file at path (the library's
// default writer properties).
func WriteParquet(t testing.TB, path string, fields []arrow.Field, n int, fill func(b *array.RecordBuilder, i int)) {
	t.Helper()
	sch := arrow.NewSchema(fields, nil)
	b := array.NewRecordBuilder(memory.DefaultAllocator, sch)
	defer b.Release()
	for i := 0; i < n; i++ {
		fill(b, i)
	}
	rec := b.NewRecordBatch()
	defer rec.Release()
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	w, err := pqarrow.NewFileWriter(sch, f, parquet.NewWriterProperties(), pqarrow.DefaultWriterProps())
	if err != nil {
		t.Fatal(err)
	}
	if err := w.Write(rec); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
}
