package pipeline

import (
	"context"
	"fmt"
	"sync"
	"sync/atomic"
)

// poolChunk is the most series a worker takes at a time. Taking a run of
// series instead of one cuts the hand-overs between goroutines (each wakes
// a goroutine, often on the other core) from several per series to several
// per chunk: with one series at a time, a 20,000-series run left a core
// idle for a few hundred milliseconds per pass in those hand-overs.
const poolChunk = 16

// forEachOrdered runs work(i) for i in [0, n) on the given number of
// goroutines and calls emit(i, result) in index order from the calling
// goroutine. Workers take consecutive runs of indexes (chunks); at most
// 4 × workers chunks wait to be emitted, so memory stays bounded however
// large n is.
func forEachOrdered[R any](ctx context.Context, n, workers int, work func(int) R, emit func(int, R) error) error {
	if n == 0 {
		return nil
	}
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	// Smaller chunks for small n, so that every worker gets a share.
	size := min(poolChunk, max(1, n/(workers*64)))
	chunks := (n + size - 1) / size
	window := workers * 4
	tokens := make(chan struct{}, window)
	type done struct {
		c  int
		rs []R
	}
	results := make(chan done, window)
	var next atomic.Int64
	var wg sync.WaitGroup
	for k := 0; k < workers; k++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for {
				select {
				case tokens <- struct{}{}:
				case <-ctx.Done():
					return
				}
				c := int(next.Add(1) - 1)
				if c >= chunks {
					return
				}
				lo, hi := c*size, min(n, (c+1)*size)
				rs := make([]R, hi-lo)
				for i := range rs {
					if ctx.Err() != nil {
						return
					}
					rs[i] = work(lo + i)
				}
				results <- done{c, rs}
			}
		}()
	}
	go func() { wg.Wait(); close(results) }()
	pending := make(map[int][]R, window)
	nextChunk, emitted := 0, 0
	var err error
	for d := range results {
		if err != nil {
			continue // drain
		}
		pending[d.c] = d.rs
		for err == nil {
			rs, ok := pending[nextChunk]
			if !ok {
				break
			}
			delete(pending, nextChunk)
			for j, r := range rs {
				if e := emit(nextChunk*size+j, r); e != nil {
					err = e
					cancel()
					break
				}
				emitted++
			}
			nextChunk++
			<-tokens
		}
	}
	if err == nil && emitted < n {
		if cerr := ctx.Err(); cerr != nil {
			return cerr
		}
		return fmt.Errorf("pipeline: %d of %d series were not processed", n-emitted, n)
	}
	return err
}
