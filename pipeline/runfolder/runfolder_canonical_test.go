package runfolder

import (
	"encoding/json"
	"slices"
	"testing"
)

// TestCanonicalCalendar reads season_length as the canonical form writes it:
// a number with one cycle, an ascending list with several.
func TestCanonicalCalendar(t *testing.T) {
	for _, c := range []struct {
		in      string
		season  int
		seasons []int
	}{
		{`{"frequency":"week","season_length":52}`, 52, nil},
		{`{"frequency":"day","season_length":[7,365]}`, 7, []int{7, 365}},
		{`{"frequency":"year"}`, 0, nil},
	} {
		var cal CanonicalCalendar
		if err := json.Unmarshal([]byte(c.in), &cal); err != nil {
			t.Fatalf("%s: %v", c.in, err)
		}
		if cal.SeasonLength != c.season || !slices.Equal(cal.Seasons, c.seasons) {
			t.Errorf("%s: got %d %v, want %d %v", c.in, cal.SeasonLength, cal.Seasons, c.season, c.seasons)
		}
	}
	var cal CanonicalCalendar
	if err := json.Unmarshal([]byte(`{"season_length":"x"}`), &cal); err == nil {
		t.Error("a text season_length was accepted")
	}
}
