// Command stallrun is a helper of cmd/almanac's kill test: it runs a spec
// as `almanac run -q --workers 2` does and, at the point its second
// argument names, says "stalled at <point>" on stderr and blocks, so that
// the test can kill a real run there. It stops the run through the run's
// ordinary seams — the progress reporter, which the pipeline calls on its
// own goroutine, and the pre-commit step that writes the report — so the
// pipeline holds nothing for tests. The points:
//
//	read      the first pass starts: inputs read, staging and tables open
//	forecast  halfway through the last pass: tables partly written
//	tables    the last pass is done: every row handed to the writers
//	commit    tables, manifest and lineage staged; the commit is next
//
// Usage: stallrun SPEC POINT
package main

import (
	"context"
	"fmt"
	"os"

	"almanac/pipeline"
	"almanac/spec"
)

func main() {
	if len(os.Args) != 3 {
		fmt.Fprintln(os.Stderr, "usage: stallrun SPEC POINT")
		os.Exit(2)
	}
	s, err := spec.Load(os.Args[1])
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		os.Exit(2)
	}
	point := os.Args[2]
	passes := 1
	if s.Backtest.Folds > 0 {
		passes = 2
	}
	opts := pipeline.Options{Workers: 2, Progress: &stallProgress{point: point, passes: passes}}
	if point == "commit" {
		opts.Finish = func(string, string) error { stall(point); return nil }
	}
	if _, err := pipeline.Run(context.Background(), s, opts); err != nil {
		fmt.Fprintln(os.Stderr, err)
		os.Exit(1)
	}
	fmt.Fprintln(os.Stderr, "stallrun: finished without stalling at", point)
	os.Exit(1)
}

func stall(point string) {
	fmt.Fprintf(os.Stderr, "almanac: stalled at %s\n", point)
	select {}
}

// stallProgress stalls the run from its progress calls.
type stallProgress struct {
	point        string
	passes, pass int
	total, done  int
}

func (p *stallProgress) Start(total int) {
	p.pass++
	p.total, p.done = total, 0
	if p.point == "read" && p.pass == 1 {
		stall(p.point)
	}
}

func (p *stallProgress) Add(n int) {
	p.done += n
	if p.point == "forecast" && p.pass == p.passes && p.done == p.total/2 {
		stall(p.point)
	}
}

func (p *stallProgress) Finish() {
	if p.point == "tables" && p.pass == p.passes {
		stall(p.point)
	}
}
