package runfolder

import (
	"testing"

	"github.com/apache/arrow-go/v18/arrow/memory"
)

func TestRecyclerReusesClearedBuffers(t *testing.T) {
	mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
	r := newRecycler(mem)
	b := r.Allocate(5000)
	if len(b) != 5000 || cap(b) != 8192 {
		t.Fatalf("len %d cap %d, want 5000 and 8192", len(b), cap(b))
	}
	for i := range b {
		b[i] = 7
	}
	r.Free(b)
	c := r.Allocate(6000)
	if &c[0] != &b[0] {
		t.Error("a freed buffer of the same size class was not reused")
	}
	for i, v := range c[:cap(c)] {
		if v != 0 {
			t.Fatalf("reused buffer not cleared at %d: %d", i, v)
		}
	}
	// Growing past the class moves to the next one, keeping the bytes.
	c[0] = 3
	d := r.Reallocate(9000, c)
	if len(d) != 9000 || cap(d) != 16384 || d[0] != 3 {
		t.Errorf("reallocate: len %d cap %d first %d", len(d), cap(d), d[0])
	}
	// Small buffers are mem's own, reallocated by mem while they stay small.
	s := r.Allocate(100)
	s = r.Reallocate(200, s)
	if len(s) != 200 {
		t.Errorf("small reallocate: len %d", len(s))
	}
	s = r.Reallocate(5000, s)
	r.Free(s)
	r.Free(d)
	if mem.CurrentAlloc() == 0 {
		t.Error("kept buffers should still be held from mem before release")
	}
	r.release()
	mem.AssertSize(t, 0)
}
