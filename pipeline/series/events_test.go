package series

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"almanac/pipeline/calendar"
	"almanac/pipeline/ingest"
	"almanac/spec"
)

// event is an event of the one key column store; store "" applies to
// every series.
func event(first, last, store, name string, value float64) ingest.Event {
	return ingest.Event{First: calendar.DayOf(first), Last: calendar.DayOf(last), Keys: []string{store}, Set: []bool{store != ""}, Name: name, Value: value}
}

func TestAttachDaily(t *testing.T) {
	cal := calendar.Calendar{Freq: spec.Day, Season: 7}
	evs := &ingest.Events{
		Closures: []ingest.Event{
			event("2024-01-03", "2024-01-04", "North", "", 0),
			event("2024-01-12", "2024-01-12", "", "", 0),
			event("2024-01-05", "2024-01-05", "South", "", 0),
			event("2023-01-01", "2023-01-02", "", "", 0), // before the series: no effect
		},
		Drivers: []ingest.Event{
			event("2024-01-09", "2024-01-12", "North", "promo", 2),
			event("2024-01-01", "2024-01-01", "", "holiday", 1),
			event("2024-01-01", "2024-01-01", "North", "holiday", 0.5),
			event("2024-01-14", "2024-02-20", "", "holiday", 3), // runs past the horizon
		},
		Names: []string{"holiday", "promo"},
	}
	a := NewAttacher(evs, cal, 4)
	s := &Series{Key: []string{"North"}, Start: calendar.DayOf("2024-01-01"), Values: []float64{1, 2, 3, math.NaN(), 5, 6, 7, 8, 9, 10}}
	a.Attach(s)
	closed := fmt.Sprint(s.Closed)
	if closed != "[false false true true false false false false false false]" || !math.IsNaN(s.Values[2]) || !math.IsNaN(s.Values[3]) || s.Values[4] != 5 {
		t.Errorf("closed %s, values %v", closed, s.Values)
	}
	if got := fmt.Sprint(s.FutureClosed); got != "[false true false false]" {
		t.Errorf("future closed %s", got)
	}
	if len(s.Notes) != 1 || s.Notes[0].Code != "closed_period" ||
		!strings.HasPrefix(s.Notes[0].Message, "2 period(s) of the history are closed by events (the first 2024-01-03)") ||
		!strings.Contains(s.Notes[0].Message, "1 of them held a value") {
		t.Errorf("notes %+v", s.Notes)
	}
	if len(s.Drivers) != 2 || s.Drivers[0].Name != "holiday" || s.Drivers[1].Name != "promo" {
		t.Fatalf("drivers %+v", s.Drivers)
	}
	want := map[string]string{
		"holiday": "[1.5 0 0 0 0 0 0 0 0 0 0 0 0 3]",
		"promo":   "[0 0 0 0 0 0 0 0 2 2 2 2 0 0]",
	}
	for _, d := range s.Drivers {
		if got := fmt.Sprint(d.Values); got != want[d.Name] {
			t.Errorf("%s = %s, want %s", d.Name, got, want[d.Name])
		}
	}
	// South: only the global events.
	o := &Series{Key: []string{"South"}, Start: calendar.DayOf("2024-01-08"), Values: []float64{1, 2, 3}}
	a.Attach(o)
	if fmt.Sprint(o.Closed, o.FutureClosed) != "[false false false] [false true false false]" || len(o.Notes) != 0 {
		t.Errorf("South: closed %v future %v notes %v", o.Closed, o.FutureClosed, o.Notes)
	}
	if fmt.Sprint(o.Drivers[0].Values, o.Drivers[1].Values) != "[0 0 0 0 0 0 3] [0 0 0 0 0 0 0]" {
		t.Errorf("South drivers %v %v", o.Drivers[0].Values, o.Drivers[1].Values)
	}
	// A skipped series gets nothing.
	sk := &Series{Key: []string{"North"}, Skip: "too long"}
	a.Attach(sk)
	if sk.Closed != nil || sk.Drivers != nil {
		t.Errorf("skipped series got events")
	}
}

// On a weekly calendar a driver's value in a week is the share of its days
// (value × days / 7), and only closures covering a whole week close it.
func TestAttachWeekly(t *testing.T) {
	cal := calendar.Calendar{Freq: spec.Week, Season: 52}
	evs := &ingest.Events{
		Closures: []ingest.Event{
			event("2024-01-08", "2024-01-14", "", "", 0), // all of 2024-W02
			event("2024-01-16", "2024-01-21", "", "", 0), // Tuesday to Sunday of W03: stays open
		},
		Drivers: []ingest.Event{event("2024-01-06", "2024-01-08", "", "promo", 7)}, // Sat, Sun of W01, Mon of W02
		Names:   []string{"promo"},
	}
	s := &Series{Key: []string{"North"}, Start: cal.FromDays(calendar.DayOf("2024-01-01")), Values: []float64{70, 0, 80}}
	NewAttacher(evs, cal, 2).Attach(s)
	if fmt.Sprint(s.Closed) != "[false true false]" || !math.IsNaN(s.Values[1]) || s.Values[2] != 80 {
		t.Errorf("closed %v values %v", s.Closed, s.Values)
	}
	if got := fmt.Sprint(s.Drivers[0].Values); got != "[2 1 0 0 0]" {
		t.Errorf("promo = %s, want [2 1 0 0 0]", got)
	}
}

// BenchmarkAttach: one daily series of three years plus a 28-day horizon
// against 1,000 closures and 1,000 driver rows of 5 names spread over 100
// stores (the series matches a tenth of them, plus the global ones).
func BenchmarkAttach(b *testing.B) {
	cal := calendar.Calendar{Freq: spec.Day, Season: 7}
	start := calendar.DayOf("2022-01-01")
	evs := &ingest.Events{Names: []string{"d0", "d1", "d2", "d3", "d4"}}
	for i := 0; i < 1000; i++ {
		store := fmt.Sprintf("S%02d", i%100)
		if i%50 == 0 {
			store = ""
		}
		day := start + int64(i)
		evs.Closures = append(evs.Closures, ingest.Event{First: day, Last: day, Keys: []string{store}, Set: []bool{store != ""}})
		evs.Drivers = append(evs.Drivers, ingest.Event{First: day, Last: day + 6, Keys: []string{store}, Set: []bool{store != ""}, Name: evs.Names[i%5], Value: 1.5})
	}
	a := NewAttacher(evs, cal, 28)
	values := make([]float64, 1095)
	b.ReportAllocs()
	for b.Loop() {
		s := &Series{Key: []string{"S07"}, Start: start, Values: append([]float64(nil), values...)}
		a.Attach(s)
	}
}
