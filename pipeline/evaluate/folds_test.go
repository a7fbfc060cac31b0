package evaluate

import (
	"fmt"
	"testing"

	"almanac/spec"
)

// The exact index ranges of each fold, for expanding and sliding windows.
func TestPlanFolds(t *testing.T) {
	cases := []struct {
		name    string
		n       int
		b       spec.Backtest
		want    string
		dropped int
	}{
		{"expanding, step = horizon", 40, spec.Backtest{Folds: 3, Horizon: 6, Step: 6, MinTrain: 10, Window: spec.Expanding},
			"1:[0,22)→[22,28) 2:[0,28)→[28,34) 3:[0,34)→[34,40)", 0},
		{"expanding, step 1", 30, spec.Backtest{Folds: 4, Horizon: 3, Step: 1, MinTrain: 10, Window: spec.Expanding},
			"1:[0,24)→[24,27) 2:[0,25)→[25,28) 3:[0,26)→[26,29) 4:[0,27)→[27,30)", 0},
		{"sliding, default length", 40, spec.Backtest{Folds: 3, Horizon: 6, Step: 6, MinTrain: 10, Window: spec.Sliding},
			"1:[0,22)→[22,28) 2:[6,28)→[28,34) 3:[12,34)→[34,40)", 0},
		{"sliding, given length", 40, spec.Backtest{Folds: 3, Horizon: 6, Step: 6, MinTrain: 10, Window: spec.Sliding, WindowLength: 12},
			"1:[10,22)→[22,28) 2:[16,28)→[28,34) 3:[22,34)→[34,40)", 0},
		{"too short: as many folds as fit", 30, spec.Backtest{Folds: 5, Horizon: 6, Step: 6, MinTrain: 12, Window: spec.Expanding},
			"3:[0,12)→[12,18) 4:[0,18)→[18,24) 5:[0,24)→[24,30)", 2},
		{"no fold fits", 10, spec.Backtest{Folds: 2, Horizon: 6, Step: 6, MinTrain: 8, Window: spec.Expanding}, "", 2},
		{"sliding window longer than history", 30, spec.Backtest{Folds: 2, Horizon: 6, Step: 6, MinTrain: 5, Window: spec.Sliding, WindowLength: 20},
			"2:[4,24)→[24,30)", 1},
	}
	for _, c := range cases {
		folds, dropped := planFolds(c.n, c.b)
		got := ""
		for i, f := range folds {
			if i > 0 {
				got += " "
			}
			got += fmt.Sprintf("%d:[%d,%d)→[%d,%d)", f.Index, f.TrainStart, f.TrainEnd, f.TrainEnd, f.TestEnd)
			if f.TrainEnd-f.TrainStart < c.b.MinTrain {
				t.Errorf("%s: fold %d trains on %d < min_train %d", c.name, f.Index, f.TrainEnd-f.TrainStart, c.b.MinTrain)
			}
			if f.TestEnd > c.n || f.TrainEnd >= f.TestEnd {
				t.Errorf("%s: fold %d test window [%d,%d) outside the series", c.name, f.Index, f.TrainEnd, f.TestEnd)
			}
		}
		if got != c.want || dropped != c.dropped {
			t.Errorf("%s:\n got %s (dropped %d)\nwant %s (dropped %d)", c.name, got, dropped, c.want, c.dropped)
		}
	}
}
