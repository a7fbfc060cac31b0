package ingest

import (
	"bufio"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"time"

	"almanac/pipeline/runfolder"
)

// DefaultBatchRows is how many input rows a run holds in memory at once.
// Inputs with more rows are spilled to a temporary file while they are read,
// split by key range into batches of about this many rows, and processed one
// batch after another, so peak memory follows the batch size, not the panel.
// Output order does not change: batches are contiguous key ranges.
const DefaultBatchRows = 4 << 20

// spillRowBytes is the size of one spilled row: key id, file, period, value, line.
const spillRowBytes = 4 + 4 + 8 + 8 + 8

// spill holds rows on disk while the input is read.
type spill struct {
	dir     string
	lock    *os.File // held while the run lives (see RemoveStaleSpills)
	untrack func()
	f       *os.File
	w       *bufio.Writer
	rows    int64
	buf     [spillRowBytes]byte
}

func newSpill() (*spill, error) {
	dir, err := os.MkdirTemp("", spillPrefix)
	if err != nil {
		return nil, err
	}
	lock, err := runfolder.TakeLock(filepath.Join(dir, "lock"), false)
	if err != nil {
		os.RemoveAll(dir)
		return nil, err
	}
	f, err := os.Create(filepath.Join(dir, "rows"))
	if err != nil {
		lock.Close()
		os.RemoveAll(dir)
		return nil, err
	}
	return &spill{dir: dir, lock: lock, f: f, w: bufio.NewWriterSize(f, 1<<20), untrack: runfolder.TrackLive(dir)}, nil
}

func putRow(b []byte, key, file int32, period int64, value float64, line int64) {
	binary.LittleEndian.PutUint32(b[0:], uint32(key))
	binary.LittleEndian.PutUint32(b[4:], uint32(file))
	binary.LittleEndian.PutUint64(b[8:], uint64(period))
	binary.LittleEndian.PutUint64(b[16:], math.Float64bits(value))
	binary.LittleEndian.PutUint64(b[24:], uint64(line))
}

func getRow(b []byte) (key, file int32, period int64, value float64, line int64) {
	return int32(binary.LittleEndian.Uint32(b[0:])), int32(binary.LittleEndian.Uint32(b[4:])),
		int64(binary.LittleEndian.Uint64(b[8:])), math.Float64frombits(binary.LittleEndian.Uint64(b[16:])),
		int64(binary.LittleEndian.Uint64(b[24:]))
}

func (s *spill) add(key int32, period int64, value float64, file int32, line int64) error {
	putRow(s.buf[:], key, file, period, value, line)
	s.rows++
	_, err := s.w.Write(s.buf[:])
	return err
}

func (s *spill) close() {
	if s != nil {
		s.f.Close()
		os.RemoveAll(s.dir)
		s.lock.Close()
		s.untrack()
	}
}

// Batches yields the series of a run batch by batch, in key order.
type Batches[S any] struct {
	rs      *Rows // the rows (in memory) or the key index (when spilled)
	files   []string
	bounds  []int // sorted-key rank where each batch starts; len = batches+1
	cached  []S
	shapeFn func(*Rows) ([]S, error)
}

// batches is the number of batches.
func (b *Batches[S]) Count() int { return len(b.bounds) - 1 }

// newBatchSource prepares the batches. In memory (nothing spilled) there is
// one batch. Spilled rows are partitioned into one file per batch by key
// range, in one sequential pass over the spill file.
func NewBatches[S any](rs *Rows, batchRows int64, shape func(*Rows) ([]S, error)) (*Batches[S], error) {
	b := &Batches[S]{rs: rs, shapeFn: shape}
	nk := len(rs.Keys)
	if rs.spill == nil {
		b.bounds = []int{0, nk}
		return b, nil
	}
	sp := rs.spill
	if err := sp.w.Flush(); err != nil {
		return nil, err
	}
	order := make([]int32, nk)
	for i := range order {
		order[i] = int32(i)
	}
	slices.SortFunc(order, func(a, c int32) int { return CompareKeys(rs.Keys[a], rs.Keys[c]) })
	batchOf := make([]int32, nk)
	b.bounds = []int{0}
	var acc int64
	for rank, id := range order {
		if acc > 0 && acc+rs.keyRows[id] > batchRows {
			b.bounds = append(b.bounds, rank)
			acc = 0
		}
		acc += rs.keyRows[id]
		batchOf[id] = int32(len(b.bounds) - 1)
	}
	b.bounds = append(b.bounds, nk)
	rs.order = order

	// Partition the spill file.
	nb := b.Count()
	writers := make([]*bufio.Writer, nb)
	handles := make([]*os.File, nb)
	for i := range writers {
		p := filepath.Join(sp.dir, fmt.Sprintf("batch-%05d", i))
		f, err := os.Create(p)
		if err != nil {
			return nil, err
		}
		handles[i], writers[i] = f, bufio.NewWriterSize(f, 64<<10)
		b.files = append(b.files, p)
	}
	if _, err := sp.f.Seek(0, io.SeekStart); err != nil {
		return nil, err
	}
	r := bufio.NewReaderSize(sp.f, 1<<20)
	var row [spillRowBytes]byte
	for {
		if _, err := io.ReadFull(r, row[:]); err == io.EOF {
			break
		} else if err != nil {
			return nil, fmt.Errorf("reading spilled rows: %w", err)
		}
		key := int32(binary.LittleEndian.Uint32(row[0:]))
		if _, err := writers[batchOf[key]].Write(row[:]); err != nil {
			return nil, err
		}
	}
	for i, w := range writers {
		if err := w.Flush(); err != nil {
			return nil, err
		}
		handles[i].Close()
	}
	// The undivided spill is no longer needed.
	sp.f.Close()
	os.Remove(filepath.Join(sp.dir, "rows"))
	return b, nil
}

// series returns batch i's series, shaped. The single in-memory batch is
// shaped once and kept; spilled batches are read back and shaped on each call.
func (b *Batches[S]) Batch(i int) ([]S, error) {
	if b.files == nil {
		if b.cached == nil {
			s, err := b.shapeFn(b.rs)
			if err != nil {
				return nil, err
			}
			b.cached = s
		}
		return b.cached, nil
	}
	rs, err := b.load(i)
	if err != nil {
		return nil, err
	}
	return b.shapeFn(rs)
}

// load reads batch i's rows into a row set of its own, with the batch's keys
// renumbered from 0.
func (b *Batches[S]) load(i int) (*Rows, error) {
	g := b.rs
	lo, hi := b.bounds[i], b.bounds[i+1]
	local := make(map[int32]int32, hi-lo)
	rs := &Rows{files_: g.files_}
	for rank := lo; rank < hi; rank++ {
		id := g.order[rank]
		local[id] = int32(len(rs.Keys))
		rs.Keys = append(rs.Keys, g.Keys[id])
	}
	f, err := os.Open(b.files[i])
	if err != nil {
		return nil, err
	}
	defer f.Close()
	st, _ := f.Stat()
	n := int(st.Size() / spillRowBytes)
	rs.KeyIDs, rs.Periods, rs.Values = make([]int32, 0, n), make([]int64, 0, n), make([]float64, 0, n)
	r := bufio.NewReaderSize(f, 1<<20)
	var row [spillRowBytes]byte
	for {
		if _, err := io.ReadFull(r, row[:]); err == io.EOF {
			break
		} else if err != nil {
			return nil, fmt.Errorf("reading batch %d: %w", i, err)
		}
		key, file, period, value, line := getRow(row[:])
		rs.KeyIDs = append(rs.KeyIDs, local[key])
		rs.Periods = append(rs.Periods, period)
		rs.origin.add(len(rs.Values), file, line)
		rs.Values = append(rs.Values, value)
	}
	rs.PanelLast = g.PanelLast
	rs.Times = g.Times
	return rs, nil
}

func (b *Batches[S]) Close() {
	if b != nil && b.rs != nil {
		b.rs.Close()
	}
}

// Close removes the spilled rows, if any.
func (r *Rows) Close() { r.spill.close() }

// spillPrefix names spill folders in the temporary directory.
const spillPrefix = "almanac-spill-"

// RemoveStaleSpills removes the spill folders of runs that have died: a
// live run holds the lock file inside its spill folder. Folders of older
// versions (no lock file) are removed once a day old.
func RemoveStaleSpills() {
	dirs, _ := filepath.Glob(filepath.Join(os.TempDir(), spillPrefix+"*"))
	for _, d := range dirs {
		lock := filepath.Join(d, "lock")
		if _, err := os.Stat(lock); errors.Is(err, os.ErrNotExist) {
			if st, err := os.Stat(d); err == nil && st.IsDir() && time.Since(st.ModTime()) > 24*time.Hour {
				os.RemoveAll(d)
			}
			continue
		}
		f, err := runfolder.TakeLock(lock, false)
		if err != nil {
			continue // alive
		}
		os.RemoveAll(d)
		f.Close()
	}
}
