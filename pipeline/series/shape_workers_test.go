package series

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"almanac/pipeline/calendar"
	"almanac/pipeline/ingest"
	"almanac/spec"
)

// shapeAt reads text as the spec's one CSV input and shapes it on the
// given number of workers.
func shapeAt(t *testing.T, specText, text string, workers int) ([]*Series, error) {
	t.Helper()
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "spec.yaml"), []byte(specText), 0o644)
	os.WriteFile(filepath.Join(dir, "in.csv"), []byte(text), 0o644)
	s, err := spec.Load(filepath.Join(dir, "spec.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	files, err := ingest.ResolveSources(s)
	if err != nil {
		t.Fatal(err)
	}
	cal := calendar.Calendar{Freq: s.Calendar.Frequency, Season: s.Calendar.SeasonLength}
	rs, err := ingest.Read(context.Background(), s, files, cal, 0)
	if err != nil {
		t.Fatal(err)
	}
	return Shape(rs, s.Shaping, s.Limits, cal, s.Columns.Keys, workers)
}

// TestShapeSameAtAnyWorkerCount: 3,000 invented series with duplicate
// rows, gaps and rows out of order shape to the same series at 1, 2 and 7
// workers; with shaping.combine: reject, to the same data errors in the
// same order, capped at ingest.MaxDataErrors.
func TestShapeSameAtAnyWorkerCount(t *testing.T) {
	var b strings.Builder
	b.WriteString("t,k,v\n")
	for k := 0; k < 3000; k++ {
		for i := 23; i >= 0; i-- { // newest first: every series needs its rows sorted
			if (i+k)%11 == 5 {
				continue // a gap
			}
			fmt.Fprintf(&b, "%04d-%02d,K%04d,%d\n", 2020+i/12, i%12+1, (k*7919)%3000, k+i)
			if (i*k)%97 == 1 {
				fmt.Fprintf(&b, "%04d-%02d,K%04d,%d\n", 2020+i/12, i%12+1, (k*7919)%3000, 2*i) // a duplicate
			}
		}
	}
	for _, combine := range []string{"sum", "reject"} {
		specText := strings.Replace(fuzzSpec, "horizon: 2\n", "horizon: 2\nshaping: {combine: "+combine+", gaps: missing}\n", 1)
		one, err1 := shapeAt(t, specText, b.String(), 1)
		for _, w := range []int{2, 7} {
			got, err := shapeAt(t, specText, b.String(), w)
			if fmt.Sprint(err) != fmt.Sprint(err1) {
				t.Fatalf("combine %s, %d workers: error\n%v\nwant (1 worker)\n%v", combine, w, err, err1)
			}
			if !sameSeries(got, one) {
				t.Fatalf("combine %s: the series at %d workers differ from those at 1", combine, w)
			}
		}
		switch combine {
		case "sum":
			combined, filled := 0, 0
			for _, se := range one {
				combined += se.Combined
				filled += se.Filled
			}
			if err1 != nil || len(one) != 3000 || combined == 0 || filled == 0 {
				t.Fatalf("combine sum: %d series, %d combined and %d filled periods, error %v", len(one), combined, filled, err1)
			}
		case "reject":
			var de *ingest.DataError
			if err1 == nil || !asDataError(err1, &de) || len(de.Msgs) != ingest.MaxDataErrors {
				t.Fatalf("combine reject: want %d data errors, got %v", ingest.MaxDataErrors, err1)
			}
			// In key order, as one goroutine finds them.
			prev := ""
			for _, m := range de.Msgs {
				_, after, _ := strings.Cut(m, "for series ")
				key, _, _ := strings.Cut(after, " ")
				if key == "" || key < prev {
					t.Fatalf("combine reject: error %q after one for %s: not in key order", m, prev)
				}
				prev = key
			}
		}
	}
}

// sameSeries compares two shaped sets field by field, a missing value
// (NaN) equal to a missing value.
func sameSeries(a, b []*Series) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if fmt.Sprintf("%+v", *a[i]) != fmt.Sprintf("%+v", *b[i]) {
			return false
		}
	}
	return true
}

func asDataError(err error, de **ingest.DataError) bool {
	d, ok := err.(*ingest.DataError)
	*de = d
	return ok
}
