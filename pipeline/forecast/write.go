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
	Seasons       []int  // every season length when more than one: a column per cycle
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
		if len(l.Seasons) > 1 {
			l.cycleColumns(t, r.Cycles, i)
		}
		if err := t.EndRow(); err != nil {
			return err
		}
	}
	return nil
}

// cycleColumns sets period i's seasonal_<m> columns (8, 9, …): each
// cycle's component, NULL for a cycle left out.
func (l Layout) cycleColumns(t *runfolder.TableWriter, cycles []Cycle, i int) {
	for k := range l.Seasons {
		v := math.NaN()
		if k < len(cycles) && cycles[k].Seasonal != nil {
			v = cycles[k].Seasonal[i]
		}
		t.Float(8+k, v)
	}
}

// WriteFactors appends r's seasonal factors to the seasonal_factors table
// t: with several season lengths, those of each cycle in ascending order,
// after a season_length column.
func (l Layout) WriteFactors(t *runfolder.TableWriter, r *Result, cal calendar.Calendar) error {
	d := r.Decomp
	if d == nil {
		return nil
	}
	if len(l.Seasons) <= 1 {
		return l.writeFactors(t, r, cal, 0, d.Factors, d.Counts)
	}
	for _, c := range r.Cycles {
		if c.Factors == nil {
			continue
		}
		cc := cal
		cc.Season = c.Season
		if err := l.writeFactors(t, r, cc, c.Season, c.Factors, c.Counts); err != nil {
			return err
		}
	}
	return nil
}

// writeFactors writes one cycle's factors by calendar position (cal's
// season is the cycle's); season > 0 fills the season_length column.
func (l Layout) writeFactors(t *runfolder.TableWriter, r *Result, cal calendar.Calendar, season int, factors []float64, counts []int) error {
	s, d := r.Series, r.Decomp
	m := len(factors)
	byPos := make([]int, m) // calendar position-1 → factor index
	for j := 0; j < m; j++ {
		byPos[cal.Position(s.Start+int64(j))-1] = j
	}
	col := 2
	for pos, j := range byPos {
		t.Key(s.Key)
		t.Str(0, l.Decomposition)
		t.Str(1, d.Form)
		if season > 0 {
			t.Int32(2, season)
			col = 3
		}
		t.Int32(col, pos+1)
		t.Float(col+1, factors[j])
		t.Int32(col+2, counts[j])
		if err := t.EndRow(); err != nil {
			return err
		}
	}
	return nil
}
