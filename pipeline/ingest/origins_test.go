package ingest

import (
	"math/rand/v2"
	"testing"
)

// TestOriginsRoundTrip adds rows from three files with skipped lines,
// restarts and repeated lines, and reads every row's origin back.
func TestOriginsRoundTrip(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 5))
	type origin struct {
		file int32
		line int64
	}
	var want []origin
	var o origins
	for file := int32(0); file < 3; file++ {
		line := int64(2)
		for r := 0; r < 500; r++ {
			switch rng.IntN(20) {
			case 0:
				line += int64(1 + rng.IntN(4)) // blank or skipped lines
			case 1:
				line-- // the same line again (cannot happen in one file, but must not break)
			}
			o.add(len(want), file, line)
			want = append(want, origin{file, line})
			line++
		}
	}
	for i, w := range want {
		if f, l := o.at(i); f != w.file || l != w.line {
			t.Fatalf("row %d: file %d line %d, want file %d line %d", i, f, l, w.file, w.line)
		}
	}
	if len(o.start) >= len(want)/4 {
		t.Errorf("%d runs for %d rows: consecutive lines are not merged", len(o.start), len(want))
	}
	var one origins
	for i := 0; i < 1000; i++ {
		one.add(i, 0, int64(i+1))
	}
	if len(one.start) != 1 {
		t.Errorf("a Parquet file's rows took %d runs, want 1", len(one.start))
	}
}
