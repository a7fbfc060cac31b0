package ingest

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/csv"
	"encoding/hex"
	"fmt"
	"io"
	"os"
	"runtime"
	"strings"
	"unicode/utf8"

	"almanac/pipeline/calendar"
	"almanac/pipeline/runfolder"
	"almanac/spec"
)

// csvChunkRows is how many CSV records travel together from the goroutine
// that reads the file to one that converts them.
const csvChunkRows = 4096

// csvRecord is what a record of a CSV input carries to its conversion:
// the time, value and key fields and the lines they start on.
type csvRecord struct {
	line, vline int
	header      bool // the record repeats the header line
	tv, vv      string
	keys        []string
	klines      []int
}

// csvChunk is a run of records read in order, and once converted, each
// one's time, value, joined normalised key and error messages.
type csvChunk struct {
	recs     []csvRecord
	parseErr error // the CSV reader's error after the last record
	ctxErr   error
	panic    any
	estRows  int64 // on the first chunk: the file's records, guessed from its size

	times  []calendar.RowTime
	values []float64
	terr   []string
	verr   []string
	kerrs  [][]string
	blanks []int32
	keys   []byte
	keyEnd []int32
}

func (c *csvChunk) key(i int) []byte {
	lo := int32(0)
	if i > 0 {
		lo = c.keyEnd[i-1]
	}
	return c.keys[lo:c.keyEnd[i]]
}

// convert parses the chunk's times and values and checks and normalises
// its keys, with the messages readCSV reports for them.
func (c *csvChunk) convert(s *spec.Spec, path string, cal calendar.Calendar) {
	n := len(c.recs)
	c.times, c.values = make([]calendar.RowTime, n), make([]float64, n)
	c.terr, c.verr, c.kerrs = make([]string, n), make([]string, n), make([][]string, n)
	c.blanks, c.keyEnd = make([]int32, n), make([]int32, n)
	c.keys = make([]byte, 0, 16*n)
	rule := s.Shaping.KeyVariants
	nk := len(s.Columns.Keys)
	// Records of one series usually follow each other: a key value equal
	// to the last one of its column that passed the checks needs neither
	// the checks nor normalising again ("" passes and stays "").
	prevRaw, prevNorm := make([]string, nk), make([]string, nk)
	for i := range c.recs {
		r := &c.recs[i]
		if !r.header {
			rt, terr := cal.ParseSpan(strings.TrimSpace(r.tv))
			c.times[i] = rt
			if terr != nil {
				c.terr[i] = fmt.Sprintf("%s:%d: column %q: %v", path, r.line, s.Columns.Time, terr)
			}
			v, verr := parseValue(r.vv)
			c.values[i] = v
			if verr != nil {
				c.verr[i] = fmt.Sprintf("%s:%d: column %q: %v", path, r.vline, s.Columns.Value, verr)
			}
			if terr == nil && verr == nil {
				for j, k := range r.keys {
					if j > 0 {
						c.keys = append(c.keys, 0)
					}
					if k == "" {
						c.blanks[i]++
					}
					if k == prevRaw[j] {
						c.keys = append(c.keys, prevNorm[j]...)
						continue
					}
					norm := normaliseKey(rule, k)
					c.keys = append(c.keys, norm...)
					if !utf8.ValidString(k) {
						c.kerrs[i] = append(c.kerrs[i], fmt.Sprintf("%s:%d: column %q: %q is not valid UTF-8; almanac reads text as UTF-8 (re-export the file as UTF-8)", path, r.klines[j], s.Columns.Keys[j], k))
					} else if msg := keyCharError(k); msg != "" {
						c.kerrs[i] = append(c.kerrs[i], fmt.Sprintf("%s:%d: column %q: %s", path, r.klines[j], s.Columns.Keys[j], msg))
					} else {
						prevRaw[j], prevNorm[j] = k, norm
					}
				}
			}
		}
		c.keyEnd[i] = int32(len(c.keys))
	}
}

// csvReader reads a CSV file's records on a goroutine of its own and
// converts them in chunks on further goroutines, a few chunks ahead of the
// caller; chunks come in file order.
type csvReader struct {
	out  chan chan *csvChunk
	stop chan struct{}
	done chan struct{}
	rows int64 // records read; valid after done is closed
}

func readCSVChunks(ctx context.Context, cr *csv.Reader, size int64, header []string, idx []int, path string, s *spec.Spec, cal calendar.Calendar) *csvReader {
	ahead := max(2, runtime.GOMAXPROCS(0))
	p := &csvReader{out: make(chan chan *csvChunk, ahead), stop: make(chan struct{}), done: make(chan struct{})}
	timeIdx, valueIdx, keyIdx := idx[0], idx[1], idx[2:]
	nk := len(keyIdx)
	go func() {
		defer close(p.done)
		defer close(p.out)
		send := func(c *csvChunk) bool {
			fut := make(chan *csvChunk, 1)
			select {
			case p.out <- fut:
			case <-p.stop:
				return false
			}
			go func() {
				defer func() {
					if r := recover(); r != nil {
						c.panic = r
					}
					fut <- c
				}()
				c.convert(s, path, cal)
			}()
			return true
		}
		newChunk := func() (*csvChunk, []string, []int) {
			return &csvChunk{recs: make([]csvRecord, 0, csvChunkRows)}, make([]string, 0, csvChunkRows*nk), make([]int, 0, csvChunkRows*nk)
		}
		c, keys, klines := newChunk()
		for {
			rec, err := cr.Read()
			if err == io.EOF {
				break
			}
			if err != nil {
				c.parseErr = csvError(path, err)
				break
			}
			p.rows++
			if p.rows%ctxEvery == 0 {
				if err := ctx.Err(); err != nil {
					c.ctxErr = err
					break
				}
			}
			// The record's strings are its own (ReuseRecord reuses only
			// the slice), so they may be kept.
			line, _ := cr.FieldPos(timeIdx)
			r := csvRecord{line: line}
			if sameFields(rec, header) {
				r.header = true
			} else {
				r.tv, r.vv = rec[timeIdx], rec[valueIdx]
				r.vline, _ = cr.FieldPos(valueIdx)
				for _, k := range keyIdx {
					kl, _ := cr.FieldPos(k)
					keys, klines = append(keys, rec[k]), append(klines, kl)
				}
				r.keys, r.klines = keys[len(keys)-nk:len(keys):len(keys)], klines[len(klines)-nk:len(klines):len(klines)]
			}
			c.recs = append(c.recs, r)
			if len(c.recs) == csvChunkRows {
				if p.rows == csvChunkRows && size > 0 {
					if per := float64(cr.InputOffset()) / csvChunkRows; per > 0 {
						c.estRows = int64(1.02*float64(size)/per) + 1
					}
				}
				if !send(c) {
					return
				}
				c, keys, klines = newChunk()
			}
		}
		send(c)
	}()
	return p
}

// Next waits for the next converted chunk; nil at the end.
func (p *csvReader) Next() *csvChunk {
	fut, ok := <-p.out
	if !ok {
		return nil
	}
	return <-fut
}

// Release stops the reading and waits for the conversions under way.
func (p *csvReader) Release() {
	select {
	case <-p.stop:
	default:
		close(p.stop)
	}
	for fut := range p.out {
		<-fut
	}
	<-p.done
}

func readCSV(ctx context.Context, s *spec.Spec, f *InputFile, fileIdx int32, src spec.Source, cal calendar.Calendar, rs *Rows) error {
	fh, err := os.Open(f.Abs)
	if err != nil {
		return fmt.Errorf("%s: %v", f.Path, err)
	}
	defer fh.Close()
	hr := &hashingReader{r: fh, h: sha256.New()}
	cr := csv.NewReader(hr)
	cr.ReuseRecord = true
	cr.FieldsPerRecord = 0
	if src.Delimiter != "" {
		cr.Comma, _ = utf8.DecodeRuneInString(src.Delimiter)
	}
	header, err := readHeader(cr, f.Path, s)
	if err != nil {
		return err
	}
	idx, err := columnIndexes(f.Path, header, s)
	if err != nil {
		return err
	}
	pr := readCSVChunks(ctx, cr, f.Size, header, idx, f.Path, s, cal)
	defer pr.Release()
	nk := len(s.Columns.Keys)
	var errs []string
	var prev []byte
	var prevID int32
	for c := pr.Next(); c != nil; c = pr.Next() {
		if c.panic != nil {
			panic(c.panic)
		}
		// Room for the file's rows at once (up to the batch size), rather
		// than growing the columns by copying.
		rs.reserve(c.estRows)
		if stop := addCSVChunk(c, f.Path, fileIdx, cal, rs, nk, &errs, &prev, &prevID); stop {
			break
		}
		if c.ctxErr != nil {
			return c.ctxErr
		}
		if c.parseErr != nil {
			errs = append(errs, c.parseErr.Error())
			break
		}
	}
	if len(errs) > 0 {
		return &DataError{Msgs: errs}
	}
	pr.Release() // the reader has reached the end; wait for it
	// Drain what the csv reader did not consume so the hash covers the file.
	if _, err := io.Copy(io.Discard, hr); err != nil {
		return fmt.Errorf("%s: %v", f.Path, err)
	}
	f.Rows = pr.rows
	f.SHA256 = hex.EncodeToString(hr.h.Sum(nil))
	if pr.rows == 0 {
		rs.Notes = append(rs.Notes, runfolder.Problem{Stage: "read", Severity: "warning", Code: runfolder.CodeNoRows,
			Message: fmt.Sprintf("%s has a header line but no rows", f.Path)})
	}
	return nil
}

// addCSVChunk adds a converted chunk's rows in order, collecting its
// errors as a record-by-record read would: a repeated header, time and
// value errors (up to MaxDataErrors), then key errors. It reports whether
// reading must stop.
func addCSVChunk(c *csvChunk, path string, fileIdx int32, cal calendar.Calendar, rs *Rows, nk int, errs *[]string, prev *[]byte, prevID *int32) bool {
	for i := range c.recs {
		r := &c.recs[i]
		if r.header {
			*errs = append(*errs, fmt.Sprintf("%s:%d: this line repeats the header; two exports were probably joined — remove the extra header line", path, r.line))
			if len(*errs) >= MaxDataErrors {
				return true
			}
			continue
		}
		if c.terr[i] != "" {
			*errs = append(*errs, c.terr[i])
		}
		if c.verr[i] != "" {
			*errs = append(*errs, c.verr[i])
		}
		if len(*errs) >= MaxDataErrors {
			*errs = append(*errs, fmt.Sprintf("%s: stopped after %d errors", path, MaxDataErrors))
			return true
		}
		if c.terr[i] != "" || c.verr[i] != "" {
			continue
		}
		rs.KeyBlanks += int64(c.blanks[i])
		if len(c.kerrs[i]) > 0 {
			*errs = append(*errs, c.kerrs[i]...)
			if len(*errs) >= MaxDataErrors {
				return true
			}
			continue
		}
		if !rs.Times.observe(cal, c.times[i], fileIdx, int64(r.line)) {
			continue
		}
		k := c.key(i)
		if *prev == nil || !bytes.Equal(k, *prev) {
			*prev, *prevID = k, rs.internJoined(k, nk)
		}
		rs.add(*prevID, c.times[i].Period, c.values[i], fileIdx, int64(r.line))
	}
	return false
}
