package forecast

import (
	"math"

	"almanac/pipeline/calendar"
	"almanac/pipeline/runfolder"
)

// Layout is what varies in the forecasts table's columns with the spec.
type Layout struct {
	WithChosen    bool   // a backtest chose an entry per series
	Levels        int    // interval levels
	Decomposition string // the decomposition's method name
}

// WriteForecasts appends r's forecasts to the forecasts table t and counts
// the series each entry forecast.
func (l Layout) WriteForecasts(t *runfolder.TableWriter, r *Result, cal calendar.Calendar, methodSeries map[string]int) error {
	s := r.Series
	last := s.Start + int64(len(s.Values)) - 1
	for _, f := range r.Forecasts {
		methodSeries[f.Label]++
		for k, v := range f.Values {
			t.Key(s.Key)
			t.Str(0, f.Label)
			t.Str(1, f.Model)
			t.Date(2, cal.StartDays(last+int64(k)+1))
			t.Int32(3, k+1)
			t.Float(4, v)
			col := 5
			if l.WithChosen {
				t.Boolean(col, f.Chosen)
				col++
			}
			if l.Levels > 0 {
				t.StrOrNull(col, f.IntervalSource)
				col++
				for j := 0; j < l.Levels; j++ {
					lo, hi := math.NaN(), math.NaN()
					if f.Lower != nil {
						lo, hi = f.Lower[j][k], f.Upper[j][k]
					}
					t.Float(col, lo)
					t.Float(col+1, hi)
					col += 2
				}
			}
			if err := t.EndRow(); err != nil {
				return err
			}
		}
	}
	return nil
}

// WriteComponents appends r's decomposition to the components table t.
func (l Layout) WriteComponents(t *runfolder.TableWriter, r *Result, cal calendar.Calendar) error {
	s, d := r.Series, r.Decomp
	if d == nil {
		return nil
	}
	for i, obs := range s.Values {
		t.Key(s.Key)
		t.Str(0, l.Decomposition)
		t.Str(1, d.Form)
		t.Date(2, cal.StartDays(s.Start+int64(i)))
		t.Float(3, obs)
		t.Float(4, d.Trend[i])
		t.Float(5, d.Seasonal[i])
		t.Float(6, d.Remainder[i])
		t.Float(7, d.Adjusted[i])
		if err := t.EndRow(); err != nil {
			return err
		}
	}
	return nil
}

// WriteFactors appends r's seasonal factors to the seasonal_factors table t.
func (l Layout) WriteFactors(t *runfolder.TableWriter, r *Result, cal calendar.Calendar) error {
	s, d := r.Series, r.Decomp
	if d == nil {
		return nil
	}
	m := len(d.Factors)
	byPos := make([]int, m) // calendar position-1 → factor index
	for j := 0; j < m; j++ {
		byPos[cal.Position(s.Start+int64(j))-1] = j
	}
	for pos, j := range byPos {
		t.Key(s.Key)
		t.Str(0, l.Decomposition)
		t.Str(1, d.Form)
		t.Int32(2, pos+1)
		t.Float(3, d.Factors[j])
		t.Int32(4, d.Counts[j])
		if err := t.EndRow(); err != nil {
			return err
		}
	}
	return nil
}
