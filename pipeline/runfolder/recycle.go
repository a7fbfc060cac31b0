package runfolder

import (
	"math/bits"
	"sync"

	"github.com/apache/arrow-go/v18/arrow/memory"
)

// recycler is the memory.Allocator of a table's record builder: it keeps
// the buffers of the record batches the encoder has released and hands
// them to the builder for the next batch, instead of allocating every
// batch's columns afresh (about 0.9 GB of a 20,000-series run, each new
// block cleared by the runtime and first touched by page faults, which two
// workers pay for at once). Buffers of at least recycleMin bytes are
// rounded up to a power of two and kept in a free list per size, at most
// recycleKeep per size; smaller ones, and any beyond the limit, go to and
// from mem. Reused memory is cleared, as a new block from mem is, so what
// the builders see is the same. free gives every kept buffer back to mem
// (the table's Close and Abort call it once nothing holds a batch).
type recycler struct {
	mem  memory.Allocator
	mu   sync.Mutex
	free [64][][]byte // by log2 of the size
}

const (
	recycleMin  = 4 << 10
	recycleKeep = 16
)

func newRecycler(mem memory.Allocator) *recycler { return &recycler{mem: mem} }

// class is log2 of the power of two that holds size bytes.
func recycleClass(size int) int { return bits.Len(uint(size - 1)) }

func (r *recycler) Allocate(size int) []byte {
	if size < recycleMin {
		return r.mem.Allocate(size)
	}
	c := recycleClass(size)
	r.mu.Lock()
	if k := len(r.free[c]); k > 0 {
		b := r.free[c][k-1]
		r.free[c][k-1] = nil
		r.free[c] = r.free[c][:k-1]
		r.mu.Unlock()
		clear(b)
		return b[:size]
	}
	r.mu.Unlock()
	return r.mem.Allocate(1 << c)[:size]
}

// ours tells the buffers this recycler allocated: a power-of-two capacity
// of at least recycleMin (mem's own hold exactly the size asked, below
// recycleMin).
func ours(b []byte) bool { c := cap(b); return c >= recycleMin && c&(c-1) == 0 }

func (r *recycler) Reallocate(size int, b []byte) []byte {
	switch {
	case ours(b) && cap(b) >= size:
		return b[:size]
	case !ours(b) && size < recycleMin:
		return r.mem.Reallocate(size, b)
	}
	nb := r.Allocate(size)
	copy(nb, b)
	r.Free(b)
	return nb
}

func (r *recycler) Free(b []byte) {
	if !ours(b) {
		r.mem.Free(b)
		return
	}
	b = b[:cap(b)]
	c := recycleClass(len(b))
	r.mu.Lock()
	if len(r.free[c]) < recycleKeep {
		r.free[c] = append(r.free[c], b)
		b = nil
	}
	r.mu.Unlock()
	if b != nil {
		r.mem.Free(b)
	}
}

// release gives the kept buffers back to mem.
func (r *recycler) release() {
	r.mu.Lock()
	defer r.mu.Unlock()
	for c, list := range r.free {
		for _, b := range list {
			r.mem.Free(b)
		}
		r.free[c] = nil
	}
}

var _ memory.Allocator = (*recycler)(nil)
