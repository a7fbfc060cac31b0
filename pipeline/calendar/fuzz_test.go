package calendar

import (
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
			cal := Calendar{Freq: fr, Season: spec.DefaultSeasonLength[fr]}
			p, err := cal.Parse(s)
			if err != nil {
				if err.Error() == "" {
					t.Fatal("empty error")
				}
				continue
			}
			start := cal.StartDays(p)
			if cal.FromDays(start) != p || cal.FromDays(start-1) != p-1 {
				t.Fatalf("%q on %s: period %d starts on day %d, which is not its first day", s, fr, p, start)
			}
			if pos := cal.Position(p); pos < 1 || pos > max(1, cal.Season) {
				t.Fatalf("%q: position %d", s, pos)
			}
			_ = cal.Label(p)
		}
	})
}
