package pipeline

import (
	"errors"
	"sync"
	"sync/atomic"
)

// A sink encodes one table's rows on a goroutine of its own, fed in series
// order through a channel, so that Parquet encoding runs beside the
// forecasting instead of after it, and the tables encode in parallel.
type sink struct {
	ch   chan any
	fill func(any) error
	err  atomic.Pointer[error] // the first error; read by send while the goroutine runs
	wg   sync.WaitGroup
}

func (k *sink) failed() error {
	if p := k.err.Load(); p != nil {
		return *p
	}
	return nil
}

// sinkDepth is how many series may wait for each table writer.
const sinkDepth = 64

func newSink(fill func(any) error) *sink {
	k := &sink{ch: make(chan any, sinkDepth), fill: fill}
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

// startSinks starts the writers of both passes. Results of pass 1
// (*backtestResult) go to accuracy and choices, those of pass 2
// (*seriesResult) to forecasts, components, seasonal_factors and problems.
func (rt *runTables) startSinks(cal calendar, e *evaluation) {
	if rt.accuracy != nil {
		rt.sinks1 = []*sink{
			newSink(func(x any) error { return rt.writeAccuracy(x.(*backtestResult), cal) }),
			newSink(func(x any) error { return rt.writeChoice(x.(*backtestResult), e) }),
		}
	}
	rt.sinks2 = []*sink{
		newSink(func(x any) error { return rt.writeForecasts(x.(*seriesResult), cal) }),
		newSink(func(x any) error { return rt.writeComponents(x.(*seriesResult), cal) }),
		newSink(func(x any) error { return rt.writeFactors(x.(*seriesResult), cal) }),
		newSink(func(x any) error { return rt.writeProblems(x.(*seriesResult)) }),
	}
}

// send hands a result to the sinks of its pass. It reports the first error
// any sink of that pass has met so far.
func (rt *runTables) send(x any) error {
	sinks := rt.sinks2
	if _, ok := x.(*backtestResult); ok {
		sinks = rt.sinks1
	}
	for _, k := range sinks {
		k.ch <- x
	}
	for _, k := range sinks {
		if err := k.failed(); err != nil {
			return err
		}
	}
	return nil
}

// drain closes the sinks, waits for them and returns their first error.
func (rt *runTables) drain() error {
	var errs []error
	for _, k := range append(rt.sinks1, rt.sinks2...) {
		close(k.ch)
		k.wg.Wait()
		if err := k.failed(); err != nil {
			errs = append(errs, err)
		}
	}
	rt.sinks1, rt.sinks2 = nil, nil
	return errors.Join(errs...)
}
