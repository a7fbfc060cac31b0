package ingest

import (
	"fmt"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
)

// prefetcher decodes the record batches of a reader on a goroutine of its
// own, one batch ahead of the caller, so that decoding the next batch runs
// beside the processing of this one (the read is the run's longest serial
// step). Batches come in the reader's order; it has Next, RecordBatch and
// Err as the reader does.
type prefetcher struct {
	ch   chan arrow.RecordBatch
	stop chan struct{}
	done chan struct{}
	err  error // set by the goroutine; read after done is closed
	cur  arrow.RecordBatch
}

func prefetch(rr array.RecordReader) *prefetcher {
	p := &prefetcher{ch: make(chan arrow.RecordBatch, 1), stop: make(chan struct{}), done: make(chan struct{})}
	go func() {
		defer close(p.done)
		defer close(p.ch)
		defer func() {
			// The Parquet decoder can panic on some corrupt files; the
			// reader reports it as an unreadable file.
			if r := recover(); r != nil {
				p.err = fmt.Errorf("%v", r)
			}
		}()
		for rr.Next() {
			rec := rr.RecordBatch()
			rec.Retain()
			select {
			case p.ch <- rec:
			case <-p.stop:
				rec.Release()
				return
			}
		}
		p.err = rr.Err()
	}()
	return p
}

// Next releases the current batch and waits for the next; false at the end.
func (p *prefetcher) Next() bool {
	if p.cur != nil {
		p.cur.Release()
		p.cur = nil
	}
	rec, ok := <-p.ch
	p.cur = rec
	return ok
}

// RecordBatch is the current batch, valid until Next or Release.
func (p *prefetcher) RecordBatch() arrow.RecordBatch { return p.cur }

// Err is the reader's error (or the decoder's panic), once Next has
// returned false.
func (p *prefetcher) Err() error {
	<-p.done
	return p.err
}

// Release stops the goroutine and releases every batch it holds.
func (p *prefetcher) Release() {
	if p.cur != nil {
		p.cur.Release()
		p.cur = nil
	}
	close(p.stop)
	for rec := range p.ch {
		rec.Release()
	}
	<-p.done
}
