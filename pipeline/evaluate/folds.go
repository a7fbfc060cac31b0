package evaluate

import "almanac/spec"

// fold is one rolling origin of a backtest: the method trains on
// y[TrainStart:TrainEnd] and is scored on y[TrainEnd:TestEnd].
type fold struct {
	Index      int // 1-based, oldest first
	TrainStart int
	TrainEnd   int // = the origin: index of the first test period
	TestEnd    int
}

// planFolds lays out the folds of a backtest on a series of n periods.
// Origins are counted back from the end: the last fold's test window ends
// at the last observation, each earlier one step periods before. Folds whose
// training part would be shorter than MinTrain are dropped, oldest first;
// the count of dropped folds is returned so the caller can report it.
//
// Expanding windows train on everything before the origin. Sliding windows
// train on the WindowLength periods before it (by default the training
// length of the oldest fold that fits), so every fold sees as much history.
func planFolds(n int, b spec.Backtest) (folds []fold, dropped int) {
	for k := 1; k <= b.Folds; k++ {
		origin := n - b.Horizon - (b.Folds-k)*b.Step
		if origin < b.MinTrain {
			dropped++
			continue
		}
		folds = append(folds, fold{Index: k, TrainStart: 0, TrainEnd: origin, TestEnd: min(origin+b.Horizon, n)})
	}
	if b.Window == spec.Sliding && len(folds) > 0 {
		length := b.WindowLength
		if length == 0 {
			length = folds[0].TrainEnd
		}
		kept := folds[:0]
		for _, f := range folds {
			if f.TrainEnd < length {
				dropped++
				continue
			}
			f.TrainStart = f.TrainEnd - length
			kept = append(kept, f)
		}
		folds = kept
	}
	return folds, dropped
}
