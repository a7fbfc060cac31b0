package evaluate

import (
	"math"

	"almanac/pipeline/calendar"
	"almanac/pipeline/forecast"
	"almanac/pipeline/runfolder"
)

// WriteTotals appends one series' totals rows (the chosen entry, one row
// per lead time) to the totals table t; levels is the number of quantile
// columns.
func WriteTotals(t *runfolder.TableWriter, r *forecast.Result, cal calendar.Calendar, levels int) error {
	s := r.Series
	last := s.Start + int64(len(s.Values)) - 1
	for _, tt := range r.Totals {
		t.Key(s.Key)
		t.Str(0, tt.Label)
		t.Int32(1, tt.Lead)
		t.Date(2, cal.StartDays(last+1))
		t.Date(3, cal.StartDays(last+int64(tt.Lead)))
		t.Float(4, tt.Total)
		t.StrOrNull(5, tt.Source)
		for j := 0; j < levels; j++ {
			q := math.NaN()
			if tt.Quantiles != nil {
				q = tt.Quantiles[j]
			}
			t.Float(6+j, q)
		}
		if err := t.EndRow(); err != nil {
			return err
		}
	}
	return nil
}
