package runfolder

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// encodeCols are the fixed columns of the comparison table: every kind,
// nullable and not.
var encodeCols = []Column{{"method", colString, false}, {"model", colString, true}, {"period", colDate, false},
	{"step", colInt, false}, {"value", colFloat, true}, {"chosen", colBool, false}}

// encodeValue is row i's value of the "value" column: NaN (NULL) every
// seventh row, and in the whole second batch, so that one batch of a row
// group is all NULL.
func encodeValue(i int) float64 {
	if i%7 == 3 || (i >= flushRows && i < 2*flushRows) {
		return math.NaN()
	}
	return float64(i) * 0.25
}

// The parallel encoder writes the bytes pqarrow's FileWriter.WriteBuffered
// writes for the same batches: across row groups, with NULLs, an all-NULL
// batch, a batch without NULLs, and for an empty table.
func TestParallelEncodingMatchesWriteBuffered(t *testing.T) {
	for _, rows := range []int{0, 5, 5*flushRows + 17} {
		t.Run(fmt.Sprint(rows), func(t *testing.T) {
			dir := t.TempDir()
			keys := []string{"region", "item"}
			meta := map[string]string{"almanac.b": "2", "almanac.a": "1"}
			mem := memory.DefaultAllocator
			tw, err := NewTableWriter(dir, "t", keys, encodeCols, meta, mem)
			if err != nil {
				t.Fatal(err)
			}
			for i := 0; i < rows; i++ {
				tw.Key([]string{fmt.Sprintf("R%d", i%3), fmt.Sprintf("I%04d", i/50)})
				tw.Str(0, []string{"naive", "drift"}[i%2])
				tw.StrOrNull(1, []string{"", "ETS(A,N,N)", "x"}[i%3])
				tw.Date(2, int64(19000+i%400))
				tw.Int32(3, i%13)
				tw.Float(4, encodeValue(i))
				tw.Boolean(5, i%5 == 0)
				if err := tw.EndRow(); err != nil {
					t.Fatal(err)
				}
			}
			if err := tw.Close(); err != nil {
				t.Fatal(err)
			}
			got, err := os.ReadFile(filepath.Join(dir, "t.parquet"))
			if err != nil {
				t.Fatal(err)
			}
			want := writeBufferedReference(t, keys, meta, rows)
			if !bytes.Equal(got, want) {
				t.Fatalf("%d rows: parallel encoding wrote %d bytes, WriteBuffered %d; they differ", rows, len(got), len(want))
			}
			if sum := tw.SHA256(); sum != hashBytes(want) || tw.Size() != int64(len(want)) {
				t.Errorf("SHA256/Size %s/%d, file %s/%d", sum, tw.Size(), hashBytes(want), len(want))
			}
		})
	}
}

// writeBufferedReference writes the same rows with pqarrow's FileWriter,
// batch by batch, as the table writer did before it encoded in parallel.
func writeBufferedReference(t *testing.T, keys []string, meta map[string]string, rows int) []byte {
	t.Helper()
	sch := tableSchema(keys, encodeCols)
	var ks, vs []string
	for _, k := range sortedKeys(meta) {
		ks, vs = append(ks, k), append(vs, meta[k])
	}
	md := arrow.NewMetadata(ks, vs)
	sch = arrow.NewSchema(sch.Fields(), &md)
	var buf bytes.Buffer
	mem := memory.DefaultAllocator
	fw, err := pqarrow.NewFileWriter(sch, &buf, writerProps(sch), pqarrow.NewArrowWriterProperties(pqarrow.WithStoreSchema(), pqarrow.WithAllocator(mem)))
	if err != nil {
		t.Fatal(err)
	}
	rb := array.NewRecordBuilder(mem, sch)
	defer rb.Release()
	flush := func() {
		rec := rb.NewRecordBatch()
		defer rec.Release()
		if err := fw.WriteBuffered(rec); err != nil {
			t.Fatal(err)
		}
	}
	n := 0
	for i := 0; i < rows; i++ {
		rb.Field(0).(*array.StringBuilder).Append(fmt.Sprintf("R%d", i%3))
		rb.Field(1).(*array.StringBuilder).Append(fmt.Sprintf("I%04d", i/50))
		rb.Field(2).(*array.StringBuilder).Append([]string{"naive", "drift"}[i%2])
		if m := []string{"", "ETS(A,N,N)", "x"}[i%3]; m == "" {
			rb.Field(3).(*array.StringBuilder).AppendNull()
		} else {
			rb.Field(3).(*array.StringBuilder).Append(m)
		}
		rb.Field(4).(*array.Date32Builder).Append(arrow.Date32(19000 + i%400))
		rb.Field(5).(*array.Int32Builder).Append(int32(i % 13))
		if v := encodeValue(i); math.IsNaN(v) {
			rb.Field(6).(*array.Float64Builder).AppendNull()
		} else {
			rb.Field(6).(*array.Float64Builder).Append(v)
		}
		rb.Field(7).(*array.BooleanBuilder).Append(i%5 == 0)
		if n++; n == flushRows {
			flush()
			n = 0
		}
	}
	if n > 0 {
		flush()
	}
	if err := fw.Close(); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}

func hashBytes(b []byte) string {
	h := sha256.Sum256(b)
	return hex.EncodeToString(h[:])
}
