package pipeline

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"almanac/pipeline/runfolder"
	"almanac/spec"
)

// eventFixture writes a daily data file of stores North, South, West (and,
// past three, North+, South+, …) over January 2024 with closures and
// drivers, and loads its spec.
func eventFixture(t *testing.T, dir string, stores int) *spec.Spec {
	t.Helper()
	var b strings.Builder
	b.WriteString("day,store,qty\n")
	for k := 0; k < stores; k++ {
		st := [...]string{"North", "South", "West"}[k%3] + strings.Repeat("+", k/3)
		for d := 1; d <= 31; d++ {
			fmt.Fprintf(&b, "2024-01-%02d,%s,%d\n", d, st, d+k%7)
		}
	}
	files := map[string]string{
		"data.csv":     b.String(),
		"closures.csv": "first,last,store\n2024-01-10,2024-01-11,South\n2024-02-02,,\n2023-06-01,,\n",
		"drivers.csv":  "first,last,event,value,store\n2024-01-29,2024-02-07,promo,2,West\n2024-01-01,2024-02-07,price,0,\n",
		"spec.yaml": `version: 1
name: ev
sources: [data.csv]
columns: {time: day, value: qty, keys: [store]}
calendar: {frequency: day, season_length: [7, 14]}
events:
  - {path: closures.csv, kind: closure, columns: {date: first, until: last, keys: [store]}}
  - {path: drivers.csv, kind: driver, columns: {date: first, until: last, name: event, value: value, keys: [store]}}
methods: [naive, seasonal_naive]
horizon: 7
backtest: {folds: 2}
`,
	}
	for name, body := range files {
		os.WriteFile(filepath.Join(dir, name), []byte(body), 0o644)
	}
	s, err := spec.Load(filepath.Join(dir, "spec.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// The run's batches hand out series with their events attached, in every
// batch (a batch size of a few rows makes several), and the plan counts
// what the event sources hold.
func TestBatchesCarryEvents(t *testing.T) {
	dir := t.TempDir()
	s := eventFixture(t, dir, 3)
	p, err := Compile(s, Options{Out: filepath.Join(dir, "out")})
	if err != nil {
		t.Fatal(err)
	}
	_, src, err := p.openBatches(context.Background(), Options{BatchRows: 40})
	if err != nil {
		t.Fatal(err)
	}
	defer src.Close()
	if src.Count() < 2 {
		t.Fatalf("%d batch(es); the test wants several", src.Count())
	}
	got := map[string]string{}
	for i := 0; i < src.Count(); i++ {
		batch, err := src.Batch(i)
		if err != nil {
			t.Fatal(err)
		}
		for _, se := range batch {
			closed := []int{}
			for j, c := range se.Closed {
				if c {
					closed = append(closed, j)
					if !math.IsNaN(se.Values[j]) {
						t.Errorf("%v: closed period %d holds %v", se.Key, j, se.Values[j])
					}
				}
			}
			got[se.Key[0]] = fmt.Sprintf("closed %v future %v %s %v %s %v", closed, se.FutureClosed,
				se.Drivers[0].Name, se.Drivers[0].Values[28:], se.Drivers[1].Name, se.Drivers[1].Values[28:])
		}
	}
	want := map[string]string{
		"North": "closed [] future [false true false false false false false] price [0 0 0 0 0 0 0 0 0 0] promo [0 0 0 0 0 0 0 0 0 0]",
		"South": "closed [9 10] future [false true false false false false false] price [0 0 0 0 0 0 0 0 0 0] promo [0 0 0 0 0 0 0 0 0 0]",
		"West":  "closed [] future [false true false false false false false] price [0 0 0 0 0 0 0 0 0 0] promo [2 2 2 2 2 2 2 2 2 2]",
	}
	for k, w := range want {
		if got[k] != w {
			t.Errorf("%s: %s\nwant %s", k, got[k], w)
		}
	}
	stages := ""
	for _, st := range p.Stages() {
		stages += st.Name + ": " + st.Detail + " | " + strings.Join(st.More, " | ") + "\n"
	}
	for _, w := range []string{"season lengths 7, 14", "events: 2 source(s): 3 closure row(s), 2 driver row(s); drivers: price, promo",
		"closures.csv  (closure, 3 row(s), 1 outside the data and horizon, ignored)", "drivers.csv  (driver, 2 row(s), drivers price, promo, known until 2024-02-07)"} {
		if !strings.Contains(stages, w) {
			t.Errorf("stages lack %q:\n%s", w, stages)
		}
	}
	// The manifest's inputs list the event files after the data.
	in := p.inputs()
	if len(in) != 3 || in[1].Path != "closures.csv" || in[2].Path != "drivers.csv" || in[2].SHA256 == "" {
		t.Errorf("inputs %+v", in)
	}
}

// A run with events writes the same bytes at any worker count.
func TestEventsSameBytesAtAnyWorkerCount(t *testing.T) {
	dir := t.TempDir()
	s := eventFixture(t, dir, 300)
	one := runBytes(t, s, filepath.Join(dir, "w1"), 1)
	two := runBytes(t, s, filepath.Join(dir, "w2"), 2)
	for name := range one {
		if !bytes.Equal(one[name], two[name]) {
			t.Errorf("%s differs between 1 and 2 workers", name)
		}
	}
	if len(one[runfolder.TableProblems]) == 0 {
		t.Error("no problems table")
	}
}
