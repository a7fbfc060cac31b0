package ingest

import (
	"fmt"
	"runtime"
	"unicode/utf8"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"

	"almanac/pipeline/calendar"
	"almanac/spec"
)

// parquetChunk is one record batch of a Parquet input, converted off the
// goroutine that builds the rows: times and values parsed, key values
// checked and normalised. It holds no Arrow memory.
type parquetChunk struct {
	n      int
	times  []calendar.RowTime
	values []float64
	errs   []string // the batch's time and value errors, in row order
	keys   []byte   // each row's normalised key values, joined by a 0 byte
	keyEnd []int32  // keys[keyEnd[i-1]:keyEnd[i]] is row i's key
	blanks int64    // empty key values in rows before badRow
	badRow int      // the first row whose key is not valid text, or n
	bad    error    // why
	panic  any      // a panic of the decoder or the conversion
}

// key is row i's joined key.
func (c *parquetChunk) key(i int) []byte {
	lo := int32(0)
	if i > 0 {
		lo = c.keyEnd[i-1]
	}
	return c.keys[lo:c.keyEnd[i]]
}

// parquetConverter decodes the record batches of a reader on a goroutine
// of its own and converts each (convertParquet) on a goroutine per batch,
// a few batches ahead of the caller, so that the one goroutine that builds
// the rows (key interning is in input order) does little else. Chunks come
// in the reader's order, whatever the number of cores.
type parquetConverter struct {
	out  chan chan *parquetChunk
	stop chan struct{}
	done chan struct{}
	err  error // the reader's error or the decoder's panic; read after done is closed
}

func convertBatches(rr array.RecordReader, conv func(rec arrow.RecordBatch, base int64) *parquetChunk) *parquetConverter {
	// Up to GOMAXPROCS batches convert at once; more would only hold memory.
	ahead := max(2, runtime.GOMAXPROCS(0))
	p := &parquetConverter{out: make(chan chan *parquetChunk, ahead), stop: make(chan struct{}), done: make(chan struct{})}
	go func() {
		defer close(p.done)
		defer close(p.out)
		defer func() {
			// The Parquet decoder can panic on some corrupt files; the
			// reader reports it as an unreadable file.
			if r := recover(); r != nil {
				p.err = fmt.Errorf("%v", r)
			}
		}()
		var base int64
		for rr.Next() {
			rec := rr.RecordBatch()
			rec.Retain()
			fut := make(chan *parquetChunk, 1)
			select {
			case p.out <- fut:
			case <-p.stop:
				rec.Release()
				return
			}
			go func(base int64) {
				defer rec.Release()
				fut <- safeConvert(conv, rec, base)
			}(base)
			base += rec.NumRows()
		}
		p.err = rr.Err()
	}()
	return p
}

func safeConvert(conv func(arrow.RecordBatch, int64) *parquetChunk, rec arrow.RecordBatch, base int64) (c *parquetChunk) {
	defer func() {
		if r := recover(); r != nil {
			c = &parquetChunk{panic: r}
		}
	}()
	return conv(rec, base)
}

// Next waits for the next converted batch; nil at the end.
func (p *parquetConverter) Next() *parquetChunk {
	fut, ok := <-p.out
	if !ok {
		return nil
	}
	return <-fut
}

// Err is the reader's error (or the decoder's panic), once Next has
// returned nil.
func (p *parquetConverter) Err() error {
	<-p.done
	return p.err
}

// Release stops the decoding and waits for the conversions under way.
func (p *parquetConverter) Release() {
	close(p.stop)
	for fut := range p.out {
		<-fut
	}
	<-p.done
}

// convertParquet converts one record batch, whose columns are the time,
// the value and the keys, starting at row base (0-based) of its file.
func convertParquet(rec arrow.RecordBatch, base int64, path string, s *spec.Spec, cal calendar.Calendar) *parquetChunk {
	n := int(rec.NumRows())
	c := &parquetChunk{n: n, badRow: n}
	var verr error
	c.times, c.errs = parquetPeriods(path, s.Columns.Time, rec.Column(0), cal, base)
	c.values, verr = parquetValues(path, s.Columns.Value, rec.Column(1), base)
	if verr != nil {
		c.errs = append(c.errs, verr.Error())
	}
	if len(c.errs) > 0 {
		return c
	}
	keyCols, kerr := parquetKeyColumns(path, s.Columns.Keys, rec)
	if kerr != nil {
		c.badRow, c.bad = 0, kerr
		return c
	}
	rule := s.Shaping.KeyVariants
	c.keyEnd = make([]int32, n)
	c.keys = make([]byte, 0, 16*n)
	// Rows of one series usually follow each other: a key value equal to
	// the row before's was checked and normalised already.
	prevRaw, prevNorm := make([]string, len(keyCols)), make([]string, len(keyCols))
	for i := 0; i < n; i++ {
		for j, kc := range keyCols {
			k, kerr := kc(i)
			if kerr != nil {
				c.badRow, c.bad = i, kerr
				return c
			}
			if j > 0 {
				c.keys = append(c.keys, 0)
			}
			if i > 0 && k == prevRaw[j] {
				if k == "" {
					c.blanks++
				}
				c.keys = append(c.keys, prevNorm[j]...)
				continue
			}
			if k == "" {
				c.blanks++
			} else if !utf8.ValidString(k) {
				c.badRow, c.bad = i, &DataError{Msgs: []string{fmt.Sprintf("%s: row %d: column %q: %q is not valid UTF-8; almanac reads text as UTF-8", path, base+int64(i)+1, s.Columns.Keys[j], k)}}
				return c
			} else if msg := keyCharError(k); msg != "" {
				c.badRow, c.bad = i, &DataError{Msgs: []string{fmt.Sprintf("%s: row %d: column %q: %s", path, base+int64(i)+1, s.Columns.Keys[j], msg)}}
				return c
			}
			prevRaw[j], prevNorm[j] = k, normaliseKey(rule, k)
			c.keys = append(c.keys, prevNorm[j]...)
		}
		c.keyEnd[i] = int32(len(c.keys))
	}
	return c
}
