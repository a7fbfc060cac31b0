package spec

import (
	"errors"
	"slices"
	"strings"
	"testing"
)

func TestTotalsAndAllowNegative(t *testing.T) {
	src := strings.Replace(minimal, "horizon: 6", `horizon: 6
backtest: {folds: 2, horizon: 4}
intervals: {levels: [80, 95], allow_negative: true}
totals: {lead_times: [2, 4], levels: [50, 95, 99]}`, 1)
	s, err := Parse([]byte(src), "m.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(s.Totals.LeadTimes, []int{2, 4}) || !slices.Equal(s.Totals.Levels, []int{50, 95, 99}) {
		t.Errorf("totals = %+v", s.Totals)
	}
	if !s.Intervals.AllowNegative {
		t.Error("allow_negative not read")
	}
	back, err := FromCanonical(s.Canonical(), "manifest.json")
	if err != nil {
		t.Fatal(err)
	}
	if string(back.Canonical()) != string(s.Canonical()) {
		t.Errorf("round trip changed the canonical form:\n%s\n%s", s.Canonical(), back.Canonical())
	}
	// A spec without the new keys keeps the canonical form it had before
	// they existed (no allow_negative, no totals in it).
	plain, err := Parse([]byte(strings.Replace(minimal, "horizon: 6", "horizon: 6\nbacktest: {folds: 2}\nintervals: {levels: [80]}", 1)), "m.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if c := string(plain.Canonical()); strings.Contains(c, "allow_negative") || strings.Contains(c, "totals") {
		t.Errorf("canonical form of a spec without the new keys mentions them: %s", c)
	}
}

func TestTotalsErrors(t *testing.T) {
	cases := []struct{ name, edit, want string }{
		{"no backtest", "totals: {lead_times: [2], levels: [95]}",
			"totals: quantiles of totals come from backtest errors; add a backtest section"},
		{"beyond backtest horizon", "backtest: {folds: 2, horizon: 3}\ntotals: {lead_times: [2, 4], levels: [95]}",
			"totals.lead_times: lead time 4 is longer than the backtest horizon (3)"},
		{"beyond horizon", "backtest: {folds: 2}\ntotals: {lead_times: [7], levels: [95]}",
			"totals.lead_times: lead time 7 is longer than the horizon (6)"},
		{"level 100", "backtest: {folds: 2}\ntotals: {lead_times: [2], levels: [50, 100]}",
			"totals.levels[1]: levels in percent run from 1 to 99, found 100"},
		{"twice", "backtest: {folds: 2}\ntotals: {lead_times: [2, 2], levels: [50]}",
			"totals.lead_times[1]: 2 is listed twice"},
		{"missing levels", "backtest: {folds: 2}\ntotals: {lead_times: [2]}",
			`missing required key "levels" in totals`},
		{"allow_negative not a bool", "backtest: {folds: 2}\nintervals: {levels: [80], allow_negative: sometimes}",
			"intervals.allow_negative: expected true or false"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := Parse([]byte(strings.Replace(minimal, "horizon: 6", "horizon: 6\n"+c.edit, 1)), "m.yaml")
			var list ErrorList
			if !errors.As(err, &list) {
				t.Fatalf("got %v, want an ErrorList", err)
			}
			if !strings.Contains(list.Error(), c.want) {
				t.Fatalf("error\n%s\ndoes not contain\n%s", list.Error(), c.want)
			}
		})
	}
}
