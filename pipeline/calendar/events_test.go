package calendar

import (
	"fmt"
	"testing"

	"almanac/spec"
)

func TestCoveredAndShares(t *testing.T) {
	day := DayOf
	week, month, daily := Calendar{Freq: spec.Week}, Calendar{Freq: spec.Month}, Calendar{Freq: spec.Day}
	// 2024-12-23 is a Monday, 2024-12-29 a Sunday (ISO week 2024-W52).
	cases := []struct {
		cal         Calendar
		first, last string
		lo, hi      string // labels of the covered periods; "" when none
	}{
		{daily, "2024-12-25", "2024-12-25", "2024-12-25", "2024-12-25"},
		{week, "2024-12-23", "2024-12-29", "2024-W52", "2024-W52"},
		{week, "2024-12-24", "2024-12-29", "", ""}, // Tuesday to Sunday: not the whole week
		{week, "2024-12-23", "2025-01-12", "2024-W52", "2025-W02"},
		{week, "2024-12-22", "2025-01-06", "2024-W52", "2025-W01"},
		{month, "2024-02-01", "2024-02-29", "2024-02", "2024-02"}, // leap February
		{month, "2024-02-01", "2024-02-28", "", ""},
		{month, "2024-01-15", "2024-04-30", "2024-02", "2024-04"},
	}
	for _, c := range cases {
		lo, hi := c.cal.Covered(day(c.first), day(c.last))
		got := ""
		if lo <= hi {
			got = c.cal.Label(lo) + " " + c.cal.Label(hi)
		}
		want := ""
		if c.lo != "" {
			want = c.lo + " " + c.hi
		}
		if got != want {
			t.Errorf("%s Covered(%s, %s) = %q, want %q", c.cal.Freq, c.first, c.last, got, want)
		}
	}
	// Shares: two days of a week are 2/7 of it; ten days across a month's
	// end split 6/31 and 4/29 (leap February).
	var got []string
	week.Shares(day("2024-12-28"), day("2024-12-29"), func(p int64, s float64) { got = append(got, fmt.Sprintf("%s %.6f", week.Label(p), s)) })
	month.Shares(day("2024-01-26"), day("2024-02-04"), func(p int64, s float64) { got = append(got, fmt.Sprintf("%s %.6f", month.Label(p), s)) })
	daily.Shares(day("2024-03-01"), day("2024-03-02"), func(p int64, s float64) { got = append(got, fmt.Sprintf("%s %.6f", daily.Label(p), s)) })
	want := []string{"2024-W52 0.285714", "2024-01 0.193548", "2024-02 0.137931", "2024-03-01 1.000000", "2024-03-02 1.000000"}
	if fmt.Sprint(got) != fmt.Sprint(want) {
		t.Errorf("Shares = %v, want %v", got, want)
	}
	if n := month.Days(month.FromDays(day("2023-02-10"))); n != 28 {
		t.Errorf("days of 2023-02 = %d", n)
	}
}
