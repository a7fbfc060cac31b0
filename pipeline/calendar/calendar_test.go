package calendar

import (
	"strings"
	"testing"
	"time"

	"almanac/spec"
)

// Day arithmetic and ISO weeks checked against Go's time package, an
// independent implementation, over 1900–2100.
func TestCivilAndISOWeekAgainstTimePackage(t *testing.T) {
	for d := time.Date(1900, 1, 1, 0, 0, 0, 0, time.UTC); d.Year() < 2100; d = d.AddDate(0, 0, 1) {
		days := d.Unix() / 86400
		if got := daysFromCivil(int64(d.Year()), int64(d.Month()), int64(d.Day())); got != days {
			t.Fatalf("daysFromCivil(%s) = %d, want %d", d.Format(time.DateOnly), got, days)
		}
		y, m, dd := civil(days)
		if y != int64(d.Year()) || m != int64(d.Month()) || dd != int64(d.Day()) {
			t.Fatalf("civil(%d) = %d-%d-%d, want %s", days, y, m, dd, d.Format(time.DateOnly))
		}
		wy, ww := d.ISOWeek()
		gy, gw := isoWeek(days)
		if gy != int64(wy) || gw != int64(ww) {
			t.Fatalf("isoWeek(%s) = %d-W%d, want %d-W%d", d.Format(time.DateOnly), gy, gw, wy, ww)
		}
		week := Calendar{Freq: spec.Week}
		start := week.StartDays(week.FromDays(days))
		if time.Unix(start*86400, 0).UTC().Weekday() != time.Monday || days-start < 0 || days-start > 6 {
			t.Fatalf("week of %s starts on day %d", d.Format(time.DateOnly), start)
		}
	}
}

func TestParseTimeForms(t *testing.T) {
	cases := []struct {
		freq  spec.Frequency
		in    string
		label string // label of the period it lands in
	}{
		{spec.Day, "2024-02-29", "2024-02-29"},
		{spec.Day, "2024-07-15T23:30:00-05:00", "2024-07-15"}, // the date as written
		{spec.Day, "2024-07-15T01:00:00Z", "2024-07-15"},
		{spec.Day, "2024-07-15 08:15:00", "2024-07-15"},
		{spec.Week, "2024-01-01", "2024-W01"},
		{spec.Week, "2023-01-01", "2022-W52"}, // a Sunday belongs to the week before
		{spec.Week, "2024-W07", "2024-W07"},
		{spec.Week, "2020-W53", "2020-W53"},
		{spec.Month, "2024-07-31", "2024-07"},
		{spec.Month, "2024-07", "2024-07"},
		{spec.Quarter, "2024-08-15", "2024-Q3"},
		{spec.Quarter, "2024-Q3", "2024-Q3"},
		{spec.Quarter, "2024-12", "2024-Q4"},
		{spec.Year, "2024-Q3", "2024"},
		{spec.Year, "2024", "2024"},
	}
	for _, c := range cases {
		cal := Calendar{Freq: c.freq}
		p, err := cal.Parse(c.in)
		if err != nil {
			t.Errorf("%s on %s: %v", c.in, c.freq, err)
			continue
		}
		if got := cal.Label(p); got != c.label {
			t.Errorf("%s on %s → %s, want %s", c.in, c.freq, got, c.label)
		}
	}
	bad := []struct {
		freq spec.Frequency
		in   string
		msg  string
	}{
		{spec.Day, "15/07/2024", "is not a time value"},
		{spec.Day, "2024-02-30", "is not a calendar date"},
		{spec.Week, "2021-W53", "ISO year 2021 has 52 weeks"},
		{spec.Week, "2024-07", "is a month, which does not fit the week calendar"},
		{spec.Month, "2024-W07", "is an ISO week, which does not fit the month calendar"},
		{spec.Month, "2024-Q1", "is a quarter, which does not fit the month calendar"},
		{spec.Day, "2024-07-15T25:00:00Z", "is not a time value"},
		{spec.Quarter, "2024-Q5", "is not a time value"},
		{spec.Day, "", "is not a time value"},
	}
	for _, c := range bad {
		_, err := Calendar{Freq: c.freq}.Parse(c.in)
		if err == nil || !strings.Contains(err.Error(), c.msg) {
			t.Errorf("%q on %s: got %v, want error containing %q", c.in, c.freq, err, c.msg)
		}
	}
}

func TestPositions(t *testing.T) {
	month := Calendar{Freq: spec.Month, Season: 12}
	p, _ := month.Parse("2024-03")
	if got := month.Position(p); got != 3 {
		t.Errorf("March position = %d", got)
	}
	day := Calendar{Freq: spec.Day, Season: 7}
	p, _ = day.Parse("2024-07-15") // a Monday
	if got := day.Position(p); got != 1 {
		t.Errorf("Monday position = %d", got)
	}
	q := Calendar{Freq: spec.Quarter, Season: 4}
	p, _ = q.Parse("2023-Q4")
	if got := q.Position(p); got != 4 {
		t.Errorf("Q4 position = %d", got)
	}
	if got := month.StartDays(p*0 + 2024*12 + 1); got != daysFromCivil(2024, 2, 1) {
		t.Errorf("startDays(2024-02) = %d", got)
	}
}
