package pipeline

import (
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"almanac/spec"
)

// FuzzCalendarParse: any text either fails with a message or lands in a
// period whose first day lies inside the period, on every calendar.
func FuzzCalendarParse(f *testing.F) {
	for _, s := range []string{"2024-02-29", "2024-W53", "2020-W53", "2024-Q4", "2024-13", "2024-07-15T23:30:00-05:00",
		"2024-07-15 08:15", "0000-01-01", "9999-12-31", "2024", "2024-W00", "2024-q1", "２０２４-01-01", "2024-01-01T", ""} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		for _, fr := range []spec.Frequency{spec.Day, spec.Week, spec.Month, spec.Quarter, spec.Year} {
			cal := calendar{freq: fr, season: spec.DefaultSeasonLength[fr]}
			p, err := cal.parse(s)
			if err != nil {
				if err.Error() == "" {
					t.Fatal("empty error")
				}
				continue
			}
			start := cal.startDays(p)
			if cal.fromDays(start) != p || cal.fromDays(start-1) != p-1 {
				t.Fatalf("%q on %s: period %d starts on day %d, which is not its first day", s, fr, p, start)
			}
			if pos := cal.position(p); pos < 1 || pos > max(1, cal.season) {
				t.Fatalf("%q: position %d", s, pos)
			}
			_ = cal.label(p)
		}
	})
}

const fuzzSpec = `version: 1
name: fuzz
sources: [in.csv]
columns: {time: t, value: v, keys: [k]}
calendar: {frequency: month}
methods: [naive]
horizon: 2
limits: {max_periods: 5000}
`

// FuzzCSVIngest: any CSV bytes either fail with a message naming the file,
// or become series in which every row was counted. Seeds: the CSV files of
// the bad-input corpus, with their header renamed to the fuzz spec's.
func FuzzCSVIngest(f *testing.F) {
	f.Add([]byte("t,k,v\n2021-01,a,1\n2021-03,a,2\n2021-02,b,\n"))
	f.Add([]byte("\ufefft,k,v\r\n2021-01,\"a\nb\",1\r\n"))
	paths, _ := filepath.Glob("testdata/corpus/*/*.csv")
	for _, p := range paths {
		if b, err := os.ReadFile(p); err == nil && len(b) < 1<<16 {
			f.Add([]byte(strings.Replace(strings.Replace(strings.Replace(string(b), "month", "t", 1), "store", "k", 1), "qty", "v", 1)))
		}
	}
	dir := f.TempDir()
	os.WriteFile(filepath.Join(dir, "spec.yaml"), []byte(fuzzSpec), 0o644)
	s, err := spec.Load(filepath.Join(dir, "spec.yaml"))
	if err != nil {
		f.Fatal(err)
	}
	cal := calendar{freq: s.Calendar.Frequency, season: s.Calendar.SeasonLength}
	f.Fuzz(func(t *testing.T, data []byte) {
		if err := os.WriteFile(filepath.Join(dir, "in.csv"), data, 0o644); err != nil {
			t.Fatal(err)
		}
		files, err := resolveSources(s)
		if err != nil {
			t.Fatal(err)
		}
		rs, err := readInputs(context.Background(), s, files, cal, 0)
		if err != nil {
			if !strings.Contains(err.Error(), "in.csv") && !strings.Contains(err.Error(), "no data rows") {
				t.Fatalf("error does not name the file: %v", err)
			}
			return
		}
		if int64(len(rs.periods)) != files[0].Rows {
			t.Fatalf("%d rows kept of %d read", len(rs.periods), files[0].Rows)
		}
		series, err := shapeRows(rs, s.Shaping, s.Limits, cal, s.Columns.Keys)
		if err != nil {
			return
		}
		for _, se := range series {
			if se.Skip == "" && len(se.Values) == 0 {
				t.Fatal("empty series")
			}
		}
	})
}
