package runfolder

import (
	"slices"
	"testing"

	"almanac/spec"
)

// spec.OutputColumns, which a key column may not be named like (spec
// cannot import this package, so it keeps its own list), holds every column
// the tables have, and nothing else.
func TestOutputColumnsAreTheTablesColumns(t *testing.T) {
	s := &spec.Spec{Backtest: spec.Backtest{Folds: 2}, Intervals: spec.Intervals{Levels: []int{80, 95}}}
	s.Totals.Levels = []int{90}
	s.Calendar.Seasons = []int{7, 365}
	var got []string
	for _, cols := range [][]Column{ForecastColumns(s), ComponentColumns(s), FactorColumns(s), ProblemColumns(), AccuracyColumns(), ChoiceColumns(), TotalsColumns(s)} {
		for _, c := range cols {
			if spec.OutputColumnPattern.MatchString(c.name) {
				if !spec.IsOutputColumn(c.name) {
					t.Errorf("%s is not reserved", c.name)
				}
				continue
			}
			if !slices.Contains(got, c.name) {
				got = append(got, c.name)
			}
		}
	}
	want := append([]string(nil), spec.OutputColumns...)
	slices.Sort(got)
	slices.Sort(want)
	if !slices.Equal(got, want) {
		t.Errorf("the tables' columns:\n%v\nspec.OutputColumns:\n%v", got, want)
	}
}
