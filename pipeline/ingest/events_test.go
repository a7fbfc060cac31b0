package ingest

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"

	"almanac/pipeline/calendar"
	"almanac/pipeline/ingest/ingesttest"
	"almanac/spec"
)

// eventSpec writes a daily data file (stores North and South, 2024-01-01 …
// 2024-01-28, a Sunday) and the given event files into a folder, and loads
// a spec with the given calendar and events section over them.
func eventSpec(t *testing.T, calendarLine, events string, files map[string]string) *spec.Spec {
	t.Helper()
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("day,store,qty\n")
	for _, st := range []string{"North", "South"} {
		for d := 1; d <= 28; d++ {
			fmt.Fprintf(&b, "2024-01-%02d,%s,%d\n", d, st, 10+d)
		}
	}
	files["data.csv"] = b.String()
	for name, body := range files {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	src := "version: 1\nname: t\nsources: [data.csv]\ncolumns: {time: day, value: qty, keys: [store]}\n" + calendarLine +
		"\nmethods: [naive]\nhorizon: 7\nevents:\n" + events
	path := filepath.Join(dir, "spec.yaml")
	os.WriteFile(path, []byte(src), 0o644)
	s, err := spec.Load(path)
	if err != nil {
		t.Fatal(err)
	}
	return s
}

const closureSource = "  - path: closures.csv\n    kind: closure\n    columns: {date: first, until: last, keys: [store]}\n"
const driverSource = "  - path: drivers.csv\n    kind: driver\n    columns: {date: first, until: last, name: event, value: value, keys: store}\n"

// readAndCheck reads the data and the events and checks them against each other.
func readAndCheck(t *testing.T, s *spec.Spec) (*Events, *Rows, error) {
	t.Helper()
	cal := calendar.Calendar{Freq: s.Calendar.Frequency, Season: s.Calendar.SeasonLength}
	files, err := ResolveSources(s)
	if err != nil {
		t.Fatal(err)
	}
	rs, err := Read(context.Background(), s, files, cal, 0)
	if err != nil {
		t.Fatal(err)
	}
	if err := Guard(rs, s, cal); err != nil {
		t.Fatal(err)
	}
	evFiles, err := ResolveEvents(s)
	if err != nil {
		t.Fatal(err)
	}
	ev, err := ReadEvents(context.Background(), s, evFiles)
	if err != nil {
		return nil, rs, err
	}
	return ev, rs, ev.Check(rs, s, cal)
}

func TestReadEvents(t *testing.T) {
	s := eventSpec(t, "calendar: {frequency: day}", closureSource+driverSource+"    known_until: 2024-02-29\n", map[string]string{
		"closures.csv": "first,last,store\n2024-01-06,2024-01-07,North\n2024-01-10,,\n1999-01-01,,South\n",
		"drivers.csv":  "\ufefffirst,last,event,value,store\n2024-01-20,2024-01-21,promo,2.5,South\n2024-01-01,2024-02-04,price, -0.25 ,\n2024-01-02,,\"holiday\",1,\n",
	})
	ev, _, err := readAndCheck(t, s)
	if err != nil {
		t.Fatal(err)
	}
	if len(ev.Closures) != 3 || len(ev.Drivers) != 3 {
		t.Fatalf("closures %d, drivers %d", len(ev.Closures), len(ev.Drivers))
	}
	c := ev.Closures[0]
	if c.Where != "closures.csv:2" || calendar.LabelDay(c.First) != "2024-01-06" || calendar.LabelDay(c.Last) != "2024-01-07" ||
		!c.Matches([]string{"North"}) || c.Matches([]string{"South"}) || c.Global() {
		t.Errorf("closure 0 = %+v", c)
	}
	if g := ev.Closures[1]; !g.Global() || g.First != g.Last || !g.Matches([]string{"South"}) {
		t.Errorf("closure 1 (one day, every series) = %+v", g)
	}
	d := ev.Drivers[1]
	if d.Name != "price" || d.Value != -0.25 || d.Where != "drivers.csv:3" || !d.Global() {
		t.Errorf("driver 1 = %+v", d)
	}
	if strings.Join(ev.Names, ",") != "holiday,price,promo" {
		t.Errorf("names = %v", ev.Names)
	}
	info := ev.Sources[1]
	if info.Rows != 3 || calendar.LabelDay(info.KnownUntil) != "2024-02-29" || strings.Join(info.Drivers, ",") != "holiday,price,promo" {
		t.Errorf("driver source = %+v", info)
	}
	// 1999-01-01 lies before the data: ignored and counted.
	if ev.Sources[0].Ignored != 1 || ev.Sources[1].Ignored != 0 {
		t.Errorf("ignored = %d, %d", ev.Sources[0].Ignored, ev.Sources[1].Ignored)
	}
	if ev.Files[0].SHA256 == "" || ev.Files[0].Rows != 3 || ev.Files[1].Rows != 3 {
		t.Errorf("files = %+v", ev.Files)
	}
}

func TestReadEventsErrors(t *testing.T) {
	okDrivers := "first,last,event,value,store\n2024-01-01,2024-02-04,price,1,\n"
	okClosures := "first,last,store\n2024-01-06,2024-01-07,North\n"
	cases := []struct {
		name              string
		closures, drivers string
		want              string
	}{
		{"bad date", "first,last,store\n2024-01-06,,\n2024-1-7,,\n", okDrivers, `closures.csv:3: column "first": "2024-1-7" is not a date of the years 1 to 9999`},
		{"month is not a date", "first,last,store\n2024-01,,\n", okDrivers, `closures.csv:2: column "first": "2024-01" is not a date`},
		{"year 10000", "first,last,store\n2024-01-06,10000-01-01,\n", okDrivers, `closures.csv:2: column "last": "10000-01-01" is not a date of the years 1 to 9999`},
		{"until before date", "first,last,store\n2024-01-06,2024-01-05,\n", okDrivers, `closures.csv:2: column "last": the last day 2024-01-05 is before the first day 2024-01-06`},
		{"unknown key", "first,last,store\n2024-01-06,,West\n", okDrivers, `closures.csv:2: "West" is not a value of the key column "store" in any series of the data`},
		{"overlap", "first,last,store\n2024-01-06,2024-01-09,North\n2024-01-01,2024-01-06,\n", okDrivers,
			`closures.csv:2: the closure 2024-01-06 … 2024-01-09 overlaps the closure at closures.csv:3 (2024-01-01 … 2024-01-06) for the same series (store="North")`},
		{"no name", okClosures, "first,last,event,value,store\n2024-01-01,2024-02-04,,1,\n", `drivers.csv:2: column "event": the driver's name is empty`},
		{"nan value", okClosures, "first,last,event,value,store\n2024-01-01,2024-02-04,p,NaN,\n", `drivers.csv:2: column "value": "NaN" is not a finite number`},
		{"empty value", okClosures, "first,last,event,value,store\n2024-01-01,2024-02-04,p,,\n", `drivers.csv:2: column "value": the value is empty`},
		{"missing column", "first,store\n2024-01-06,North\n", okDrivers, `closures.csv:1: column "last" named in the spec is not in the file; columns present: "first", "store"`},
		{"short of the horizon", okClosures, "first,last,event,value,store\n2024-01-01,2024-02-03,price,1,\n2024-01-05,,promo,1,North\n",
			`drivers.csv: the driver(s) price, promo are known only until 2024-02-03 (its last date), but the forecast horizon runs to 2024-02-04`},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			s := eventSpec(t, "calendar: {frequency: day}", closureSource+driverSource, map[string]string{"closures.csv": c.closures, "drivers.csv": c.drivers})
			_, _, err := readAndCheck(t, s)
			if _, ok := err.(*DataError); !ok || !strings.Contains(err.Error(), c.want) {
				t.Errorf("got %v\nwant a DataError with %s", err, c.want)
			}
		})
	}
}

// On a weekly calendar, a closure from Tuesday to Sunday covers part of a
// week: a run-level problems row says so. A global and a keyed closure on
// different series never overlap; on one series they do.
func TestEventsWeekly(t *testing.T) {
	s := eventSpec(t, "calendar: {frequency: week}", closureSource, map[string]string{
		"closures.csv": "first,last,store\n2024-01-02,2024-01-07,North\n2024-01-08,2024-01-14,South\n2024-01-08,2024-01-10,North\n",
	})
	ev, rs, err := readAndCheck(t, s)
	if err != nil {
		t.Fatal(err)
	}
	if ev.PartialClosures[0] != 2 {
		t.Errorf("partial closures = %v, want 2", ev.PartialClosures)
	}
	var found bool
	for _, n := range rs.Notes {
		if n.Code == "partial_closure" && strings.Contains(n.Message, "2 closure row(s) of closures.csv cover only part of a week period (the first at closures.csv:2)") {
			found = true
		}
	}
	if !found {
		t.Errorf("no partial_closure note: %+v", rs.Notes)
	}
}

// With two key columns, an event naming values that exist but never
// together matches no series: an error naming the row.
func TestUnmatchedEventCombination(t *testing.T) {
	keys := [][]string{{"North", "bread"}, {"South", "cake"}}
	ev := &Events{Closures: []Event{
		{Where: "c.csv:2", Keys: []string{"North", "cake"}, Set: []bool{true, true}},
		{Where: "c.csv:3", Keys: []string{"South", "cake"}, Set: []bool{true, true}},
		{Where: "c.csv:4", Keys: []string{"North", ""}, Set: []bool{true, false}},
	}}
	msgs := unmatchedEvents(ev, keys, []string{"store", "product"})
	if len(msgs) != 1 || msgs[0] != `c.csv:2: no series has store="North", product="cake" (each value exists, but not together); an event's key cells must name series that exist` {
		t.Errorf("msgs = %q", msgs)
	}
}

// Parquet event sources with text dates, TIMESTAMP until, integer keys and
// an integer value column; errors name the row.
func TestReadEventsParquet(t *testing.T) {
	s := eventSpec(t, "calendar: {frequency: day}", "  - path: drivers.parquet\n    kind: driver\n    columns: {date: first, until: last, name: event, value: value, keys: [store]}\n",
		map[string]string{})
	path := filepath.Join(s.Dir, "drivers.parquet")
	fields := []arrow.Field{{Name: "first", Type: arrow.BinaryTypes.String}, {Name: "last", Type: &arrow.TimestampType{Unit: arrow.Millisecond}, Nullable: true},
		{Name: "event", Type: arrow.BinaryTypes.String}, {Name: "value", Type: arrow.PrimitiveTypes.Int32}, {Name: "store", Type: arrow.BinaryTypes.String, Nullable: true}}
	firsts := []string{"2024-01-05", "2024-01-20T08:00:00Z", "2024-01-01"}
	fill := func(firsts []string) func(b *array.RecordBuilder, i int) {
		return func(b *array.RecordBuilder, i int) {
			b.Field(0).(*array.StringBuilder).Append(firsts[i])
			if i == 0 {
				b.Field(1).AppendNull()
			} else {
				b.Field(1).(*array.TimestampBuilder).Append(arrow.Timestamp((calendar.DayOf("2024-02-10")*86400 + 3600) * 1000))
			}
			b.Field(2).(*array.StringBuilder).Append([]string{"promo", "price", "promo"}[i])
			b.Field(3).(*array.Int32Builder).Append(int32(i + 1))
			if i == 2 {
				b.Field(4).AppendNull()
			} else {
				b.Field(4).(*array.StringBuilder).Append("North")
			}
		}
	}
	ingesttest.WriteParquet(t, path, fields, 3, fill(firsts))
	ev, _, err := readAndCheck(t, s)
	if err != nil {
		t.Fatal(err)
	}
	got := ""
	for _, e := range ev.Drivers {
		got += fmt.Sprintf("%s %s…%s %s=%g %v; ", e.Where, calendar.LabelDay(e.First), calendar.LabelDay(e.Last), e.Name, e.Value, e.Global())
	}
	want := "drivers.parquet: row 1 2024-01-05…2024-01-05 promo=1 false; drivers.parquet: row 2 2024-01-20…2024-02-10 price=2 false; drivers.parquet: row 3 2024-01-01…2024-02-10 promo=3 true; "
	if got != want {
		t.Errorf("got  %s\nwant %s", got, want)
	}
	ingesttest.WriteParquet(t, path, fields, 3, fill([]string{"2024-01-05", "2024-02-31", "2024-03-01"}))
	_, _, err = readAndCheck(t, s)
	for _, w := range []string{`drivers.parquet: row 2: column "first": "2024-02-31" is not a date`,
		`drivers.parquet: row 3: column "last": the last day 2024-02-10 is before the first day 2024-03-01`} {
		if err == nil || !strings.Contains(err.Error(), w) {
			t.Errorf("got %v, want %s", err, w)
		}
	}
}

// Two closures on different key columns overlap on the series that has
// both values; the message names that series.
func TestOverlapNamesTheSeries(t *testing.T) {
	cs := []Event{
		{Where: "c.csv:2", First: 10, Last: 12, Keys: []string{"North", ""}, Set: []bool{true, false}},
		{Where: "c.csv:3", First: 12, Last: 12, Keys: []string{"", "bread"}, Set: []bool{false, true}},
		{Where: "c.csv:4", First: 12, Last: 15, Keys: []string{"South", "cake"}, Set: []bool{true, true}},
	}
	msgs := overlappingClosures(cs, []string{"store", "product"})
	if len(msgs) != 1 || !strings.HasPrefix(msgs[0], "c.csv:3: the closure 1970-01-13 … 1970-01-13 overlaps the closure at c.csv:2 (1970-01-11 … 1970-01-13) for the same series (store=\"North\", product=\"bread\")") {
		t.Errorf("msgs = %q", msgs)
	}
}
