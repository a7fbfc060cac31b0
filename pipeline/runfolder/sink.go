package runfolder

import (
	"sync"
	"sync/atomic"
)

// A Sink encodes one table's rows on a goroutine of its own, fed in series
// order through a channel, so that Parquet encoding runs beside the
// forecasting instead of after it, and the tables encode in parallel.
// Values travel in small batches: one hand-over (and one wake-up of the
// sink's goroutine) per sinkBatch values rather than per value.
type Sink[R any] struct {
	ch      chan []R
	pending []R
	fill    func(R) error
	err     atomic.Pointer[error] // the first error; read by Send while the goroutine runs
	wg      sync.WaitGroup
}

const (
	// sinkBatch is how many values Send gathers before handing them over.
	sinkBatch = 16
	// sinkDepth is how many batches may wait for each table writer.
	sinkDepth = 8
)

// NewSink starts a sink that calls fill for every value sent, in order.
func NewSink[R any](fill func(R) error) *Sink[R] {
	k := &Sink[R]{ch: make(chan []R, sinkDepth), fill: fill}
	k.wg.Add(1)
	go func() {
		defer k.wg.Done()
		for xs := range k.ch {
			for _, x := range xs {
				if k.err.Load() == nil {
					if err := k.fill(x); err != nil {
						k.err.Store(&err)
					}
				}
			}
		}
	}()
	return k
}

// Err is the first error the sink has met so far.
func (k *Sink[R]) Err() error {
	if p := k.err.Load(); p != nil {
		return *p
	}
	return nil
}

// Send hands x to the sink; it blocks while sinkDepth batches wait.
func (k *Sink[R]) Send(x R) {
	if k.pending == nil {
		k.pending = make([]R, 0, sinkBatch)
	}
	k.pending = append(k.pending, x)
	if len(k.pending) == sinkBatch {
		k.ch <- k.pending
		k.pending = nil
	}
}

// Close hands over what Send gathered, stops the sink, waits for it and
// returns its first error.
func (k *Sink[R]) Close() error {
	if len(k.pending) > 0 {
		k.ch <- k.pending
		k.pending = nil
	}
	close(k.ch)
	k.wg.Wait()
	return k.Err()
}
