package pipeline

import (
	"context"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"runtime/metrics"
	"strings"
	"sync"
	"testing"
	"time"
)

// writePanel writes n monthly series of 48 periods as CSV.
func writePanel(t *testing.T, dir string, n int) {
	t.Helper()
	var b strings.Builder
	b.WriteString("month,store,item,qty\n")
	for k := 0; k < n; k++ {
		for i := 0; i < 48; i++ {
			v := 80 + float64(k%23) + float64(i) + 25*math.Sin(2*math.Pi*float64(i%12)/12+float64(k%7))
			fmt.Fprintf(&b, "%04d-%02d,S%05d,I%d,%.2f\n", 2020+i/12, i%12+1, k, k%3, v)
		}
	}
	os.MkdirAll(filepath.Join(dir, "data"), 0o755)
	os.WriteFile(filepath.Join(dir, "data", "sales.csv"), []byte(b.String()), 0o644)
}

// peakHeap runs f while sampling the heap that the last garbage collection
// found live (/gc/heap/live:bytes) and returns the largest value seen.
func peakHeap(f func()) uint64 {
	runtime.GC()
	sample := []metrics.Sample{{Name: "/gc/heap/live:bytes"}}
	var peak uint64
	var mu sync.Mutex
	done := make(chan struct{})
	var wg sync.WaitGroup
	wg.Add(1)
	go func() {
		defer wg.Done()
		for {
			metrics.Read(sample)
			mu.Lock()
			peak = max(peak, sample[0].Value.Uint64())
			mu.Unlock()
			select {
			case <-done:
				return
			case <-time.After(200 * time.Microsecond):
			}
		}
	}()
	f()
	close(done)
	wg.Wait()
	return peak
}

// Peak memory follows the batch, not the panel: with the same batch size,
// a panel four times larger peaks within 1.5× the heap of the smaller one
// (what does grow is the key index and a few numbers per series). Without
// batching the larger panel's peak grows with it.
func TestBoundedMemory(t *testing.T) {
	if testing.Short() || raceEnabled {
		t.Skip("memory test: skipped in -short and -race runs (the race detector changes memory use)")
	}
	run := func(n int, batchRows int64) uint64 {
		dir := t.TempDir()
		writePanel(t, dir, n)
		s := loadFixture(t, dir, backtestSpec)
		return peakHeap(func() {
			if _, err := Run(context.Background(), s, Options{Workers: 2, BatchRows: batchRows}); err != nil {
				t.Fatal(err)
			}
		})
	}
	// Both panels are large enough to fill the fixed per-table write
	// buffers (flushRows), which a tiny panel never reaches.
	const batch = 20_000 // rows: about 400 series
	small, large := run(6000, batch), run(24000, batch)
	t.Logf("peak live heap with %d-row batches: 6,000 series %.1f MiB, 24,000 series %.1f MiB (×%.2f)",
		batch, float64(small)/(1<<20), float64(large)/(1<<20), float64(large)/float64(small))
	if float64(large) > 1.5*float64(small) {
		t.Errorf("peak heap grew ×%.2f for a 4× panel; want at most ×1.5", float64(large)/float64(small))
	}
	whole := run(24000, 0)
	t.Logf("without batching (all 1,152,000 rows in memory): 24,000 series %.1f MiB", float64(whole)/(1<<20))
}
