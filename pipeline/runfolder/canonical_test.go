package runfolder

import (
	"encoding/json"
	"slices"
	"testing"
)

// A canonical spec's season_length is a number with one season and a
// list with several; readers get the primary season either way.
func TestCanonicalCalendarSeasons(t *testing.T) {
	for _, c := range []struct {
		in      string
		primary int
		all     []int
	}{
		{`{"calendar": {"frequency": "week", "season_length": 52}}`, 52, []int{52}},
		{`{"calendar": {"frequency": "day", "season_length": [7, 365]}}`, 7, []int{7, 365}},
		{`{"calendar": {"frequency": "day"}}`, 0, nil},
	} {
		var s CanonicalSpec
		if err := json.Unmarshal([]byte(c.in), &s); err != nil {
			t.Fatalf("%s: %v", c.in, err)
		}
		if s.Calendar.SeasonLength != c.primary || !slices.Equal(s.Calendar.Seasons, c.all) {
			t.Errorf("%s: season %d, seasons %v; want %d, %v", c.in, s.Calendar.SeasonLength, s.Calendar.Seasons, c.primary, c.all)
		}
	}
	for _, bad := range []string{
		`{"calendar": {"season_length": "seven"}}`,
		`{"calendar": {"season_length": [7, "x"]}}`,
	} {
		var s CanonicalSpec
		if err := json.Unmarshal([]byte(bad), &s); err == nil {
			t.Errorf("%s: accepted", bad)
		}
	}
}
