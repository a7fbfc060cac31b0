package evaluate

import (
	"math"

	"almanac/engines"
	"almanac/pipeline/calendar"
	"almanac/pipeline/runfolder"
)

// WriteAccuracy writes one series' accuracy rows: every entry, every fold.
func WriteAccuracy(t *runfolder.TableWriter, r *Backtest, cal calendar.Calendar) error {
	s := r.Series
	for _, eb := range r.entries {
		for _, f := range eb.folds {
			t.Key(s.Key)
			t.Str(0, eb.label)
			t.Int32(1, f.fold.Index)
			t.Date(2, cal.StartDays(s.Start+int64(f.fold.TrainEnd)))
			t.Date(3, cal.StartDays(s.Start+int64(f.fold.TrainStart)))
			t.Int32(4, f.fold.TrainEnd-f.fold.TrainStart)
			t.Int32(5, f.fold.TestEnd-f.fold.TrainEnd)
			t.Int32(6, observed(s.Values[f.fold.TrainEnd:f.fold.TestEnd]))
			sc := f.scores
			if f.failed {
				nan := math.NaN()
				sc = engines.Scores{MAE: nan, RMSE: nan, MAPE: nan, SMAPE: nan, MASE: nan, RMSSE: nan, WAPE: nan, Bias: nan}
			}
			t.Float(7, sc.MAE)
			t.Float(8, sc.RMSE)
			t.Float(9, sc.MAPE)
			t.Int32(10, sc.MAPEZeros)
			t.Float(11, sc.SMAPE)
			t.Float(12, sc.MASE)
			t.Float(13, sc.RMSSE)
			t.Float(14, sc.WAPE)
			t.Float(15, sc.Bias)
			status := "ok"
			if f.failed {
				status = "failed"
			}
			t.Str(16, status)
			if err := t.EndRow(); err != nil {
				return err
			}
		}
	}
	return nil
}

// WriteChoice writes one series' choices row.
func (e *Evaluation) WriteChoice(t *runfolder.TableWriter, r *Backtest) error {
	t.Key(r.Series.Key)
	score := func(i int) (string, float64) {
		if i < 0 {
			return "", math.NaN()
		}
		return r.entries[i].label, r.entries[i].score
	}
	c, cs := score(r.chosen)
	if r.chosen < 0 {
		c = e.choiceFor(r)
	}
	ru, rus := score(r.runnerUp)
	t.StrOrNull(0, c)
	t.Str(1, e.metric)
	t.Float(2, cs)
	t.StrOrNull(3, ru)
	t.Float(4, rus)
	t.Int32(5, r.folds)
	if r.demand != nil {
		t.Str(6, r.demand.Class)
		t.Float(7, r.demand.ADI)
		t.Float(8, r.demand.CV2)
	} else {
		t.StrOrNull(6, "")
		t.Float(7, math.NaN())
		t.Float(8, math.NaN())
	}
	t.Str(9, r.reason)
	return t.EndRow()
}

// observed counts the values of y that are not missing: the periods of a
// test window that are scored (engines.PointScores skips NaN actuals).
func observed(y []float64) int {
	n := 0
	for _, v := range y {
		if !math.IsNaN(v) {
			n++
		}
	}
	return n
}
