package pipeline

import (
	"context"
	"fmt"
	"sync"
)

// forEachOrdered runs work(i) for i in [0, n) on the given number of
// goroutines and calls emit(i, result) in index order from the calling
// goroutine. At most a few results per worker wait to be emitted, so memory
// stays bounded however large n is.
func forEachOrdered[R any](ctx context.Context, n, workers int, work func(int) R, emit func(int, R) error) error {
	if n == 0 {
		return nil
	}
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	window := workers * 4
	tokens := make(chan struct{}, window)
	jobs := make(chan int)
	type done struct {
		i int
		r R
	}
	results := make(chan done, window)
	var wg sync.WaitGroup
	go func() {
		defer close(jobs)
		for i := 0; i < n; i++ {
			select {
			case tokens <- struct{}{}:
			case <-ctx.Done():
				return
			}
			select {
			case jobs <- i:
			case <-ctx.Done():
				return
			}
		}
	}()
	for k := 0; k < workers; k++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range jobs {
				results <- done{i, work(i)}
			}
		}()
	}
	go func() { wg.Wait(); close(results) }()
	pending := make(map[int]R, window)
	next := 0
	var err error
	for d := range results {
		if err != nil {
			continue // drain
		}
		pending[d.i] = d.r
		for {
			r, ok := pending[next]
			if !ok {
				break
			}
			delete(pending, next)
			if e := emit(next, r); e != nil {
				err = e
				cancel()
				break
			}
			next++
			<-tokens
		}
	}
	if err == nil && next < n {
		if cerr := ctx.Err(); cerr != nil {
			return cerr
		}
		return fmt.Errorf("pipeline: %d of %d series were not processed", n-next, n)
	}
	return err
}
