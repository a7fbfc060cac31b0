package evaluate

import (
	"math"
	"sort"

	"almanac/pipeline/runfolder"
)

// Leaderboard summarises the backtests across series for the manifest.
func (e *Evaluation) Leaderboard(series int) *runfolder.Leaderboard {
	lb := &runfolder.Leaderboard{Metric: e.metric, Chosen: map[string]int{}}
	for _, l := range e.labels {
		v := append([]float64(nil), e.mase[l]...)
		row := runfolder.LeaderboardRow{Method: l, Series: len(v), MeanMASE: runfolder.JSONFloat(math.NaN()), MedianMASE: runfolder.JSONFloat(math.NaN())}
		if len(v) > 0 {
			sort.Float64s(v)
			sum := 0.0
			for _, x := range v {
				sum += x
			}
			row.MeanMASE = runfolder.JSONFloat(sum / float64(len(v)))
			if len(v)%2 == 1 {
				row.MedianMASE = runfolder.JSONFloat(v[len(v)/2])
			} else {
				row.MedianMASE = runfolder.JSONFloat((v[len(v)/2-1] + v[len(v)/2]) / 2)
			}
		}
		if series > 0 {
			row.WinShare = float64(e.wins[l]) / float64(series)
		}
		lb.Entries = append(lb.Entries, row)
		if e.wins[l] > 0 {
			lb.Chosen[l] = e.wins[l]
		}
	}
	lb.NoScore = e.fallbacks
	lb.Fallback = e.fallback
	return lb
}
