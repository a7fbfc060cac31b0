package runfolder

import (
	"sync"
	"sync/atomic"
)

// A Sink encodes one table's rows on a goroutine of its own, fed in series
// order through a channel, so that Parquet encoding runs beside the
// forecasting instead of after it, and the tables encode in parallel.
type Sink[R any] struct {
	ch   chan R
	fill func(R) error
	err  atomic.Pointer[error] // the first error; read by Send while the goroutine runs
	wg   sync.WaitGroup
}

// sinkDepth is how many series may wait for each table writer.
const sinkDepth = 64

// NewSink starts a sink that calls fill for every value sent, in order.
func NewSink[R any](fill func(R) error) *Sink[R] {
	k := &Sink[R]{ch: make(chan R, sinkDepth), fill: fill}
	k.wg.Add(1)
	go func() {
		defer k.wg.Done()
		for x := range k.ch {
			if k.err.Load() == nil {
				if err := k.fill(x); err != nil {
					k.err.Store(&err)
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

// Send hands x to the sink; it blocks while sinkDepth values wait.
func (k *Sink[R]) Send(x R) { k.ch <- x }

// Close stops the sink, waits for it and returns its first error.
func (k *Sink[R]) Close() error {
	close(k.ch)
	k.wg.Wait()
	return k.Err()
}
