package spec

import (
	"errors"
	"slices"
	"strings"
	"testing"
)

const withEvents = `version: 1
name: t
sources: [data.csv]
columns: {time: date, value: qty, keys: [store, product]}
calendar: {frequency: day, season_length: [365, 7]}
events:
  - path: events/closures.csv
    kind: closure
    columns: {date: first_day, until: last_day, keys: [store]}
  - path: events/drivers.parquet
    kind: driver
    columns:
      date: first_day
      name: event
      value: value
      keys: [store, product]
    known_until: 2027-01-31
methods: [naive]
horizon: 14
`

func TestEventsDecode(t *testing.T) {
	s, err := Parse([]byte(withEvents), "e.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if s.Calendar.SeasonLength != 7 || !slices.Equal(s.Calendar.Seasons, []int{7, 365}) || !slices.Equal(s.Calendar.AllSeasons(), []int{7, 365}) {
		t.Errorf("calendar = %+v", s.Calendar)
	}
	if len(s.Events) != 2 {
		t.Fatalf("events = %+v", s.Events)
	}
	c, d := s.Events[0], s.Events[1]
	if c.Kind != EventClosure || c.Format != FormatCSV || c.Delimiter != "," || c.Columns.Date != "first_day" || c.Columns.Until != "last_day" ||
		!slices.Equal(c.Columns.Keys, []string{"store"}) || c.KnownUntil != "" {
		t.Errorf("closure source = %+v", c)
	}
	if d.Kind != EventDriver || d.Format != FormatParquet || d.Delimiter != "" || d.Columns.Name != "event" || d.Columns.Value != "value" ||
		d.Columns.Until != "" || d.KnownUntil != "2027-01-31" || !slices.Equal(d.Columns.Names(), []string{"first_day", "event", "value", "store", "product"}) {
		t.Errorf("driver source = %+v", d)
	}
	// The canonical form carries the events and the season list, and
	// decodes back to the same spec.
	canon := string(s.Canonical())
	for _, want := range []string{`"season_length":[7,365]`, `"events":[{"path":"events/closures.csv","format":"csv","delimiter":",","kind":"closure","columns":{"date":"first_day","until":"last_day","keys":["store"]}}`,
		`"known_until":"2027-01-31"`} {
		if !strings.Contains(canon, want) {
			t.Errorf("canonical form lacks %s:\n%s", want, canon)
		}
	}
	back, err := FromCanonical(s.Canonical(), "manifest.json")
	if err != nil {
		t.Fatal(err)
	}
	if string(back.Canonical()) != canon {
		t.Errorf("round trip changed the canonical form:\n%s\n%s", back.Canonical(), canon)
	}
}

// A spec without events and with one season length keeps the canonical form
// and hash it had before events existed (both printed by the code of commit
// 53f26e0).
func TestCanonicalWithoutEventsUnchanged(t *testing.T) {
	s, err := Parse([]byte(minimal), "m.yaml")
	if err != nil {
		t.Fatal(err)
	}
	const want = `{"version":1,"name":"t","sources":[{"path":"data.csv","format":"csv","delimiter":","}],"columns":{"time":"date","value":"qty","keys":[]},"calendar":{"frequency":"month","season_length":12},"shaping":{"combine":"sum","gaps":"zero","end":"panel"},"decomposition":{"average":"mean","form":"multiplicative","method":"classical"},"methods":[{"method":"naive","label":"naive","options":{}}],"horizon":6,"output":"runs/t","limits":{"max_series":10000000,"max_periods":100000}}`
	if got := string(s.Canonical()); got != want {
		t.Errorf("canonical form changed:\n%s\nwant\n%s", got, want)
	}
	if got := s.Hash(); got != "cbc6af20893b5cf5427896d9af7a46b424396f7c4821309779435a8275a19d0b" {
		t.Errorf("hash changed: %s", got)
	}
	s2, err := Parse([]byte(minimal+"backtest: {folds: 2}\nintervals: {levels: [80]}\n"), "m.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if got := s2.Hash(); got != "8acf68a49dce4f7fff32c4cefbb3312f4ee58369d0f1b85487321b1a4c8fe9a1" {
		t.Errorf("hash with backtest and intervals changed: %s", got)
	}
	// One season length written as a number stays a number; Seasons is nil.
	if s.Calendar.Seasons != nil {
		t.Errorf("Seasons = %v with one season length", s.Calendar.Seasons)
	}
}

func TestEventsErrors(t *testing.T) {
	base := strings.Split(withEvents, "events:")[0]
	cases := []struct {
		name, tail, want string
	}{
		{"kind", "events:\n  - path: e.csv\n    kind: promo\n    columns: {date: d}\n", `e.yaml:8:11: events[0].kind: "promo" is not a valid event kind; allowed: closure, driver`},
		{"no kind", "events:\n  - path: e.csv\n    columns: {date: d}\n", `e.yaml:7:5: events[0]: missing required key "kind" in an event source`},
		{"no date", "events:\n  - path: e.csv\n    kind: closure\n    columns: {until: u}\n", `e.yaml:9:14: events[0].columns: missing required key "date" in event columns`},
		{"driver without name", "events:\n  - path: e.csv\n    kind: driver\n    columns: {date: d}\n", `e.yaml:9:14: events[0].columns: a driver source needs columns.name`},
		{"closure with value", "events:\n  - path: e.csv\n    kind: closure\n    columns: {date: d, value: v}\n", `e.yaml:9:14: events[0].columns: name and value apply only to kind: driver`},
		{"closure known_until", "events:\n  - path: e.csv\n    kind: closure\n    columns: {date: d}\n    known_until: 2027-01-01\n", `e.yaml:10:18: events[0].known_until: known_until applies only to kind: driver`},
		{"known_until not a day", "events:\n  - path: e.csv\n    kind: driver\n    columns: {date: d, name: n}\n    known_until: 2027-02-30\n", `e.yaml:10:18: events[0].known_until: "2027-02-30" is not a day of the calendar`},
		{"key not a spec key", "events:\n  - path: e.csv\n    kind: closure\n    columns: {date: d, keys: [region]}\n", `e.yaml:7:5: events[0].columns.keys[0]: "region" is not one of the spec's key columns`},
		{"column twice", "events:\n  - path: e.csv\n    kind: closure\n    columns: {date: d, until: d}\n", `e.yaml:9:14: events[0].columns: column "d" is named twice`},
		{"no extension", "events:\n  - path: e.dat\n    kind: closure\n    columns: {date: d}\n", `e.yaml:7:5: events[0]: cannot tell the format of "e.dat"`},
		{"not a list", "events: e.csv\n", `e.yaml:6:9: events: expected a list of event sources, found the string "e.csv"`},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := Parse([]byte(base+c.tail+"methods: [naive]\nhorizon: 14\n"), "e.yaml")
			var list ErrorList
			if !errors.As(err, &list) {
				t.Fatalf("err = %v, want an ErrorList", err)
			}
			if !strings.Contains(err.Error(), c.want) {
				t.Errorf("got %v\nwant %s", err, c.want)
			}
		})
	}
}

func TestSeasonLengthList(t *testing.T) {
	spec := func(sl string) string {
		return strings.Replace(minimal, "calendar: {frequency: month}", "calendar: {frequency: month, season_length: "+sl+"}", 1)
	}
	good := map[string][]int{"[12, 3]": {3, 12}, "[2, 1000, 24]": {2, 24, 1000}}
	for in, want := range good {
		s, err := Parse([]byte(spec(in)), "s.yaml")
		if err != nil {
			t.Fatalf("%s: %v", in, err)
		}
		if !slices.Equal(s.Calendar.Seasons, want) || s.Calendar.SeasonLength != want[0] {
			t.Errorf("%s: calendar %+v, want seasons %v", in, s.Calendar, want)
		}
	}
	bad := map[string]string{
		"[12]":       "s.yaml:5:45: calendar.season_length: a list of season lengths needs at least two",
		"[]":         "needs at least two",
		"[12, 12]":   "s.yaml:5:50: calendar.season_length[1]: season length 12 is listed twice",
		"[1, 12]":    "calendar.season_length[0]: each season length of a list must be at least 2, found 1",
		"[12, x]":    `calendar.season_length[1]: expected the season length (periods per season), found the string "x"`,
		"[12, 1001]": "calendar.season_length[1]: season_length must be between 1 and 1000, found 1001",
	}
	for in, want := range bad {
		_, err := Parse([]byte(spec(in)), "s.yaml")
		if err == nil || !strings.Contains(err.Error(), want) {
			t.Errorf("%s: got %v, want %s", in, err, want)
		}
	}
}
